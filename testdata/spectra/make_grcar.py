#!/usr/bin/python3
"""Reference values for the Grcar matrix, computed with Debian's scipy.

The Grcar matrix G_n (J. F. Grcar, Sandia report SAND89-8691, 1989) has
-1 on the first subdiagonal and +1 on the diagonal and the first three
superdiagonals. For each n we store its eigenvalues (scipy.linalg.eigvals,
LAPACK dgeev) and sigma_min(z I - G) on a coarse grid from the dense SVD
(scipy.linalg.svdvals, LAPACK zgesdd).

Run with: /usr/bin/python3 testdata/spectra/make_grcar.py
"""
import json
import os

import numpy as np
import scipy
import scipy.linalg as la


def grcar(n, k=3):
    g = np.eye(n) - np.eye(n, k=-1)
    for j in range(1, k + 1):
        g += np.eye(n, k=j)
    return g


def case(n, re, im):
    g = grcar(n)
    ev = la.eigvals(g)
    sig = []
    for x in re:
        row = []
        for y in im:
            z = complex(x, y)
            row.append(float(la.svdvals(z * np.eye(n) - g)[-1]))
        sig.append(row)
    return {
        "n": n,
        "eig_re": [float(v.real) for v in ev],
        "eig_im": [float(v.imag) for v in ev],
        "re": list(re),
        "im": list(im),
        "sigma": sig,  # sigma[i][j] at re[i] + 1j*im[j]
    }


def main():
    re = [float(v) for v in np.linspace(-1.0, 3.0, 9)]
    im = [float(v) for v in np.linspace(-3.5, 3.5, 8)]
    out = {
        "source": "scipy %s, numpy %s: la.eigvals and la.svdvals" % (scipy.__version__, np.__version__),
        "cases": [case(32, re, im), case(100, re, im)],
    }
    here = os.path.dirname(os.path.abspath(__file__))
    with open(os.path.join(here, "grcar.json"), "w") as f:
        json.dump(out, f, indent=1)


if __name__ == "__main__":
    main()
