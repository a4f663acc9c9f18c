#!/usr/bin/python3
"""The trust corpus: problems of our own in seven families, each with a
Semiflow script that computes the answer and a JSON file with the answer
computed outside the project, its source named beside it.

Run with Debian's python3 from this directory:

    /usr/bin/python3 make_trust.py            # writes problems/
    /usr/bin/python3 make_trust.py --only NAME

For each problem NAME it writes problems/NAME.sf (the Semiflow script),
problems/NAME.json (the reference values and verdicts) and, where the
operator or the initial value is read from a file, problems/NAME_A.mtx,
problems/NAME_u0.mtx (and NAME_W.mtx for an inner product) written by
scipy.io.mmwrite with 17 digits, so that they read back to the same
doubles. Every reference is computed from the doubles read back from those
files (or from the exact doubles the script builds), so the reference is the
exact answer for the very operator Semiflow sees.

The Go harness is lang/run/trust_test.go. The variables a script defines
and the checks made on them:

    sol   a propagate result     ‖sol[k] − ref_k‖∞ within tol·‖u0‖∞ or flagged
                                 as not met, and true error ≤ estimate ≤
                                 1000·max(true error, u·‖ref_k‖∞)
    gen   wellposed(A, omega=0)  dissipative (ω(A) ≤ 0) and stable (α(A) < 0)
    mk    markov(Q)              gap within 1e-10 relative, reversible
    gap   a number               the spectral gap, within 1e-10 relative
    spec  spectrum(A)            defective eigenvalues flagged, others not

Each reference carries "spread": a bound on its own error, the difference
between two independent computations of it (for instance scipy's expm
against a closed form or mpmath), so a check can tell the reference's error
from Semiflow's.
"""
import argparse
import json
import math
import os
import sys

import mpmath
import numpy as np
import scipy
import scipy.io
import scipy.linalg as sl
import scipy.sparse as sp
import scipy.sparse.linalg as spl
from scipy.integrate import solve_ivp

OUT = "problems"
SCIPY = "scipy " + scipy.__version__
MPMATH = "mpmath " + mpmath.__version__
NUMPY = "numpy " + np.__version__
U = 2.0 ** -53

problems = {}


# ----------------------------------------------------------------- helpers

def path(name, what):
    return os.path.join(OUT, "%s_%s.mtx" % (name, what))


def write_matrix(name, A, what="A", symmetry="general", array=False):
    """Writes A to problems/NAME_WHAT.mtx and returns what reads back."""
    p = path(name, what)
    data = np.asarray(A.toarray() if sp.issparse(A) else A, dtype=float) if array else sp.coo_matrix(A)
    scipy.io.mmwrite(p, data, comment="trust corpus: %s (written by %s)" % (name, SCIPY),
                     precision=17, symmetry=symmetry)
    back = scipy.io.mmread(p)
    back = back.toarray() if sp.issparse(back) else np.asarray(back)
    dense = A.toarray() if sp.issparse(A) else np.asarray(A)
    assert np.array_equal(back, dense), "round trip of " + p
    return back


def write_vector(name, u, what="u0"):
    p = path(name, what)
    u = np.asarray(u, dtype=float).reshape(-1, 1)
    scipy.io.mmwrite(p, u, comment="trust corpus: %s initial value (written by %s)" % (name, SCIPY),
                     precision=17)
    back = np.asarray(scipy.io.mmread(p)).reshape(-1)
    assert np.array_equal(back, u.reshape(-1)), "round trip of " + p
    return back


def lit(x):
    """A number as Semiflow source: the shortest text that reads back."""
    r = repr(float(x))
    if "e" in r:  # 1e-08 → 1e-8
        m, e = r.split("e")
        r = m + "e" + str(int(e))
    return r[:-2] if r.endswith(".0") else r


def vec_lit(v):
    return "[" + ", ".join(lit(x) for x in v) + "]"


READ_A = 'A = readmm("{name}_A.mtx")\n'
READ_U0 = 'u0 = dense(readmm("{name}_u0.mtx"))[0 .. -1, 0]\n'


def add(name, family, scenario, script, **checks):
    assert name not in problems, name
    header = "# Trust corpus, family %s: %s\n# %s\n" % (family, name, scenario)
    for kind, c in checks.items():
        header += "# %s: %s\n" % (kind, c["reference"])
    with open(os.path.join(OUT, name + ".sf"), "w") as f:
        f.write(header + script.replace("{name}", name))
    if "propagate" in checks:
        # tol is relative to ‖u0‖∞ for u' = Au, to the largest ‖u‖∞ met with
        # a forcing or a nonlinear term (the contract of propagate).
        checks["propagate"]["tol_scale"] = "max_u" if family in ("forcing-jumps", "semilinear") else "u0"
    rec = {"name": name, "family": family, "scenario": scenario, "script": name + ".sf"}
    rec.update(checks)
    with open(os.path.join(OUT, name + ".json"), "w") as f:
        json.dump(rec, f, indent=1, ensure_ascii=False)
        f.write("\n")
    problems[name] = rec
    print("%-34s %-22s %s" % (name, family, ", ".join(checks)), file=sys.stderr)


def prop_check(u0, times, values, reference, spread, tol=1e-8, var="sol"):
    values = [np.asarray(v, dtype=float) for v in values]
    return {"var": var, "tol": tol, "u0_norm": float(np.max(np.abs(u0))), "times": [float(t) for t in times],
            "values": [v.tolist() for v in values], "reference": reference,
            "spread": float(spread)}


def agree(a, b, what, scale=1.0, limit=1e-6):
    """Max ∞-norm difference of two lists of vectors; fails generation when
    two independent references disagree beyond limit·scale."""
    d = max(float(np.max(np.abs(np.asarray(x, dtype=float) - np.asarray(y, dtype=float)))) for x, y in zip(a, b))
    assert d <= limit * scale, "%s: references disagree by %g (scale %g)" % (what, d, scale)
    return d


def expm_values(A, u0, times):
    A = A.toarray() if sp.issparse(A) else np.asarray(A)
    return [sl.expm(t * A) @ u0 for t in times]


def expm_multiply_values(A, u0, times):
    A = sp.csr_matrix(A)
    return [spl.expm_multiply(t * A, u0) for t in times]


def mp_expm_values(A, u0, times, dps=40):
    """e^{tA}u0 in mpmath at dps digits (Taylor with scaling and squaring)."""
    with mpmath.workdps(dps):
        M = mpmath.matrix(np.asarray(A.toarray() if sp.issparse(A) else A, dtype=float).tolist())
        v = mpmath.matrix([float(x) for x in u0])
        out = []
        for t in times:
            E = mpmath.expm(mpmath.mpf(t) * M)
            w = E * v
            out.append(np.array([float(w[i]) for i in range(len(u0))]))
        return out


def scipy_pair(A, u0, times, what):
    """References by scipy's expm and expm_multiply; spread = their difference."""
    a = expm_values(A, u0, times)
    b = expm_multiply_values(A, u0, times)
    scale = max(np.max(np.abs(x)) for x in a)
    d = agree(a, b, what, scale, 1e-9)
    return a, d + U * scale


def mp_pair(A, u0, times, what):
    """mpmath at 40 digits, checked against scipy's expm."""
    a = mp_expm_values(A, u0, times)
    b = expm_values(A, u0, times)
    scale = max(np.max(np.abs(x)) for x in a)
    agree(a, b, what, scale, 1e-6)
    return a, U * scale  # 40 digits, then rounded once to double


def omega_alpha(A):
    """ω(A) = λmax((A+Aᵀ)/2) and α(A) = max Re λ, by numpy (LAPACK)."""
    D = A.toarray() if sp.issparse(A) else np.asarray(A)
    om = float(np.max(np.linalg.eigvalsh((D + D.T) / 2)))
    al = float(np.max(np.linalg.eigvals(D).real))
    return om, al


def gen_check(dissipative, stable, omega, alpha, reference):
    """A wellposed(A, omega=0) check; stable None for a marginal α = 0 (no sign to test)."""
    c = {"var": "gen", "dissipative": bool(dissipative), "omega_A": float(omega),
         "alpha": float(alpha), "reference": reference,
         # the sign of α(A): −1 (decays), +1 (grows), 0 (α = 0 exactly)
         "alpha_sign": 0 if stable is None else (-1 if stable else 1)}
    if stable is not None:
        c["stable"] = bool(stable)
    return c


def weighted_omega(D, W):
    """ω_W(A) = λmax of the symmetric part of R A R⁻¹, W = RᵀR (Cholesky)."""
    R = np.linalg.cholesky(W).T
    B = R @ D @ np.linalg.inv(R)
    return float(np.max(np.linalg.eigvalsh((B + B.T) / 2)))


# ------------------------------------------------- family 1: second-order

def second_order_modal(kind, n, kappa, a, b, q0, v0, times, dps=30):
    """e^{tA}(q0, v0) for A = [[0, I], [−K, −C]], K = κ T (string) or κ T²
    (beam), T = tridiag(−1, 2, −1)(n+1)², C = aI + bK: every sine mode
    s_j(i) = sin(jπi/(n+1)) solves x'' + (a + b k_j) x' + k_j x = 0 in
    closed form."""
    with mpmath.workdps(dps):
        N1 = n + 1
        h2 = mpmath.mpf(N1) ** 2
        S = [[mpmath.sin(mpmath.pi * j * i / N1) for i in range(1, n + 1)] for j in range(1, n + 1)]
        qh = [2 * mpmath.fsum(S[j][i] * q0[i] for i in range(n)) / N1 for j in range(n)]
        vh = [2 * mpmath.fsum(S[j][i] * v0[i] for i in range(n)) / N1 for j in range(n)]
        out = []
        roots = []
        for j in range(n):
            tj = 4 * h2 * mpmath.sin(mpmath.pi * (j + 1) / (2 * N1)) ** 2
            k = kappa * (tj if kind == "string" else tj ** 2)
            c = a + b * k
            disc = mpmath.sqrt(mpmath.mpc(c * c - 4 * k))
            rp, rm = (-c + disc) / 2, (-c - disc) / 2
            assert abs(rp - rm) > mpmath.mpf(10) ** (-10) * (1 + abs(rp)), "critical damping"
            roots.append((rp, rm))
        for t in times:
            x, xd = [], []
            for j in range(n):
                rp, rm = roots[j]
                A_ = (vh[j] - rm * qh[j]) / (rp - rm)
                B_ = qh[j] - A_
                ep, em = mpmath.exp(rp * t), mpmath.exp(rm * t)
                x.append(mpmath.re(A_ * ep + B_ * em))
                xd.append(mpmath.re(rp * A_ * ep + rm * B_ * em))
            q = [float(mpmath.fsum(S[j][i] * x[j] for j in range(n))) for i in range(n)]
            v = [float(mpmath.fsum(S[j][i] * xd[j] for j in range(n))) for i in range(n)]
            out.append(np.array(q + v))
        alpha = max(float(mpmath.re(r[0])) for r in roots)
        return out, alpha


def block_operator(kind, n, kappa, a, b):
    h2 = float((n + 1) ** 2)
    T = sp.diags([-h2 * np.ones(n - 1), 2 * h2 * np.ones(n), -h2 * np.ones(n - 1)], [-1, 0, 1])
    K = kappa * (T if kind == "string" else T @ T)
    C = a * sp.identity(n) + b * K
    A = sp.bmat([[None, sp.identity(n)], [-K, -C]]).tocsr()
    A.eliminate_zeros()
    return A, K.toarray()


def family_second_order():
    fam = "second-order"
    cases = [
        # name, kind, n, κ, a, b, times, scenario
        ("guitar_string_rayleigh_n63", "string", 63, 4.0, 0.5, 2.0 ** -14, [0.01, 0.1, 0.5],
         "a guitar-like string plucked at a fifth of its length, Rayleigh damping C = 0.5 I + 2^-14 K, 63 interior points"),
        ("guitar_string_rayleigh_n255", "string", 255, 4.0, 0.5, 2.0 ** -16, [0.01, 0.1, 0.5],
         "the same string on 255 interior points: a 510-unknown block operator, beyond the dense cut-off"),
        ("bridge_deck_beam_n31", "beam", 31, 2.0 ** -6, 0.25, 2.0 ** -12, [0.005, 0.05, 0.2],
         "a pedestrian bridge deck as a simply supported Euler–Bernoulli beam with Kelvin–Voigt damping, 31 interior points"),
        ("bridge_deck_beam_n127", "beam", 127, 2.0 ** -10, 0.25, 2.0 ** -16, [0.002, 0.02, 0.1],
         "the bridge deck on 127 interior points: stiff, ‖K‖ ≈ 2.6e5"),
        ("violin_string_light_damping_n127", "string", 127, 1.0, 2.0 ** -8, 0.0, [0.05, 0.5, 2.0],
         "a lightly damped violin-like string (mass damping only, a = 2^-8) bowed into a sine-and-bump shape"),
        ("footbridge_beam_overdamped_n15", "beam", 15, 1.0, 8.0, 2.0 ** -6, [0.01, 0.1, 1.0],
         "a short footbridge span on heavy dampers: the low modes overdamped, the high ones overdamped by Kelvin–Voigt"),
    ]
    for name, kind, n, kappa, a, b, times, scen in cases:
        A, K = block_operator(kind, n, kappa, a, b)
        Ad = write_matrix(name, A)
        x = np.arange(1, n + 1) / (n + 1)
        if "guitar" in name:
            q0 = np.where(x < 0.2, x / 0.2, (1 - x) / 0.8) * 1e-3
            v0 = np.zeros(n)
        elif "violin" in name:
            q0 = np.sin(np.pi * x) + 0.1 * np.exp(-200 * (x - 0.3) ** 2) * x * (1 - x) * 4
            v0 = np.zeros(n)
        else:
            q0 = np.zeros(n)
            v0 = np.exp(-100 * (x - 0.4) ** 2)  # a crowd's footfall impulse
        u0 = write_vector(name, np.concatenate([q0, v0]))
        ref, alpha = second_order_modal(kind, n, kappa, a, b, list(u0[:n]), list(u0[n:]), times)
        chk = expm_values(Ad, u0, times)
        scale = max(np.max(np.abs(r)) for r in ref)
        agree(ref, chk, name + " closed form vs expm", scale, 1e-7)
        om, al_np = omega_alpha(Ad)
        refname = ("closed form: damped sine modes x'' + (a + b k_j) x' + k_j x = 0 of the %s "
                   "(k_j from the Dirichlet second difference), summed in %s at 30 digits; "
                   "checked against %s expm" % ("string" if kind == "string" else "simply supported beam", MPMATH, SCIPY))
        script = READ_A + READ_U0 + "sol = propagate(A, u0, %s, tol=1e-8)\n" % vec_lit(times)
        checks = {"propagate": prop_check(u0, times, ref, refname, U * scale)}
        if n <= 63:  # the generator report on order 254 takes tens of seconds
            script += "gen = wellposed(A, omega=0)\n"
            checks["generator"] = gen_check(om <= 0, alpha < 0, om, alpha,
                                            "ω(A) = λmax((A+Aᵀ)/2) by %s eigvalsh; α(A) from the closed-form modal roots" % NUMPY)
            assert om > 1e-3, "Euclidean ω of the block operator should be clearly positive"
        add(name, fam, scen, script, **checks)

    # The same damped string in its energy inner product ⟨u, w⟩ = qᵀK q' + vᵀv':
    # there ⟨Au, u⟩ = −vᵀCv ≤ 0, and ω_W(A) = 0 exactly (the q-block of
    # the symmetric part of RAR⁻¹ is zero).
    for name, n, a, b, scen in [
            ("string_energy_norm_n31", 31, 0.5, 2.0 ** -12,
             "a damped string in its energy inner product (W = diag(K, I)): dissipative, with ω_W(A) = 0 exactly"),
            ("undamped_string_energy_n31", 31, 0.0, 0.0,
             "an undamped string: conservative in the energy inner product (ω_W = 0), not asymptotically stable (α = 0)")]:
        A, K = block_operator("string", n, 1.0, a, b)
        Ad = write_matrix(name, A)
        W = np.zeros((2 * n, 2 * n))
        W[:n, :n] = K
        W[n:, n:] = np.eye(n)
        Wd = write_matrix(name, sp.coo_matrix(W), what="W", symmetry="symmetric")
        x = np.arange(1, n + 1) / (n + 1)
        u0 = write_vector(name, np.concatenate([np.sin(2 * np.pi * x) * x, np.zeros(n)]))
        times = [0.1, 1.0]
        ref, alpha = second_order_modal("string", n, 1.0, a, b, list(u0[:n]), list(u0[n:]), times)
        agree(ref, expm_values(Ad, u0, times), name, max(np.max(np.abs(r)) for r in ref), 1e-7)
        omw = weighted_omega(Ad, Wd)
        scale = max(np.max(np.abs(r)) for r in ref)
        script = (READ_A + READ_U0 + 'W = dense(readmm("{name}_W.mtx"))\n' +
                  "sol = propagate(A, u0, %s, tol=1e-8)\n" % vec_lit(times) +
                  "gen = wellposed(A, weight=W, omega=0)\n")
        gen = gen_check(True, None if a == 0 else alpha < 0, 0.0, alpha,
                        "closed form: ⟨Au, u⟩_W = −vᵀCv ≤ 0 in the energy inner product, so ω_W(A) = 0 exactly "
                        "(%s gives %.2e from a Cholesky factor); α(A) from the modal roots" % (NUMPY, omw))
        add(name, fam, scen, script,
            propagate=prop_check(u0, times, ref, "closed form: damped sine modes of the string in %s at 30 digits" % MPMATH,
                                 U * scale),
            generator=gen)

    # A shear building: floors as masses joined by storey springs (free top),
    # Rayleigh damping; no closed form, so mpmath at 40 digits.
    name = "shear_building_10_storeys"
    n = 10
    k = np.array([4.0, 4, 3.5, 3.5, 3, 3, 2.5, 2.5, 2, 2])
    K = np.zeros((n, n))
    for i in range(n):
        K[i, i] += k[i]
        if i + 1 < n:
            K[i, i] += k[i + 1]
            K[i, i + 1] = K[i + 1, i] = -k[i + 1]
    m = np.array([2.0, 2, 2, 2, 2, 2, 2, 2, 2, 1])
    Minv = np.diag(1 / m)
    C = 0.05 * np.diag(m) + 0.02 * K
    A = np.block([[np.zeros((n, n)), np.eye(n)], [-Minv @ K, -Minv @ C]])
    Ad = write_matrix(name, A)
    u0 = write_vector(name, np.concatenate([np.zeros(n), 0.3 * np.ones(n)]))
    times = [0.5, 5.0, 30.0]
    ref, spread = mp_pair(Ad, u0, times, name)
    om, al = omega_alpha(Ad)
    add(name, fam, "a ten-storey shear building after a ground jolt (all floors moving at 0.3 m/s), masses, storey stiffnesses and Rayleigh damping C = 0.05 M + 0.02 K",
        READ_A + READ_U0 + "sol = propagate(A, u0, %s, tol=1e-8)\ngen = wellposed(A, omega=0)\n" % vec_lit(times),
        propagate=prop_check(u0, times, ref, "%s expm at 40 digits, checked against %s expm" % (MPMATH, SCIPY), spread),
        generator=gen_check(om <= 0, al < 0, om, al, "ω(A), α(A) by %s eigvalsh and eigvals" % NUMPY))


# ---------------------------------------------------------- family 2: chains

def birth_death(n, up, down):
    """Rate matrix of a birth–death chain on 0..n−1: up[i] = rate i → i+1,
    down[i] = rate i+1 → i."""
    Q = sp.diags([np.asarray(down, float), np.asarray(up, float)], [-1, 1]).tolil()
    Q.setdiag(-np.asarray(Q.sum(axis=1)).reshape(-1))
    return Q.tocsr()


def bd_gap_mp(up, down, dps=50):
    """The spectral gap of a birth–death chain, in mpmath: the chain is
    reversible, so Q is similar to the symmetric tridiagonal S with
    S_ii = Q_ii, S_i,i+1 = √(up_i down_i); the two largest eigenvalues of S
    (0 and −gap) by Sturm-sequence bisection."""
    n = len(up) + 1
    with mpmath.workdps(dps):
        d = [mpmath.mpf(0)] * n
        for i in range(n - 1):
            d[i] -= up[i]
            d[i + 1] -= down[i]
        e2 = [mpmath.mpf(up[i]) * mpmath.mpf(down[i]) for i in range(n - 1)]

        def count_above(x):  # eigenvalues of S greater than x
            c, q = 0, d[0] - x
            if q < 0:
                c += 1
            for i in range(1, n):
                if q == 0:
                    q = mpmath.mpf(10) ** (-dps)
                q = d[i] - x - e2[i - 1] / q
                if q < 0:
                    c += 1
            return n - c

        lo = -2 * max(abs(x) for x in d) - 1
        hi = mpmath.mpf(0) - mpmath.mpf(10) ** (-dps // 2)  # just below the eigenvalue 0
        for _ in range(int(dps * 3.5) + 20):
            mid = (lo + hi) / 2
            if count_above(mid) >= 2:  # 0 and λ₁ above mid
                lo = mid
            else:
                hi = mid
        return float(-(lo + hi) / 2)


def family_chains():
    fam = "chains"
    # A pharmacy queue: customers arrive at rate λ, one pharmacist serves at
    # rate μ, at most n − 1 wait. Eigenvalues 0 and −(λ+μ) + 2√(λμ)cos(kπ/n),
    # k = 1..n−1 (constant-rate birth–death chain).
    for name, n, lam, mu, times, scen, gapway in [
            ("pharmacy_queue_500", 500, 0.9, 1.0, [5.0, 50.0],
             "a pharmacy queue with 500 states: arrivals 0.9/min, service 1/min; stationary π spans 23 decades", "spectrum"),
            ("pharmacy_queue_150", 150, 0.8, 1.0, [5.0, 50.0],
             "a small pharmacy queue with 150 states: arrivals 0.8/min, service 1/min; stationary π spans 14 decades", "markov"),
            ("pharmacy_queue_2000", 2000, 0.98, 1.0, [20.0, 200.0],
             "a busy pharmacy queue with 2000 states, arrivals 0.98/min, service 1/min", "spectrum"),
            ("pharmacy_queue_10000", 10000, 0.999, 1.0, [100.0],
             "a pharmacy chain's phone queue with 10000 states, arrivals 0.999/min, service 1/min", "spectrum"),
            ("balanced_queue_1000", 1000, 1.0, 1.0, [10.0, 100.0],
             "a balanced queue (arrival = service = 1/min) with 1000 states: a symmetric generator", "spectrum")]:
        up, down = lam * np.ones(n - 1), mu * np.ones(n - 1)
        Q = birth_death(n, up, down)
        with mpmath.workdps(50):
            closed = float(-(-(mpmath.mpf(lam) + mu) + 2 * mpmath.sqrt(mpmath.mpf(lam) * mu) * mpmath.cos(mpmath.pi / n)))
        sturm = bd_gap_mp(list(up), list(down))
        assert abs(closed - sturm) <= 1e-13 * closed, (name, closed, sturm)
        p0 = np.zeros(n)
        p0[0] = 1.0
        u0 = write_vector(name, p0)
        QT = Q.T.tocsr()
        trans = "tr(k) = when(k < n - 1, [k, k + 1, %s], [k - n + 2, k - n + 1, %s])\n" % (lit(lam), lit(mu))
        script = ("n = %d\n" % n + trans + "Q = chain(n, map(tr, 0 .. 2*n - 3))\n" + READ_U0 +
                  "sol = propagate(adjoint(Q), u0, %s, tol=1e-8)\n" % vec_lit(times))
        if n <= 2000:
            ref, spread = scipy_pair(QT, u0, times, name)
            src = "%s expm on the dense Qᵀ, checked against expm_multiply (spread = their difference)" % SCIPY
        else:
            ref = expm_multiply_values(QT, u0, times)
            # An independent check: the symmetrised generator D^{1/2} Qᵀ D^{-1/2}
            # is symmetric tridiagonal; its eigendecomposition gives e^{tQᵀ}.
            logpi = np.concatenate([[0.0], np.cumsum(np.log(up / down))])
            s = np.exp(0.5 * (logpi - logpi.max()))
            dg = np.asarray(Q.diagonal())
            off = np.sqrt(up * down)
            w, V = sl.eigh_tridiagonal(dg, off)
            alt = [s * (V @ (np.exp(t * w) * (V.T @ (u0 / s)))) for t in times]
            spread = agree(ref, alt, name, 1.0, 1e-9) + U
            src = "%s expm_multiply, checked against the eigendecomposition of the symmetrised tridiagonal generator (spread = their difference)" % SCIPY
        checks = {"propagate": prop_check(u0, times, ref, src, spread)}
        gsrc = ("closed form: eigenvalues 0 and −(λ+μ) + 2√(λμ)cos(kπ/n) of the constant-rate birth–death chain; "
                "confirmed by Sturm bisection on the symmetrised generator in %s at 50 digits" % MPMATH)
        if gapway == "markov":
            script += "mk = markov(Q)\n"
            checks["markov"] = {"var": "mk", "gap": closed, "reversible": True, "reference": gsrc}
        else:
            script += "spec2 = spectrum(Q, count=2, near=0.001)\ngap = -re(spec2[1, 1])\n"
            checks["gap"] = {"var": "gap", "value": closed, "reference": gsrc}
        add(name, fam, scen, script, **checks)

    # Ehrenfest urn: n balls in two urns, each ball switches urn at rate r.
    # States k = balls in urn 1; eigenvalues −2rj, j = 0..n, gap 2r.
    # From state 0 each ball is in urn 1 with p(t) = (1 − e^{−2rt})/2,
    # so the distribution is binomial (closed form).
    name, nb, r = "ehrenfest_urn_100", 100, 0.25
    n = nb + 1
    up = r * (nb - np.arange(nb))
    down = r * (np.arange(1, nb + 1))
    p0 = np.zeros(n)
    p0[0] = 1
    u0 = write_vector(name, p0)
    times = [0.5, 2.0, 10.0]
    ref = []
    with mpmath.workdps(40):
        for t in times:
            p = (1 - mpmath.exp(-2 * r * mpmath.mpf(t))) / 2
            ref.append(np.array([float(mpmath.binomial(nb, k) * p ** k * (1 - p) ** (nb - k)) for k in range(n)]))
    Q = birth_death(n, up, down)
    agree(ref, expm_values(Q.T, u0, times), name, 1.0, 1e-9)
    script = ("nb = %d\nr = %s\n" % (nb, lit(r)) +
              "tr(k) = when(k < nb, [k, k + 1, r * (nb - k)], [k - nb + 1, k - nb, r * (k - nb + 1)])\n"
              "Q = chain(nb + 1, map(tr, 0 .. 2*nb - 1))\n" + READ_U0 +
              "sol = propagate(adjoint(Q), u0, %s, tol=1e-8)\nmk = markov(Q)\n" % vec_lit(times))
    add(name, fam, "an Ehrenfest urn: 100 balls, each switching urns at rate 1/4, started with urn 1 empty", script,
        propagate=prop_check(u0, times, ref, "closed form: independent balls, binomial(100, (1 − e^{−2rt})/2) distribution, in %s at 40 digits" % MPMATH, U),
        markov={"var": "mk", "gap": 2 * r, "reversible": True,
                "reference": "closed form: the Ehrenfest chain has eigenvalues −2rj, j = 0..100, gap 2r"})

    # A symmetric random walk on a cycle (a ring of bike-share docks).
    name, n, r = "bike_ring_walk_120", 120, 0.5
    p0 = np.zeros(n)
    p0[0] = 1
    u0 = write_vector(name, p0)
    times = [1.0, 20.0, 500.0]
    ref = []
    with mpmath.workdps(30):
        cos = [mpmath.cos(2 * mpmath.pi * m / n) for m in range(n)]  # cos(2πkj/n) = cos[kj mod n]
        lamk = [2 * r * (cos[k] - 1) for k in range(n)]
        for t in times:
            ek = [mpmath.exp(l * t) for l in lamk]
            ref.append(np.array([float(mpmath.fsum(ek[k] * cos[k * j % n] for k in range(n)) / n)
                                 for j in range(n)]))
        gap = float(2 * r * (1 - mpmath.cos(2 * mpmath.pi / n)))
    script = ("n = %d\nr = %s\n" % (n, lit(r)) +
              "tr(k) = when(k < n, [k, (k + 1) % n, r], [k - n, (k - n + n - 1) % n, r])\n"
              "Q = chain(n, map(tr, 0 .. 2*n - 1))\n" + READ_U0 +
              "sol = propagate(adjoint(Q), u0, %s, tol=1e-8)\nmk = markov(Q)\n" % vec_lit(times))
    add(name, fam, "a ring of 120 bike-share docks, a bike moving to either neighbour at rate 1/2", script,
        propagate=prop_check(u0, times, ref, "closed form: Fourier modes of the cycle, e^{2r(cos(2πk/n) − 1)t}, summed in %s at 30 digits" % MPMATH, U),
        markov={"var": "mk", "gap": gap, "reversible": True,
                "reference": "closed form: eigenvalues 2r(cos(2πk/n) − 1), gap 2r(1 − cos(2π/n))"})

    # A one-way-biased ring (non-reversible): forward rate f, backward b.
    name, n, fr, bk = "carousel_ring_60", 60, 1.5, 0.5
    with mpmath.workdps(30):
        gap = float((fr + bk) * (1 - mpmath.cos(2 * mpmath.pi / n)))
    p0 = np.zeros(n)
    p0[0] = 1
    u0 = write_vector(name, p0)
    Q = sp.lil_matrix((n, n))
    for i in range(n):
        Q[i, (i + 1) % n] = fr
        Q[i, (i - 1) % n] = bk
        Q[i, i] = -(fr + bk)
    times = [2.0, 30.0]
    ref, spread = mp_pair(Q.T.toarray(), u0, times, name)
    script = ("n = %d\n" % n +
              "tr(k) = when(k < n, [k, (k + 1) %% n, %s], [k - n, (k - n + n - 1) %% n, %s])\n" % (lit(fr), lit(bk)) +
              "Q = chain(n, map(tr, 0 .. 2*n - 1))\n" + READ_U0 +
              "sol = propagate(adjoint(Q), u0, %s, tol=1e-8)\nmk = markov(Q)\n" % vec_lit(times))
    add(name, fam, "a carousel of 60 seats, a rider moving forward at 1.5 and back at 0.5: not reversible", script,
        propagate=prop_check(u0, times, ref, "%s expm at 40 digits, checked against %s expm" % (MPMATH, SCIPY), spread),
        markov={"var": "mk", "gap": gap, "reversible": False,
                "reference": "closed form: eigenvalues f(e^{2πik/n} − 1) + b(e^{−2πik/n} − 1), gap (f + b)(1 − cos(2π/n)); "
                             "detailed balance fails since f ≠ b on a cycle"})

    # A clinic with c = 4 doctors, up to 400 patients: birth–death with
    # service rate μ·min(i, c). Gap by Sturm bisection in mpmath.
    name, n, lam, mu, c = "clinic_four_doctors_400", 400, 3.0, 1.0, 4
    up = lam * np.ones(n - 1)
    down = mu * np.minimum(np.arange(1, n), c)
    gap = bd_gap_mp(list(up), list(down))
    Q = birth_death(n, up, down)
    w = np.linalg.eigvals(Q.toarray())
    p0 = np.zeros(n)
    p0[0] = 1
    u0 = write_vector(name, p0)
    times = [1.0, 10.0]
    ref, spread = scipy_pair(Q.T, u0, times, name)
    script = ("n = %d\n" % n +
              "tr(k) = when(k < n - 1, [k, k + 1, %s], [k - n + 2, k - n + 1, %s * min(k - n + 2, %d)])\n" % (lit(lam), lit(mu), c) +
              "Q = chain(n, map(tr, 0 .. 2*n - 3))\n" + READ_U0 +
              "sol = propagate(adjoint(Q), u0, %s, tol=1e-8)\n" % vec_lit(times) +
              "spec2 = spectrum(Q, count=2, near=0.001)\ngap = -re(spec2[1, 1])\n")
    add(name, fam, "a walk-in clinic with four doctors (arrivals 3/h, service 1/h each) and room for 399 patients", script,
        propagate=prop_check(u0, times, ref, "%s expm, checked against expm_multiply" % SCIPY, spread),
        gap={"var": "gap", "value": gap,
             "reference": "Sturm bisection on the symmetrised tridiagonal generator in %s at 50 digits" % MPMATH})


# ------------------------------------------ family 3: convection–diffusion

def toeplitz_cd_closed(n, sub, diag, sup, u0, times, dps=40):
    """e^{tA}u0 for the tridiagonal Toeplitz A (sub, diag, sup), sub·sup > 0:
    eigenvalues diag + 2√(sub·sup) cos(kπ/(n+1)), eigenvectors
    ρ^i sin(ikπ/(n+1)) with ρ = √(sub/sup) (closed form)."""
    with mpmath.workdps(dps):
        sub, diag, sup = mpmath.mpf(sub), mpmath.mpf(diag), mpmath.mpf(sup)
        rho = mpmath.sqrt(sub / sup)
        N1 = n + 1
        S = [[mpmath.sin(mpmath.pi * i * k / N1) for i in range(1, n + 1)] for k in range(1, n + 1)]
        pw = [rho ** i for i in range(1, n + 1)]
        lam = [diag + 2 * mpmath.sqrt(sub * sup) * mpmath.cos(mpmath.pi * k / N1) for k in range(1, n + 1)]
        # coefficients c = V⁻¹u0, V = D S, V⁻¹ = (2/(n+1)) S D⁻¹
        w = [mpmath.mpf(float(u0[i])) / pw[i] for i in range(n)]
        c = [2 * mpmath.fsum(S[k][i] * w[i] for i in range(n)) / N1 for k in range(n)]
        out = []
        for t in times:
            e = [c[k] * mpmath.exp(lam[k] * t) for k in range(n)]
            out.append(np.array([float(pw[i] * mpmath.fsum(S[k][i] * e[k] for k in range(n))) for i in range(n)]))
        return out, float(max(lam))


def stretched_fv(n, L, c, nu, stretch, jump=1.0):
    """Upwind finite volumes for u_t + c u_x = ν u_xx on [0, L] with cells
    changing geometrically by the factor `stretch` from one to the next and
    refined abruptly by the factor `jump` in the downstream half (a nested
    mesh around a gauging station); u = 0 at the inflow x = 0 and outflow by
    advection only at x = L (no diffusive flux). Returns A = H⁻¹B and the
    cell widths h."""
    h = stretch ** np.arange(n)
    h[n // 2:] /= jump
    h *= L / h.sum()
    xc = np.cumsum(h) - h / 2
    B = sp.lil_matrix((n, n))
    for i in range(n):
        # advection, upwind (c > 0): inflow from the left cell, outflow to the right
        B[i, i] -= c
        if i > 0:
            B[i, i - 1] += c
        # diffusion through the faces between cell centres
        if i > 0:
            g = nu / (xc[i] - xc[i - 1])
            B[i, i] -= g
            B[i, i - 1] += g
        else:
            g = nu / (h[0] / 2)  # Dirichlet u = 0 at the inflow face
            B[i, i] -= g
        if i + 1 < n:
            g = nu / (xc[i + 1] - xc[i])
            B[i, i] -= g
            B[i, i + 1] += g
    A = sp.diags(1 / h) @ B.tocsr()
    return A.tocsr(), h


def family_convection_diffusion():
    fam = "convection-diffusion"
    # Language-built: ν Δ − c ∂x with central differences on a uniform grid.
    for name, npts, nu, c, times, scen in [
            ("estuary_central_n127", 129, 2.0 ** -6, 1.0, [0.05, 0.3, 1.0],
             "salt in an estuary: ν = 1/64, c = 1, central differences on 127 unknowns, cell Péclet 0.5"),
            ("smoke_plume_central_n63", 65, 2.0 ** -7, 0.75, [0.1, 0.5, 2.0],
             "a smoke plume along a corridor: ν = 1/128, c = 3/4, 63 unknowns, cell Péclet 1.5: eigenvector condition about 1e26"),
            ("coolant_channel_central_n255", 257, 2.0 ** -10, 0.25, [0.25, 1.0, 4.0],
             "coolant in a heated channel: ν = 1/1024, c = 1/4, 255 unknowns, cell Péclet 1: eigenvector condition about 1e60")]:
        n = npts - 2
        h = 1.0 / (npts - 1)
        sub = nu / h ** 2 + c / (2 * h)
        sup = nu / h ** 2 - c / (2 * h)
        dg = -2 * nu / h ** 2
        for v in (sub, sup, dg):
            assert v == math.ldexp(*math.frexp(v)) and (v * 2 ** 20).is_integer(), "entries must be dyadic"
        assert sup > 0
        dps = 40 + int(1.2 * n * math.log10(math.sqrt(sub / sup)))
        x = np.arange(1, n + 1) * h
        u0 = write_vector(name, np.exp(-200 * (x - 0.25) ** 2))
        ref, alpha = toeplitz_cd_closed(n, sub, dg, sup, u0, times, dps)
        A = sp.diags([sub * np.ones(n - 1), dg * np.ones(n), sup * np.ones(n - 1)], [-1, 0, 1])
        scale = max(np.max(np.abs(r)) for r in ref)
        agree(ref, expm_values(A, u0, times), name, scale, 1e-8)
        om, al = omega_alpha(A)
        with mpmath.workdps(30):
            om_closed = float(dg + (sub + sup) * mpmath.cos(mpmath.pi / (n + 1)))
        assert abs(om - om_closed) < 1e-9 * abs(dg)
        script = ("g = interval(0, 1, %d)\nA = %s * laplacian(g) - %s * deriv(g)\n" % (npts, lit(nu), lit(c)) +
                  READ_U0 + "sol = propagate(A, u0, %s, tol=1e-8)\n" % vec_lit(times))
        checks = {"propagate": prop_check(u0, times, ref,
                                          "closed form: eigenvectors ρ^i sin(ikπ/(n+1)) of the tridiagonal Toeplitz matrix, in %s at %d digits; checked against %s expm" % (MPMATH, dps, SCIPY),
                                          U * scale)}
        if n <= 200:
            script += "gen = wellposed(A, omega=0)\n"
            checks["generator"] = gen_check(om_closed <= 0, alpha < 0, om_closed, alpha,
                                            "closed form: α = d + 2√(ab)cos(π/(n+1)), ω = d + (a+b)cos(π/(n+1)) for tridiag(a, d, b)")
        add(name, fam, scen, script, **checks)

    # Read from files: upwind finite volumes on a stretched mesh.
    for name, n, L, c, nu, stretch, jump, times, scen in [
            ("river_reach_upwind_fv_n120", 120, 10.0, 1.0, 0.02, 1.01, 8.0, [0.5, 2.0, 6.0],
             "a river reach of 10 km below an outfall: upwind finite volumes, cells growing by 1% per cell, refined 8-fold around a gauging station"),
            ("river_reach_upwind_fv_n2000", 2000, 10.0, 1.0, 0.002, 1.002, 1.0, [0.5, 3.0],
             "the same river reach on 2000 stretched cells with weak dispersion: large, stiff and non-normal"),
            ("sewer_pipe_upwind_fv_n300", 300, 1.0, 2.0, 1e-4, 0.995, 6.0, [0.05, 0.2, 0.45],
             "a sewer pipe flushed at 2 m/s: transport with a trace of diffusion, cells shrinking by 0.5% per cell and refined 6-fold in the lower half")]:
        A, h = stretched_fv(n, L, c, nu, stretch, jump)
        Ad = write_matrix(name, A)
        write_vector(name, h, what="h")
        xc = np.cumsum(h) - h / 2
        u0 = write_vector(name, np.exp(-((xc - 0.15 * L) / (0.05 * L)) ** 2))
        ref, spread = scipy_pair(Ad, u0, times, name)
        script = (READ_A + READ_U0 + 'hw = dense(readmm("{name}_h.mtx"))[0 .. -1, 0]\n' +
                  "sol = propagate(A, u0, %s, tol=1e-8)\n" % vec_lit(times))
        checks = {"propagate": prop_check(u0, times, ref, "%s expm, checked against expm_multiply (spread = their difference)" % SCIPY, spread)}
        if n <= 150:  # generator reports above order ~150 take tens of seconds
            om, al = omega_alpha(Ad)
            omh = weighted_omega(Ad, np.diag(h))
            assert om > 1e-3 * abs(al) and omh < 0
            script += "gen = wellposed(A, omega=0)\ngenh = wellposed(A, weight=hw, omega=0)\n"
            checks["generator"] = gen_check(False, al < 0, om, al,
                                            "ω(A) = λmax((A+Aᵀ)/2) = %.4g > 0 by %s eigvalsh; α(A) by eigvals" % (om, NUMPY))
            g2 = gen_check(True, al < 0, omh, al,
                           "closed form: in the cell-width inner product ⟨Au, u⟩_h = uᵀBu ≤ 0 (upwind and diffusive fluxes); %s gives ω_h = %.4g" % (NUMPY, omh))
            g2["var"] = "genh"
            checks["generator_weighted"] = g2
        add(name, fam, scen, script, **checks)

    # 2-D: a Kronecker sum built in the language: wind along x over a field.
    name = "field_drift_2d_kron"
    nx, ny = 31, 15
    gx, gy = 1.0 / (nx + 1), 1.0 / (ny + 1)
    nu, c = 2.0 ** -6, 0.5
    X = sp.diags([(nu / gx ** 2 + c / (2 * gx)) * np.ones(nx - 1), -2 * nu / gx ** 2 * np.ones(nx), (nu / gx ** 2 - c / (2 * gx)) * np.ones(nx - 1)], [-1, 0, 1]).toarray()
    Y = sp.diags([nu / gy ** 2 * np.ones(ny - 1), -2 * nu / gy ** 2 * np.ones(ny), nu / gy ** 2 * np.ones(ny - 1)], [-1, 0, 1]).toarray()
    xs = np.arange(1, nx + 1) * gx
    ys = np.arange(1, ny + 1) * gy
    U0 = np.exp(-50 * ((xs[:, None] - 0.3) ** 2 + (ys[None, :] - 0.5) ** 2))
    u0 = write_vector(name, U0.reshape(-1))
    times = [0.1, 0.5]
    A = np.kron(X, np.eye(ny)) + np.kron(np.eye(nx), Y)
    ref = [np.kron(sl.expm(t * X), sl.expm(t * Y)) @ u0 for t in times]
    spread = agree(ref, expm_values(A, u0, times), name, 1.0, 1e-10) + U
    script = ("gx = interval(0, 1, %d)\ngy = interval(0, 1, %d)\n" % (nx + 2, ny + 2) +
              "A = kronsum(%s * laplacian(gx) - %s * deriv(gx), %s * laplacian(gy))\n" % (lit(nu), lit(c), lit(nu)) +
              READ_U0 + "sol = propagate(A, u0, %s, tol=1e-8)\n" % vec_lit(times))
    add(name, fam, "a pollen cloud drifting in a steady wind over a field: 2-D convection–diffusion as a Kronecker sum, 31×15 unknowns",
        script, propagate=prop_check(u0, times, ref, "%s: e^{tX} ⊗ e^{tY} by expm of each factor, checked against expm of the assembled 465×465 matrix" % SCIPY, spread))


# ------------------------------------------------ family 4: Matrix Market

def family_matrix_market():
    fam = "matrix-market"
    rng = np.random.default_rng(20261202)

    # A thermal RC network of 150 nodes: random conductances on a sparse graph,
    # a leak to ambient at a few nodes; general coordinate format.
    name, n = "server_room_rc_network_150", 150
    G = sp.lil_matrix((n, n))
    for i in range(n):
        for j in rng.choice(n, 3, replace=False):
            if i != j:
                g = rng.uniform(0.5, 2.0)
                G[i, j] += g
                G[j, i] += g
    L = sp.diags(np.asarray(G.sum(axis=1)).reshape(-1)) - G
    cap = rng.uniform(1.0, 5.0, n)
    leak = np.zeros(n)
    leak[rng.choice(n, 10, replace=False)] = 0.3
    A = -sp.diags(1 / cap) @ (L + sp.diags(leak))
    Ad = write_matrix(name, A.tocsr())
    u0 = write_vector(name, rng.uniform(20, 40, n))
    times = [0.1, 1.0, 10.0]
    ref, spread = scipy_pair(Ad, u0, times, name)
    om, al = omega_alpha(Ad)
    add(name, fam, "a server room as a thermal RC network of 150 racks: random conductances, heat capacities 1–5, leaks to ambient at 10 racks",
        READ_A + READ_U0 + "sol = propagate(A, u0, %s, tol=1e-8)\ngen = wellposed(A, omega=0)\n" % vec_lit(times),
        propagate=prop_check(u0, times, ref, "%s expm, checked against expm_multiply" % SCIPY, spread),
        generator=gen_check(om <= 0, al < 0, om, al, "ω(A), α(A) by %s eigvalsh and eigvals" % NUMPY))

    # Pharmacokinetics: a six-compartment model in array format.
    name = "drug_compartments_6_array"
    k = {(0, 1): 1.2, (1, 0): 0.3, (1, 2): 0.8, (2, 1): 0.1, (1, 3): 0.5, (3, 1): 0.05,
         (1, 4): 0.25, (4, 5): 2.0, (5, 1): 0.01}
    elim = {1: 0.4, 5: 0.02}
    A = np.zeros((6, 6))
    for (i, j), r in k.items():
        A[j, i] += r
        A[i, i] -= r
    for i, r in elim.items():
        A[i, i] -= r
    Ad = write_matrix(name, A, array=True)
    u0 = write_vector(name, [100, 0, 0, 0, 0, 0])
    times = [0.5, 6.0, 48.0]
    ref, spread = mp_pair(Ad, u0, times, name)
    om, al = omega_alpha(Ad)
    add(name, fam, "a drug dose in a six-compartment pharmacokinetic model (gut, plasma, tissue, fat, liver, bile), array format",
        READ_A + READ_U0 + "sol = propagate(A, u0, %s, tol=1e-8)\ngen = wellposed(A, omega=0)\n" % vec_lit(times),
        propagate=prop_check(u0, times, ref, "%s expm at 40 digits, checked against %s expm" % (MPMATH, SCIPY), spread),
        generator=gen_check(om <= 0, al < 0, om, al, "ω(A), α(A) by %s eigvalsh and eigvals" % NUMPY))

    # A gyroscope: skew-symmetric, written in the skew-symmetric format.
    name = "gyroscope_skew_8"
    S = np.zeros((8, 8))
    for (i, j, v) in [(0, 1, 3.0), (1, 2, -1.5), (2, 3, 2.0), (3, 4, 0.5), (4, 5, 4.0), (5, 6, -2.5), (6, 7, 1.0), (0, 7, 0.75), (2, 6, 1.25)]:
        S[i, j], S[j, i] = v, -v
    Ad = write_matrix(name, sp.coo_matrix(np.tril(S)) + sp.coo_matrix(np.triu(S)), symmetry="skew-symmetric")
    u0 = write_vector(name, [1, 0, -1, 0.5, 0, 0, 0.25, 0])
    times = [1.0, 10.0, 100.0]
    ref, spread = mp_pair(Ad, u0, times, name)
    add(name, fam, "a gyroscopic coupling of eight rotor states: skew-symmetric (norm preserving), skew-symmetric Matrix Market format",
        READ_A + READ_U0 + "sol = propagate(A, u0, %s, tol=1e-8)\ngen = wellposed(A, omega=0)\n" % vec_lit(times),
        propagate=prop_check(u0, times, ref, "%s expm at 40 digits, checked against %s expm" % (MPMATH, SCIPY), spread),
        generator=gen_check(True, None, 0.0, 0.0, "closed form: A + Aᵀ = 0, so ω(A) = 0 and α(A) = 0 (purely imaginary spectrum)"))

    # A sensor-network graph Laplacian, symmetric coordinate format.
    name, n = "campus_sensor_graph_400", 400
    pts = rng.uniform(0, 1, (n, 2))
    G = sp.lil_matrix((n, n))
    for i in range(n):
        d = np.hypot(*(pts - pts[i]).T)
        for j in np.argsort(d)[1:5]:
            G[i, j] = G[j, i] = 1.0
    L = sp.diags(np.asarray(G.sum(axis=1)).reshape(-1)) - G
    A = -(L + 0.01 * sp.identity(n))
    Ad = write_matrix(name, A.tocoo(), symmetry="symmetric")
    u0 = write_vector(name, (pts[:, 0] > 0.5).astype(float))
    times = [0.5, 5.0]
    w, V = np.linalg.eigh(Ad)
    ref = [V @ (np.exp(t * w) * (V.T @ u0)) for t in times]
    spread = agree(ref, expm_values(Ad, u0, times), name, 1.0, 1e-10) + U
    om = float(w.max())
    add(name, fam, "gossip on a campus sensor network: the graph Laplacian of 400 sensors joined to their 4 nearest neighbours, with a small loss, symmetric format",
        READ_A + READ_U0 + "sol = propagate(A, u0, %s, tol=1e-8)\n" % vec_lit(times),
        propagate=prop_check(u0, times, ref, "%s eigh of the symmetric matrix, checked against %s expm (spread = their difference)" % (NUMPY, SCIPY), spread))

    # Integer format: a stage-structured population (eggs, larvae, pupae, adults).
    name = "beetle_stages_integer"
    A = np.array([[-3, 0, 0, 12], [2, -2, 0, 0], [0, 1, -1, 0], [0, 0, 1, -1]], dtype=float)
    p = path(name, "A")
    scipy.io.mmwrite(p, sp.coo_matrix(A).astype(np.int64), comment="trust corpus: %s (written by %s)" % (name, SCIPY),
                     field="integer", symmetry="general")
    assert np.array_equal(scipy.io.mmread(p).toarray(), A)
    u0 = write_vector(name, [0, 0, 0, 10])
    times = [1.0, 5.0]
    ref, spread = mp_pair(A, u0, times, name)
    om, al = omega_alpha(A)
    assert al > 0.05
    add(name, fam, "a flour-beetle population in four stages with integer rates (integer format): growing, α > 0",
        READ_A + READ_U0 + "sol = propagate(A, u0, %s, tol=1e-8)\ngen = wellposed(A, omega=0)\n" % vec_lit(times),
        propagate=prop_check(u0, times, ref, "%s expm at 40 digits, checked against %s expm" % (MPMATH, SCIPY), spread),
        generator=gen_check(False, False, om, al, "ω(A), α(A) by %s; α > 0, so not stable" % NUMPY))

    # Pattern format: the adjacency of a ring of 24 (rumour spreading).
    name = "rumour_ring_pattern_24"
    n = 24
    R = sp.lil_matrix((n, n))
    for i in range(n):
        R[i, (i + 1) % n] = 1
        R[(i + 1) % n, i] = 1
    p = path(name, "A")
    scipy.io.mmwrite(p, R.tocoo(), comment="trust corpus: %s (written by %s)" % (name, SCIPY), field="pattern", symmetry="general")
    Ad = scipy.io.mmread(p).toarray()
    assert np.array_equal(Ad, R.toarray())
    u0 = write_vector(name, np.eye(n)[0])
    times = [0.5, 3.0]
    ref = []
    with mpmath.workdps(30):
        for t in times:
            ref.append(np.array([float(mpmath.fsum(mpmath.exp(2 * mpmath.cos(2 * mpmath.pi * k / n) * t) * mpmath.cos(2 * mpmath.pi * k * j / n)
                                                   for k in range(n)) / n) for j in range(n)]))
    agree(ref, expm_values(Ad, u0, times), name, max(np.max(np.abs(r)) for r in ref), 1e-10)
    add(name, fam, "a rumour on a ring of 24 people: the pattern adjacency (pattern format), growing like e^{2t}",
        READ_A + READ_U0 + "sol = propagate(A, u0, %s, tol=1e-8)\ngen = wellposed(A, omega=0)\n" % vec_lit(times),
        propagate=prop_check(u0, times, ref, "closed form: Fourier modes of the cycle adjacency, eigenvalues 2cos(2πk/n), in %s at 30 digits" % MPMATH, U * max(np.max(np.abs(r)) for r in ref)),
        generator=gen_check(False, False, 2.0, 2.0, "closed form: symmetric with eigenvalues 2cos(2πk/24): α = ω = 2"))

    # A 2-D heat problem on an L-shaped floor slab, symmetric coordinate format.
    name = "l_shaped_slab_heat"
    m = 47
    hh = 1.0 / (m + 1)
    idx = -np.ones((m, m), dtype=int)
    k = 0
    for i in range(m):
        for j in range(m):
            if not (i >= m // 2 and j >= m // 2):
                idx[i, j] = k
                k += 1
    n = k
    L = sp.lil_matrix((n, n))
    for i in range(m):
        for j in range(m):
            if idx[i, j] < 0:
                continue
            L[idx[i, j], idx[i, j]] = -4 / hh ** 2
            for a, b in ((i + 1, j), (i - 1, j), (i, j + 1), (i, j - 1)):
                if 0 <= a < m and 0 <= b < m and idx[a, b] >= 0:
                    L[idx[i, j], idx[a, b]] = 1 / hh ** 2
    A = (0.01 * L).tocsr()
    Ad = write_matrix(name, A.tocoo(), symmetry="symmetric")
    Asp = sp.csr_matrix(Ad)
    ii, jj = np.nonzero(idx >= 0)
    u0 = write_vector(name, np.sin(np.pi * (ii + 1) * hh) * np.sin(np.pi * (jj + 1) * hh) + (ii < 5))
    times = [0.05, 0.5]
    ref = expm_multiply_values(Asp, u0, times)
    w, V = np.linalg.eigh(Ad)
    alt = [V @ (np.exp(t * w) * (V.T @ u0)) for t in times]
    spread = agree(ref, alt, name, 1.0, 1e-10) + U * max(np.max(np.abs(r)) for r in ref)
    add(name, fam, "heat in an L-shaped concrete floor slab, 5-point Laplacian on %d unknowns, symmetric format" % n,
        READ_A + READ_U0 + "sol = propagate(A, u0, %s, tol=1e-8)\n" % vec_lit(times),
        propagate=prop_check(u0, times, ref, "%s expm_multiply, checked against %s eigh (spread = their difference)" % (SCIPY, NUMPY), spread))


# ------------------------------------------------- family 5: forcing with jumps

def forced_exact(A, u0, times, pieces, dps=40):
    """u(t) for u' = Au + f(t), f piecewise constant: pieces = [(t_start,
    vector f)] in increasing order; exact on each piece through the
    augmented matrix exp([[A, f], [0, 0]]) in mpmath."""
    n = len(u0)
    with mpmath.workdps(dps):
        M = mpmath.matrix(np.asarray(A, dtype=float).tolist())

        def step(u, f, dt):
            Aug = mpmath.zeros(n + 1, n + 1)
            for i in range(n):
                for j in range(n):
                    Aug[i, j] = M[i, j]
                Aug[i, n] = mpmath.mpf(float(f[i]))
            E = mpmath.expm(mpmath.mpf(dt) * Aug)
            w = mpmath.matrix(list(u) + [1])
            r = E * w
            return [r[i] for i in range(n)]

        out = []
        for T in times:
            u = [mpmath.mpf(float(x)) for x in u0]
            for k, (s, f) in enumerate(pieces):
                e = pieces[k + 1][0] if k + 1 < len(pieces) else math.inf
                if T <= s:
                    break
                u = step(u, f, min(T, e) - s)
            out.append(np.array([float(x) for x in u]))
        return out


def family_forcing():
    fam = "forcing-jumps"

    def fin(n):
        # A cooling fin: u_t = u_xx − m²u on (0, 1), u = 0 at both ends
        # (ambient), m² = 4; h = 1/(n+1) with n + 1 a power of 2.
        h2 = float((n + 1) ** 2)
        return sp.diags([h2 * np.ones(n - 1), (-2 * h2 - 4) * np.ones(n), h2 * np.ones(n - 1)], [-1, 0, 1]).toarray()

    # Heater switched off at t = 0.3.
    n = 15
    A = fin(n)
    x = np.arange(1, n + 1) / (n + 1)
    name = "cooling_fin_heater_off"
    u0 = write_vector(name, 0.5 * np.ones(n))
    q = np.exp(-30 * (x - 0.5) ** 2) * 10
    qv = write_vector(name, q, what="q")
    times = [0.2, 0.3, 0.5, 1.0]
    ref = forced_exact(A, u0, times, [(0, qv), (0.3, np.zeros(n))])
    script = ("g = interval(0, 1, %d)\nA = laplacian(g) - multiplier(g, 4)\n" % (n + 2) + READ_U0 +
              'q = dense(readmm("{name}_q.mtx"))[0 .. -1, 0]\nheat(s) = when(s < 0.3, 1, 0) * q\n'
              "sol = propagate(A, u0, %s, forcing=heat, tol=1e-8)\n" % vec_lit(times))
    add(name, fam, "a cooling fin (15 unknowns) warmed by a central heater that is switched off at t = 0.3", script,
        propagate=prop_check(u0, times, ref, "exact: variation of constants on each piece through the augmented matrix, %s expm at 40 digits" % MPMATH, U * max(np.max(np.abs(r)) for r in ref)))

    # The same with the switch-off time given to propagate.
    name = "cooling_fin_heater_off_switch_given"
    u0 = write_vector(name, 0.5 * np.ones(n))
    qv = write_vector(name, q, what="q")
    script = ("g = interval(0, 1, %d)\nA = laplacian(g) - multiplier(g, 4)\n" % (n + 2) + READ_U0 +
              'q = dense(readmm("{name}_q.mtx"))[0 .. -1, 0]\nheat(s) = when(s < 0.3, 1, 0) * q\n'
              "sol = propagate(A, u0, %s, forcing=heat, switches=0.3, tol=1e-8)\n" % vec_lit(times))
    add(name, fam, "the cooling fin with the heater's switch-off time t = 0.3 given to propagate (switches=0.3)", script,
        propagate=prop_check(u0, times, ref, "exact: variation of constants on each piece through the augmented matrix, %s expm at 40 digits" % MPMATH, U * max(np.max(np.abs(r)) for r in ref)))

    # Heater switched on at 0.5 (step up).
    name = "cooling_fin_heater_on_late"
    u0 = write_vector(name, np.sin(np.pi * x))
    qv = write_vector(name, 5 * np.ones(n), what="q")
    times = [0.25, 0.75, 2.0]
    ref = forced_exact(A, u0, times, [(0, np.zeros(n)), (0.5, qv)])
    script = ("g = interval(0, 1, %d)\nA = laplacian(g) - multiplier(g, 4)\n" % (n + 2) + READ_U0 +
              'q = dense(readmm("{name}_q.mtx"))[0 .. -1, 0]\nheat(s) = when(s < 0.5, 0, 1) * q\n'
              "sol = propagate(A, u0, %s, forcing=heat, tol=1e-8)\n" % vec_lit(times))
    add(name, fam, "the fin left to cool, then heated uniformly from t = 0.5", script,
        propagate=prop_check(u0, times, ref, "exact: variation of constants on each piece, %s expm at 40 digits" % MPMATH, U * max(np.max(np.abs(r)) for r in ref)))

    # Two rooms with a radiator on a thermostat: on [0, 1), off [1, 2), on [2, 3).
    name = "two_rooms_thermostat_pulses"
    A2 = np.array([[-0.5, 0.25], [0.25, -0.375]])
    u0 = write_vector(name, [18.0, 15.0])
    fon = np.array([4.0, 0.0])
    times = [0.5, 1.5, 2.5, 4.0]
    ref = forced_exact(A2, u0, times, [(0, fon), (1, np.zeros(2)), (2, fon), (3, np.zeros(2))])
    script = ("A = {-0.5, 0.25 | 0.25, -0.375}\n" + READ_U0 +
              "on(s) = when(s < 1, 1, when(s < 2, 0, when(s < 3, 1, 0)))\n"
              "radiator(s) = on(s) * [4, 0]\n"
              "sol = propagate(A, u0, %s, forcing=radiator, tol=1e-8)\n" % vec_lit(times))
    add(name, fam, "two rooms, a radiator in the first on a thermostat: on during [0, 1) and [2, 3), off otherwise", script,
        propagate=prop_check(u0, times, ref, "exact: variation of constants on each piece, %s expm at 40 digits" % MPMATH, U * max(np.max(np.abs(r)) for r in ref)))
    name = "two_rooms_thermostat_switches_given"
    u0 = write_vector(name, [18.0, 15.0])
    script = ("A = {-0.5, 0.25 | 0.25, -0.375}\n" + READ_U0 +
              "on(s) = when(s < 1, 1, when(s < 2, 0, when(s < 3, 1, 0)))\n"
              "radiator(s) = on(s) * [4, 0]\n"
              "sol = propagate(A, u0, %s, forcing=radiator, switches=[1, 2, 3], tol=1e-8)\n" % vec_lit(times))
    add(name, fam, "the two rooms with the thermostat's switching times given to propagate (switches=[1, 2, 3])", script,
        propagate=prop_check(u0, times, ref, "exact: variation of constants on each piece, %s expm at 40 digits" % MPMATH, U * max(np.max(np.abs(r)) for r in ref)))

    # A jump exactly at an output time.
    name = "battery_pack_load_step"
    A3 = np.array([[-1.0, 0.5, 0], [0.5, -1.5, 0.5], [0, 0.5, -2.0]])
    u0 = write_vector(name, [1.0, 1.0, 1.0])
    f1 = np.array([2.0, 0.0, 1.0])
    f2 = np.array([0.5, 0.5, 0.0])
    times = [0.4, 0.8, 1.6]
    ref = forced_exact(A3, u0, times, [(0, f1), (0.8, f2)])
    script = ("A = {-1, 0.5, 0 | 0.5, -1.5, 0.5 | 0, 0.5, -2}\n" + READ_U0 +
              "load(s) = when(s < 0.8, [2, 0, 1], [0.5, 0.5, 0])\n"
              "sol = propagate(A, u0, %s, forcing=load, tol=1e-8)\n" % vec_lit(times))
    add(name, fam, "three cells of a battery pack (temperatures) whose load steps down at t = 0.8, an output time", script,
        propagate=prop_check(u0, times, ref, "exact: variation of constants on each piece, %s expm at 40 digits" % MPMATH, U * max(np.max(np.abs(r)) for r in ref)))

    # Constant forcing (no jump): the exact augmented-matrix path.
    name = "greenhouse_constant_sun"
    A4 = np.array([[-0.75, 0.25], [0.5, -1.0]])
    u0 = write_vector(name, [10.0, 12.0])
    f = np.array([3.0, 1.0])
    times = [1.0, 10.0]
    ref = forced_exact(A4, u0, times, [(0, f)])
    script = ("A = {-0.75, 0.25 | 0.5, -1}\n" + READ_U0 +
              "sol = propagate(A, u0, %s, forcing=[3, 1], tol=1e-8)\n" % vec_lit(times))
    add(name, fam, "a greenhouse (air, soil) under constant sun: constant forcing, no jump", script,
        propagate=prop_check(u0, times, ref, "exact: A⁻¹(e^{tA} − I)f + e^{tA}u0 through the augmented matrix, %s expm at 40 digits" % MPMATH, U * max(np.max(np.abs(r)) for r in ref)))

    # A ramp that stops growing at t = 0.4 (a kink, continuous f).
    name = "kiln_ramp_then_hold"
    A5 = np.array([[-2.0, 1.0], [1.0, -3.0]])
    u0 = write_vector(name, [1.0, 0.0])
    times = [0.3, 0.6, 1.5]
    # f = (5 min(t, 0.4), 0): exact by an augmented 4×4 matrix on each piece
    with mpmath.workdps(40):
        M = mpmath.matrix(A5.tolist())

        def run(T):
            # piece 1: f = 5 s e1 on [0, min(T, 0.4)]: augmented [[A, e1·5, 0],[0, 0, 1],[0, 0, 0]] acting on (u, s, 1)
            Aug = mpmath.zeros(4, 4)
            for i in range(2):
                for j in range(2):
                    Aug[i, j] = M[i, j]
            Aug[0, 2] = 5
            Aug[2, 3] = 1
            t1 = min(T, mpmath.mpf("0.4"))
            w = mpmath.expm(t1 * Aug) * mpmath.matrix([1, 0, 0, 1])
            u = [w[0], w[1]]
            if T > 0.4:
                Aug2 = mpmath.zeros(3, 3)
                for i in range(2):
                    for j in range(2):
                        Aug2[i, j] = M[i, j]
                Aug2[0, 2] = 2  # 5 × 0.4
                w = mpmath.expm((mpmath.mpf(T) - mpmath.mpf("0.4")) * Aug2) * mpmath.matrix([u[0], u[1], 1])
                u = [w[0], w[1]]
            return np.array([float(u[0]), float(u[1])])
        ref = [run(mpmath.mpf(t)) for t in times]
    script = ("A = {-2, 1 | 1, -3}\n" + READ_U0 +
              "burner(s) = [5 * min(s, 0.4), 0]\n"
              "sol = propagate(A, u0, %s, forcing=burner, tol=1e-8)\n" % vec_lit(times))
    add(name, fam, "a kiln whose burner ramps up until t = 0.4 and then holds: continuous forcing with a kink", script,
        propagate=prop_check(u0, times, ref, "exact: polynomial forcing through augmented matrices on each piece, %s expm at 40 digits" % MPMATH, U * max(np.max(np.abs(r)) for r in ref)))


# ---------------------------------------------- family 6: semilinear reaction–diffusion

def neumann_laplacian(npts, L=1.0):
    """The language's Neumann second difference on npts points of [0, L]:
    ghost-point reflection, rows 0 and n−1 with 2/h² off the diagonal."""
    h = L / (npts - 1)
    n = npts
    D = sp.diags([np.ones(n - 1), -2 * np.ones(n), np.ones(n - 1)], [-1, 0, 1]).tolil()
    D[0, 1] = 2
    D[n - 1, n - 2] = 2
    return (D / h ** 2).tocsr()


def family_semilinear():
    fam = "semilinear"
    # Logistic growth with constant data on a Neumann grid: the Laplacian
    # annihilates constants, so u(t) = 1/(1 + (1/u0 − 1)e^{−rt}) exactly.
    name = "pest_logistic_uniform"
    npts, D, r, c0 = 33, 0.01, 2.0, 0.05
    times = [0.5, 2.0, 5.0]
    ref = []
    with mpmath.workdps(40):
        for t in times:
            v = 1 / (1 + (1 / mpmath.mpf(c0) - 1) * mpmath.exp(-r * mpmath.mpf(t)))
            ref.append(np.full(npts, float(v)))
    u0 = np.full(npts, c0)
    script = ('g = interval(0, 1, %d, ends="neumann")\nA = %s * laplacian(g)\n' % (npts, lit(D)) +
              "grow(u) = %s * u * (1 - u)\n" % lit(r) +
              "sol = propagate(A, %s, %s, nonlinear=grow, tol=1e-8)\n" % (lit(c0), vec_lit(times)))
    add(name, fam, "a pest population spread evenly over a field (logistic growth r = 2 with diffusion): stays uniform", script,
        propagate=prop_check(u0, times, ref, "closed form: the logistic solution 1/(1 + (1/u0 − 1)e^{−rt}), in %s at 40 digits" % MPMATH, U * max(np.max(np.abs(r)) for r in ref)))

    # Allen–Cahn with constant data: u' = u − u³, u(t) = u0 e^t/√(1 + u0²(e^{2t} − 1)).
    name = "alloy_allen_cahn_uniform"
    npts, c0 = 41, 0.2
    times = [0.5, 3.0]
    ref = []
    with mpmath.workdps(40):
        for t in times:
            e = mpmath.exp(mpmath.mpf(t))
            v = c0 * e / mpmath.sqrt(1 + c0 ** 2 * (e ** 2 - 1))
            ref.append(np.full(npts, float(v)))
    u0 = np.full(npts, c0)
    script = ('g = interval(0, 1, %d, ends="neumann")\nA = 0.001 * laplacian(g)\n' % npts +
              "cubic(u) = u - u^3\n"
              "sol = propagate(A, %s, %s, nonlinear=cubic, tol=1e-8)\n" % (lit(c0), vec_lit(times)))
    add(name, fam, "an alloy quenched uniformly to a small order parameter (Allen–Cahn, constant data)", script,
        propagate=prop_check(u0, times, ref, "closed form: u0 e^t/√(1 + u0²(e^{2t} − 1)) of u' = u − u³, in %s at 40 digits" % MPMATH, U * max(np.max(np.abs(r)) for r in ref)))

    # A linear term written as nonlinear: N(u) = −k u with Dirichlet modes:
    # the solution is e^{t(A − k)}u0, a sine mode decaying in closed form.
    name = "leaky_pipe_linear_uptake"
    npts, k = 33, 1.5
    n = npts - 2
    h = 1.0 / (npts - 1)
    xi = np.arange(1, n + 1) * h
    times = [0.1, 0.5]
    ref = []
    with mpmath.workdps(40):
        lam = -4 / mpmath.mpf(h) ** 2 * mpmath.sin(2 * mpmath.pi * h / 2) ** 2 * mpmath.mpf("0.05")
        for t in times:
            f = mpmath.exp((lam - k) * t)
            ref.append(np.array([float(f * mpmath.sin(2 * mpmath.pi * (i + 1) * mpmath.mpf(1) / (npts - 1))) for i in range(n)]))
    u0 = np.sin(2 * np.pi * xi)
    script = ("g = interval(0, 1, %d)\nA = 0.05 * laplacian(g)\n" % npts +
              "mode(x) = sin(2 * pi * x)\nuptake(u) = %s * u\n" % lit(-k) +
              "sol = propagate(A, mode, %s, nonlinear=uptake, tol=1e-8)\n" % vec_lit(times))
    add(name, fam, "a solute in a leaky pipe taken up by the wall at rate 1.5: a linear term passed as nonlinear (ETDRK4 must be exact up to its estimate)", script,
        propagate=prop_check(u0, times, ref, "closed form: the sine mode sin(2πx) decays as e^{(λ₂ − k)t}, λ₂ = −(4/h²)sin²(πh)·0.05, in %s at 40 digits" % MPMATH, 2 * U))

    # Fisher–KPP from a local infestation: no closed form; scipy solve_ivp.
    for name, npts, D, r, times, tol, scen in [
            ("pest_fisher_kpp_patch_n65", 65, 0.001, 1.0, [1.0, 4.0], 1e-8,
             "pest infestation spreading from one corner of an orchard (Fisher–KPP, D = 0.001, r = 1), Neumann ends, 65 points"),
            ("pest_fisher_kpp_patch_n65_tol1e-11", 65, 0.001, 1.0, [1.0, 4.0], 1e-11,
             "the orchard infestation asked for tol = 1e-11"),
            ("pest_fisher_kpp_fast_n129", 129, 0.0005, 3.0, [0.5, 2.0], 1e-8,
             "a fast-breeding pest (r = 3) in a long orchard row, 129 points: a sharp front")]:
        L = neumann_laplacian(npts)
        A = D * L
        x = np.linspace(0, 1, npts)
        u0 = write_vector(name, 0.8 * np.exp(-(x / 0.08) ** 2))

        def rhs(t, u):
            return A @ u + r * u * (1 - u)

        def jac(t, u):
            return (A + sp.diags(r * (1 - 2 * u))).toarray()
        a = solve_ivp(rhs, (0, times[-1]), u0, method="Radau", t_eval=times, rtol=1e-13, atol=1e-15, jac=jac)
        b = solve_ivp(rhs, (0, times[-1]), u0, method="DOP853", t_eval=times, rtol=1e-13, atol=1e-15)
        ra = [a.y[:, i] for i in range(len(times))]
        rb = [b.y[:, i] for i in range(len(times))]
        spread = agree(ra, rb, name, 1.0, 1e-9) + U
        script = ('g = interval(0, 1, %d, ends="neumann")\nA = %s * laplacian(g)\n' % (npts, lit(D)) + READ_U0 +
                  "grow(u) = %s * u * (1 - u)\n" % lit(r) +
                  "sol = propagate(A, u0, %s, nonlinear=grow, tol=%s)\n" % (vec_lit(times), lit(tol)))
        add(name, fam, scen, script,
            propagate=prop_check(u0, times, rb, "%s solve_ivp DOP853 at rtol 1e-13, atol 1e-15, checked against Radau with the exact Jacobian (spread = their difference)" % SCIPY, spread, tol=tol))

    # Bistable (Allen–Cahn) front between two phases: solve_ivp reference.
    name = "firebreak_bistable_front_n81"
    npts, D, a_ = 81, 0.002, 0.3
    A = D * neumann_laplacian(npts)
    x = np.linspace(0, 1, npts)
    u0 = write_vector(name, 0.5 * (1 + np.tanh((0.3 - x) / 0.05)))
    times = [0.5, 2.0]

    def rhs(t, u):
        return A @ u + u * (1 - u) * (u - a_)
    a = solve_ivp(rhs, (0, times[-1]), u0, method="Radau", t_eval=times, rtol=1e-13, atol=1e-15,
                  jac=lambda t, u: (A + sp.diags((1 - u) * (u - a_) - u * (u - a_) + u * (1 - u))).toarray())
    b = solve_ivp(rhs, (0, times[-1]), u0, method="DOP853", t_eval=times, rtol=1e-13, atol=1e-15)
    ra = [a.y[:, i] for i in range(len(times))]
    rb = [b.y[:, i] for i in range(len(times))]
    spread = agree(ra, rb, name, 1.0, 1e-9) + U
    script = ('g = interval(0, 1, %d, ends="neumann")\nA = %s * laplacian(g)\n' % (npts, lit(D)) + READ_U0 +
              "bistable(u) = u * (1 - u) * (u - %s)\n" % lit(a_) +
              "sol = propagate(A, u0, %s, nonlinear=bistable, tol=1e-8)\n" % vec_lit(times))
    add(name, fam, "a burning front advancing into a bistable medium (Nagumo reaction u(1 − u)(u − 0.3)), 81 points", script,
        propagate=prop_check(u0, times, rb, "%s solve_ivp DOP853 at rtol 1e-13, checked against Radau with the exact Jacobian" % SCIPY, spread))


# ------------------------------------------------ family 7: defective matrices

def jordan_exact(lam, n, sup, u0, times, dps=40):
    """e^{tJ}u0 for J = λI + sup·N (N the shift): e^{λt} Σ_k (sup·t)^k/k! N^k."""
    out = []
    with mpmath.workdps(dps):
        for t in times:
            t = mpmath.mpf(t)
            coef = [(sup * t) ** k / mpmath.factorial(k) for k in range(n)]
            out.append(np.array([float(mpmath.exp(lam * t) * mpmath.fsum(coef[k] * u0[i + k] for k in range(n - i)))
                                 for i in range(n)]))
    return out


def mp_eig_cond(A, dps=50):
    """Eigenvalues and their condition numbers ‖x‖‖y‖/|yᴴx| in mpmath."""
    with mpmath.workdps(dps):
        M = mpmath.matrix(np.asarray(A, dtype=float).tolist())
        E, ER = mpmath.eig(M)
        E2, EL = mpmath.eig(M.T)
        conds = []
        for k, l in enumerate(E):
            j = min(range(len(E2)), key=lambda i: abs(E2[i] - l))
            x = ER[:, k]
            y = EL[:, j]
            num = mpmath.norm(x) * mpmath.norm(y)
            den = abs(sum(y[i] * x[i] for i in range(len(E))))
            conds.append(float(num / den))
        return [complex(e) for e in E], conds


def family_defective():
    fam = "defective"
    for name, n, lam, sup, times, tol, scen in [
            ("jordan_block_5", 5, -1.0, 1.0, [0.5, 2.0, 10.0], 1e-8, "a 5×5 Jordan block J₅(−1): one defective eigenvalue"),
            ("jordan_block_12_strong", 12, -0.5, 3.0, [1.0, 5.0, 30.0], 1e-8,
             "a 12×12 Jordan block −0.5 I + 3N: stable but with transient growth near 10⁸"),
            ("jordan_block_12_strong_tol1e-13", 12, -0.5, 3.0, [1.0, 5.0, 30.0], 1e-13,
             "the strong 12×12 Jordan block asked for tol = 1e-13: at t = 30 rounding alone (u·‖e^{tA}‖·‖u0‖ ≈ 3e-8) exceeds tol·‖u0‖∞ = 1.2e-12, so it must be flagged"),
            ("jordan_block_2", 2, -2.0, 1.0, [0.25, 1.0], 1e-8, "the 2×2 Jordan block of a critically damped oscillator")]:
        J = np.diag(lam * np.ones(n)) + np.diag(sup * np.ones(n - 1), 1)
        lit_m = "{" + " | ".join(", ".join(lit(v) for v in row) for row in J) + "}"
        u0 = write_vector(name, [(-1) ** i * (i + 1) for i in range(n)])
        ref = jordan_exact(lam, n, sup, list(u0), times)
        agree(ref, expm_values(J, u0, times), name, max(np.max(np.abs(r)) for r in ref), 1e-6)
        with mpmath.workdps(30):
            om = float(lam + sup * mpmath.cos(mpmath.pi / (n + 1)))
        script = ("A = %s\n" % lit_m + READ_U0 + "sol = propagate(A, u0, %s, tol=%s)\n" % (vec_lit(times), lit(tol)) +
                  "gen = wellposed(A, omega=0)\nspec = spectrum(A)\n")
        add(name, fam, scen, script,
            propagate=prop_check(u0, times, ref, "closed form: e^{λt} Σ_k (ct)^k/k! N^k for J = λI + cN, in %s at 40 digits" % MPMATH,
                                 U * max(np.max(np.abs(r)) for r in ref), tol=tol),
            generator=gen_check(om <= 0, True, om, lam,
                                "closed form: α = λ, ω = λ + c·cos(π/(n+1)) (symmetric part tridiagonal Toeplitz)"),
            eigen={"var": "spec", "norm_fro": float(np.linalg.norm(J)), "eigenvalues": [[lam, 0.0]], "defective": [True], "cond": [None],
                   "reference": "closed form: one Jordan block, a single eigenvalue of geometric multiplicity 1"})

    # Companion matrices of (z + 1)^4 + ε: near-defective for small ε.
    for name, eps, scen in [
            ("companion_near_defective_1e-8", 1e-8,
             "the companion matrix of (z + 1)⁴ + 1e-8: four eigenvalues 1e-2 apart, near a 4-fold defective one"),
            ("companion_distinct_roots", None,
             "the companion matrix of (z + 1)(z + 2)(z + 3)(z + 4): distinct, well separated roots")]:
        if eps is not None:
            c = np.array([1.0, 4, 6, 4, 1 + eps])
        else:
            c = np.poly([-1.0, -2, -3, -4])
        C = np.zeros((4, 4))
        C[0, :] = -c[1:]
        C[1:, :3] = np.eye(3)
        lit_m = "{" + " | ".join(", ".join(lit(v) for v in row) for row in C) + "}"
        u0 = write_vector(name, [1.0, 0.0, 0.0, 0.0])
        times = [1.0, 5.0]
        ref, spread = mp_pair(C, u0, times, name)
        ev, cond = mp_eig_cond(C)
        defective = [False] * len(ev)
        script = ("A = %s\n" % lit_m + READ_U0 + "sol = propagate(A, u0, %s, tol=1e-8)\n" % vec_lit(times) +
                  "spec = spectrum(A)\n")
        add(name, fam, scen, script,
            propagate=prop_check(u0, times, ref, "%s expm at 40 digits, checked against %s expm" % (MPMATH, SCIPY), spread),
            eigen={"var": "spec", "norm_fro": float(np.linalg.norm(C)), "eigenvalues": [[e.real, e.imag] for e in ev], "defective": defective, "cond": cond,
                   "reference": "%s eig at 50 digits: eigenvalues and condition numbers ‖x‖‖y‖/|yᴴx| of the left and right eigenvectors" % MPMATH})

    # Two Jordan blocks with the same eigenvalue plus a simple one (derogatory).
    name = "two_blocks_same_eigenvalue"
    A = np.array([[-1.0, 1, 0, 0, 0], [0, -1, 0, 0, 0], [0, 0, -1, 1, 0], [0, 0, 0, -1, 0], [0, 0, 0, 0, -3]])
    lit_m = "{" + " | ".join(", ".join(lit(v) for v in row) for row in A) + "}"
    u0 = write_vector(name, [1.0, 2, 3, 4, 5])
    times = [1.0, 4.0]
    ref, spread = mp_pair(A, u0, times, name)
    om, al = omega_alpha(A)
    add(name, fam, "two 2×2 Jordan blocks for λ = −1 and a simple λ = −3: −1 is defective (geometric multiplicity 2, algebraic 4)",
        "A = %s\n" % lit_m + READ_U0 + "sol = propagate(A, u0, %s, tol=1e-8)\ngen = wellposed(A, omega=0)\nspec = spectrum(A)\n" % vec_lit(times),
        propagate=prop_check(u0, times, ref, "%s expm at 40 digits, checked against %s expm" % (MPMATH, SCIPY), spread),
        generator=gen_check(om <= 0, True, om, -1.0, "ω(A) by %s eigvalsh; α = −1 (triangular)" % NUMPY),
        eigen={"var": "spec", "norm_fro": float(np.linalg.norm(A)), "eigenvalues": [[-1.0, 0.0], [-3.0, 0.0]], "defective": [True, False], "cond": [None, 1.0],
               "reference": "closed form: block-diagonal Jordan form; −3 is simple with orthogonal eigenvectors (condition 1)"})

    # A 3×3 upper triangular matrix with a tiny perturbation that splits a Jordan pair.
    name = "split_jordan_pair_1e-6"
    A = np.array([[-1.0, 1.0, 0.0], [1e-6, -1.0, 0.5], [0.0, 0.0, -2.0]])
    lit_m = "{" + " | ".join(", ".join(lit(v) for v in row) for row in A) + "}"
    u0 = write_vector(name, [0.0, 1.0, 1.0])
    times = [1.0, 3.0]
    ref, spread = mp_pair(A, u0, times, name)
    ev, cond = mp_eig_cond(A)
    add(name, fam, "a Jordan pair at −1 split by a coupling 1e-6: eigenvalues −1 ± 1e-3, condition about 500",
        "A = %s\n" % lit_m + READ_U0 + "sol = propagate(A, u0, %s, tol=1e-8)\nspec = spectrum(A)\n" % vec_lit(times),
        propagate=prop_check(u0, times, ref, "%s expm at 40 digits, checked against %s expm" % (MPMATH, SCIPY), spread),
        eigen={"var": "spec", "norm_fro": float(np.linalg.norm(A)), "eigenvalues": [[e.real, e.imag] for e in ev], "defective": [False] * 3, "cond": cond,
               "reference": "%s eig at 50 digits with condition numbers" % MPMATH})


FAMILIES = [family_second_order, family_chains, family_convection_diffusion, family_matrix_market,
            family_forcing, family_semilinear, family_defective]


def main():
    global OUT
    ap = argparse.ArgumentParser()
    ap.add_argument("--out", default=OUT, help="the folder to write (default problems/; write elsewhere and copy over to keep the corpus whole meanwhile)")
    ap.add_argument("--only", help="run only the families whose function names contain one of these comma-separated texts")
    args = ap.parse_args()
    os.chdir(os.path.dirname(os.path.abspath(__file__)))
    OUT = args.out
    os.makedirs(OUT, exist_ok=True)
    for f in FAMILIES:
        if args.only and not any(o in f.__name__ for o in args.only.split(",")):
            continue
        f()
    print("%d problems" % len(problems), file=sys.stderr)


if __name__ == "__main__":
    main()
