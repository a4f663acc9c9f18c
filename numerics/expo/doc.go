// Package expo computes matrix exponentials e^{tA}, their action
// u(t) = e^{tA}u0 on vectors, φ-functions, forced and semilinear evolutions,
// each with an error estimate and with several independent methods:
//
//   - Exp, ExpContext: dense scaling and squaring with Padé approximants
//     (Higham 2005; Al-Mohy & Higham 2009), exact on triangular parts.
//   - Phi, PhiScalar: φ_k(A) through the augmented-matrix identity; scalar
//     φ_k(z) by contour means near 0 (Kassam & Trefethen 2005).
//   - Propagate with Method
//     "taylor": truncated Taylor series with scaling (Al-Mohy & Higham, SIAM
//     J. Sci. Comput. 2011), cost ≈ t‖A‖₁ matrix–vector products;
//     "krylov": Arnoldi or Lanczos with the a posteriori error estimate of
//     Saad (SIAM J. Numer. Anal. 1992) and step-size control;
//     "shift-invert": Arnoldi on (I − γA)⁻¹ (Moret & Novati, BIT 2004; van
//     den Eshof & Hochbruck, SIAM J. Sci. Comput. 2006), one factorisation
//     per step length, convergence independent of ‖A‖;
//     "contour": trapezoidal rule on parabolic, hyperbolic or cotangent
//     contours for sectorial A (Trefethen, Weideman & Schmelzer, BIT 2006;
//     Weideman & Trefethen, Math. Comp. 2007), one shifted solve per node,
//     in parallel, half the nodes by conjugate symmetry;
//     "resolvent-powers": (I − tA/n)^{-n} with Richardson extrapolation;
//     "kronecker": e^{t(X⊕Y)}u = vec(e^{tX} U e^{tY}ᵀ);
//     "dense": dense exponentials of the step; and "auto", which chooses
//     and says why in Solution.Reason.
//   - PropagateForced: u' = Au + f(t), exact for polynomial f through an
//     augmented operator, piecewise interpolation for a general f.
//   - ETDRK4: u' = Lu + N(t, u) by Cox & Matthews' scheme with step
//     doubling.
//   - PropagateMagnus: u' = A(t)u by the fourth-order commutator-free
//     Magnus method (Blanes & Moan 2006; Thalhammer 2006), each exponential
//     by Propagate, steps by step doubling; PropagatePiecewise: a
//     piecewise-constant A as the product of its pieces' exponentials.
//
// Errors are estimates of the ∞-norm error of each returned vector.
// Misuse (shape mismatch) panics with ErrShape; numerical failure returns
// an error wrapping ErrNumerical; cancellation returns ctx.Err().
//
// Index convention for 2-D tensor grids (see linop): k = ix*ny + iy.
package expo
