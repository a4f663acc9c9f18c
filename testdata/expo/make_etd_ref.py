#!/usr/bin/python3
"""Reference solutions of semilinear problems u' = Lu + N(t, u), computed
outside the project, for the ETDRK4 and forcing tests of numerics/expo.

Run with Debian's interpreter:  /usr/bin/python3 testdata/expo/make_etd_ref.py
Writes testdata/expo/etd_ref.json beside this script.

Both cases discretise (0, 1) with Dirichlet ends by second differences:
n interior points x_j = j h, h = 1/(n+1), L = D·tridiag(1, −2, 1)/h².
Each is integrated by scipy.integrate.solve_ivp, method Radau, rtol 1e-12,
atol 1e-14, with the analytic sparse Jacobian L + diag(∂N/∂u).

- "allen_cahn": N(u) = u − u³, u0 = 0.5 sin(πx) + 0.3 sin(3πx), D = 0.01.
- "fisher_switch": N(t, u) = u(1 − u) + g(x)·[t < 1] with
  g(x) = 2 sin(πx), u0 = 0, D = 0.02: a source switched off at t = 1;
  solve_ivp is restarted at t = 1 so that no step straddles the switch.
"""
import json
import os

import numpy as np
import scipy
import scipy.sparse as sp
from scipy.integrate import solve_ivp


def laplacian(n, D):
    h = 1.0 / (n + 1)
    c = D / h**2
    L = sp.diags([c * np.ones(n - 1), -2 * c * np.ones(n), c * np.ones(n - 1)], [-1, 0, 1], format="csr")
    x = h * np.arange(1, n + 1)
    return L, x


def solve(L, N, dN, u0, times, breaks=()):
    """solve_ivp from 0 to max(times), restarted at each break."""
    stops = sorted(set([0.0] + [b for b in breaks if 0 < b < max(times)] + [max(times)]))
    out = {}
    u = np.array(u0, dtype=float)
    for a, b in zip(stops[:-1], stops[1:]):
        te = [t for t in times if a < t <= b]
        mid = 0.5 * (a + b)  # the side of each break is that of the segment
        f = lambda t, v: L @ v + N(mid if t in (a, b) else t, v)
        jac = lambda t, v: (L + sp.diags(dN(v))).tocsc()
        ev = sorted(set(te + [b]))  # b too: the next segment starts from it
        r = solve_ivp(f, (a, b), u, method="Radau", rtol=1e-12, atol=1e-14, jac=jac, t_eval=ev)
        assert r.success, r.message
        for k, t in enumerate(r.t):
            if t in te:
                out[t] = r.y[:, k].tolist()
        u = r.y[:, -1]
    return [out[t] for t in times]


def main():
    cases = {}
    n, D = 50, 0.01
    L, x = laplacian(n, D)
    u0 = 0.5 * np.sin(np.pi * x) + 0.3 * np.sin(3 * np.pi * x)
    times = [0.5, 2.0, 5.0]
    vals = solve(L, lambda t, u: u - u**3, lambda u: 1 - 3 * u**2, u0, times)
    cases["allen_cahn"] = {"n": n, "D": D, "u0": u0.tolist(), "times": times, "values": vals}

    n, D = 40, 0.02
    L, x = laplacian(n, D)
    g = 2 * np.sin(np.pi * x)
    times = [0.5, 1.5, 3.0]
    N = lambda t, u: u * (1 - u) + (g if t < 1 else 0 * g)
    vals = solve(L, N, lambda u: 1 - 2 * u, np.zeros(n), times, breaks=[1.0])
    cases["fisher_switch"] = {"n": n, "D": D, "switch": 1.0, "g_amp": 2.0, "times": times, "values": vals}

    meta = {"source": "scipy.integrate.solve_ivp Radau rtol=1e-12 atol=1e-14, analytic sparse Jacobian",
            "scipy": scipy.__version__, "numpy": np.__version__}
    with open(os.path.join(os.path.dirname(os.path.abspath(__file__)), "etd_ref.json"), "w") as fp:
        json.dump({"meta": meta, "cases": cases}, fp, indent=1)


if __name__ == "__main__":
    main()
