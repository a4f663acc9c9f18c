#!/usr/bin/python3
"""Reference solutions of time-dependent linear problems u' = A(t)u whose
values A(t) do not commute, computed outside the project, for the
commutator-free Magnus tests of numerics/expo (TestMagnusAgainstScipy).

Run with Debian's interpreter:  /usr/bin/python3 testdata/expo/make_magnus_ref.py
Writes testdata/expo/magnus_ref.json beside this script.

"drift_diffusion": (0, 1) with Dirichlet ends, n interior points x_j = j h,
h = 1/(n+1); L = tridiag(1, −2, 1)/h², G = tridiag(−1, 0, 1)/(2h) (central
first difference), and

    A(t) = nu·L + cos(2t)·G − (0.5 + 0.5 sin t)·diag(x),

a drift that reverses direction and a decay rate that varies in time;
u0 = sin(πx) + 0.5 x. Integrated by scipy.integrate.solve_ivp with DOP853
and with Radau (analytic Jacobian A(t)), both at rtol 1e-12, atol 1e-14;
the values are DOP853's and "spread" is the largest difference between the
two, a measure of the reference's own error.
"""
import json
import os

import numpy as np
import scipy
from scipy.integrate import solve_ivp

N, NU = 12, 0.05
TIMES = [0.5, 1.0, 2.0, 3.0]


def operators(n):
    h = 1.0 / (n + 1)
    x = h * np.arange(1, n + 1)
    L = (np.diag(-2 * np.ones(n)) + np.diag(np.ones(n - 1), 1) + np.diag(np.ones(n - 1), -1)) / h**2
    G = (np.diag(np.ones(n - 1), 1) - np.diag(np.ones(n - 1), -1)) / (2 * h)
    return x, L, G


def main():
    x, L, G = operators(N)

    def A(t):
        return NU * L + np.cos(2 * t) * G - (0.5 + 0.5 * np.sin(t)) * np.diag(x)

    u0 = np.sin(np.pi * x) + 0.5 * x
    runs = {}
    for method in ("DOP853", "Radau"):
        kw = {"jac": lambda t, u: A(t)} if method == "Radau" else {}
        r = solve_ivp(lambda t, u: A(t) @ u, (0, max(TIMES)), u0, method=method,
                      t_eval=TIMES, rtol=1e-12, atol=1e-14, **kw)
        assert r.success, r.message
        runs[method] = r.y.T
    spread = float(np.max(np.abs(runs["DOP853"] - runs["Radau"])))
    out = {
        "source": "scipy %s solve_ivp DOP853 (values) and Radau (spread), rtol 1e-12, atol 1e-14" % scipy.__version__,
        "cases": {
            "drift_diffusion": {
                "n": N, "nu": NU, "u0": u0.tolist(), "times": TIMES,
                "values": runs["DOP853"].tolist(), "spread": spread,
            }
        },
    }
    path = os.path.join(os.path.dirname(os.path.abspath(__file__)), "magnus_ref.json")
    with open(path, "w") as f:
        json.dump(out, f, indent=1)
    print("wrote", path, "spread", spread)


if __name__ == "__main__":
    main()
