#!/usr/bin/python3
"""Reference values for complex matrices and complex operators.

Run from this folder with Debian's python3: /usr/bin/python3 make_complex.py
Writes complex_ref.json. Every value comes from Debian's numpy/scipy
(scipy.linalg.eigvals, expm, svdvals, numpy.linalg.eigvalsh), computed on
exactly the doubles written beside it (17 significant digits).
"""
import json

import numpy as np
import scipy
import scipy.linalg as sl


def cplx(z):
    z = np.asarray(z)
    return {"re": [float(x) for x in z.real.ravel()], "im": [float(x) for x in z.imag.ravel()]}


def random_case(name, n, seed, times, points, angles):
    rng = np.random.default_rng(seed)
    a = rng.standard_normal((n, n)) + 1j * rng.standard_normal((n, n))
    a = np.array([[complex(float("%.17g" % x.real), float("%.17g" % x.imag)) for x in row] for row in a])
    return case(name, a, times, points, angles)


def case(name, a, times, points, angles):
    n = a.shape[0]
    ev = sl.eigvals(a)
    out = {
        "name": name,
        "n": n,
        "a": cplx(a),
        "eigenvalues": cplx(ev),
        "times": list(times),
        "expm": [cplx(sl.expm(t * a)) for t in times],
        # ‖e^{tA}‖₂ = largest singular value of expm(tA)
        "expnorm": [float(sl.svdvals(sl.expm(t * a))[0]) for t in times],
        "points": cplx(np.array(points)),
        # σ_min(zI − A) = 1/‖(zI − A)⁻¹‖₂
        "sigmin": [float(sl.svdvals(z * np.eye(n) - a)[-1]) for z in points],
        # ω(A) = λmax((A + A*)/2)
        "numabscissa": float(np.linalg.eigvalsh((a + a.conj().T) / 2)[-1]),
        "angles": list(angles),
        # support of W(A) in direction θ: λmax((e^{−iθ}A + e^{iθ}A*)/2)
        "support": [float(np.linalg.eigvalsh((np.exp(-1j * th) * a + np.exp(1j * th) * a.conj().T) / 2)[-1]) for th in angles],
    }
    return out


def convection_diffusion(n, a, b, c, length):
    """u_t = (a + ib) u_xx + c u_x on (0, length), Dirichlet ends, n interior
    points, second-order central differences: a tridiagonal Toeplitz matrix
    with sub-diagonal s = (a+ib)/h² − c/(2h), diagonal d = −2(a+ib)/h²,
    super-diagonal p = (a+ib)/h² + c/(2h); eigenvalues in closed form
    d + 2√(sp) cos(kπ/(n+1)), k = 1..n."""
    h = length / (n + 1)
    nu = complex(a, b)
    s, d, p = nu / h**2 - c / (2 * h), -2 * nu / h**2, nu / h**2 + c / (2 * h)
    m = np.diag(np.full(n, d)) + np.diag(np.full(n - 1, s), -1) + np.diag(np.full(n - 1, p), 1)
    closed = [d + 2 * np.sqrt(s * p) * np.cos(k * np.pi / (n + 1)) for k in range(1, n + 1)]
    return m, closed


def main():
    cases = [
        random_case("random6", 6, 20261203, [0.3, 1.0], [0.5 + 0.5j, -1 + 2j, 3j], [0, 0.7, 2.0, 4.0]),
        random_case("random40", 40, 4040, [0.1, 0.5], [1 + 1j, -2 - 3j], [0, 1.0, 3.0]),
    ]
    m, closed = convection_diffusion(30, 0.02, 0.05, 1.0, 1.0)
    cd = case("convdiff30", m, [0.1, 0.5, 1.0], [-1 + 0j, -5 + 2j, -20 - 5j], [0, 1.5])
    cd["closed_eigenvalues"] = cplx(np.array(closed))
    cd["pde"] = {"n": 30, "a": 0.02, "b": 0.05, "c": 1.0, "length": 1.0}
    cases.append(cd)
    meta = {"generator": "make_complex.py", "numpy": np.__version__, "scipy": scipy.__version__}
    with open("complex_ref.json", "w") as f:
        json.dump({"meta": meta, "cases": cases}, f)


if __name__ == "__main__":
    main()
