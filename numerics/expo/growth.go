package expo

import (
	"context"
	"fmt"
	"math"

	"gonum.org/v1/gonum/mat"

	"semiflow/numerics/linop"
	"semiflow/numerics/memguard"
)

// growthDenseFlops is the work allowed for sampling ‖e^{sA}‖∞ densely in
// growthBound (matrix products of order n cost 2n³ each).
const growthDenseFlops = 2e9

// growthBound returns M ≥ sup_{0≤s≤T} ‖e^{sA}‖∞, the factor by which an
// error made at some time can grow by a later one, and says how it was
// found. The ∞-norm logarithmic norm μ∞(A) = max_i (a_ii + Σ_{j≠i}|a_ij|)
// gives ‖e^{sA}‖∞ ≤ e^{sμ∞} (Dahlquist; Söderlind, BIT 46, 2006), so M = 1
// when μ∞ ≤ 0 (a weakly diagonally dominant A with a nonpositive
// diagonal). Otherwise, for order ≤ 400 with a
// dense form, M = max_k ‖E^k‖∞·e^{μ∞r} over the powers of E = e^{rA} on a
// grid of spacing r covering [0, T] (between grid points ‖e^{(kr+ρ)A}‖ ≤
// ‖E^k‖e^{ρμ∞}), with r chosen so that e^{μ∞r} ≤ 1.1 when the work allows
// (otherwise sup_{ρ≤r}‖e^{ρA}‖ is bounded by a second grid of r/16 where
// that is smaller); beyond that order, the log-norm bound e^{Tμ∞} itself, which can be
// pessimistic by orders of magnitude for a non-normal A (even +Inf).
func growthBound(ctx context.Context, A linop.Operator, T float64) (float64, string, error) {
	n, _ := A.Dims()
	if T <= 0 || n == 0 {
		return 1, "", nil
	}
	var a *mat.Dense
	mu, ok := 0.0, false
	if n <= maxEscalateDense {
		if err := memguard.DenseReal(n, n); err == nil {
			if d, err := toDense(A); err == nil {
				a = d
				mu, ok = logNormInf(d), true
			}
		}
	}
	if !ok {
		mu, ok = gershgorinRight(A)
	}
	if !ok {
		c := &counted{a: A}
		mu, ok = normEst1(n, c.applyT, c.apply), true // ‖A‖∞ = ‖Aᵀ‖₁ ≥ μ∞(A)
	}
	if mu <= 0 {
		return 1, "", nil
	}
	if a == nil {
		return math.Exp(mu * T), fmt.Sprintf("sup‖e^{sA}‖∞ ≤ e^{Tμ∞} = %.3g (μ∞ = %.3g, the ∞-norm log-norm bound)", math.Exp(mu*T), mu), nil
	}
	steps := math.Ceil(mu * T / math.Log(1.1))
	steps = math.Max(16, math.Min(steps, math.Max(16, growthDenseFlops/(2*math.Pow(float64(n), 3)))))
	r := T / steps
	var ra, E mat.Dense
	ra.Scale(r, a)
	if _, err := ExpContext(ctx, &E, &ra); err != nil {
		return 0, "", err
	}
	P := mat.DenseCopyOf(&E)
	next := mat.NewDense(n, n, nil)
	m := math.Max(1, mat.Norm(P, math.Inf(1)))
	for k := 2; k <= int(steps); k++ {
		if err := ctx.Err(); err != nil {
			return 0, "", err
		}
		next.Mul(&E, P)
		P, next = next, P
		m = math.Max(m, mat.Norm(P, math.Inf(1)))
		if math.IsInf(m, 0) || math.IsNaN(m) {
			return math.Inf(1), "sup‖e^{sA}‖∞ overflowed", nil
		}
	}
	between := math.Exp(mu * r) // sup_{ρ≤r} ‖e^{ρA}‖∞ ≤ e^{rμ∞}
	if between > 1.1 {
		// The work allowed a coarse grid only: bound sup_{ρ≤r}‖e^{ρA}‖
		// by the powers of e^{(r/16)A} times e^{rμ∞/16} instead, when
		// smaller (16 more products).
		ra.Scale(r/16, a)
		if _, err := ExpContext(ctx, &E, &ra); err != nil {
			return 0, "", err
		}
		P.Copy(&E)
		m2 := math.Max(1, mat.Norm(P, math.Inf(1)))
		for k := 2; k <= 16; k++ {
			next.Mul(&E, P)
			P, next = next, P
			m2 = math.Max(m2, mat.Norm(P, math.Inf(1)))
		}
		between = math.Min(between, m2*math.Exp(mu*r/16))
	}
	M := m * between
	return M, fmt.Sprintf("sup‖e^{sA}‖∞ ≤ %.3g over [0, %.3g] (powers of e^{rA}, r = %.2g, μ∞ = %.3g)", M, T, r, mu), nil
}

// logNormInf returns μ∞(A) = max_i (a_ii + Σ_{j≠i}|a_ij|).
func logNormInf(a *mat.Dense) float64 {
	n, _ := a.Dims()
	g := math.Inf(-1)
	for i := 0; i < n; i++ {
		r := 0.0
		for j := 0; j < n; j++ {
			if v := a.At(i, j); i == j {
				r += v
			} else {
				r += math.Abs(v)
			}
		}
		g = math.Max(g, r)
	}
	return g
}
