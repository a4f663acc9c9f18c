#!/usr/bin/python3
"""Reference for the second-order upwind advection-diffusion operator that
numerics/expo/contract_test.go reads from a Matrix Market file.

Run with Debian's interpreter:  /usr/bin/python3 testdata/expo/make_upwind_ref.py
Writes upwind2.mtx (scipy.io.mmwrite) and upwind2_ref.json beside this script.

The operator is u_t = -c u_x + nu u_xx on n cells of (0, 1), h = 1/(n+1),
zero data outside, u_x by the second-order upwind difference
(3u_i - 4u_{i-1} + u_{i-2})/(2h), u_xx by the second difference. Its
symmetric part is indefinite (the Gershgorin bound on the numerical
abscissa is about c/h > 0), the case in which the shift-and-invert
estimate once grew like e^{omega t}.

"exact" is the Taylor series of e^{tA}u0 summed in numpy's 80-bit long
double with substeps of norm <= 1/2 until the terms are negligible (as in
make_ref.py), a scipy-independent value; "scipy" is
scipy.sparse.linalg.expm_multiply, kept to show the two agree.
"""
import json
import os

import numpy as np
import scipy
import scipy.io
import scipy.sparse
import scipy.sparse.linalg

here = os.path.dirname(os.path.abspath(__file__))
n, c, nu = 400, 1.0, 1e-3
h = 1.0 / (n + 1)
main = np.full(n, -3 * c / (2 * h) - 2 * nu / h**2)
sub1 = np.full(n - 1, 2 * c / h + nu / h**2)
sub2 = np.full(n - 2, -c / (2 * h))
sup1 = np.full(n - 1, nu / h**2)
A = scipy.sparse.diags([sub2, sub1, main, sup1], [-2, -1, 0, 1], format="coo")
scipy.io.mmwrite(os.path.join(here, "upwind2.mtx"), A,
                 comment="second-order upwind advection-diffusion, n=400, c=1, nu=1e-3 (make_upwind_ref.py)")
A = scipy.io.mmread(os.path.join(here, "upwind2.mtx")).tocsr()

x = (np.arange(n) + 1) * h
u0 = np.exp(-200 * (x - 0.3) ** 2)
times = [0.05, 0.2]

# The bands in long double, applied by shifts.
Ad = A.toarray()
bands = {k: np.array(np.diagonal(Ad, k), dtype=np.longdouble) for k in (-2, -1, 0, 1)}


def apply(v):
    out = bands[0] * v
    out[1:] += bands[-1] * v[:-1]
    out[2:] += bands[-2] * v[:-2]
    out[:-1] += bands[1] * v[1:]
    return out


norm1 = np.abs(Ad).sum(axis=0).max()


def exact(t):
    k = int(np.ceil(2 * t * norm1))
    tau = np.longdouble(t) / k
    v = np.array(u0, dtype=np.longdouble)
    for _ in range(k):
        term, s, j = v.copy(), v.copy(), 0
        while True:
            j += 1
            term = apply(term) * tau / j
            s += term
            if np.max(np.abs(term)) <= 1e-22 * np.max(np.abs(s)):
                break
        v = s
    return [float(z) for z in v]


out = {"source": "testdata/expo/make_upwind_ref.py, numpy %s, scipy %s" % (np.__version__, scipy.__version__),
       "n": n, "c": c, "nu": nu, "times": times, "u0": [float(z) for z in u0],
       "exact": [exact(t) for t in times],
       "scipy": [list(map(float, scipy.sparse.linalg.expm_multiply(t * A, u0))) for t in times]}
spread = max(np.max(np.abs(np.array(e) - np.array(s))) for e, s in zip(out["exact"], out["scipy"]))
out["spread"] = float(spread)
with open(os.path.join(here, "upwind2_ref.json"), "w") as f:
    json.dump(out, f)
print("spread between exact and expm_multiply:", spread)
