// Package expo computes matrix exponentials e^{tA}, their action
// u(t) = e^{tA}u0 on vectors, φ-functions, forced and semilinear evolutions,
// each with an error estimate and with several independent methods:
//
//   - Exp: dense scaling and squaring with Padé approximants (Higham 2005;
//     Al-Mohy & Higham 2009), exact on triangular parts.
//   - Phi: φ_k(A) through the augmented-matrix identity.
//   - Taylor: truncated Taylor series with scaling (Al-Mohy & Higham, SIAM J.
//     Sci. Comput. 2011), cost ≈ t‖A‖₁ matrix–vector products.
//   - Krylov: Arnoldi or Lanczos with the a posteriori error estimate of
//     Saad (SIAM J. Numer. Anal. 1992) and step-size control.
//   - Contour: trapezoidal rule on parabolic, hyperbolic or cotangent
//     contours for sectorial A (Trefethen, Weideman & Schmelzer, BIT 2006;
//     Weideman & Trefethen, Math. Comp. 2007), one shifted solve per node,
//     in parallel.
//   - Resolvent powers (I − tA/n)^{-n} with Richardson extrapolation.
//   - Kronecker sums e^{t(X⊕Y)} = e^{tX} ⊗ e^{tY}.
//
// Propagate chooses among them ("auto") and reports why.
//
// Index convention for 2-D tensor grids (see linop): k = ix*ny + iy.
package expo
