#!/usr/bin/python3
"""Reference values for the propagate tests of lang/builtin, from scipy.

The operator is built here independently of Semiflow: on interval(0, 1, 41)
with Dirichlet ends the unknowns are x_j = j h, j = 1..39, h = 1/40, and

    A = D2 + 5 D1,  D2 = tridiag(1, -2, 1)/h²,  D1 = tridiag(-1, 0, 1)/(2h)

(second-order central differences; the Dirichlet end values are 0). The
initial value is u0(x) = sin(πx) + x(1 − x). Writes
  advdiff41.mtx       the matrix A (coordinate, general)
  advdiff41_ref.csv   t, u(t) = expm(tA) u0 for t = 0.01, 0.05, 0.2
  chain3_ref.csv      t, p(t) = expm(t Qᵀ) p0 for the chain of chain3.mtx,
                      p0 = (1, 0, 0), t = 0.1, 1, 5
Run with Debian's /usr/bin/python3 from this directory.
"""
import numpy as np
import scipy.io
import scipy.linalg
import scipy.sparse

n = 41
h = 1.0 / (n - 1)
m = n - 2
x = np.arange(1, n - 1) * h
D2 = scipy.sparse.diags([np.ones(m - 1), -2 * np.ones(m), np.ones(m - 1)], [-1, 0, 1]) / h**2
D1 = scipy.sparse.diags([-np.ones(m - 1), np.ones(m - 1)], [-1, 1]) / (2 * h)
A = (D2 + 5 * D1).tocoo()
scipy.io.mmwrite("advdiff41.mtx", A)
u0 = np.sin(np.pi * x) + x * (1 - x)
with open("advdiff41_ref.csv", "w") as f:
    for t in (0.01, 0.05, 0.2):
        u = scipy.linalg.expm(t * A.toarray()) @ u0
        f.write(",".join(repr(float(v)) for v in [t, *u]) + "\n")

Q = scipy.io.mmread("chain3.mtx").toarray()
p0 = np.array([1.0, 0.0, 0.0])
with open("chain3_ref.csv", "w") as f:
    for t in (0.1, 1.0, 5.0):
        p = scipy.linalg.expm(t * Q.T) @ p0
        f.write(",".join(repr(float(v)) for v in [t, *p]) + "\n")
