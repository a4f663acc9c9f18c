#!/usr/bin/python3
"""Times scipy's sparse and banded solvers on the problems of
BenchmarkShifted (numerics/solve/bench_test.go), for side-by-side numbers:
zI − A with z = 0.5+3i for the 5-point Laplacian on k×k grids (SuperLU via
scipy.sparse.linalg.splu, default COLAMD order) and the 1-D second
difference with N = 10⁶ (LAPACK zgbsv through scipy.linalg.solve_banded).
Run: /usr/bin/python3 bench_scipy.py
"""
import time

import numpy as np
import scipy
import scipy.linalg
import scipy.sparse as sp
import scipy.sparse.linalg as spl

z = 0.5 + 3j


def second_diff(n):
    return sp.diags([np.ones(n - 1), -2 * np.ones(n), np.ones(n - 1)], [-1, 0, 1], format="csr")


def best(f, reps=3):
    t = []
    for _ in range(reps):
        t0 = time.perf_counter()
        r = f()
        t.append(time.perf_counter() - t0)
    return min(t), r


print("scipy", scipy.__version__)
for k in (100, 316):
    d = second_diff(k)
    i = sp.identity(k, format="csr")
    a = (sp.kron(d, i) + sp.kron(i, d)).tocsc()
    m = (z * sp.identity(k * k, format="csc") - a).astype(complex).tocsc()
    tf, lu = best(lambda: spl.splu(m))
    b = np.ones(k * k, dtype=complex)
    ts, _ = best(lambda: lu.solve(b))
    print(f"splu N={k*k}: factor {tf*1e3:.1f} ms, solve {ts*1e3:.2f} ms, nnz(L+U)/N = {(lu.L.nnz+lu.U.nnz)/(k*k):.1f}")

n = 1_000_000
ab = np.zeros((3, n), dtype=complex)
ab[0, 1:] = -1
ab[1, :] = z + 2
ab[2, :-1] = -1
b = np.ones(n, dtype=complex)
t, _ = best(lambda: scipy.linalg.solve_banded((1, 1), ab, b))
print(f"solve_banded N={n} (factor+solve): {t*1e3:.1f} ms")
