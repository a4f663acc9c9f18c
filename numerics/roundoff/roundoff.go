// Package roundoff holds the one rule by which Semiflow decides the sign of
// a computed quantity: a value whose size is below the backward error of the
// computation that produced it is zero within rounding, and a verdict that
// depends on its sign says so instead of trusting the sign.
//
// A backward-stable dense computation (symmetric or non-symmetric QR
// algorithm, LU with partial pivoting in practice, a sum of n terms)
// returns the exact answer for data perturbed by about n·u·‖A‖, u = 2⁻⁵³
// (Higham, Accuracy and Stability of Numerical Algorithms, 2nd ed. 2002,
// §3.1 and §4.2 for sums; Golub & Van Loan, Matrix Computations, 4th ed.
// 2013, §7.5.6 and §8.3 for the QR algorithms). A well-conditioned
// eigenvalue, or an eigenvalue of a symmetric matrix (condition 1), then
// moves by at most about that much; Threshold is that size.
package roundoff

import "math"

// Unit is the unit roundoff u = 2⁻⁵³ of IEEE double precision.
const Unit = 0x1p-53

// Threshold returns n·u·norm (n taken as at least 1), the size below which
// a quantity computed by a backward-stable method from a matrix (or a sum)
// of order n and norm ‖A‖ = norm cannot be told from zero. Pass the
// Frobenius norm for matrices (it bounds the 2-norm) and Σ|terms| for sums.
// A NaN or negative norm gives NaN.
func Threshold(n int, norm float64) float64 {
	if !(norm >= 0) {
		return math.NaN()
	}
	return float64(max(n, 1)) * Unit * norm
}

// Sign classifies x against the threshold tol ≥ 0: −1 if x < −tol, +1 if
// x > tol and 0 if |x| ≤ tol (zero within rounding). A NaN x gives 0 only
// if tol is +Inf; otherwise NaN compares as neither and gives +1, so that
// a verdict never calls NaN negative.
func Sign(x, tol float64) int {
	switch {
	case x < -tol:
		return -1
	case math.Abs(x) <= tol:
		return 0
	}
	return 1
}
