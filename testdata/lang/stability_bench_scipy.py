#!/usr/bin/python3
"""Timings with Debian's scipy for the problems of
lang/builtin/stability_bench_test.go (the convection–diffusion operator
0.01u'' − u' on 100 interior points of [0, 1], Dirichlet, second-order
differences): σ_min(zI − A) on a 60×60 grid by dense SVDs, and ‖e^{tA}‖₂ at
101 times by expm + svdvals. Run: /usr/bin/python3 stability_bench_scipy.py
"""
import time

import numpy as np
import scipy.linalg as sl

n = 100
h = 1.0 / (n + 1)
A = (0.01 / h**2) * (np.diag(-2 * np.ones(n)) + np.diag(np.ones(n - 1), 1) + np.diag(np.ones(n - 1), -1))
A -= (np.diag(np.ones(n - 1), 1) - np.diag(np.ones(n - 1), -1)) / (2 * h)

t0 = time.perf_counter()
I = np.eye(n)
for x in np.linspace(-500, 50, 60):
    for y in np.linspace(-200, 200, 60):
        sl.svdvals((x + 1j * y) * I - A).min()
t1 = time.perf_counter()
print("sigma_min on 60x60 grid (dense SVD): %.3f s" % (t1 - t0))

t0 = time.perf_counter()
for t in np.arange(0, 2.0001, 0.02):
    sl.svdvals(sl.expm(t * A)).max()
t1 = time.perf_counter()
print("norm of expm(tA) at 101 times: %.3f s" % (t1 - t0))

t0 = time.perf_counter()
sl.eig(A, left=True, right=True)
t1 = time.perf_counter()
print("eig with left and right vectors: %.4f s" % (t1 - t0))
