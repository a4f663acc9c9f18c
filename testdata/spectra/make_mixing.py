#!/usr/bin/python3
"""Reference mixing times t_mix = min{t : max_i ||e_i^T e^{tQ} - pi||_TV <= 1/4}
of small chains, from scipy.linalg.expm (Pade with scaling and squaring) by
bisection on t to relative 1e-10; d(t) does not increase with t.

1. a 60-state birth-death chain with rates 1 + 0.5 sin(k) up and
   1.3 + 0.4 cos(k) down (reversible);
2. a 30-state ring with drift: rate 2 clockwise, 0.5 anticlockwise, plus a
   chord 0 -> 15 at rate 0.3 (not reversible).

pi comes from the null space of Q^T (scipy.linalg.null_space).

Run with: /usr/bin/python3 testdata/spectra/make_mixing.py
"""
import json
import math
import os

import numpy as np
import scipy
import scipy.linalg as la


def chains():
    n = 60
    q = np.zeros((n, n))
    for k in range(n - 1):
        q[k, k + 1] = 1 + 0.5 * math.sin(k)
        q[k + 1, k] = 1.3 + 0.4 * math.cos(k)
    yield "birthdeath60", q
    n = 30
    q = np.zeros((n, n))
    for k in range(n):
        q[k, (k + 1) % n] += 2
        q[k, (k - 1) % n] += 0.5
    q[0, 15] += 0.3
    yield "ring30", q


def tmix(q):
    n = q.shape[0]
    q = q - np.diag(q.sum(axis=1))
    ns = la.null_space(q.T)[:, 0]
    pi = ns / ns.sum()

    def d(t):
        p = la.expm(t * q)
        return max(0.5 * np.abs(p[i] - pi).sum() for i in range(n))

    hi = 1.0
    while d(hi) > 0.25:
        hi *= 2
    lo = 0.0
    while hi - lo > 1e-10 * hi:
        mid = (lo + hi) / 2
        if d(mid) <= 0.25:
            hi = mid
        else:
            lo = mid
    return hi


def main():
    out = {"generator": "testdata/spectra/make_mixing.py", "scipy": scipy.__version__, "chains": []}
    for name, q in chains():
        rates = [[i, j, float(q[i, j])] for i in range(q.shape[0]) for j in range(q.shape[0]) if i != j and q[i, j] != 0]
        out["chains"].append({"name": name, "n": q.shape[0], "rates": rates, "t_mix": tmix(q)})
    here = os.path.dirname(os.path.abspath(__file__))
    with open(os.path.join(here, "mixing.json"), "w") as f:
        json.dump(out, f, indent=1)
        f.write("\n")


if __name__ == "__main__":
    main()
