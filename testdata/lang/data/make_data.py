#!/usr/bin/python3
"""Writes the Matrix Market files read by the golden scripts, with scipy.

Run with Debian's /usr/bin/python3 from this directory:
    /usr/bin/python3 make_data.py
"""
import numpy as np
import scipy.io
import scipy.sparse

# The 3×3 Dirichlet second difference tridiag(-1, 2, -1), stored symmetric
# (only the lower triangle is in the file).
T = scipy.sparse.diags([[-1.0, -1.0], [2.0, 2.0, 2.0], [-1.0, -1.0]], [-1, 0, 1])
scipy.io.mmwrite("tridiag3.mtx", scipy.sparse.coo_matrix(T), symmetry="symmetric")

# A dense 2×3 matrix in array format (rectangular).
scipy.io.mmwrite("rect23.mtx", np.array([[1.0, 2.0, 3.0], [4.0, 5.0, 6.0]]))

# A generator of a three-state chain, general coordinate format.
Q = np.array([[-2.0, 2.0, 0.0], [1.0, -3.0, 2.0], [0.0, 1.0, -1.0]])
scipy.io.mmwrite("chain3.mtx", scipy.sparse.coo_matrix(Q))

# A malformed file: the entry on line 5 lies outside the 3×3 matrix.
with open("bad_index.mtx", "w") as f:
    f.write("%%MatrixMarket matrix coordinate real general\n"
            "% an entry outside the matrix on line 5\n"
            "3 3 2\n1 1 1.0\n4 1 2.0\n")
