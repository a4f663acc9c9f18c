#!/usr/bin/python3
"""Reference transient-growth values computed with Debian's scipy.

A is a 30x30 non-normal matrix: A = -I + 3 U + 0.5 G/sqrt(n), with U the
strictly upper part of a standard normal matrix scaled by 1/sqrt(n) and G
standard normal, from numpy.random.default_rng(20261202). We store A, the
norms ||exp(tA)||_2 (scipy.linalg.expm, numpy.linalg.norm(., 2)) at several
times, the numerical abscissa lambda_max((A + A^T)/2) (scipy.linalg.eigvalsh)
and the spectral abscissa (scipy.linalg.eigvals).

Run with: /usr/bin/python3 testdata/spectra/make_growth.py
"""
import json
import os

import numpy as np
import scipy
import scipy.linalg as la


def main():
    n = 30
    rng = np.random.default_rng(20261202)
    u = np.triu(rng.standard_normal((n, n)), 1) / np.sqrt(n)
    g = rng.standard_normal((n, n)) / np.sqrt(n)
    a = -np.eye(n) + 3 * u + 0.5 * g
    times = [0.0, 0.1, 0.5, 1.0, 2.0, 4.0, 8.0]
    norms = [float(np.linalg.norm(la.expm(t * a), 2)) for t in times]
    out = {
        "source": "scipy %s, numpy %s: la.expm, np.linalg.norm(., 2), la.eigvalsh, la.eigvals"
        % (scipy.__version__, np.__version__),
        "n": n,
        "a": [[float(v) for v in row] for row in a],
        "times": times,
        "norms": norms,
        "numerical_abscissa": float(la.eigvalsh((a + a.T) / 2)[-1]),
        "spectral_abscissa": float(np.max(la.eigvals(a).real)),
    }
    here = os.path.dirname(os.path.abspath(__file__))
    with open(os.path.join(here, "growth.json"), "w") as f:
        json.dump(out, f, indent=1)


if __name__ == "__main__":
    main()
