#!/usr/bin/python3
"""Time Debian scipy on the problems of numerics/expo/bench_test.go.

Run with: /usr/bin/python3 testdata/expo/bench_scipy.py [--big]
Prints one line per problem: name, seconds (best of the repeats), and the
2-norm (or 1-norm) of the result to compare with the Go benchmark metrics.
--big adds the N = 1e6 problems (minutes).
"""
import sys
import time

import numpy as np
import scipy
import scipy.linalg
import scipy.sparse as sp
import scipy.sparse.linalg as spl


def heat(m):
    h = 1.0 / (m + 1)
    d = sp.diags([np.ones(m - 1), -2 * np.ones(m), np.ones(m - 1)], [-1, 0, 1]) / h ** 2
    i = sp.identity(m)
    a = (sp.kron(d, i) + sp.kron(i, d)).tocsr()
    x = (np.arange(m) + 1) * h
    X, Y = np.meshgrid(x, x, indexing="ij")  # u0[ix*m+iy]
    u0 = (np.sin(np.pi * X) * np.sin(2 * np.pi * Y) + X * Y).ravel()
    return d.toarray(), a, u0


def dense(n):
    i = np.arange(n)[:, None]
    j = np.arange(n)[None, :]
    w = np.where(j > i, 2.0, 1.0)
    return 4 * np.sin(0.7 * i + 0.013 * j * j + 1) * w / np.sqrt(n)


def timeit(f, repeat):
    best = float("inf")
    out = None
    for _ in range(repeat):
        t0 = time.perf_counter()
        out = f()
        best = min(best, time.perf_counter() - t0)
    return best, out


def report(name, sec, val):
    print("%-42s %10.4f s   %.12g" % (name, sec, val), flush=True)


print("scipy", scipy.__version__, "numpy", np.__version__)
big = "--big" in sys.argv
for m, t in [(100, 1.0)] + ([(1000, 0.01)] if big else []):
    d, a, u0 = heat(m)
    N = m * m
    # Kronecker structure by hand: e^{tD} U e^{tD}^T.
    def kron():
        e = scipy.linalg.expm(t * d)
        return (e @ u0.reshape(m, m) @ e.T).ravel()
    sec, out = timeit(kron, 3)
    report("N=%d t=%g expm factors + products" % (N, t), sec, np.linalg.norm(out))
    if m == 100:
        sec, out = timeit(lambda: spl.expm_multiply(t * a, u0), 1)
        report("N=%d t=%g expm_multiply csr" % (N, t), sec, np.linalg.norm(out))
    else:
        ts = 1e-4
        sec, out = timeit(lambda: spl.expm_multiply(ts * a, u0), 1)
        report("N=%d t=%g expm_multiply csr (slice)" % (N, ts), sec, np.linalg.norm(out))
a = dense(500)
sec, out = timeit(lambda: scipy.linalg.expm(a), 3)
report("dense 500 expm", sec, np.abs(out).sum(axis=0).max())
