package expo

import (
	"context"
	"math"

	"semiflow/numerics/linop"
	"semiflow/numerics/memguard"
)

// taylorTheta[m] is θ_m for the truncated Taylor series T_m of degree m in
// double precision: if ‖2⁻ˢtA‖ stays below θ_m in the sense of the α_p
// bounds, T_m(tA/s)^s b equals e^{t(A+ΔA)} b with ‖ΔA‖ ≤ 2⁻⁵³‖A‖.
// Values as published in Al-Mohy & Higham, SIAM J. Sci. Comput. 33 (2011),
// Table 3.1 (double precision, tol = 2⁻⁵³), to the three significant figures
// printed there; written in from memory of that table.
var taylorTheta = map[int]float64{
	1: 2.29e-16, 2: 2.58e-8, 3: 1.39e-5, 4: 3.40e-4, 5: 2.40e-3,
	6: 9.07e-3, 7: 2.38e-2, 8: 5.00e-2, 9: 8.96e-2, 10: 1.44e-1,
	11: 2.14e-1, 12: 3.00e-1, 13: 4.00e-1, 14: 5.14e-1, 15: 6.41e-1,
	16: 7.81e-1, 17: 9.31e-1, 18: 1.09, 19: 1.26, 20: 1.44,
	25: 2.43, 30: 3.54, 35: 4.7, 40: 6.0, 45: 7.2, 50: 8.5, 55: 9.9,
}

const (
	taylorMMax = 55 // largest degree used
	taylorPMax = 8  // largest p in the α_p = max(d_p, d_{p+1}) bounds
)

// taylorNorms holds ‖A‖₁ and, once needed, d_p ≈ ‖A^p‖₁^{1/p}, p = 2…pmax+1.
type taylorNorms struct {
	norm1 float64
	d     []float64 // d[p], computed lazily
}

func (tn *taylorNorms) dp(c *counted, p int) float64 {
	if tn.d == nil {
		tn.d = make([]float64, taylorPMax+2)
	}
	if tn.d[p] == 0 {
		n, _ := c.a.Dims()
		tmp := make([]float64, n)
		ap := func(dst, x []float64) {
			copy(dst, x)
			for k := 0; k < p; k++ {
				c.apply(tmp, dst)
				copy(dst, tmp)
			}
		}
		at := func(dst, x []float64) {
			copy(dst, x)
			for k := 0; k < p; k++ {
				c.applyT(tmp, dst)
				copy(dst, tmp)
			}
		}
		tn.d[p] = math.Pow(normEst1(n, ap, at), 1/float64(p))
		if tn.d[p] == 0 {
			tn.d[p] = math.SmallestNonzeroFloat64
		}
	}
	return tn.d[p]
}

// taylorDegree returns the degree m and the number of steps s for which
// T_m(hA/s)^s approximates e^{hA} to double precision at the least cost m·s
// (Al-Mohy & Higham 2011, Code Fragment 3.1 with condition (3.13)).
func taylorDegree(c *counted, tn *taylorNorms, h float64) (m, s int) {
	h = math.Abs(h)
	normH := h * tn.norm1
	if normH == 0 {
		return 0, 1
	}
	pmax := 2
	for p := 2; p*(p-1) <= taylorMMax+1; p++ {
		pmax = p
	}
	if pmax > taylorPMax {
		pmax = taylorPMax
	}
	best := math.Inf(1)
	try := func(mm int, alpha float64) {
		th, ok := taylorTheta[mm]
		if !ok {
			return
		}
		fs := math.Max(math.Ceil(alpha/th), 1)
		if cost := float64(mm) * fs; cost < best && fs < 1<<52 {
			best, m, s = cost, mm, int(fs)
		}
	}
	// Condition (3.13): for small ‖hA‖₁ the bound α_p ≤ ‖hA‖₁ suffices.
	if normH <= 2*float64(pmax*(pmax+3))*taylorTheta[taylorMMax]/float64(taylorMMax) {
		for mm := 1; mm <= taylorMMax; mm++ {
			try(mm, normH)
		}
		return m, s
	}
	for p := 2; p <= pmax; p++ {
		alpha := h * math.Max(tn.dp(c, p), tn.dp(c, p+1))
		for mm := p*(p-1) - 1; mm <= taylorMMax; mm++ {
			try(mm, alpha)
		}
	}
	return m, s
}

// taylorRun advances u0 through the sorted nonnegative times by the
// truncated Taylor method with scaling, interval by interval, writing
// e^{t_i A}u0 into vals[i] and an estimate of its ∞-norm error into errs[i].
// The per-step estimate adds the truncation tail (the last term times
// r/(1 − r), r = ‖hA/s‖₁/(j+1), or the last two terms when r ≥ 1) and a
// rounding term u·Σ_j(1 + ‖hA/s‖₁/j)‖term_j‖;
// earlier errors are carried forward multiplied by the growth of the
// solution over the step when it grows.
//
// c applies the shifted operator A − μI; the factor e^{hμ/s} is restored
// after every step (Al-Mohy & Higham 2011, Algorithm 3.2).
func taylorRun(ctx context.Context, c *counted, mu float64, tn *taylorNorms, u0 []float64, times []float64, tol float64, prog func(done, total int), vals [][]float64, errs []float64) error {
	n := len(u0)
	// Four work vectors and the results, through the memory guard.
	if err := memguard.Vectors(4+len(times)+linop.Scratch(c.a), n, memguard.RealBytes, "Taylor work vectors and results"); err != nil {
		return err
	}
	type plan struct{ m, s int }
	plans := make([]plan, len(times))
	total := 0
	prev := 0.0
	for i, t := range times {
		m, s := taylorDegree(c, tn, t-prev)
		if s == 0 {
			// No degree keeps the number of steps below 2⁵²: ‖hA‖₁ is
			// beyond what scaling can bring into the Taylor region.
			return errorf("taylor: ‖hA‖₁ = %g over the step to t = %g is too large for the Taylor method", math.Abs(t-prev)*tn.norm1, t)
		}
		plans[i] = plan{m, s}
		total += m * s
		prev = t
	}
	if err := ctx.Err(); err != nil {
		return err
	}
	f := append([]float64(nil), u0...)
	b := make([]float64, n)
	nb := make([]float64, n)
	errAcc := 0.0
	done := 0
	prev = 0
	for i, t := range times {
		h := t - prev
		prev = t
		m, s := plans[i].m, plans[i].s
		if h != 0 && m > 0 {
			eta := math.Exp(h * mu / float64(s))
			stepNorm := math.Abs(h) * tn.norm1 / float64(s)
			for k := 0; k < s; k++ {
				before := normInf(f)
				copy(b, f)
				c1 := normInf(b)
				trunc, round := 0.0, 0.0
				for j := 1; j <= m; j++ {
					if err := ctx.Err(); err != nil {
						return err
					}
					c.apply(nb, b)
					sc := h / float64(s*j)
					for q := range nb {
						nb[q] *= sc
					}
					b, nb = nb, b
					c2 := normInf(b)
					for q := range f {
						f[q] += b[q]
					}
					round += unitRoundoff * (1 + stepNorm/float64(j)) * c1
					done++
					if prog != nil {
						prog(done, total)
					}
					trunc = taylorTail(c1, c2, stepNorm, j)
					// Stop early once the last two terms are below this
					// step's share of the tolerance (Al-Mohy & Higham 2011,
					// Algorithm 3.2, with the tolerance split over the s
					// steps so that their sum meets it).
					if c1+c2 <= tol*normInf(f)/float64(s) {
						done += m - j
						break
					}
					c1 = c2
				}
				for q := range f {
					f[q] *= eta
				}
				after := normInf(f)
				if math.IsInf(after, 0) || math.IsNaN(after) {
					return errorf("taylor: solution overflowed at t = %g", t)
				}
				growth := 1.0
				if before > 0 && after > before {
					growth = after / before
				}
				errAcc = errAcc*growth + eta*(trunc+round) + 2*unitRoundoff*after
			}
		}
		vals[i] = append([]float64(nil), f...)
		errs[i] = errAcc
	}
	return nil
}

// taylorTail bounds the ∞-norm of the Taylor terms beyond term j, given
// c2 = ‖b_j‖ and c1 = ‖b_{j−1}‖ for b_i = (hA/s)^i f/i! and x = ‖hA/s‖:
// term j+k is at most c2·Π_{i=1..k} x/(j+i), so the tail is at most
// c2·Σ_k Π_{i≤k} x/(j+i), summed here until the next ratio q = x/(j+k+1)
// makes the geometric remainder p·q/(1 − q) negligible. The cruder
// c2·r/(1 − r), r = x/(j+1), charges every ratio the first one (4% more
// at j = 23, x = 9.9). For x ≥ j+1 the terms may still grow and the last
// two terms are charged instead (a model, not a bound: the caller's degree
// keeps x well below j there when the series has converged).
func taylorTail(c1, c2, x float64, j int) float64 {
	if x >= float64(j+1) {
		return c1 + c2
	}
	sum, p := 0.0, 1.0
	for k := 1; ; k++ {
		p *= x / float64(j+k)
		sum += p
		q := x / float64(j+k+1)
		if p*q/(1-q) <= 1e-3*sum || k >= 200 {
			return c2 * (sum + p*q/(1-q))
		}
	}
}
