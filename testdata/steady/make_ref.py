"""Reference values for the steady-state solver (numerics/steady).

Run with Debian's python3 from this folder:  /usr/bin/python3 make_ref.py
Writes ref.json.

1. The Bratu problem u'' + λ e^u = 0 on (0, 1), u(0) = u(1) = 0, whose
   solutions are u(x) = −2 ln(cosh((x − ½)θ/2) / cosh(θ/4)) with θ a root
   of θ = √(2λ) cosh(θ/4) (two roots, the lower and the upper branch, for
   λ below the turning point λc ≈ 3.5138). θ by mpmath.findroot at 40
   digits; the closed form evaluated at x = 1/4 and 1/2 in mpmath.
2. The same problem discretised by second-order central differences on
   n interior points (h = 1/(n+1)): the discrete steady state by
   scipy.optimize.root (method "hybr" with the analytic tridiagonal
   Jacobian) polished by three Newton steps with numpy.linalg.solve, and the eigenvalues of the dense Jacobian
   D2 + λ diag(e^u) by numpy.linalg.eigvalsh (symmetric) and, as an
   independent second method, scipy.linalg.eig; the larger of their
   differences goes into "spread".
"""
import json

import mpmath as mp
import numpy as np
import scipy
import scipy.linalg as sl
import scipy.optimize as so

mp.mp.dps = 40


def bratu_theta(lam, start):
    return mp.findroot(lambda t: t - mp.sqrt(2 * lam) * mp.cosh(t / 4), start)


def bratu_u(theta, x):
    return -2 * mp.log(mp.cosh((x - mp.mpf(1) / 2) * theta / 2) / mp.cosh(theta / 4))


out = {"source": "mpmath %s (closed form), scipy %s, numpy %s" % (mp.__version__, scipy.__version__, np.__version__),
       "bratu": [], "discrete": []}
for lam, branch, start in [(1, "lower", 1.5), (1, "upper", 10.0), (3, "lower", 3.0)]:
    th = bratu_theta(mp.mpf(lam), start)
    out["bratu"].append({
        "lambda": lam, "branch": branch, "theta": mp.nstr(th, 25),
        "u_quarter": mp.nstr(bratu_u(th, mp.mpf(1) / 4), 25),
        "u_half": mp.nstr(bratu_u(th, mp.mpf(1) / 2), 25),
    })

for lam, n in [(1.0, 200), (3.0, 100)]:
    h = 1.0 / (n + 1)
    x = np.arange(1, n + 1) * h
    D2 = (np.diag(-2 * np.ones(n)) + np.diag(np.ones(n - 1), 1) + np.diag(np.ones(n - 1), -1)) / h**2

    def F(u):
        return D2 @ u + lam * np.exp(u)

    def J(u):
        return D2 + np.diag(lam * np.exp(u))

    sol = so.root(F, np.zeros(n), jac=J, method="hybr")
    assert sol.success, sol.message
    u = sol.x
    for _ in range(3):  # polish by plain Newton steps with a dense solve
        u = u - np.linalg.solve(J(u), F(u))
    ev1 = np.sort(np.linalg.eigvalsh(J(u)))[::-1]
    ev2 = np.sort(sl.eig(J(u))[0].real)[::-1]
    spread = float(np.max(np.abs(ev1 - ev2)))
    out["discrete"].append({
        "lambda": lam, "n": n, "u_mid": float(u[n // 2 - 1] if n % 2 == 0 else u[n // 2]),
        "u_max": float(u.max()), "residual": float(np.max(np.abs(F(u)))),
        "rightmost": [float(v) for v in ev1[:6]], "spread": spread,
    })

with open("ref.json", "w") as f:
    json.dump(out, f, indent=1)
    f.write("\n")
print(json.dumps(out, indent=1))
