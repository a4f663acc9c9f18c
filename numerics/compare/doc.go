// Package compare defines the problems on which Semiflow is timed against
// Debian's scipy. BenchmarkCompare (compare_test.go) runs each one as a
// sub-benchmark; testdata/bench/compare_scipy.py builds the same problems
// with numpy and scipy, runs both sides in fresh processes, and prints the
// times, peak memory and ratios. The two definitions must stay in step:
// each builder below states its formula, and the script quotes it.
//
// Operators (all with the 1/h² scaling of the grid, Dirichlet boundaries,
// h = 1/(m+1) on m interior points of (0, 1), x_i = (i+1)h):
//
//	heat 1-D:  D = (1/h²) tridiag(1, −2, 1)
//	conv-diff 1-D (velocity c): D − c·(1/(2h)) tridiag(−1, 0, 1)
//	2-D: X ⊕ Y = X ⊗ I + I ⊗ Y on m×m points, index ix·m + iy, with
//	     X, Y the heat operators, or conv-diff with c = 20 in x and 10 in y.
//
// Variable coefficients, no Kronecker structure (AdvDiff; the script also
// writes the 3-D one to a Matrix Market file, which the benchmark reads):
//
//	adv-diff 2-D/3-D: κ·Δ_h − β·D_x, κ = 1 + ½ sin(2πx) sin(πy) [sin(πz)],
//	     β = 20(1 + y), Δ_h the 5- or 7-point Laplacian, D_x the central
//	     difference; index (ix·m + iy)·m + iz.
//
// Sparse factorisations: zI − A with z = 1000 (real) and 1000 + 1000i
// (complex), factored and solved once for the initial vector.
//
// Initial data: u0(x) = sin(πx) + x in 1-D, u0(x, y) = sin(πx) sin(2πy) + xy
// in 2-D. Dense matrix: a_ij = 4 sin(0.7 i + 0.013 j² + 1)·(2 if j > i else
// 1)/√n. Grcar matrix of order n: −1 on the subdiagonal, 1 on the diagonal
// and the first three superdiagonals.
package compare
