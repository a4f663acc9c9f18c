package expo

import (
	"context"
	"math"

	"gonum.org/v1/gonum/mat"

	"semiflow/numerics/linop"
	"semiflow/numerics/memguard"
	"semiflow/numerics/solve"
)

// siGammaRatio sets the pole of the shift-and-invert Krylov method: the
// step Δ is taken in the Krylov space of Z = (I − γA)⁻¹ with γ = Δ/ratio.
// Ratio 10 is the choice of van den Eshof & Hochbruck (SIAM J. Sci. Comput.
// 27, 2006, §5) for tolerances near 1e-10; measured here on the 1-D heat
// and conv-diff operators it needs 20–40 basis vectors for 1e-12.
const siGammaRatio = 10

// siMaxDim caps the basis; a step that has not converged by then is
// halved (with a new factorisation).
const siMaxDim = 60

// realSolver solves (sI − A)x = b for the real pole s = 1/γ.
type realSolver interface {
	solve(dst, b []float64) error
}

type bandSolver struct{ f *solve.Band }

func (b bandSolver) solve(dst, x []float64) error { return b.f.Solve(dst, x) }

// complexSolver uses a complex factorisation at a real shift.
type complexSolver struct {
	f      solve.ShiftedSolver
	bz, xz []complex128
}

func (c *complexSolver) solve(dst, b []float64) error {
	for i, v := range b {
		c.bz[i] = complex(v, 0)
	}
	if err := c.f.Solve(c.xz, c.bz); err != nil {
		return err
	}
	for i, v := range c.xz {
		dst[i] = real(v)
	}
	return nil
}

// factorReal factors sI − A: real band LU for band operators, otherwise
// the factorisation NewShiftedContext chooses, in real arithmetic when it
// is the supernodal sparse LU.
func factorReal(ctx context.Context, A linop.Operator, s float64) (realSolver, error) {
	n, _ := A.Dims()
	if solve.Choose(A) == solve.BandMethod {
		csr, err := linop.ToCSR(A)
		if err != nil {
			return nil, err
		}
		f, err := solve.NewBandShifted(csr, s)
		if err != nil {
			return nil, err
		}
		return bandSolver{f}, nil
	}
	f, err := solve.NewShiftedContext(ctx, A, complex(s, 0), solve.Options{})
	if err != nil {
		return nil, err
	}
	if r, ok := f.(realFactors); ok && r.Real() {
		return realSparseSolver{r}, nil // real factors of a sparse matrix
	}
	return &complexSolver{f: f, bz: make([]complex128, n), xz: make([]complex128, n)}, nil
}

// realFactors is a factorisation that can solve in real arithmetic when
// its shift is real (solve.Supernodal).
type realFactors interface {
	Real() bool
	SolveReal(dst, b []float64) error
}

type realSparseSolver struct{ f realFactors }

func (r realSparseSolver) solve(dst, b []float64) error { return r.f.SolveReal(dst, b) }

// abscissaBound returns an upper bound on the numerical abscissa
// ω = max Re W(A) = λ_max((A + Aᵀ)/2) by Gershgorin's theorem on the
// symmetric part, when A has a sparse form: then ‖e^{tA}‖₂ ≤ e^{ωt}.
func abscissaBound(A linop.Operator) (float64, bool) {
	m, ok := sparseForm(A)
	if !ok {
		return 0, false
	}
	r := make([]float64, m.Rows)
	for i := 0; i < m.Rows; i++ {
		for p := m.RowPtr[i]; p < m.RowPtr[i+1]; p++ {
			j, v := m.ColIdx[p], m.Val[p]
			if j == i {
				r[i] += v
			} else {
				// |(a_ij + a_ji)/2| ≤ |a_ij|/2 + |a_ji|/2: charge half to each row.
				r[i] += math.Abs(v) / 2
				r[j] += math.Abs(v) / 2
			}
		}
	}
	g := math.Inf(-1)
	for _, v := range r {
		g = math.Max(g, v)
	}
	return g, true
}

// siKrylovRun approximates e^{tA}u0 at the sorted times by the
// shift-and-invert (restricted-denominator) Krylov method of Moret &
// Novati (BIT 44, 2004) and van den Eshof & Hochbruck (SIAM J. Sci.
// Comput. 27, 2006). Each step Δ builds an Arnoldi basis V_m of
// Z = (I − γA)⁻¹, γ = Δ/10, from the current vector w:
//
//	Z V_m = V_m T_m + t_{m+1,m} v_{m+1} e_mᵀ,   H_m = (I − T_m⁻¹)/γ,
//	e^{ΔA} w ≈ β V_m e^{ΔH_m} e_1,   β = ‖w‖₂.
//
// Its convergence depends on the angle of the sector holding W(A), not on
// ‖A‖, which is what stiff non-symmetric generators (conv-diff) need. The
// error of the m-vector approximation is estimated by its change from the
// (m−1)-vector one, β‖c_m − c_{m−1}‖₂ for the coefficient vectors in the
// orthonormal basis, times e^{max(ω,0)Δ} with ω the Gershgorin bound on the
// numerical abscissa (1 when none is known). (The residual-based estimate
// needs ‖(I − γA)v_{m+1}‖, which rounding makes of order γ‖A‖ on stiff
// operators and useless.)
// The basis grows until the estimate is below Tol·‖u0‖₂·Δ/T or the step's
// rounding (siRounding), whichever is larger; a step whose best estimate
// stays 100 times above that in siMaxDim vectors is halved. The
// factorisation of (1/γ)I − A is kept while the step length repeats
// (uniform output times).
func siKrylovRun(ctx context.Context, c *counted, u0 []float64, times []float64, opts Options, vals [][]float64, errs []float64, w *work) error {
	A := c.a
	n := len(u0)
	mmax := opts.KrylovDim
	if mmax <= 0 {
		mmax = siMaxDim
	}
	mmax = min(mmax, n)
	T := times[len(times)-1]
	growth := 0.0
	if om, ok := abscissaBound(A); ok {
		growth = math.Max(om, 0)
	}
	// The contract is in the ∞-norm: ‖error‖_∞ ≤ Tol·‖u0‖_∞.
	tolAbs := opts.Tol * math.Max(normInf(u0), math.SmallestNonzeroFloat64)
	// The largest basis (mmax+1), three more, the complex solver's two
	// (four reals) and the results, through the memory guard.
	if err := memguard.Vectors(mmax+8+len(times)+linop.Scratch(c.a), n, memguard.RealBytes, "shift-and-invert Krylov work vectors and results"); err != nil {
		return err
	}
	u := append([]float64(nil), u0...)
	V := make([][]float64, 0, mmax+1)
	newVec := func(j int) []float64 {
		if j < len(V) {
			return V[j]
		}
		V = append(V, make([]float64, n))
		return V[j]
	}
	tmp := make([]float64, n)
	av := make([]float64, n)
	var solver realSolver
	gammaNow := 0.0
	tnow, errAcc := 0.0, 0.0
	projected, mhat, sumLocal := false, 1.0, 0.0 // see propagation
	next := 0
	for next < len(times) && times[next] == 0 {
		vals[next], errs[next] = append([]float64(nil), u...), 0
		next++
	}
	delta := 0.0
	for next < len(times) {
		if err := ctx.Err(); err != nil {
			return err
		}
		target := times[next]
		if delta <= 0 || tnow+delta > target*(1+1e-14) {
			delta = target - tnow
		}
		beta := norm2(u)
		if beta == 0 {
			for ; next < len(times); next++ {
				vals[next], errs[next] = append([]float64(nil), u...), errAcc
			}
			break
		}
		// Any pole works as long as H_m uses the factorised one: keep the
		// factorisation while γ stays within 30% of Δ/10 (uniform output
		// times reuse one).
		gamma := delta / siGammaRatio
		if solver != nil && gamma >= 0.7*gammaNow && gamma <= 1.4*gammaNow {
			gamma = gammaNow
		} else {
			s, err := factorReal(ctx, A, 1/gamma)
			if err != nil {
				return err
			}
			solver, gammaNow = s, gamma
			w.factors++
		}
		v0 := newVec(0)
		for i := range u {
			v0[i] = u[i] / beta
		}
		Tm := mat.NewDense(mmax+1, mmax, nil)
		var coef []float64 // e^{ΔH_m}e_1 of the accepted basis
		errLoc := math.Inf(1)
		solveErr := 0.0
		allowed, floor := tolAbs*delta/T/mhat, 0.0
		var prev, prevBest []float64 // the (m−1)-vector coefficients, and those of the best m
		lastD, tailBest := 0.0, 1.0  // the last change ‖c_m − c_{m−1}‖₂, the best m's tail factor
		propBest := 1.0              // the growth factor of the basis size kept
		m := 0
		prop := 1.0 // the growth factor over the step, see propagation
		for j := 0; j < mmax; j++ {
			if err := ctx.Err(); err != nil {
				return err
			}
			vj1 := newVec(j + 1)
			// Z v_j = γ⁻¹ (γ⁻¹I − A)⁻¹ v_j.
			if err := solver.solve(vj1, V[j]); err != nil {
				return err
			}
			w.solves++
			if j == 0 {
				// Rounding probe: the forward error of this solve, by one
				// step of refinement, δ = M⁻¹(v_0 − M x̂), M = γ⁻¹I − A.
				// Solves with M lose about u·γ‖A‖ on smooth data in the
				// worst case; the probe measures what this operator and
				// this vector actually lose.
				c.apply(av, vj1)
				for i := range tmp {
					tmp[i] = V[0][i] - (vj1[i]/gamma - av[i])
				}
				if err := solver.solve(tmp, tmp); err != nil {
					return err
				}
				w.solves++
				solveErr = norm2(tmp) / math.Max(norm2(vj1), math.SmallestNonzeroFloat64)
				floor = siRounding(solveErr, normInf(u), beta, mmax)
			}
			for i := range vj1 {
				vj1[i] /= gamma
			}
			for pass := 0; pass < 2; pass++ {
				for i := 0; i <= j; i++ {
					h := dot(V[i], vj1)
					Tm.Set(i, j, Tm.At(i, j)+h)
					axpy(-h, V[i], vj1)
				}
			}
			hn := norm2(vj1)
			Tm.Set(j+1, j, hn)
			m = j + 1
			breakdown := hn <= 1e-14*math.Abs(Tm.At(j, j))
			if !breakdown {
				for i := range vj1 {
					vj1[i] /= hn
				}
			}
			if m < 2 && !breakdown && m < mmax {
				continue
			}
			cf, projNorm, err := siStep(Tm, m, gamma, delta)
			if err != nil {
				// A Ritz value of Z near 0 (a non-normal A can put one
				// there) makes ΔH_m overflow: no approximation from this
				// basis; a larger one or a shorter step may do.
				prev = nil
				continue
			}
			var proj bool
			prop, proj = propagation(growth, delta, projNorm)
			projected = projected || proj
			if breakdown {
				coef, errLoc, propBest = cf, 0, prop
				break
			}
			if prev != nil {
				// The change from the (m−1)-vector approximation
				// estimates the error of the m-vector one.
				d := cf[m-1] * cf[m-1]
				for i, v := range prev {
					d += (cf[i] - v) * (cf[i] - v)
				}
				d = math.Sqrt(d)
				// Slow convergence: with changes shrinking by ρ > 1/2
				// per vector the tail Σ ρ^k after this change exceeds
				// it; charge ρ/(1 − ρ), at most 10 (upwind finite
				// volumes on a stretched mesh fell 3× short without).
				tail := 1.0
				if lastD > 0 {
					if rho := d / lastD; rho >= 1 {
						tail = 10
					} else if rho > 0.5 {
						tail = math.Min(10, rho/(1-rho))
					}
				}
				lastD = d
				est := prop * beta * d * tail
				if est < errLoc {
					coef, errLoc, prevBest, tailBest, propBest = cf, est, prev, tail, prop
				}
				if est <= math.Max(allowed, floor) {
					coef, errLoc, prevBest, tailBest, propBest = cf, est, prev, tail, prop
					break
				}
			}
			prev = cf
		}
		// A best basis that missed the target is kept when near it
		// (rounding limits the estimate); far from it the step is halved.
		if errLoc > 100*math.Max(allowed, floor) {
			if delta < 1e-9*T {
				return errorf("shift-invert krylov: no convergence in %d vectors even for step %g at t = %g", mmax, delta, tnow)
			}
			delta /= 2
			continue
		}
		if errLoc > 0 && prevBest != nil {
			// The accepted estimate in the ∞-norm of the difference
			// vector itself, β‖V_m(c_m − c_{m−1})‖_∞ ≤ β‖c_m − c_{m−1}‖₂
			// (on fine grids the 2-norm of a smooth error is √N/2 times
			// larger), with a safety factor of 4: the error and the
			// difference need not peak at the same place (on pure upwind
			// advection the error's ∞-norm was 2.8 times the difference's).
			for i := range tmp {
				tmp[i] = 0
			}
			for j, cj := range coef {
				if j < len(prevBest) {
					cj -= prevBest[j]
				}
				axpy(beta*cj, V[j], tmp)
			}
			errLoc = math.Min(errLoc, 4*tailBest*propBest*normInf(tmp))
		}
		for i := range u {
			u[i] = 0
		}
		for j, cj := range coef {
			axpy(beta*cj, V[j], u)
		}
		if un := normInf(u); math.IsNaN(un) || math.IsInf(un, 0) {
			return errorf("shift-invert krylov: solution overflowed at t = %g", tnow)
		}
		tnow += delta
		local := errLoc + siRounding(solveErr, normInf(u), beta, len(coef))
		if projected {
			// Without a bound on ‖e^{ΔA}‖, products of per-step factors
			// grow geometrically for a bounded but non-normal semigroup;
			// charge every earlier error the largest growth seen instead
			// (sup_t ‖e^{tA}‖ ≈ M̂ for a bounded semigroup), and double
			// the local errors as Krylov does for non-symmetric A (a
			// Rayleigh-damped string of order 510 fell 1.8× short).
			// The growth of the basis size kept, not of the last one
			// tried: a Ritz value of Z near 0 in a larger basis once made
			// ‖e^{ΔH_m}‖ 1e46 on a damped beam.
			mhat = math.Max(mhat, propBest)
			sumLocal += 2 * local
			errAcc = mhat * sumLocal
		} else {
			errAcc = errAcc*propBest + local
			sumLocal += local
		}
		if opts.Progress != nil {
			opts.Progress(int(100*tnow/T), 100)
		}
		if tnow >= target*(1-1e-14) {
			tnow = target
			for next < len(times) && times[next] <= tnow {
				vals[next], errs[next] = append([]float64(nil), u...), errAcc
				next++
			}
			delta = 0
		}
	}
	return nil
}

// siRounding is the rounding model of one step (common practice, no
// published constant): a relative error ε in the solves perturbs H_m by
// about ε/γ and e^{ΔH_m}e_1 by about (Δ/γ)ε; the solve errors sit in the
// smooth components that the step keeps, so they are charged to ‖u‖_∞, four
// times for safety; plus m·u·β for the orthogonalisation and the
// recombination, as in krylovRun. Measured on the 1-D heat operator against
// its closed form (N = 2000 to 1e5, t = 1e-3 to 1) the whole estimate is
// 1.3–340× the error, largest where the error is at roundoff.
func siRounding(eps, uInf, beta float64, m int) float64 {
	return 4*siGammaRatio*eps*uInf + 4*unitRoundoff*float64(m)*beta
}

// propagation is the factor by which an error grows over a step Δ:
// e^{ωΔ} with ω the Gershgorin bound on the numerical abscissa, while that
// is at most 10. Operators that are dissipative only in another inner
// product (a damped structure in first-order form [[0, I], [−K, −C]], whose
// symmetric part has eigenvalues near ±‖K‖/2) make e^{ωΔ} overflow although
// ‖e^{ΔA}‖ stays moderate; then the projected growth ‖e^{ΔH_m}‖₂, the
// semigroup restricted to the Krylov space, estimates it instead (an
// estimate, not a bound: the cross-check and Propagate's escalation are
// what confirm it).
func propagation(omega, delta, projNorm float64) (factor float64, projected bool) {
	if g := math.Exp(omega * delta); g <= 10 {
		return g, false
	}
	return math.Max(1, projNorm), true
}

// siStep forms H_m = (I − T_m⁻¹)/γ from the m×m Hessenberg matrix of Z and
// returns e^{ΔH_m}e_1 and ‖e^{ΔH_m}‖₂.
func siStep(Tfull *mat.Dense, m int, gamma, delta float64) ([]float64, float64, error) {
	Tm := mat.DenseCopyOf(Tfull.Slice(0, m, 0, m))
	var Ti mat.Dense
	if err := Ti.Inverse(Tm); err != nil {
		return nil, 0, errorf("shift-invert krylov: projected matrix is singular: %v", err)
	}
	B := mat.NewDense(m, m, nil)
	for i := 0; i < m; i++ {
		for j := 0; j < m; j++ {
			v := -Ti.At(i, j)
			if i == j {
				v++
			}
			B.Set(i, j, delta*v/gamma)
		}
	}
	var E mat.Dense
	if _, err := Exp(&E, B); err != nil {
		return nil, 0, err
	}
	for _, v := range E.RawMatrix().Data {
		if math.IsNaN(v) || math.IsInf(v, 0) {
			return nil, 0, errorf("shift-invert krylov: e^{ΔH_m} overflowed")
		}
	}
	coef := make([]float64, m)
	for j := range coef {
		coef[j] = E.At(j, 0)
	}
	var svd mat.SVD
	if !svd.Factorize(&E, mat.SVDNone) {
		return coef, mat.Norm(&E, 2), nil // Frobenius, an upper bound
	}
	return coef, svd.Values(nil)[0], nil
}
