#!/usr/bin/python3
"""Time Semiflow's adaptive ETDRK4 against Debian's scipy on a 1-D
reaction–diffusion problem, in one run.

Usage (from the repository root, with Debian's python3-scipy):

    /usr/bin/python3 testdata/bench/etd_scipy.py [--repeat 3]

The problem (BenchmarkETDFisherKPP in numerics/expo/etd_bench_test.go
builds the same one): Fisher–KPP u_t = D u_xx + u(1 − u) on (0, 1) with
Dirichlet ends, N = 1000 interior points x_j = j h, h = 1/(N+1), second
differences, D = 0.01 (‖L‖ ≈ 4e4: stiff), u0 = 0.8 exp(−100(x − 0.5)²),
solved to T = 2.

scipy side: scipy.integrate.solve_ivp, methods BDF and Radau, with the
analytic sparse Jacobian L + diag(1 − 2u), rtol = atol = tol (the solution
is of size ≈ 1, so both ask for the same absolute accuracy as Semiflow's
tol relative to max‖u‖∞). Best of --repeat runs. The reference is Radau at
rtol = atol = 1e-12.

Semiflow side: `go test -run '^$' -bench ETDFisherKPP -benchtime 1x -count
R`, the best of the R runs' ns/op (each a fresh solve: the factorisation
cache starts empty); the solution at T is written by the benchmark
(SEMIFLOW_ETD_OUT) and compared with the same reference.

Prints, per tolerance: the wall times, the ratio Semiflow/scipy for each
method, each side's true error against the reference (Semiflow's with its
own estimate), then the CPU times and their ratios (Semiflow's summed over
its threads, from the benchmark's cpu-s; scipy's from process_time), and
the load average before and after. Wall times on a shared machine mean
little above a load of about 2; CPU times hold up better (not entirely:
a busy machine also slows each core).
"""
import argparse
import json
import os
import re
import subprocess
import tempfile
import time

import numpy as np
import scipy
import scipy.sparse as sp
from scipy.integrate import solve_ivp

ROOT = os.path.dirname(os.path.dirname(os.path.dirname(os.path.abspath(__file__))))
N, D, T = 1000, 0.01, 2.0
TOLS = [1e-6, 1e-8]


def problem():
    h = 1.0 / (N + 1)
    c = D / h**2
    L = sp.diags([c * np.ones(N - 1), -2 * c * np.ones(N), c * np.ones(N - 1)], [-1, 0, 1], format="csr")
    x = h * np.arange(1, N + 1)
    u0 = 0.8 * np.exp(-100 * (x - 0.5) ** 2)
    return L, u0


def scipy_solve(method, tol, L, u0):
    f = lambda t, u: L @ u + u * (1 - u)
    jac = lambda t, u: (L + sp.diags(1 - 2 * u)).tocsc()
    r = solve_ivp(f, (0, T), u0, method=method, rtol=tol, atol=tol, jac=jac, t_eval=[T])
    assert r.success, r.message
    return r.y[:, -1], r.nfev, r.nlu


def best(f, repeat):
    """Best wall time and best CPU time (this process) of repeat runs."""
    out, tb, cb = None, float("inf"), float("inf")
    for _ in range(repeat):
        t0, c0 = time.perf_counter(), time.process_time()
        out = f()
        tb = min(tb, time.perf_counter() - t0)
        cb = min(cb, time.process_time() - c0)
    return tb, cb, out


def main():
    ap = argparse.ArgumentParser()
    ap.add_argument("--repeat", type=int, default=3)
    args = ap.parse_args()
    load0 = os.getloadavg()
    L, u0 = problem()
    ref, _, _ = scipy_solve("Radau", 1e-12, L, u0)
    with tempfile.TemporaryDirectory() as d:
        env = dict(os.environ, SEMIFLOW_ETD_OUT=d)
        cmd = ["go", "test", "-count=%d" % args.repeat, "-run", "^$", "-bench", "ETDFisherKPP", "-benchtime", "1x", "./numerics/expo/"]
        out = subprocess.run(cmd, cwd=ROOT, env=env, capture_output=True, text=True)
        if out.returncode != 0:
            raise SystemExit(out.stdout + out.stderr)
        go = {}
        for line in out.stdout.splitlines():
            m = re.match(r"BenchmarkETDFisherKPP/N1000_tol(\S+?)(-\d+)?\s+\d+\s+(\d+) ns/op.*?([\d.]+) cpu-s", line)
            if m:
                tol = float(m.group(1))
                res = json.load(open(os.path.join(d, "etd_tol%s.json" % m.group(1))))
                tg, cg = int(m.group(3)) / 1e9, float(m.group(4))
                if tol in go:
                    tg, cg = min(tg, go[tol][0]), min(cg, go[tol][1])
                go[tol] = (tg, cg, res)
    print("Fisher–KPP, N = %d, T = %g; scipy %s, numpy %s; best of %d" % (N, T, scipy.__version__, np.__version__, args.repeat))
    print("Wall time (Semiflow on both cores), then CPU time (Semiflow's summed over its threads, scipy's one):")
    print("| tol | Semiflow ETDRK4 | steps (rejected) | true error | estimate | scipy BDF | error | scipy Radau | error | ratio to BDF | ratio to Radau | CPU: Semiflow | BDF | Radau | CPU ratio to BDF / Radau |")
    print("| --- | --- | --- | --- | --- | --- | --- | --- | --- | --- | --- | --- | --- | --- | --- |")
    for tol in TOLS:
        tg, cg, res = go[tol]
        eg = np.max(np.abs(np.array(res["u"]) - ref))
        row = ["%g" % tol, "%.3f s" % tg, "%d (%d)" % (res["accepted"], res["rejected"]), "%.2g" % eg, "%.2g" % res["errest"]]
        ratios, cpu, cratios = [], ["%.3f s" % cg], []
        for m in ["BDF", "Radau"]:
            ts, cs, (u, nfev, nlu) = best(lambda: scipy_solve(m, tol, L, u0), args.repeat)
            row += ["%.3f s" % ts, "%.2g" % np.max(np.abs(u - ref))]
            ratios.append("%.2f" % (tg / ts))
            cpu.append("%.3f s" % cs)
            cratios.append("%.2f" % (cg / cs))
        print("| " + " | ".join(row + ratios + cpu + [" / ".join(cratios)]) + " |")
    print("load average (1, 5, 15 min): %.2f %.2f %.2f before, %.2f %.2f %.2f after" % (load0 + os.getloadavg()))


if __name__ == "__main__":
    main()
