#!/usr/bin/python3
"""Write Matrix Market files with scipy.io.mmwrite and, beside them, the
dense entries of each matrix in reference.json, for the round-trip tests of
package numerics/mmio. Run with Debian's /usr/bin/python3 from this
directory:  /usr/bin/python3 make_mm.py
"""
import json

import numpy as np
import scipy
import scipy.io
import scipy.sparse as sp

rng = np.random.default_rng(20261202)
cases = {}


def add(name, dense, sparse=True, **kw):
    a = sp.coo_matrix(dense) if sparse else np.asarray(dense)
    scipy.io.mmwrite(name + ".mtx", a, comment="written by scipy " + scipy.__version__, **kw)
    cases[name] = {"rows": dense.shape[0], "cols": dense.shape[1],
                   "entries": np.asarray(dense, dtype=float).tolist()}


# General sparse real, 7×5, values with many digits and wide exponents.
g = np.zeros((7, 5))
for _ in range(12):
    g[rng.integers(7), rng.integers(5)] = rng.standard_normal() * 10.0 ** rng.integers(-8, 9)
add("general", g, field="real", symmetry="general")

# Symmetric real 6×6.
s = np.zeros((6, 6))
for _ in range(8):
    i, j = rng.integers(6), rng.integers(6)
    s[i, j] = s[j, i] = rng.standard_normal()
for i in range(6):
    s[i, i] = 2.0 + i
add("symmetric", s, field="real", symmetry="symmetric")

# Skew-symmetric real 5×5 (zero diagonal).
k = np.zeros((5, 5))
for _ in range(6):
    i, j = rng.integers(5), rng.integers(5)
    if i != j:
        v = rng.standard_normal()
        k[i, j], k[j, i] = v, -v
add("skew", k, field="real", symmetry="skew-symmetric")

# Integer general 4×6.
n = rng.integers(-50, 50, size=(4, 6)).astype(float)
n[n % 3 == 0] = 0
add("integer", n, field="integer", symmetry="general")

# Dense array real general 4×3.
d = rng.standard_normal((4, 3))
add("array", d, sparse=False, field="real", symmetry="general")

# Dense array symmetric 4×4.
a = rng.standard_normal((4, 4))
a = a + a.T
add("array_symmetric", a, sparse=False, field="real", symmetry="symmetric")

# Pattern 5×5 (entries read as 1).
p = (rng.random((5, 5)) < 0.3).astype(float)
add("pattern", p, field="pattern", symmetry="general")

with open("reference.json", "w") as f:
    json.dump(cases, f, indent=1, sort_keys=True)
    f.write("\n")
