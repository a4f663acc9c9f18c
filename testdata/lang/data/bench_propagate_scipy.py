#!/usr/bin/python3
"""scipy timings of the problems of the Cell benchmarks in
lang/builtin/propagate_test.go, for side-by-side ratios:

    /usr/bin/python3 bench_propagate_scipy.py
"""
import time

import numpy as np
import scipy.linalg
import scipy.sparse
import scipy.sparse.linalg


def d2(m, h):
    return scipy.sparse.diags([np.ones(m - 1), -2 * np.ones(m), np.ones(m - 1)], [-1, 0, 1]) / h**2


def best(f, reps=5):
    ts = []
    for _ in range(reps):
        t0 = time.perf_counter()
        f()
        ts.append(time.perf_counter() - t0)
    return min(ts)


# 2-D heat on the 200×200 interior of interval(0, 1, 202)²: e^{tX} U e^{tY}ᵀ
# for five times, as the Kronecker method does.
n = 202
h = 1 / (n - 1)
m = n - 2
x = np.arange(1, n - 1) * h
X, Y = np.meshgrid(x, x, indexing="ij")
U = np.exp(-50 * ((X - 0.3) ** 2 + (Y - 0.6) ** 2))
D = d2(m, h).toarray()


def heat():
    for t in (0.001, 0.002, 0.005, 0.01, 0.02):
        E = scipy.linalg.expm(t * D)
        E @ U @ E.T


print(f"heat 2-D 200x200, 5 times, expm + products: {best(heat) * 1e3:.1f} ms")

# 1-D advection–diffusion, 2000 unknowns, t = 0.01, expm_multiply.
n = 2002
h = 1 / (n - 1)
m = n - 2
x = np.arange(1, n - 1) * h
A = (d2(m, h) + 5 * scipy.sparse.diags([-np.ones(m - 1), np.ones(m - 1)], [-1, 1]) / (2 * h)).tocsr()
u0 = np.sin(np.pi * x) + x * (1 - x)
print(f"adv-diff 2000, t = 0.01, expm_multiply: {best(lambda: scipy.sparse.linalg.expm_multiply(0.01 * A, u0), 3) * 1e3:.1f} ms")
