package spectra

import (
	"context"
	"fmt"
	"math"

	"gonum.org/v1/gonum/mat"

	"semiflow/numerics/expo"
	"semiflow/numerics/memguard"
)

// mixLevels is the number of binary refinement levels of mixingTime: the
// mixing time is bracketed to relative 2⁻²⁰ ≈ 1e-6 of the bracket's lower
// end.
const mixLevels = 20

// mixingTime returns the least t with d(t) = max_i ‖e_iᵀe^{tQ} − π‖_TV ≤ 1/4
// for the rate matrix q with stationary distribution pi, to relative
// 2^-mixLevels, and the number of dense exponentials and matrix products it
// took. start > 0 is a first guess below the answer (a tenth of the
// relaxation time).
//
// d(t) does not increase with t. The search needs one dense exponential
// and then only products of transition matrices, each an exact identity
// (e^{(s+t)Q} = e^{sQ}e^{tQ}) whose factors are non-negative, so no
// entry loses relative accuracy to cancellation: P = e^{sQ} is doubled
// (P ← P²) until d ≤ 1/4, bracketing t_mix in (s, 2s]; then
// F_j = e^{2^{-j}sQ}, j = 1..mixLevels, come from one exponential at
// j = mixLevels and squarings, and t_mix is located digit by digit
// (P ← P·F_j while d(s + …) stays above 1/4). About 3 + 2·mixLevels + the
// number of doublings products of order n (the whole Markov report at
// n = 500 took 3.2 CPU s on the shared development machine under a load
// of 9, where a dense exponential per bisection step took 79 s); each
// product and the exponential run abandonably, so a cancelled ctx returns
// at once.
func mixingTime(ctx context.Context, q *mat.Dense, pi []float64, start float64) (float64, string, error) {
	n, _ := q.Dims()
	// P, the candidate, a scratch, and the mixLevels factors.
	if err := memguard.Check((mixLevels+3)*n*n, memguard.RealBytes, fmt.Sprintf("mixing time of the %d-state chain (%d transition matrices)", n, mixLevels+3)); err != nil {
		return 0, "", err
	}
	exps, prods := 0, 0
	// A product of order 1000 takes a second on a busy machine: each runs
	// abandonably, so an interrupt returns at once (the product finishes
	// in the background, its memory counted by the guard meanwhile).
	expAt := func(t float64) (*mat.Dense, error) {
		exps++
		return abandonable(ctx, denseBytes(n, 6), fmt.Sprintf("exponential of order %d", n), func() (*mat.Dense, error) {
			var tq, e mat.Dense
			tq.Scale(t, q)
			if _, err := expo.ExpContext(ctx, &e, &tq); err != nil {
				return nil, err
			}
			return &e, nil
		})
	}
	mul := func(a, b *mat.Dense) (*mat.Dense, error) {
		prods++
		return abandonable(ctx, denseBytes(n, 1), fmt.Sprintf("product of order %d", n), func() (*mat.Dense, error) {
			var c mat.Dense
			c.Mul(a, b)
			return &c, nil
		})
	}
	dist := func(p *mat.Dense) float64 {
		worst := 0.0
		for i := 0; i < n; i++ {
			tv := 0.0
			for j, v := range p.RawRowView(i) {
				tv += math.Abs(v - pi[j])
			}
			worst = math.Max(worst, tv/2)
		}
		return worst
	}
	// A start at or beyond t_mix (d(start) ≤ 1/4): halve it. d(0) ≥ 1/2
	// (a point mass against a π with at least two positive entries), so
	// this ends.
	s := start
	p, err := expAt(s)
	if err != nil {
		return 0, "", err
	}
	for it := 0; dist(p) <= 0.25; it++ {
		if it > 60 {
			return 0, "", numErr("mixing time not found above t = %g", s)
		}
		s /= 2
		if p, err = expAt(s); err != nil {
			return 0, "", err
		}
	}
	// Doubling: d(s) > 1/4; find the first 2^k s with d ≤ 1/4.
	for it := 0; ; it++ {
		p2, err := mul(p, p)
		if err != nil {
			return 0, "", err
		}
		if dist(p2) <= 0.25 {
			break
		}
		if it > 200 || math.IsInf(2*s, 0) {
			return 0, "", numErr("mixing time not found below t = %g", 2*s)
		}
		p, s = p2, 2*s
	}
	// t_mix ∈ (s, 2s]. F_j = e^{2^{-j}sQ} for j = 1..mixLevels.
	f := make([]*mat.Dense, mixLevels+1)
	if f[mixLevels], err = expAt(math.Ldexp(s, -mixLevels)); err != nil {
		return 0, "", err
	}
	for j := mixLevels - 1; j >= 1; j-- {
		if f[j], err = mul(f[j+1], f[j+1]); err != nil {
			return 0, "", err
		}
	}
	lo := s // d(lo) > 1/4 with P = e^{lo·Q}
	for j := 1; j <= mixLevels; j++ {
		c, err := mul(p, f[j])
		if err != nil {
			return 0, "", err
		}
		if dist(c) > 0.25 {
			p, lo = c, lo+math.Ldexp(s, -j)
		}
	}
	how := fmt.Sprintf("mixing time: d(t) = max_i ‖e_iᵀe^{tQ} − π‖_TV from %d dense exponentials (scaling and squaring with Padé approximants) and %d products of transition matrices (doubling, then binary digits: e^{(s+t)Q} = e^{sQ}e^{tQ})", exps, prods)
	return lo + math.Ldexp(s, -mixLevels), how, nil
}
