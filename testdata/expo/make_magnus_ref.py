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

"nonnormal_growth": a 2×2 generator with a large, varying coupling,

    A(t) = [0.1          3 + 2 sin 3t    ]
           [−0.02 − 0.01t  −1 + 0.5 cos 2t],

non-normal (‖e^{sA}‖ rises well above e^{s·max Re λ} before it settles) with
a slowly growing solution; u0 = (0, 1). The same two integrators and
tolerances.
"""
import json
import os

import numpy as np
import scipy
from scipy.integrate import solve_ivp

N, NU = 12, 0.05
TIMES = [0.5, 1.0, 2.0, 3.0]
NN_TIMES = [0.5, 1.0, 2.0, 4.0, 6.0]


def nonnormal(t):
    return np.array([[0.1, 3 + 2 * np.sin(3 * t)],
                     [-0.02 - 0.01 * t, -1 + 0.5 * np.cos(2 * t)]])


def reference(A, u0, times):
    """DOP853's values and their largest difference from Radau's."""
    runs = {}
    for method in ("DOP853", "Radau"):
        kw = {"jac": lambda t, u: A(t)} if method == "Radau" else {}
        r = solve_ivp(lambda t, u: A(t) @ u, (0, max(times)), u0, method=method,
                      t_eval=times, rtol=1e-12, atol=1e-14, **kw)
        assert r.success, r.message
        runs[method] = r.y.T
    return runs["DOP853"], float(np.max(np.abs(runs["DOP853"] - runs["Radau"])))


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
    values, spread = reference(A, u0, TIMES)
    nn0 = np.array([0.0, 1.0])
    nn_values, nn_spread = reference(nonnormal, nn0, NN_TIMES)
    out = {
        "source": "scipy %s solve_ivp DOP853 (values) and Radau (spread), rtol 1e-12, atol 1e-14" % scipy.__version__,
        "cases": {
            "drift_diffusion": {
                "n": N, "nu": NU, "u0": u0.tolist(), "times": TIMES,
                "values": values.tolist(), "spread": spread,
            },
            "nonnormal_growth": {
                "n": 2, "u0": nn0.tolist(), "times": NN_TIMES,
                "values": nn_values.tolist(), "spread": nn_spread,
            },
        },
    }
    path = os.path.join(os.path.dirname(os.path.abspath(__file__)), "magnus_ref.json")
    with open(path, "w") as f:
        json.dump(out, f, indent=1)
    print("wrote", path, "spreads", spread, nn_spread)


if __name__ == "__main__":
    main()
