#!/usr/bin/python3
"""Reference data for the sparse orderings and solver tests (supernodal_test.go).

Writes three matrices A as Matrix Market files beside this script and, for
M = I − A (real shift z = 1), the number of entries nnz(L) + nnz(U) of
scipy's SuperLU factors (scipy.sparse.linalg.splu) under its column orders
COLAMD and MMD_AT_PLUS_A, into splu_fill.json. Both counts include the
diagonal in L and in U. Run with Debian's scipy:

    /usr/bin/python3 numerics/solve/testdata/splu_fill.py

The matrices:
  advdiff2d.mtx  2-D variable-coefficient advection–diffusion on m×m
                 interior points of (0,1)², m = 40, h = 1/(m+1), index
                 ix·m + iy: κ(x,y)·Δ_h − β(x,y)·D_x with
                 κ = 1 + ½ sin(2πx) sin(πy), β = 20(1 + y), Δ_h the 5-point
                 Laplacian, D_x the central difference, Dirichlet ends.
  varcoef3d.mtx  3-D 7-point operator on m³ points, m = 12, index
                 (ix·m + iy)·m + iz: κ·Δ_h − β·D_x with
                 κ = 1 + ½ sin(2πx) sin(πy) sin(πz), β = 20(1 + y).
  random.mtx     an unstructured unsymmetric matrix of order 1000: scipy's
                 sparse.random (density 0.003, seed 7, normal values) plus
                 a diagonal 1 + |N(0,1)| (seed 8).
"""
import json
import os

import numpy as np
import scipy
import scipy.io
import scipy.sparse as sp
import scipy.sparse.linalg as spl

HERE = os.path.dirname(os.path.abspath(__file__))


def advdiff(m, dim):
    h = 1.0 / (m + 1)
    x = (np.arange(m) + 1) * h
    grids = np.meshgrid(*([x] * dim), indexing="ij")
    X, Y = grids[0].ravel(), grids[1].ravel()
    kappa = 1 + 0.5 * np.sin(2 * np.pi * X) * np.sin(np.pi * Y)
    if dim == 3:
        kappa = 1 + 0.5 * np.sin(2 * np.pi * X) * np.sin(np.pi * Y) * np.sin(np.pi * grids[2].ravel())
    beta = 20 * (1 + Y)
    n = m**dim
    i = np.arange(n)
    idx = np.unravel_index(i, (m,) * dim)
    rows, cols, vals = [i], [i], [-2 * dim * kappa / h**2]
    stride = [m ** (dim - 1 - d) for d in range(dim)]
    for d in range(dim):
        for s in (-1, 1):
            ok = (idx[d] + s >= 0) & (idx[d] + s < m)
            v = kappa / h**2
            if d == 0:
                v = v - s * beta / (2 * h)
            rows.append(i[ok])
            cols.append(i[ok] + s * stride[d])
            vals.append(v[ok])
    return sp.csr_matrix((np.concatenate(vals), (np.concatenate(rows), np.concatenate(cols))), shape=(n, n))


def random_matrix():
    rng = np.random.default_rng(7)
    a = sp.random(1000, 1000, density=0.003, random_state=rng, data_rvs=rng.standard_normal, format="csr")
    d = 1 + np.abs(np.random.default_rng(8).standard_normal(1000))
    return (a + sp.diags(d)).tocsr()


def main():
    out = {"scipy": scipy.__version__, "shift": 1.0, "matrices": {}}
    for name, a in [("advdiff2d", advdiff(40, 2)), ("varcoef3d", advdiff(12, 3)), ("random", random_matrix())]:
        scipy.io.mmwrite(os.path.join(HERE, name + ".mtx"), a, precision=17,
                         comment="Semiflow test matrix, written by splu_fill.py (see its docstring)")
        m = (sp.identity(a.shape[0]) - a).tocsc()
        counts = {}
        for spec in ("COLAMD", "MMD_AT_PLUS_A"):
            lu = spl.splu(m, permc_spec=spec)
            counts[spec] = int(lu.L.nnz + lu.U.nnz)
        out["matrices"][name] = {"n": a.shape[0], "nnz": int(a.nnz), "splu_nnz_LU": counts}
        print(name, a.shape[0], counts)
    with open(os.path.join(HERE, "splu_fill.json"), "w") as f:
        json.dump(out, f, indent=1, sort_keys=True)
        f.write("\n")


if __name__ == "__main__":
    main()
