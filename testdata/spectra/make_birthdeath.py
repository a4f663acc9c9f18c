#!/usr/bin/python3
"""Reference spectra of birth-death chains, computed with mpmath at 50 digits.

1. The M/M/1/K queue (states 0..K, birth rate lam, death rate mu) has the
   eigenvalues 0 and -(lam+mu) + 2 sqrt(lam mu) cos(j pi/(K+1)), j = 1..K
   (the generator is a tridiagonal Toeplitz matrix with modified corners;
   e.g. Kleinrock, Queueing Systems I, 1975, and Ledermann & Reuter, Phil.
   Trans. R. Soc. A 246, 1954). The script checks this formula against the
   eigenvalues of the (K+1)x(K+1) generator from mpmath.eig at 40 digits,
   and checks that the variant with cos(j pi/K) is wrong, before the Go
   test trusts it.

2. A strongly graded 500-state chain: rates of size 10^(k/100) (1 to 8e5)
   modulated by sines, deaths about 8 times the births, so that the
   stationary distribution spans about 450 orders of magnitude (the
   non-symmetric QR algorithm on Q, scipy.linalg.eigvals, misses its gap by
   0.7%). Its eigenvalues are those of the symmetric
   tridiagonal S with S_kk = q_kk and S_{k,k+1}^2 = q_{k,k+1} q_{k+1,k}
   (similar to Q through D^{1/2}, D = diag(pi)); we store the rates as the
   exact doubles the Go test uses and compute the four largest and the
   smallest eigenvalue of S at 50 digits by Sturm-sequence bisection
   (the number of negative pivots of the LDL^T factorisation of S - xI
   is the number of eigenvalues below x; Wilkinson 1965, ch. 5), with
   e_k^2 formed exactly in mpmath from the stored doubles.

3. A 60-state chain with rates from 1e-8 to 1e8 whose eigenvalues span
   80 decades (the smallest non-zero one about 4e-72): all non-zero
   eigenvalues at 200 digits (see wide()), which only a relatively accurate
   method can reproduce.

4. The two rightmost non-zero eigenvalues of M/M/1/K queues with up to
   10^4 states from the closed form of 1. at 50 digits.

Run with: /usr/bin/python3 testdata/spectra/make_birthdeath.py
"""
import json
import math
import os

import mpmath as mp


def mm1k_check():
    mp.mp.dps = 40
    out = []
    for lam, mu, K in [(1.0, 2.0, 6), (3.0, 0.5, 9), (1.0, 1.0, 4)]:
        n = K + 1
        q = mp.zeros(n, n)
        for k in range(n):
            if k < K:
                q[k, k + 1] = lam
            if k > 0:
                q[k, k - 1] = mu
            q[k, k] = -((lam if k < K else 0) + (mu if k > 0 else 0))
        ev = sorted([mp.re(x) for x in mp.eig(q)[0]], reverse=True)
        formula = [mp.mpf(0)] + sorted([-(lam + mu) + 2 * mp.sqrt(lam * mu) * mp.cos(j * mp.pi / (K + 1)) for j in range(1, K + 1)], reverse=True)
        wrong = [mp.mpf(0)] + sorted([-(lam + mu) + 2 * mp.sqrt(lam * mu) * mp.cos(j * mp.pi / K) for j in range(1, K + 1)], reverse=True)
        err = max(abs(a - b) for a, b in zip(ev, formula))
        errw = max(abs(a - b) for a, b in zip(ev, wrong))
        assert err < mp.mpf(10) ** -30, (lam, mu, K, err)
        assert errw > 1e-3, (lam, mu, K, errw)
        out.append({"lam": lam, "mu": mu, "K": K, "eigenvalues": [float(x) for x in ev],
                    "formula_error": float(err), "cos_j_pi_over_K_error": float(errw)})
    return out


def graded_rates(n):
    birth = [10 ** (k / 100) * (1 + 0.3 * math.sin(k)) for k in range(n - 1)]            # k -> k+1
    death = [8 * 10 ** ((k + 1) / 100) * (1 + 0.3 * math.cos(0.7 * k)) for k in range(n - 1)]  # k+1 -> k
    return birth, death


def sturm_count(d, e2, x):
    """Number of eigenvalues of the symmetric tridiagonal (d, e) below x."""
    c = 0
    q = d[0] - x
    if q < 0:
        c += 1
    for k in range(1, len(d)):
        if q == 0:
            q = mp.mpf(10) ** (-mp.mp.dps * 2)
        q = d[k] - x - e2[k - 1] / q
        if q < 0:
            c += 1
    return c


def graded():
    mp.mp.dps = 50
    n = 500
    birth, death = graded_rates(n)
    d = []
    for k in range(n):
        s = mp.mpf(0)
        if k < n - 1:
            s += mp.mpf(birth[k])
        if k > 0:
            s += mp.mpf(death[k - 1])
        d.append(-s)
    e2 = [mp.mpf(birth[k]) * mp.mpf(death[k]) for k in range(n - 1)]
    lo = min(d[k] - 2 * mp.sqrt(max(e2[k - 1] if k > 0 else 0, e2[k] if k < n - 1 else 0)) for k in range(n))
    lo = lo * 2 - 1
    hi = mp.mpf(1)

    def kth(j):  # j-th smallest eigenvalue, 0-based
        a, b = lo, hi
        for _ in range(400):
            m = (a + b) / 2
            if sturm_count(d, e2, m) > j:
                b = m
            else:
                a = m
            if b - a < mp.mpf(10) ** -45 * max(1, abs(a)):
                break
        return (a + b) / 2

    top = [kth(n - 1 - i) for i in range(4)]
    bottom = kth(0)
    pis = [mp.mpf(0)]
    for k in range(n - 1):
        pis.append(pis[-1] + mp.log(mp.mpf(birth[k]) / mp.mpf(death[k])))
    span = (max(pis) - min(pis)) / mp.log(10)
    return {"n": n, "birth": birth, "death": death,
            "largest": [mp.nstr(x, 30) for x in top], "smallest": mp.nstr(bottom, 30),
            "gap": mp.nstr(-top[1], 30), "pi_decades": float(span)}


def wide():
    """A 60-state chain whose rates span 16 decades (10^-8 .. 10^8): deep
    wells of pi make some eigenvalues astronomically small next to the
    largest (about 1e-54 against 1e8). The non-zero eigenvalues of Q are
    minus those of the positive definite tridiagonal G G^T (G the
    bidiagonal with -sqrt(birth_k), sqrt(death_k) in row k, so that
    -D^(1/2) Q D^(-1/2) = G^T G): diagonal birth_k + death_k, squared
    off-diagonal death_k birth_(k+1). At 200 digits the Sturm count's
    absolute error (about 1e-190) is far below the smallest eigenvalue, and
    bisection on log x gives each to relative 1e-42."""
    mp.mp.dps = 200
    n = 60
    birth = [10 ** (8 * math.sin(0.37 * k)) for k in range(n - 1)]
    death = [10 ** (8 * math.cos(0.23 * k + 1)) * 0.5 for k in range(n - 1)]
    d = [mp.mpf(birth[k]) + mp.mpf(death[k]) for k in range(n - 1)]
    e2 = [mp.mpf(death[k]) * mp.mpf(birth[k + 1]) for k in range(n - 2)]
    top = max(d) * 3

    def kth(j):  # j-th smallest eigenvalue of G G^T, as exp(t)
        ta, tb = mp.log(mp.mpf(10) ** -300), mp.log(top)  # count(e^ta) <= j < count(e^tb)
        assert sturm_count(d, e2, mp.exp(ta)) <= j < sturm_count(d, e2, mp.exp(tb))
        while tb - ta > mp.mpf(10) ** -42:
            t = (ta + tb) / 2
            if sturm_count(d, e2, mp.exp(t)) > j:
                tb = t
            else:
                ta = t
        return mp.exp((ta + tb) / 2)

    vals = [-kth(j) for j in range(n - 1)]  # decreasing
    mp.mp.dps = 50
    return {"n": n, "birth": birth, "death": death,
            "nonzero_eigenvalues": [mp.nstr(x, 30) for x in vals]}


def mm1k_gaps():
    """The two rightmost non-zero eigenvalues of large M/M/1/K queues from
    the closed form at 50 digits, with the rates as the doubles given."""
    mp.mp.dps = 50
    out = []
    for lam, mu, K in [(1.0, 1.0, 999), (0.999, 1.0, 9999), (5.0, 1.0, 2999), (1.0, 5.0, 4999), (0.999, 1.0, 1999)]:
        l, m = mp.mpf(lam), mp.mpf(mu)
        top = [-(l + m) + 2 * mp.sqrt(l * m) * mp.cos(j * mp.pi / (K + 1)) for j in (1, 2)]
        out.append({"lam": lam, "mu": mu, "K": K, "rightmost": [mp.nstr(x, 30) for x in top]})
    return out


def main():
    here = os.path.dirname(os.path.abspath(__file__))
    ref = {"generator": "testdata/spectra/make_birthdeath.py", "mpmath": mp.__version__,
           "mm1k": mm1k_check(), "graded": graded(),
           "wide": wide(), "mm1k_gaps": mm1k_gaps()}
    with open(os.path.join(here, "birthdeath.json"), "w") as f:
        json.dump(ref, f, indent=1)
        f.write("\n")


if __name__ == "__main__":
    main()
