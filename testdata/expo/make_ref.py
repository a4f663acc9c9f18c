#!/usr/bin/python3
"""Reference values for numerics/expo, computed outside the project.

Run with Debian's interpreter:  /usr/bin/python3 testdata/expo/make_ref.py
Writes testdata/expo/ref.json beside this script.

- "expm": seeded random non-normal matrices and classic test matrices;
  "scipy" is scipy.linalg.expm(A), "mp" is mpmath.expm(A) at 60 digits
  (rounded to double), which the Go tests treat as the exact answer.
- "expmv": seeded random sparse non-normal matrices; "scipy" is
  scipy.sparse.linalg.expm_multiply(A, b, start, stop, num, endpoint=True)
  and "dense" is scipy.linalg.expm(t A) @ b for each t; "exact" is the
  Taylor series of e^{tA}b summed in numpy's 80-bit long double with
  2^k substeps of norm ≤ 1/2 until the terms are negligible, a
  scipy-independent value (scipy 1.10's expm is off by 1e-9 on one case).
"""
import json
import os

import mpmath
import numpy as np
import scipy
import scipy.linalg
import scipy.sparse
import scipy.sparse.linalg

mpmath.mp.dps = 60


def mp_expm(a):
    m = mpmath.matrix(a.tolist())
    e = mpmath.expm(m)
    return [[float(e[i, j]) for j in range(a.shape[1])] for i in range(a.shape[0])]


def nonnormal(rng, n, scale):
    """Random matrix with a strong strictly upper triangular part."""
    a = rng.standard_normal((n, n)) / np.sqrt(n)
    a += np.triu(rng.standard_normal((n, n)), 1) * 3
    return scale * a


cases = []
rng = np.random.RandomState(20260)
for n, scale in [(4, 0.01), (6, 0.5), (8, 2.0), (12, 10.0), (20, 1.0), (30, 40.0)]:
    cases.append(("random n=%d scale=%g" % (n, scale), nonnormal(rng, n, scale)))
# upper triangular, strongly non-normal
t = np.triu(rng.standard_normal((8, 8))) * 5
cases.append(("random upper triangular n=8", t))

# Ward, SIAM J. Numer. Anal. 14 (1977), test matrices 1, 3, 4 (from memory).
cases.append(("Ward 1977 test 1", np.array([[4., 2, 0], [1, 4, 1], [1, 1, 4]])))
cases.append(("Ward 1977 test 3", np.array([[-131., 19, 18], [-390, 56, 54], [-387, 57, 52]])))
w4 = np.zeros((10, 10))
for i in range(9):
    w4[i, i + 1] = 1
w4[9, 0] = 1e-10
cases.append(("Ward 1977 test 4", w4))
# Badly scaled 3x3 of Kenney & Laub used by Al-Mohy & Higham (2009) (from memory).
cases.append(("badly scaled 3x3", np.array([[0., 1e-8, 0],
                                             [-(2e10 + 4e8 / 6), -3, 2e10],
                                             [200 / 3, 0, -200 / 3]])))

expm_out = []
for name, a in cases:
    expm_out.append({
        "name": name,
        "n": a.shape[0],
        "a": a.tolist(),
        "scipy": scipy.linalg.expm(a).tolist(),
        "mp": mp_expm(a),
    })

def taylor_ld(a, b, t):
    a = np.array(a, dtype=np.longdouble)
    x = np.array(b, dtype=np.longdouble)
    nrm = float(np.abs(a).sum(axis=0).max()) * t
    k = max(0, int(np.ceil(np.log2(max(nrm, 1e-300) / 0.5))))
    h = np.longdouble(t) / np.longdouble(2) ** k
    for _ in range(2 ** k):
        term = x.copy()
        s = x.copy()
        for j in range(1, 200):
            term = (a @ term) * h / j
            s = s + term
            if np.abs(term).max() <= 1e-22 * np.abs(s).max():
                break
        x = s
    return [float(v) for v in x]


expmv_out = []
rng = np.random.RandomState(77)
for n, density, scale, stop in [(60, 0.1, 1.0, 2.0), (200, 0.03, 3.0, 1.0), (400, 0.01, 2.0, 0.5)]:
    s = scipy.sparse.random(n, n, density=density, random_state=rng, format="csr")
    a = (s - scipy.sparse.eye(n) * 0.5 * density * n) * scale
    a = scipy.sparse.csr_matrix(a + scipy.sparse.triu(scipy.sparse.random(
        n, n, density=density, random_state=rng), 1) * scale * 2)
    b = rng.standard_normal(n)
    num = 5
    ts = np.linspace(0, stop, num)
    out = scipy.sparse.linalg.expm_multiply(a, b, start=0, stop=stop, num=num, endpoint=True)
    dense = [scipy.linalg.expm(t * a.toarray()) @ b for t in ts]
    coo = a.tocoo()
    expmv_out.append({
        "name": "random sparse n=%d" % n,
        "n": n,
        "rows": coo.row.tolist(), "cols": coo.col.tolist(), "vals": coo.data.tolist(),
        "b": b.tolist(),
        "times": ts.tolist(),
        "scipy": [r.tolist() for r in out],
        "dense": [r.tolist() for r in dense],
        "exact": [taylor_ld(a.toarray(), b, t) for t in ts],
    })

here = os.path.dirname(os.path.abspath(__file__))
with open(os.path.join(here, "ref.json"), "w") as f:
    json.dump({"generator": "make_ref.py", "scipy": scipy.__version__,
               "numpy": np.__version__, "mpmath": mpmath.__version__,
               "expm": expm_out, "expmv": expmv_out}, f)
print("wrote", len(expm_out), "expm and", len(expmv_out), "expmv cases")
