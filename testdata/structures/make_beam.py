#!/usr/bin/python3
"""Reference data for numerics/pencil: a cantilever of our own (a 2.4 m
aluminium signpost arm, EI = 1.8e4 N m², mass per length 5.4 kg/m, 12
two-node Hermite cubic beam elements, clamped at x = 0) assembled with the
consistent mass matrix and, separately, a lumped (diagonal) one, and the
generalised eigenvalues ω² of K x = ω² M x by scipy.linalg.eigh.

Writes beam_K.mtx, beam_M.mtx, beam_Mlumped.mtx (17 significant digits, so
the Go test reads exactly the doubles scipy used) and beam_eigh.json.
Run with Debian's python3 from this folder: /usr/bin/python3 make_beam.py
"""
import json

import numpy as np
import scipy
import scipy.linalg
import scipy.io

L, EI, m, ne = 2.4, 1.8e4, 5.4, 12
h = L / ne
ndof = 2 * (ne + 1)
K = np.zeros((ndof, ndof))
M = np.zeros((ndof, ndof))
# Element matrices of the Hermite cubic (deflection, rotation at each node).
ke = EI / h**3 * np.array([[12, 6*h, -12, 6*h],
                           [6*h, 4*h*h, -6*h, 2*h*h],
                           [-12, -6*h, 12, -6*h],
                           [6*h, 2*h*h, -6*h, 4*h*h]])
me = m * h / 420 * np.array([[156, 22*h, 54, -13*h],
                             [22*h, 4*h*h, 13*h, -3*h*h],
                             [54, 13*h, 156, -22*h],
                             [-13*h, -3*h*h, -22*h, 4*h*h]])
for e in range(ne):
    d = [2*e, 2*e+1, 2*e+2, 2*e+3]
    K[np.ix_(d, d)] += ke
    M[np.ix_(d, d)] += me
# Clamped at node 0: drop its deflection and rotation.
K, M = K[2:, 2:], M[2:, 2:]
# Lumped mass: half an element's mass at each end node, rotary inertia of a
# slender segment m h³/78 (a common choice; any positive value serves the
# comparison, which is against eigh on the same matrix).
Ml = np.zeros_like(M)
for i in range(ne):
    node_mass = m * h if i < ne - 1 else m * h / 2
    Ml[2*i, 2*i] = node_mass
    Ml[2*i+1, 2*i+1] = node_mass * h * h / 78
w2 = scipy.linalg.eigh(K, M, eigvals_only=True)
# The continuum cantilever: ω² = (βL/L)⁴ EI/m with cos βL cosh βL = −1.
import scipy.optimize
roots = [scipy.optimize.brentq(lambda b: np.cos(b) * np.cosh(b) + 1, a, a + 1.5) for a in (1.0, 4.0, 7.0)]
w2l = scipy.linalg.eigh(K, Ml, eigvals_only=True)


def write(name, a):
    with open(name, "w") as f:
        n = a.shape[0]
        nz = [(i, j, a[i, j]) for j in range(n) for i in range(n) if a[i, j] != 0]
        f.write("%%MatrixMarket matrix coordinate real general\n")
        f.write("%% written by make_beam.py\n")
        f.write("%d %d %d\n" % (n, n, len(nz)))
        for i, j, v in nz:
            f.write("%d %d %.17g\n" % (i + 1, j + 1, v))


write("beam_K.mtx", K)
write("beam_M.mtx", M)
write("beam_Mlumped.mtx", Ml)
json.dump({
    "source": "scipy.linalg.eigh(K, M) with scipy %s, numpy %s" % (scipy.__version__, np.__version__),
    "omega2_consistent": [float(x) for x in w2],
    "omega2_lumped": [float(x) for x in w2l],
    "cantilever_first_three_continuum": [float((b / L)**4 * EI / m) for b in roots],
}, open("beam_eigh.json", "w"), indent=1)
print("wrote", ndof - 2, "dof; ω₁² =", w2[0])
