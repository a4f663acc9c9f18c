package expo

import (
	"context"
	"math"

	"gonum.org/v1/gonum/mat"

	"semiflow/numerics/linop"
	"semiflow/numerics/memguard"
)

// krylovRun approximates e^{tA}u0 at the sorted times in the Krylov space
// K_m(A, w) = span{w, Aw, …, A^{m−1}w}, restarted at each substep:
//
//	e^{τA} w ≈ β V_{m+1} e^{τ H̄} e_1,   β = ‖w‖₂,
//
// where A V_m = V_m H_m + h_{m+1,m} v_{m+1} e_mᵀ comes from Arnoldi (or from
// Lanczos when A is symmetric) and H̄ is H_m bordered as in Saad (SIAM J.
// Numer. Anal. 29, 1992, §5) so that e^{τH̄}e_1 also yields the a posteriori
// error terms β h_{m+1,m}|τ e_mᵀφ_1(τH_m)e_1| and
// β h_{m+1,m}|τ² e_mᵀφ_2(τH_m)e_1|·‖Av_{m+1}‖ (Hochbruck & Lubich, SIAM J.
// Numer. Anal. 34, 1997), measured in the ∞-norm along v_{m+1} and
// Av_{m+1}. The substep τ is accepted when that estimate is below
// Tol·‖u0‖_∞·τ/T and adapted as in Sidje (ACM Trans. Math. Softw. 24,
// 1998): τ ← 0.9 τ (Tol·‖u0‖_∞·τ/(T·err))^{1/m}. For non-symmetric A each
// local estimate is doubled for errors that grow after they are made; when
// τ‖H_m‖₁ > 4m the change from the (m−1)-vector approximation also bounds
// it from below (krylovChange), and the rounding of the small exponential
// itself, measured by a second route (krylovExpRounding), is added.
func krylovRun(ctx context.Context, c *counted, u0 []float64, times []float64, opts Options, vals [][]float64, errs []float64) error {
	n := len(u0)
	m := opts.KrylovDim
	if m <= 0 {
		m = 30
	}
	if m > n {
		m = n
	}
	T := 0.0
	for _, t := range times {
		T = math.Max(T, t)
	}
	sym := isSymmetric(c.a)
	anorm := opNorm1(c)
	// The contract is in the ∞-norm: ‖error‖_∞ ≤ Tol·‖u0‖_∞.
	tolAbs := opts.Tol * math.Max(normInf(u0), math.SmallestNonzeroFloat64)
	// The basis (m+1), two more and the results, through the memory guard.
	if err := memguard.Vectors(m+3+len(times)+linop.Scratch(c.a), n, memguard.RealBytes, "Krylov work vectors and results"); err != nil {
		return err
	}
	w := append([]float64(nil), u0...)
	V := make([][]float64, m+1)
	for i := range V {
		V[i] = make([]float64, n)
	}
	av := make([]float64, n)
	tnow := 0.0
	errAcc := 0.0
	tau := 0.0
	if anorm > 0 {
		// Sidje's initial step: the a priori bound of the degree-m term.
		fact := math.Pow(float64(m+1)/math.E, float64(m+1)) * math.Sqrt(2*math.Pi*float64(m+1))
		tau = (1 / anorm) * math.Pow(fact*opts.Tol/(4*anorm+1e-300), 1/float64(m))
	}
	next := 0
	for next < len(times) && times[next] == 0 {
		vals[next], errs[next] = append([]float64(nil), w...), 0
		next++
	}
	steps := 0
	for next < len(times) {
		if err := ctx.Err(); err != nil {
			return err
		}
		target := times[next]
		remaining := target - tnow
		beta := norm2(w)
		if beta == 0 || anorm == 0 {
			for ; next < len(times); next++ {
				vals[next], errs[next] = append([]float64(nil), w...), errAcc
			}
			break
		}
		if tau <= 0 || tau > remaining {
			tau = remaining
		}
		// Build the basis.
		for i := range w {
			V[0][i] = w[i] / beta
		}
		H := mat.NewDense(m+2, m+2, nil)
		k := m // dimension actually built
		breakdown := false
		for j := 0; j < m; j++ {
			if err := ctx.Err(); err != nil {
				return err
			}
			c.apply(V[j+1], V[j])
			lo := 0
			if sym && j > 0 {
				lo = j - 1
			}
			for i := lo; i <= j; i++ {
				h := dot(V[i], V[j+1])
				H.Set(i, j, h)
				axpy(-h, V[i], V[j+1])
			}
			if !sym {
				// One pass of reorthogonalisation keeps Arnoldi's basis orthonormal.
				for i := 0; i <= j; i++ {
					h := dot(V[i], V[j+1])
					H.Set(i, j, H.At(i, j)+h)
					axpy(-h, V[i], V[j+1])
				}
			}
			hn := norm2(V[j+1])
			if hn <= 1e-13*anorm {
				// Happy breakdown: K_j is invariant and the result exact.
				k, breakdown = j+1, true
				break
			}
			H.Set(j+1, j, hn)
			if sym && j+1 < m {
				H.Set(j, j+1, hn)
			}
			for i := range V[j+1] {
				V[j+1][i] /= hn
			}
		}
		// The error terms point along v_{m+1} and Av_{m+1}: their
		// ∞-norms, not the 2-norms, measure them in the contract's norm.
		avnorm, vnorm := 0.0, 0.0
		if !breakdown {
			c.apply(av, V[m])
			avnorm, vnorm = normInf(av), normInf(V[m])
		}
		var F mat.Dense
		var errLoc float64
		size := k + 2
		if breakdown {
			size = k
			tau = remaining
		} else {
			H.Set(m+1, m, 1)
		}
		sub := H.Slice(0, size, 0, size).(*mat.Dense)
		for rej := 0; ; rej++ {
			var th mat.Dense
			th.Scale(tau, sub)
			if _, err := Exp(&F, &th); err != nil {
				return err
			}
			if breakdown {
				errLoc = 0
				break
			}
			err1 := math.Abs(beta*F.At(m, 0)) * vnorm
			err2 := math.Abs(beta * F.At(m+1, 0) * avnorm)
			switch {
			case err1 > 10*err2:
				errLoc = err2
			case err1 > err2:
				errLoc = err2 * err1 / (err1 - err2)
			default:
				errLoc = err1
			}
			if !sym && m > 2 && tau*mat.Norm(sub.Slice(0, m, 0, m), 1) > 4*float64(m) {
				// Saad's terms are the leading terms of an expansion
				// that need not have begun to converge when τ‖H_m‖ ≫ m
				// (a damped string took τ‖A‖ ≈ 5e3 in 30 vectors and
				// the terms said 1e-22 for an error of 3e-14). The
				// change from the (m−1)-vector approximation is a
				// second witness; the larger counts.
				if d := krylovChange(sub, &F, m, tau) * beta; d > errLoc {
					errLoc = d
				}
			}
			allowed := 1.2 * tolAbs * tau / T
			if errLoc <= allowed || rej >= 20 {
				break
			}
			tau = 0.9 * tau * math.Pow(tolAbs*tau/(T*errLoc), 1/float64(m))
			if tau <= 0 {
				return errorf("krylov: step size underflow at t = %g", tnow)
			}
		}
		// w = β V_{k+1} F(0:k+1, 0): the corrected approximation uses v_{m+1} too.
		kk := k
		if !breakdown {
			kk = m + 1
		}
		for i := range w {
			w[i] = 0
		}
		for j := 0; j < kk; j++ {
			axpy(beta*F.At(j, 0), V[j], w)
		}
		wn := normInf(w)
		if math.IsNaN(wn) || math.IsInf(wn, 0) {
			return errorf("krylov: solution overflowed at t = %g", tnow)
		}
		tnow += tau
		steps++
		// Rounding: a model, not a bound (common practice, no published
		// constant): about kk·u·β for each of the products, the
		// orthogonalisation, the small exponential and the recombination.
		if !sym {
			// Errors made early may grow later (‖e^{tA}‖ > 1): a safety
			// factor of 2, measured on a damped string in first-order
			// form, where the plain sum fell 5% short of the true error.
			// (Charging the projected growth ‖e^{τH_m}‖₂ instead was
			// honest but 1e5 times too large there: the Euclidean norm
			// of that semigroup is ≈ ω_max/ω_min while its energy norm
			// decays.)
			errLoc *= 2
		}
		errAcc += errLoc + 4*unitRoundoff*float64(kk)*beta
		if !sym {
			// Rounding in the products, u‖A‖‖w‖ per unit time, is not
			// damped away when A is far from normal: on a damped string
			// of order 510 (‖A‖₁ ≈ 5e5) the error at t = 0.01 was 30
			// times the other terms. (Kept out of the step control:
			// shorter steps do not reduce it.)
			errAcc += unitRoundoff * tau * anorm * wn
			errAcc += krylovExpRounding(ctx, sub, &F, tau, beta, kk)
		}
		if opts.Progress != nil {
			opts.Progress(int(100*tnow/T), 100)
		}
		if tnow >= target*(1-1e-15) {
			tnow = target
			for next < len(times) && times[next] <= tnow {
				vals[next], errs[next] = append([]float64(nil), w...), errAcc
				next++
			}
		}
		// Next step size.
		if errLoc > 0 {
			tau = 0.9 * tau * math.Pow(tolAbs*tau/(T*errLoc), 1/float64(m))
			if tau > 5*remaining {
				tau = 5 * remaining
			}
		} else {
			tau = 0
		}
	}
	return nil
}

func dot(x, y []float64) float64 {
	s := 0.0
	for i, v := range x {
		s += v * y[i]
	}
	return s
}

func axpy(a float64, x, y []float64) {
	for i, v := range x {
		y[i] += a * v
	}
}

// krylovChange returns ‖F(0:m+1, 0) − e^{τH_{m−1}}e_1‖_2 for the bordered
// exponential F = e^{τH̄} of krylovRun, whose first m+1 entries of column 0
// give the corrected m-vector approximation: the change from the
// (m−1)-vector one, in the orthonormal basis (common practice, no source).
func krylovChange(sub *mat.Dense, F *mat.Dense, m int, tau float64) float64 {
	var th, E mat.Dense
	th.Scale(tau, sub.Slice(0, m-1, 0, m-1))
	if _, err := Exp(&E, &th); err != nil {
		return math.Inf(1)
	}
	d := 0.0
	for i := 0; i <= m; i++ {
		x := F.At(i, 0)
		if i < m-1 {
			x -= E.At(i, 0)
		}
		d += x * x
	}
	return math.Sqrt(d)
}

// krylovExpRounding estimates the rounding of the small exponential
// F = e^{τH̄} in the approximation β V F(:, 0): 4β‖(F − F₂)(0:kk, 0)‖₂ for
// F₂ from secondRoute (a second scaling with H̄'s entries perturbed by a
// relative u). For a non-normal H̄ the squarings lose about u·‖F‖ in every
// entry, far more than u·|F e_1| when ‖F‖ ≫ 1: on a damped string of order
// 510, ‖F‖₁ reached 3.7e6 for |F e_1| ≈ 1 and the error 1.5e-13 was 15
// times the other terms. Infinite when the second route fails.
func krylovExpRounding(ctx context.Context, sub, F *mat.Dense, tau, beta float64, kk int) float64 {
	var th mat.Dense
	th.Scale(tau, sub)
	D, err := secondRoute(ctx, &th, F)
	if err != nil {
		return math.Inf(1)
	}
	d := 0.0
	for i := 0; i < kk; i++ {
		d += D.At(i, 0) * D.At(i, 0)
	}
	return 4 * beta * math.Sqrt(d)
}
