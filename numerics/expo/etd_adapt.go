package expo

import (
	"context"
	"fmt"
	"math"
	"sort"
	"strings"
)

// oneStepper is a one-step method for u' = Lu + N(t, u): step advances u in
// place by one step of length h from time t. lo and hi bound the segment
// the step lies in; where they are breakpoints, time-dependent terms are
// sampled inside (lo, hi) so that a jump at a breakpoint is seen from the
// correct side.
type oneStepper interface {
	step(t, h float64, u []float64, seg segment) error
	order() int
	name() string
}

// extraErrer is a oneStepper that commits errors the step-doubling
// difference cannot see (a quadrature rule shared by the full and half
// steps): extraErr is their sum so far, added to the estimates.
type extraErrer interface{ extraErr() float64 }

// growthStepper is a oneStepper for a linear problem that can bound how
// much a step amplifies an error already in u. After each step, lastStep
// reports bounds on ‖Φ‖∞ and ‖Φ‖₂ for Φ the step's linear map (with exact
// inner exponentials) and the error its inner approximations committed,
// carried to the step's end. integrate then carries its estimate forward
// as E_{k+1} = G_k·E_k + local_k (local_k the step's truncation estimate
// plus the inner error) instead of summing local estimates, because
// e_{k+1} = Φ_k e_k + (local error of step k) for a linear Φ_k: once in
// the ∞-norm, once in the 2-norm (‖x‖∞ ≤ ‖x‖₂ ≤ twoNormFactor·‖x‖∞),
// and reports the smaller, since either bound can be far from the truth
// (μ∞ sees no decay of a diffusion and growth in a rotation; the 2-norm
// pays √n on every local error).
type growthStepper interface {
	lastStep() stepGrowth
	twoNormFactor() float64
}

// stepGrowth is what a growthStepper reports of its last step.
type stepGrowth struct {
	logInf, log2 float64 // logarithms of bounds on ‖Φ‖∞ and ‖Φ‖₂
	inner        float64 // the inner approximations' error at the step's end (∞-norm)
	bounded      bool    // false: the growth bounds are estimates
}

// errBound is a bound on an error e carried in two norms: inf ≥ ‖e‖∞ and
// two ≥ ‖e‖₂ ≥ ‖e‖∞.
type errBound struct{ inf, two float64 }

func (b errBound) value() float64 { return math.Min(b.inf, b.two) }

// grow is the bound after a step with growth g.
func (b errBound) grow(g stepGrowth) errBound {
	return errBound{grown(b.inf, g.logInf), grown(b.two, g.log2)}
}

// add adds an error of ∞-norm at most x; c bounds ‖·‖₂/‖·‖∞.
func (b errBound) add(x, c float64) errBound { return errBound{b.inf + x, b.two + c*x} }

// atLeast is the bound on the larger of two errors.
func (b errBound) atLeast(x, c float64) errBound {
	return errBound{math.Max(b.inf, x), math.Max(b.two, c*x)}
}

// diffPropagator is a oneStepper that can carry the difference of two
// nearby solutions across a step more cheaply than a step: diffStep sets
// dst ≈ Φ_h(c0) − Φ_h(f0) from Δ = c0 − f0 and the values c1, f1 the two
// solutions reach at t + h, to second order in h (the exponential
// trapezoidal rule for Δ' = LΔ + N(t, c) − N(t, f), whose end values are
// known). integrate then takes the step's local error from the coarse and
// fine solutions it carries anyway, instead of a third full step.
type diffPropagator interface {
	diffStep(dst []float64, t, h float64, c0, f0, c1, f1 []float64, seg segment) error
}

// segment is a stretch [lo, hi] between stopping times; loBreak and
// hiBreak say whether its ends are breakpoints of the data.
type segment struct {
	lo, hi           float64
	loBreak, hiBreak bool
}

// clamp returns t, moved one rounding unit inside the segment when t is a
// breakpoint end: a term sampled there takes its one-sided limit from
// within the segment.
func (s segment) clamp(t float64) float64 {
	if s.loBreak && t <= s.lo {
		return math.Nextafter(s.lo, math.Inf(1))
	}
	if s.hiBreak && t >= s.hi {
		return math.Nextafter(s.hi, math.Inf(-1))
	}
	return t
}

// StepControl sets how an integrator for u' = Lu + N(t, u) chooses its steps.
type StepControl struct {
	// Steps, when positive, fixes the step count: steps no longer than
	// (max t)/Steps, shortened to land on every output time and
	// breakpoint. Zero asks for adaptive steps driven by the error
	// estimate so that the tolerance is met.
	Steps int
	// Breaks are times where N or the forcing may jump (a source switched
	// on or off): steps restart there and no step straddles one.
	Breaks []float64
	// MaxSteps caps the attempted steps of an adaptive run (default 200000).
	MaxSteps int
}

// StepStats reports the work of a step-size controlled integration.
type StepStats struct {
	Accepted, Rejected int
	HMin, HMax         float64 // shortest and longest accepted step
	Scale              float64 // the largest ‖u‖∞ met (u0 included): the tolerance is relative to it
	// Growth, for a growthStepper, bounds by how much an error committed
	// at the start may have grown in ‖·‖∞ by the end: the product of the
	// steps' bounds on ‖Φ‖∞, or √n times that on ‖Φ‖₂ if smaller.
	// GrowthBounded is false when some step's bound was only estimated.
	Growth        float64
	GrowthBounded bool
	// Rough lists the times where the data looked non-smooth (a step of
	// at most 1e-6·T still missed its error target: a jump or kink of N or
	// the forcing); steps there were accepted once their share of the
	// tolerance was small, and their whole difference D added to the
	// estimate.
	Rough []float64
}

// adaptResult is what integrate returns: values and estimates at the
// output times (in the caller's order) and the step statistics.
type adaptResult struct {
	vals  [][]float64
	errs  []float64
	stats StepStats
}

// stepSafety, stepGrowMax and stepShrinkMin are the controller's safety
// factor and the bounds on the ratio of successive steps (Hairer, Nørsett &
// Wanner, Solving ODEs I, 2nd ed. 1993, §II.4).
const (
	stepSafety    = 0.9
	stepGrowMax   = 4.0
	stepShrinkMin = 0.2
)

// roughStep: a step this short (relative to the final time) that misses its
// error target has met non-smooth data.
const roughStep = 1e-6

// stepGrid quantises proposed steps to 2^(k/stepGrid) so that step-size
// dependent coefficients (φ-functions, factorisations) are reused.
const stepGrid = 8

// integrate runs the one-step method st from u0 over the output times and
// breakpoints with error control by step doubling. Two solutions are
// carried along the same steps: a fine one (two half steps per step, the
// reported values) and a coarse one (one full step). Their difference at
// an output time estimates the coarse solution's global error, error
// propagation included, which is 2^p − 1 times the fine solution's in
// the asymptotic regime of a method of order p; the margin covers stiff
// steps. The reported estimate is that difference (or, if larger, the sum
// of the local estimates; for a growthStepper, the local estimates carried
// forward with each step's bound on its growth).
//
// Adaptive steps: D = ‖two halves − one full‖∞ from the same start
// estimates the step's local error times 2^p − 1. Where the method can
// propagate a difference (diffPropagator), D is the part of the new
// coarse–fine difference Δ_{n+1} that propagating Δ_n does not explain,
// ‖Δ_{n+1} − P_h Δ_n‖∞ (P_h second order, one φ-combination instead of
// the four of a step: the same quantity up to O(h³‖Δ‖)); otherwise one
// full step is taken from the fine solution for it. The step is accepted
// when D ≤ tol·scale·h/T (error
// per unit step, T the final time, scale the largest ‖u‖∞ so far), so that
// the sum of D over the steps, and with it the reported estimate for a
// non-expanding problem, stays below tol·scale. The next step is
// h·min(4, max(0.2, 0.9·(target/D)^{1/p})).
func integrate(ctx context.Context, st oneStepper, u0 []float64, times []float64, tol float64, ctl StepControl, progress func(done, total int)) (*adaptResult, error) {
	n := len(u0)
	tmax, stops, isBreak, err := stoppingTimes(times, ctl.Breaks)
	if err != nil {
		return nil, err
	}
	res := &adaptResult{vals: make([][]float64, len(times)), errs: make([]float64, len(times))}
	stats := &res.stats
	stats.Scale = normInf(u0)
	p := float64(st.order())
	fix := ctl.Steps > 0
	hFixed := 0.0
	if fix {
		hFixed = tmax / float64(ctl.Steps)
	}
	maxSteps := ctl.MaxSteps
	if maxSteps <= 0 {
		maxSteps = 200000
	}
	if fix && ctl.Steps > maxSteps {
		return nil, errorf("%s: %d fixed steps exceed the cap of %d; give fewer", st.name(), ctl.Steps, maxSteps)
	}
	// First step: a fourth-order method meets tol with h ≈ T·tol^{1/4}
	// on a problem of unit time scale; the controller corrects the rest.
	hProp := tmax * math.Min(0.1, math.Max(1e-3, math.Pow(tol, 1/p)))
	fine := append([]float64(nil), u0...)
	coarse := append([]float64(nil), u0...)
	tryF, tryC, tryL := make([]float64, n), make([]float64, n), make([]float64, n)
	sumLocal := 0.0
	denom := math.Pow(2, p) - 1
	at := map[float64][]float64{0: append([]float64(nil), u0...)}
	est := map[float64]float64{0: 0}
	t := 0.0
	attempts := 0
	sumRough := 0.0
	extra := func() float64 {
		if x, ok := st.(extraErrer); ok {
			return x.extraErr()
		}
		return 0
	}
	// A growthStepper's estimate is carried forward step by step
	// (truncation, inner and rough errors, each step's bound on its growth
	// applied to what came before), and so is the size its rounding errors
	// are relative to: max over earlier k of ‖u_k‖ times the growth since.
	gs, grows := st.(growthStepper)
	var carried, roundScale, growth errBound
	c2 := 1.0
	if grows {
		c2 = gs.twoNormFactor()
		roundScale = roundScale.add(stats.Scale, c2)
		growth = growth.add(1, c2)
		stats.Growth, stats.GrowthBounded = 1, true
	}
	estimate := func() float64 {
		if grows {
			return math.Max(maxAbsDiff(coarse, fine), carried.value())
		}
		return math.Max(maxAbsDiff(coarse, fine), sumLocal) + sumRough + extra()
	}
	rounding := map[float64]float64{}
	roundingNow := func() float64 {
		return unitRoundoff * roundScale.value() * (10 + math.Sqrt(float64(stats.Accepted)))
	}
	for _, stop := range stops {
		if stop <= t {
			if _, ok := at[stop]; !ok {
				at[stop], est[stop] = append([]float64(nil), fine...), estimate()
				rounding[stop] = roundingNow()
			}
			continue
		}
		seg := segment{lo: t, hi: stop, loBreak: isBreak[t] && t > 0, hiBreak: isBreak[stop]}
		var nFix int
		if fix {
			nFix = int(math.Ceil((stop - t) / hFixed * (1 - 1e-12)))
		}
		k := 0
		for t < stop {
			if err := ctx.Err(); err != nil {
				return nil, err
			}
			attempts++
			if attempts > maxSteps {
				if fix {
					return nil, errorf("%s: more than %d steps (the cap) for %d fixed steps over the output times and breakpoints; give fewer", st.name(), maxSteps, ctl.Steps)
				}
				return nil, errorf("%s: more than %d steps attempted by t = %.6g of %.6g; the problem may blow up or need a looser tolerance, or give a fixed step count", st.name(), maxSteps, t, tmax)
			}
			var h float64
			cut := false
			if fix {
				h = (stop - seg.lo) / float64(nFix)
				if k == nFix-1 {
					h = stop - t
				}
			} else {
				h = math.Pow(2, math.Floor(stepGrid*math.Log2(hProp))/stepGrid)
				if t+h >= stop-1e-12*stop {
					h, cut = stop-t, true
				}
			}
			copy(tryF, fine)
			copy(tryC, coarse)
			copy(tryL, fine)
			var err error
			var g1, g2 stepGrowth
			if err = st.step(t, h, tryC, seg); err == nil {
				if err = st.step(t, h/2, tryF, seg); err == nil {
					if grows {
						g1 = gs.lastStep()
					}
					if err = st.step(t+h/2, h/2, tryF, seg); err == nil && grows {
						g2 = gs.lastStep()
					}
				}
			}
			if err != nil {
				return nil, err
			}
			D := 0.0
			if dp, ok := st.(diffPropagator); ok && !fix {
				if err := dp.diffStep(tryL, t, h, coarse, fine, tryC, tryF, seg); err != nil {
					return nil, err
				}
				for i, x := range tryL {
					D = math.Max(D, math.Abs(tryC[i]-tryF[i]-x))
				}
				if math.IsNaN(D) || math.IsNaN(normInf(tryL)) {
					D = math.Inf(1)
				}
			} else if !fix {
				if err := st.step(t, h, tryL, seg); err != nil {
					return nil, err
				}
				D = maxAbsDiff(tryF, tryL)
			}
			nF, nC := normInf(tryF), normInf(tryC)
			finite := !math.IsNaN(nF) && !math.IsInf(nF, 0) && !math.IsNaN(nC) && !math.IsInf(nC, 0)
			scale := stats.Scale
			ctlScale := scale
			if finite {
				scale = math.Max(scale, nF)
				// From u0 = 0 (a source switching on) the size u is heading
				// for, 0.1·‖Δu‖·T/h, keeps the first steps from chasing a
				// relative accuracy of a vanishing u; TolMet is still judged
				// against the largest ‖u‖ met.
				ctlScale = math.Max(scale, 0.1*maxAbsDiff(tryF, fine)*tmax/h)
			}
			// The budget left (0.8·tol·scale less the global estimate so
			// far) spread over the time left; a decaying error frees
			// budget, a growing one tightens the steps.
			soFar := maxAbsDiff(coarse, fine)
			if grows {
				soFar = math.Max(soFar, carried.value())
			}
			left := math.Max(0.8*tol*ctlScale-soFar, 0.05*tol*ctlScale)
			// A D at the rounding level of u says nothing about h.
			target := math.Max(left*math.Min(h/(tmax-t), 1), 16*unitRoundoff*ctlScale)
			if fix && !finite {
				return nil, errorf("%s solution is not finite at t = %g", st.name(), t+h)
			}
			// A step of length ≤ 1e-6·T still missing its target meets
			// non-smooth data (for smooth data D ∝ h^{p+1}): it is taken
			// once D is a small share of the budget, and D itself is added
			// to the estimate (across a jump the half steps are not more
			// accurate than the full one).
			rough := !fix && finite && D > target && h <= roughStep*tmax && D <= 0.02*left
			if fix || (finite && D <= target) || rough {
				if rough {
					stats.Rough = append(stats.Rough, t+h/2)
					sumRough += D
				}
				if grows {
					local := D / denom
					if rough {
						local = D
					}
					carried = carried.grow(g1).add(g1.inner, c2).grow(g2).add(g2.inner+local, c2)
					roundScale = roundScale.grow(g1).grow(g2).atLeast(nF, c2)
					growth = growth.grow(g1).grow(g2)
					stats.Growth = growth.value()
					stats.GrowthBounded = stats.GrowthBounded && g1.bounded && g2.bounded
				}
				copy(fine, tryF)
				copy(coarse, tryC)
				t += h
				if t > stop || (fix && k == nFix-1) || stop-t <= 1e-12*stop {
					t = stop
				}
				k++
				sumLocal += D / denom
				stats.Accepted++
				stats.Scale = scale
				if stats.HMin == 0 || h < stats.HMin {
					stats.HMin = h
				}
				stats.HMax = math.Max(stats.HMax, h)
			} else {
				stats.Rejected++
			}
			if !fix {
				r := stepShrinkMin
				if finite && D == 0 {
					r = stepGrowMax
				} else if finite {
					r = math.Min(stepGrowMax, math.Max(stepShrinkMin, stepSafety*math.Pow(target/D, 1/p)))
				}
				if !(finite && D <= target && cut && r >= 1) {
					// A step shortened to land on a stopping time says
					// nothing against the proposal it was cut from.
					hProp = h * r
				}
				if hProp < 1e-13*tmax && !finite {
					return nil, errorf("%s: no step from t = %.6g gives a finite solution, however short: N (or the forcing) returns nan or inf there, or the solution blows up", st.name(), t)
				}
				if hProp < 1e-13*tmax {
					return nil, errorf("%s: step size fell below %.3g at t = %.6g: the solution is not smooth there or blows up (error estimate %.3g per step against %.3g)", st.name(), hProp, t, D, target)
				}
			}
			if progress != nil {
				progress(int(1000*t/tmax), 1000)
			}
		}
		at[stop], est[stop] = append([]float64(nil), fine...), estimate()
		rounding[stop] = roundingNow()
	}
	// Rounding: each step commits errors of a few units in the last place
	// of ‖u‖; they add up like a random walk.
	// A growthStepper's rounding term is the same walk, relative to the
	// size reached by each stopping time, grown by the steps' bounds.
	round := unitRoundoff * stats.Scale * (10 + math.Sqrt(float64(stats.Accepted)))
	for tt := range est {
		if tt > 0 && grows {
			est[tt] += rounding[tt]
		} else if tt > 0 {
			est[tt] += round
		}
	}
	for i, tt := range times {
		res.vals[i] = append([]float64(nil), at[tt]...)
		res.errs[i] = est[tt]
	}
	return res, nil
}

// checkTolMaxU sets TolMet and Shortfall for a result whose tolerance is
// relative to scale, the largest ‖u‖∞ met (forcing and nonlinear terms can
// make u grow from a small or zero u0).
func (s *Solution) checkTolMaxU(scale float64) {
	s.CheckTol(scale)
	s.Shortfall = strings.Replace(s.Shortfall, "tol·‖u0‖∞", "tol·max‖u‖∞", 1)
}

// roughNote names the places where the time stepping met non-smooth data,
// with the advice to give them as breakpoints.
func roughNote(at []float64) string {
	if len(at) == 0 {
		return ""
	}
	var spots []string
	last := math.Inf(-1)
	for _, t := range at {
		if t-last < 1e-6*math.Max(1, math.Abs(t)) {
			continue
		}
		last = t
		if len(spots) == 3 {
			spots = append(spots, "…")
			break
		}
		spots = append(spots, fmt.Sprintf("%.9g", t))
	}
	return fmt.Sprintf("N or the forcing jumps or has a kink near t ≈ %s (steps shorter than 1e-6·T still missed their error target); steps were shortened there, but give such times as breakpoints (switches) to integrate across them exactly", strings.Join(spots, ", "))
}

// stoppingTimes checks the output times (finite, nonnegative) and the
// breakpoints (finite) and returns the sorted stopping times: the outputs
// and the breakpoints inside (0, tmax), with tmax, the largest output time,
// and the set of breakpoints.
func stoppingTimes(times, breaks []float64) (tmax float64, stops []float64, isBreak map[float64]bool, err error) {
	for _, t := range times {
		if t < 0 || math.IsNaN(t) || math.IsInf(t, 0) {
			return 0, nil, nil, fmt.Errorf("expo: output time %v: times must be finite and nonnegative", t)
		}
		tmax = math.Max(tmax, t)
	}
	isBreak = map[float64]bool{}
	stops = append([]float64(nil), times...)
	for _, b := range breaks {
		if math.IsNaN(b) || math.IsInf(b, 0) {
			return 0, nil, nil, fmt.Errorf("expo: breakpoint %v must be finite", b)
		}
		if b > 0 && b < tmax {
			stops = append(stops, b)
		}
		isBreak[b] = true
	}
	sort.Float64s(stops)
	return tmax, stops, isBreak, nil
}

// grown returns x·e^g, 0 for x = 0 however large g (an error that is not
// there does not grow).
func grown(x, g float64) float64 {
	if x == 0 {
		return 0
	}
	return x * math.Exp(g)
}
