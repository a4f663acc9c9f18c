#!/usr/bin/python3
"""Time Semiflow against Debian's scipy on the same problems, in one run.

Usage (from the repository root, with Debian's python3-scipy):

    /usr/bin/python3 testdata/bench/compare_scipy.py [--only REGEX]
        [--openblas] [--budget SECONDS] [--markdown FILE]

The problems are defined in numerics/compare (doc.go states the formulas;
this script builds the same matrices with numpy/scipy). For every problem
the Go side (BenchmarkCompare, built with `go test -c`, and with
`-tags openblas` too when --openblas is given) and the scipy side each run
in a fresh process; the script reports the best time, the peak resident
memory of that process (getrusage through os.wait4), the ratio
scipy time / Semiflow time, and how far the two answers agree.

scipy's expm_multiply is run whole when its own step choice (m*, s of
Al-Mohy & Higham 2011, read from scipy's private helpers) predicts at most
--budget seconds; otherwise it is run for a shorter time t_s and its time
scaled by the ratio of its predicted products, and the row says "est.".
The SVD-per-point pseudospectra baseline is timed on a sample of points and
scaled to the grid in the same way when the whole grid would exceed the
budget.

OpenBLAS 0.3.21 (Debian 12) does not recognise some recent CPUs and falls
back to its generic "Prescott" kernels; when that happens on a CPU with
AVX-512 (or AVX2) the script sets OPENBLAS_CORETYPE=SkylakeX (Haswell) for
both scipy and the openblas build, and says so, so that scipy is measured
at its best.
"""
import argparse
import json
import math
import os
import platform
import re
import subprocess
import sys
import tempfile
import time

import numpy as np
import scipy
import scipy.fft
import scipy.io
import scipy.linalg as sl
import scipy.sparse as sp
import scipy.sparse.linalg as spl

ROOT = os.path.dirname(os.path.dirname(os.path.dirname(os.path.abspath(__file__))))
CONVX, CONVY = 20.0, 10.0
EXPV_N = [10**4, 10**5, 10**6]
EXPV_T = [0.01, 1.0]
SIDE2D = {10**4: 100, 10**5: 316, 10**6: 1000}


# ---- the problems, as numerics/compare builds them ----------------------

def tridiag(m, c):
    h = 1.0 / (m + 1)
    d, off = 1 / h**2, c / (2 * h)
    return sp.diags([np.full(m - 1, d + off), np.full(m, -2 * d), np.full(m - 1, d - off)],
                    [-1, 0, 1], format="csr")


def op1d(n, conv):
    h = 1.0 / (n + 1)
    x = (np.arange(n) + 1) * h
    return tridiag(n, CONVX if conv else 0.0), np.sin(np.pi * x) + x


def op2d(m, conv):
    X = tridiag(m, CONVX if conv else 0.0)
    Y = tridiag(m, CONVY if conv else 0.0)
    h = 1.0 / (m + 1)
    x = (np.arange(m) + 1) * h
    XX, YY = np.meshgrid(x, x, indexing="ij")  # index ix*m + iy
    u0 = (np.sin(np.pi * XX) * np.sin(2 * np.pi * YY) + XX * YY).ravel()
    I = sp.identity(m, format="csr")
    return (sp.kron(X, I) + sp.kron(I, Y)).tocsr(), X, Y, u0


def advdiff(m, dim):
    """κ·Δ_h − β·D_x with variable coefficients (numerics/compare AdvDiff)."""
    h = 1.0 / (m + 1)
    x = (np.arange(m) + 1) * h
    g = [a.ravel() for a in np.meshgrid(*([x] * dim), indexing="ij")]
    X, Y = g[0], g[1]
    if dim == 3:
        Z = g[2]
        kappa = 1 + 0.5 * np.sin(2 * np.pi * X) * np.sin(np.pi * Y) * np.sin(np.pi * Z)
        u0 = np.sin(np.pi * X) * np.sin(2 * np.pi * Y) * np.sin(3 * np.pi * Z) + X * Y * Z
    else:
        kappa = 1 + 0.5 * np.sin(2 * np.pi * X) * np.sin(np.pi * Y)
        u0 = np.sin(np.pi * X) * np.sin(2 * np.pi * Y) + X * Y
    beta = 20 * (1 + Y)
    n = m**dim
    i = np.arange(n)
    idx = np.unravel_index(i, (m,) * dim)
    stride = [m ** (dim - 1 - d) for d in range(dim)]
    rows, cols, vals = [i], [i], [-2 * dim * kappa / h**2]
    for d in range(dim):
        for s in (-1, 1):
            ok = (idx[d] + s >= 0) & (idx[d] + s < m)
            v = kappa / h**2
            if d == 0:
                v = v - s * beta / (2 * h)
            rows.append(i[ok])
            cols.append(i[ok] + s * stride[d])
            vals.append(v[ok])
    A = sp.csr_matrix((np.concatenate(vals), (np.concatenate(rows), np.concatenate(cols))), shape=(n, n))
    return A, u0


FACTOR_CASES = {  # name: (dim, m, z)
    "factor_advdiff2d_N1e4_real": (2, 100, 1000.0), "factor_advdiff2d_N1e4_complex": (2, 100, 1000 + 1000j),
    "factor_advdiff2d_N1e5_real": (2, 316, 1000.0), "factor_advdiff2d_N1e5_complex": (2, 316, 1000 + 1000j),
    "factor_advdiff2d_N1e6_real": (2, 1000, 1000.0),
    "factor_varcoef3d_N1e5_real": (3, 46, 1000.0), "factor_varcoef3d_N1e5_complex": (3, 46, 1000 + 1000j),
}
# An unstructured operator from a file: see unstructured().
UNSTRUCTURED_CASES = {"factor_unstructured_N1e5_real": 1000.0, "factor_unstructured_N1e5_complex": 1000 + 1000j}
UNSTRUCTURED_N = 100000


def unstructured(n=UNSTRUCTURED_N):
    """A non-symmetric operator on an unstructured mesh: the Delaunay
    triangulation of n points drawn uniformly in the unit square (seeded), in
    the drawing order (no band, no grid), edge weights 1/|e|² · (1 + 0.3
    cos(angle of e)) — a drift along x — and A_ii = −Σ_j a_ij − 1."""
    from scipy.spatial import Delaunay
    pts = np.random.default_rng(20261203).random((n, 2))
    tri = Delaunay(pts).simplices
    e = np.concatenate([tri[:, [0, 1]], tri[:, [1, 2]], tri[:, [2, 0]]])
    e = np.unique(np.sort(e, axis=1), axis=0)
    i, j = np.concatenate([e[:, 0], e[:, 1]]), np.concatenate([e[:, 1], e[:, 0]])
    d = pts[j] - pts[i]
    h2 = (d ** 2).sum(axis=1)
    w = (1 + 0.3 * d[:, 0] / np.sqrt(h2)) / h2 * (1.0 / n)
    A = sp.csr_matrix((w, (i, j)), shape=(n, n))
    A = A - sp.diags(np.asarray(A.sum(axis=1)).ravel() + 1.0)
    return A.tocsr()
PROPAGATE_CASES = {  # name: (m, t); tolerance 1e-8 on the Go side
    "propagate_advdiff2d_N1e5_t0.1": (316, 0.1), "propagate_advdiff2d_N1e5_t1": (316, 1.0),
    "propagate_advdiff2d_N1e6_t0.01": (1000, 0.01),
}


def dense_matrix(n):
    i = np.arange(n)[:, None]
    j = np.arange(n)[None, :]
    return 4 * np.sin(0.7 * i + 0.013 * j * j + 1) * np.where(j > i, 2.0, 1.0) / np.sqrt(n)


def grcar(n):
    a = np.zeros((n, n))
    for k in range(4):
        a += np.diag(np.ones(n - k), k)
    return a - np.diag(np.ones(n - 1), -1)


def label(n):
    return "1e%d" % round(math.log10(n))


def problem_names():
    names = ["dense_exp_n200", "dense_exp_n500"]
    for dim in (1, 2):
        for op in ("heat", "cd"):
            for n in EXPV_N:
                for t in EXPV_T:
                    names.append("expv_%s%dd_N%s_t%s" % (op, dim, label(n), ("%g" % t)))
    names += list(FACTOR_CASES) + list(UNSTRUCTURED_CASES) + list(PROPAGATE_CASES)
    names += ["shifted_heat2d_N1e4", "shifted_heat2d_N1e5", "shifted_heat1d_N1e6",
              "pseudo_grcar_n100_g50", "pseudo_grcar_n400_g100",
              "spectrum_dense_n500", "eigs_cd2d_N1e5"]
    return names


# ---- the scipy side (runs in a child process) ---------------------------

def best_of(f, budget_once=2.0, repeat=3):
    t0 = time.perf_counter()
    out = f()
    best = time.perf_counter() - t0
    if best < budget_once:
        for _ in range(repeat - 1):
            t0 = time.perf_counter()
            out = f()
            best = min(best, time.perf_counter() - t0)
    return best, out


def expm_multiply_products(A, t):
    """Products scipy's expm_multiply will use at most for e^{tA}v: m*·s."""
    from scipy.sparse.linalg._expm_multiply import (LazyOperatorNormInfo, _exact_1_norm,
                                                    _fragment_3_1)
    n = A.shape[0]
    mu = A.diagonal().sum() / n
    B = A - mu * sp.identity(n, format="csr")
    norm = _exact_1_norm(B)
    if t * norm == 0:
        return 0
    info = LazyOperatorNormInfo(t * B, A_1_norm=t * norm, ell=2)
    m_star, s = _fragment_3_1(info, 1, 2.0**-53, ell=2)
    return m_star * s


def heat1d_exact(n, t, u0):
    """e^{tD}u0 by the sine transform: D's eigenvectors are sin(jkπh)."""
    h = 1.0 / (n + 1)
    k = np.arange(1, n + 1)
    lam = -4 / h**2 * np.sin(k * np.pi * h / 2) ** 2
    c = scipy.fft.dst(u0, type=1)
    return scipy.fft.idst(np.exp(t * lam) * c, type=1)


def scipy_case(name, budget, vec_out):
    """Returns dict(seconds, check, how, estimated, ref) and writes the
    answer vector (if any) to vec_out."""
    res = {"estimated": False, "how": "", "ref": ""}
    vec = None
    m = re.match(r"dense_exp_n(\d+)$", name)
    if m:
        a = dense_matrix(int(m.group(1)))
        sec, e = best_of(lambda: sl.expm(a))
        res.update(seconds=sec, check=float(np.abs(e).sum(axis=0).max()), how="linalg.expm")
    m = re.match(r"expv_(heat|cd)(\d)d_N(1e\d)_t([0-9.]+)$", name)
    if m:
        op, dim, n, t = m.group(1), int(m.group(2)), int(float(m.group(3))), float(m.group(4))
        conv = op == "cd"
        if dim == 1:
            A, u0 = op1d(n, conv)
        else:
            A, X, Y, u0 = op2d(SIDE2D[n], conv)
        v = A @ u0
        mv, _ = best_of(lambda: A @ u0, repeat=5)
        prods = expm_multiply_products(A, t)
        predicted = prods * mv
        if predicted <= budget:
            sec, vec = best_of(lambda: spl.expm_multiply(t * A, u0), repeat=2)
            res.update(seconds=sec, how="sparse.linalg.expm_multiply")
            res["ref"] = "expm_multiply"
        else:
            ts = t * budget / (4 * predicted)
            ps = max(expm_multiply_products(A, ts), 1)
            sec_s, _ = best_of(lambda: spl.expm_multiply(ts * A, u0), repeat=1)
            res.update(seconds=sec_s * prods / ps, estimated=True,
                       how="expm_multiply, est. from t=%.2g (%d of %d products)" % (ts, ps, prods))
        if vec is None and dim == 1 and not conv:
            vec = heat1d_exact(n, t, u0)
            res["ref"] = "sine transform (closed form)"
        if dim == 2:
            # What a scipy user who knows the structure would write.
            mside = SIDE2D[n]
            def structured():
                ex = sl.expm(t * X.toarray())
                ey = sl.expm(t * Y.toarray())
                return (ex @ u0.reshape(mside, mside) @ ey.T).ravel()
            sec2, w = best_of(structured, repeat=2)
            res["structured_seconds"] = sec2
            if vec is None:
                vec = w
                res["ref"] = "scipy expm of the 1-D factors"
        res["check"] = float(np.linalg.norm(vec)) if vec is not None else float("nan")
    m = re.match(r"shifted_heat(\d)d_N(1e\d)$", name)
    if m:
        dim, n = int(m.group(1)), int(float(m.group(2)))
        z = 1 + 1j
        if dim == 1:
            A, u0 = op1d(n, False)
            h = 1.0 / (n + 1)
            ab = np.zeros((3, n), dtype=complex)
            ab[0, 1:] = -1 / h**2
            ab[1, :] = z + 2 / h**2
            ab[2, :-1] = -1 / h**2
            sec, x = best_of(lambda: sl.solve_banded((1, 1), ab, u0.astype(complex)))
            res["how"] = "linalg.solve_banded (factor + solve)"
        else:
            A, _, _, u0 = op2d(SIDE2D[n], False)
            M = (z * sp.identity(A.shape[0], format="csc") - A).tocsc()
            def f():
                return spl.splu(M).solve(u0.astype(complex))
            sec, x = best_of(f)
            res["how"] = "sparse.linalg.splu (factor + solve)"
        res.update(seconds=sec, check=float(np.linalg.norm(x)))
    if name in FACTOR_CASES:
        dim, mside, z = FACTOR_CASES[name]
        A, u0 = advdiff(mside, dim)
        if dim == 3 and os.environ.get("SEMIFLOW_COMPARE_MTX3D"):
            A = scipy.io.mmread(os.environ["SEMIFLOW_COMPARE_MTX3D"]).tocsr()
        M = (z * sp.identity(A.shape[0], format="csc") - A).tocsc()
        b = u0.astype(complex) if isinstance(z, complex) else u0
        def f():
            lu = spl.splu(M)
            return lu, lu.solve(b)
        sec, (lu, x) = best_of(f)
        res.update(seconds=sec, check=float(np.linalg.norm(x)),
                   how="sparse.linalg.splu (factor + solve; nnz(L+U) = %.3g)" % (lu.L.nnz + lu.U.nnz))
    if name in UNSTRUCTURED_CASES:
        z = UNSTRUCTURED_CASES[name]
        A = scipy.io.mmread(os.environ["SEMIFLOW_COMPARE_MTXU"]).tocsr()
        M = (z * sp.identity(A.shape[0], format="csc") - A).tocsc()
        u0 = np.sin(np.arange(A.shape[0], dtype=float))
        b = u0.astype(complex) if isinstance(z, complex) else u0
        def f():
            lu = spl.splu(M)
            return lu, lu.solve(b)
        sec, (lu, x) = best_of(f)
        res.update(seconds=sec, check=float(np.linalg.norm(x)),
                   how="sparse.linalg.splu (factor + solve; nnz(L+U) = %.3g)" % (lu.L.nnz + lu.U.nnz))
    if name in PROPAGATE_CASES:
        mside, t = PROPAGATE_CASES[name]
        A, u0 = advdiff(mside, 2)
        mv, _ = best_of(lambda: A @ u0, repeat=5)
        prods = expm_multiply_products(A, t)
        predicted = prods * mv
        if predicted <= budget:
            sec, vec = best_of(lambda: spl.expm_multiply(t * A, u0), repeat=2)
            res.update(seconds=sec, how="sparse.linalg.expm_multiply", ref="expm_multiply")
        else:
            ts = t * budget / (4 * predicted)
            ps = max(expm_multiply_products(A, ts), 1)
            sec_s, _ = best_of(lambda: spl.expm_multiply(ts * A, u0), repeat=1)
            res.update(seconds=sec_s * prods / ps, estimated=True,
                       how="expm_multiply, est. from t=%.2g (%d of %d products)" % (ts, ps, prods))
        # The yardstick: one splu factorisation of I − γA, γ = 1e-3.
        M = (sp.identity(A.shape[0], format="csc") - 1e-3 * A).tocsc()
        fsec, _ = best_of(lambda: spl.splu(M), repeat=1)
        res["splu_seconds"] = fsec
        res["check"] = float(np.linalg.norm(vec)) if vec is not None else float("nan")
    m = re.match(r"pseudo_grcar_n(\d+)_g(\d+)$", name)
    if m:
        n, g = int(m.group(1)), int(m.group(2))
        a = grcar(n).astype(complex)
        re_, im_ = np.linspace(-1, 3, g), np.linspace(-3.5, 3.5, g)
        eye = np.eye(n)
        sig = lambda z: sl.svdvals(z * eye - a)[-1]
        t1, _ = best_of(lambda: sig(re_[1] + 1j * im_[1]), repeat=3)
        pts = [(i, j) for i in range(g) for j in range(g)]
        if t1 * len(pts) > budget:
            step = max(1, len(pts) // 40)
            pts = pts[::step][:40]
            res["estimated"] = True
        t0 = time.perf_counter()
        vals = [sig(re_[i] + 1j * im_[j]) for i, j in pts]
        sec = (time.perf_counter() - t0) * (g * g) / len(pts)
        res.update(seconds=sec, check=float(min(vals)) if not res["estimated"] else float("nan"),
                   how="linalg.svdvals per point" + (", est. from %d points" % len(pts) if res["estimated"] else ""),
                   points=[[i * g + j, float(v)] for (i, j), v in zip(pts, vals)])
    if name == "spectrum_dense_n500":
        a = dense_matrix(500)
        sec, out = best_of(lambda: sl.eig(a, left=True, right=True))
        res.update(seconds=sec, check=float(out[0].real.max()), how="linalg.eig with left and right vectors")
    if name == "eigs_cd2d_N1e5":
        A, _, _, _ = op2d(316, True)
        sec, w = best_of(lambda: spl.eigs(A.tocsc(), k=6, sigma=0, which="LM", return_eigenvectors=False))
        res.update(seconds=sec, check=float(w.real.max()), how="sparse.linalg.eigs, shift-invert at 0")
    if "seconds" not in res:
        raise SystemExit("unknown problem " + name)
    if vec is not None:
        np.asarray(vec, dtype="<f8").tofile(vec_out)
    return res


# ---- the parent: run both sides, print the table ------------------------

def run_measured(cmd, env):
    """Run cmd; return (stdout, peak RSS in MiB) of that process."""
    with tempfile.TemporaryFile() as out:
        p = subprocess.Popen(cmd, stdout=out, stderr=subprocess.STDOUT, env=env, cwd=ROOT)
        _, status, ru = os.wait4(p.pid, 0)
        p.returncode = os.waitstatus_to_exitcode(status)
        out.seek(0)
        text = out.read().decode()
    if p.returncode != 0:
        raise RuntimeError("%s failed:\n%s" % (" ".join(cmd), text))
    return text, ru.ru_maxrss / 1024.0


def go_case(binary, name, env, vec_out):
    env = dict(env, SEMIFLOW_COMPARE_OUT=vec_out)
    pat = "^BenchmarkCompare$/^%s$" % re.escape(name)
    def once(times):
        text, rss = run_measured([binary, "-test.run", "^$", "-test.bench", pat,
                                  "-test.benchtime", "%dx" % times], env)
        # The benchmark's own output can land inside its result line.
        plain = re.sub(r"compare-info [^\n]*\n", "", text)
        line = [l for l in plain.splitlines() if l.startswith("BenchmarkCompare/")]
        if not line:
            raise RuntimeError("no benchmark line for %s:\n%s" % (name, text))
        f = line[-1].split()
        vals = {f[i + 1]: float(f[i]) for i in range(2, len(f) - 1, 2)}
        info = re.search(r"compare-info \S+ method=(.+?) backend=(\S+)$", text, re.M)
        method = info.group(1).split(",")[0] if info else "?"
        return vals["ns/op"] / 1e9, vals["check"], vals["peak-heap-MiB"], rss, method
    r = once(1)
    if r[0] < 1.0:
        r2 = once(3)
        r = (min(r[0], r2[0]),) + r2[1:]
    return r


def agreement(name, go_vec, sc_vec, sc):
    if name.startswith("pseudo") and "points" in sc and go_vec is not None:
        # Relative differences of σ_min below 1e-12·‖A‖ are rounding noise on
        # both sides: compare there only that both are that small.
        floor = 1e-12 * 5
        pts = [(go_vec[k], v) for k, v in sc["points"]]
        big = [abs(g - v) / v for g, v in pts if v > floor]
        small = sum(1 for g, v in pts if v <= floor and g <= 10 * floor)
        return "σ_min rel. diff %.1e at %d points above 5e-12; %d of %d points below it on both sides" % (
            max(big) if big else 0, len(big), small, len(pts) - len(big))
    if go_vec is not None and sc_vec is not None and len(go_vec) == len(sc_vec):
        d = np.abs(go_vec - sc_vec).max() / np.abs(sc_vec).max()
        return "rel. ∞-diff %.1e vs %s" % (d, sc.get("ref") or "scipy")
    return ""


def cpu_model():
    try:
        for line in open("/proc/cpuinfo"):
            if line.startswith("model name"):
                return line.split(":", 1)[1].strip()
    except OSError:
        pass
    return platform.processor()


def openblas_core(env):
    out = subprocess.run(["/usr/bin/python3", "-c", "import numpy"], env=dict(env, OPENBLAS_VERBOSE="2"),
                         capture_output=True, text=True)
    m = re.search(r"Core: (\S+)", out.stdout + out.stderr)
    return m.group(1) if m else "unknown"


def main():
    ap = argparse.ArgumentParser()
    ap.add_argument("--only", default="")
    ap.add_argument("--openblas", action="store_true")
    ap.add_argument("--budget", type=float, default=60.0)
    ap.add_argument("--markdown", default="")
    ap.add_argument("--child", default="")
    ap.add_argument("--vec", default="")
    ap.add_argument("--write3d", default="")
    ap.add_argument("--writeunstructured", default="")
    args = ap.parse_args()
    if args.write3d:
        A3, _ = advdiff(46, 3)
        scipy.io.mmwrite(args.write3d, A3, precision=17,
                         comment="3-D variable-coefficient 7-point operator (numerics/compare AdvDiff)")
        print("3-D operator written to %s (%d×%d, %d entries)" % (args.write3d, A3.shape[0], A3.shape[1], A3.nnz), flush=True)
        return
    if args.writeunstructured:
        AU = unstructured()
        scipy.io.mmwrite(args.writeunstructured, AU, precision=17,
                         comment="non-symmetric operator on the Delaunay mesh of %d seeded random points (compare_scipy.py unstructured())" % AU.shape[0])
        print("unstructured operator written to %s (%d×%d, %d entries)" % (args.writeunstructured, AU.shape[0], AU.shape[1], AU.nnz), flush=True)
        return
    if args.child:
        print("RESULT " + json.dumps(scipy_case(args.child, args.budget, args.vec)))
        return

    env = dict(os.environ)
    flags = open("/proc/cpuinfo").read()
    core = openblas_core(env)
    note = "OpenBLAS detected core %s" % core
    if core == "Prescott" and "OPENBLAS_CORETYPE" not in env:
        want = "SkylakeX" if " avx512f" in flags else ("Haswell" if " avx2" in flags else "")
        if want:
            env["OPENBLAS_CORETYPE"] = want
            note += "; set OPENBLAS_CORETYPE=%s for scipy and the openblas build" % want
    tmp = tempfile.mkdtemp(prefix="semiflow-compare-")
    gobin = {"pure Go": os.path.join(tmp, "compare.test")}
    subprocess.run(["go", "test", "-c", "-o", gobin["pure Go"], "./numerics/compare"], cwd=ROOT, check=True)
    if args.openblas:
        gobin["OpenBLAS"] = os.path.join(tmp, "compare_openblas.test")
        subprocess.run(["go", "test", "-c", "-tags", "openblas", "-o", gobin["OpenBLAS"], "./numerics/compare"],
                       cwd=ROOT, check=True)
    gover = subprocess.run(["go", "env", "GOVERSION"], capture_output=True, text=True).stdout.strip()
    head = ["machine: %s, %d cores, %s" % (cpu_model(), os.cpu_count(), platform.platform()),
            "date: %s" % time.strftime("%Y-%m-%d %H:%M %Z"),
            "scipy %s, numpy %s, %s; %s; Go %s" % (scipy.__version__, np.__version__,
                                                 "python " + platform.python_version(), note, gover),
            "budget for a scipy run: %g s" % args.budget]
    for h in head:
        print(h, flush=True)
    cols = ["problem", "Semiflow build", "method", "Semiflow s", "peak RSS MiB",
            "scipy", "scipy s", "peak RSS MiB", "scipy/Semiflow", "answers"]
    rows = []
    print("\n| " + " | ".join(cols) + " |\n|" + " --- |" * len(cols), flush=True)
    names = [nm for nm in problem_names() if not args.only or re.search(args.only, nm)]
    if any(nm.startswith("factor_varcoef3d") for nm in names):
        # The 3-D operator reaches both sides as a Matrix Market file.
        # Written by a child process: the parent must stay small, since a
        # child's peak RSS as wait4 reports it starts from the parent's at
        # the fork.
        path = os.path.join(tmp, "varcoef3d_N1e5.mtx")
        subprocess.run(["/usr/bin/python3", os.path.abspath(__file__), "--write3d", path], check=True, env=env)
        env["SEMIFLOW_COMPARE_MTX3D"] = path
    if any(nm in UNSTRUCTURED_CASES for nm in names):
        path = os.path.join(tmp, "unstructured_N1e5.mtx")
        subprocess.run(["/usr/bin/python3", os.path.abspath(__file__), "--writeunstructured", path], check=True, env=env)
        env["SEMIFLOW_COMPARE_MTXU"] = path
    for name in names:
        sc_vecf = os.path.join(tmp, "scipy.vec")
        if os.path.exists(sc_vecf):
            os.remove(sc_vecf)
        text, sc_rss = run_measured(["/usr/bin/python3", os.path.abspath(__file__), "--child", name,
                                     "--budget", str(args.budget), "--vec", sc_vecf], env)
        sc = json.loads(text.split("RESULT ", 1)[1])
        sc_vec = np.fromfile(sc_vecf, dtype="<f8") if os.path.exists(sc_vecf) else None
        for build, binary in gobin.items():
            go_vecf = os.path.join(tmp, "go.vec")
            if os.path.exists(go_vecf):
                os.remove(go_vecf)
            sec, check, heap, rss, method = go_case(binary, name, env, go_vecf)
            go_vec = np.fromfile(go_vecf, dtype="<f8") if os.path.exists(go_vecf) else None
            agree = agreement(name, go_vec, sc_vec, sc)
            if not agree and not math.isnan(sc["check"]):
                agree = "check %.10g vs %.10g" % (check, sc["check"])
            ratio = sc["seconds"] / sec
            row = [name, build, method, "%.4g" % sec, "%.0f" % rss, sc["how"],
                   ("≈ " if sc["estimated"] else "") + "%.4g" % sc["seconds"], "%.0f" % sc_rss,
                   ("≈ " if sc["estimated"] else "") + ("%.3g×" % ratio), agree]
            if "splu_seconds" in sc:
                row[-1] += "; one splu of I − 10⁻³A: %.3g s (Semiflow = %.2g of them)" % (
                    sc["splu_seconds"], sec / sc["splu_seconds"])
            if "structured_seconds" in sc:
                row[-1] += "; scipy by hand via 1-D factors: %.3g s (%.3g×)" % (
                    sc["structured_seconds"], sc["structured_seconds"] / sec)
            rows.append(row)
            print("| " + " | ".join(row) + " |", flush=True)
    if args.markdown:
        with open(args.markdown, "w") as f:
            f.write("\n".join("- " + h for h in head) + "\n\n")
            f.write("| " + " | ".join(cols) + " |\n|" + " --- |" * len(cols) + "\n")
            for r in rows:
                f.write("| " + " | ".join(r) + " |\n")


if __name__ == "__main__":
    main()
