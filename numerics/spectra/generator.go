package spectra

import (
	"context"
	"fmt"
	"math"
	"math/cmplx"
	"strings"

	"gonum.org/v1/gonum/mat"

	"semiflow/numerics/linop"
	"semiflow/numerics/memguard"
	"semiflow/numerics/roundoff"
)

// GeneratorOptions controls Generator. The zero value is usable.
type GeneratorOptions struct {
	// Weight, if not nil, is the inner product ⟨x, y⟩ = xᵀWy in which
	// dissipativity and norms are measured.
	Weight Weight
	// Inner, if not empty, names the weighted inner product in the verdict
	// (for instance "the energy inner product"); otherwise it is "the
	// weighted inner product ⟨x,y⟩ = xᵀWy".
	Inner string
	// Omega is the growth rate ω to test in ‖e^{tA}‖ ≤ M e^{ωt}. If
	// OmegaSet is false it defaults to 0 when α(A) < 0, and otherwise to
	// α(A) + (ω(A) − α(A))/10 (a tenth of the way to the numerical
	// abscissa; ω(A) itself when ω(A) = α(A)).
	Omega    float64
	OmegaSet bool
	// Powers is the largest n in the Hille–Yosida estimates; 0 means 4.
	Powers int
	// Lambdas is the number of λ sampled per power; 0 means 40.
	Lambdas int
	// Progress, if not nil, is called after each sampled λ.
	Progress func(done, total int)
	// Work, if positive, is the work budget of the Hille–Yosida samples in
	// real multiply–adds (a triangular solve of order n is n²/2; see
	// HYInteractiveWork): once spent, the
	// remaining λ of the main range are skipped (the ones taken are spread
	// over it) and the report says how many (Skipped).
	Work float64
}

// HilleYosida is the estimate M_n = sup_{λ > ω} (λ−ω)^n ‖R(λ)^n‖ for one
// power n, R(λ) = (λI − A)⁻¹, at λ = Lambda. M is at least 1, the exact
// limit as λ → ∞ (λ(λI − A)⁻¹ → I); Lambda is +Inf when that limit exceeds
// every sampled value.
type HilleYosida struct {
	Power  int
	M      float64
	Lambda float64
}

// GeneratorReport describes A as the generator of e^{tA}.
type GeneratorReport struct {
	N int
	// SpectralAbscissa α(A) (asymptotic growth rate) and NumericalAbscissa
	// ω(A) (initial growth rate, in the chosen inner product).
	SpectralAbscissa, NumericalAbscissa float64
	Omega                               float64 // the ω tested
	// Rounding is τ = n·u·‖B‖_F (roundoff.Threshold), B the operator in the
	// chosen inner product: the error of the computed ω(A), so the sign of
	// ω(A) − ω is decided only beyond ±τ. AbscissaRounding is the same
	// for α(A): τ times the condition number of the rightmost eigenvalue,
	// or √(τ‖B‖_F) when that eigenvalue is defective or nearly so
	// (AbscissaIllCond; a 2×2 Jordan block's eigenvalue moves that far).
	Rounding, AbscissaRounding float64
	AbscissaIllCond            bool
	// AbscissaSign is −1, 0 or +1: the sign of α(A) with |α| ≤
	// AbscissaRounding counted as 0 (zero within rounding).
	AbscissaSign int
	// Dissipative reports ω(A) ≤ Omega + Rounding: A − ωI is dissipative
	// (to rounding), so by Lumer–Phillips ‖e^{tA}‖ ≤ e^{ωt} (M = 1).
	// WithinRounding reports that only the rounding allowance made it so
	// (Omega < ω(A) ≤ Omega + Rounding).
	Dissipative, WithinRounding bool
	// HY holds the Hille–Yosida estimates for n = 1..Powers and M their
	// maximum. ‖e^{tA}‖ ≤ M e^{ωt} for all t holds iff (λ−ω)^n‖R(λ)^n‖ ≤ M
	// for all λ > ω and all n ≥ 1 (Hille–Yosida–Feller–Miyadera–Phillips,
	// Engel & Nagel GTM 194, Thm II.3.8); finitely many n and λ give a
	// LOWER estimate of the best M, never below the exact lower bound 1.
	// Sampled describes the λ sampled.
	HY      []HilleYosida
	M       float64
	Sampled string
	// Taken and Skipped are the numbers of λ of the main range sampled
	// and left out by the work budget (GeneratorOptions.Work).
	Taken, Skipped int
	Verdict        string
	Assumptions    string
	Method         string
	Accuracy       string
}

// largeGenerator is the order above which Generator uses sparse methods.
const largeGenerator = 1500

// hyFar is how far beyond ‖A‖ the Hille–Yosida samples reach: λ − ω up to
// 10⁶·max(‖B‖_F, the main range), approaching the limit 1 as λ → ∞.
const hyFar = 1e6

// hyExtra is the number of log-spaced Hille–Yosida samples between the
// main range and hyFar: there (λ−ω)^n‖R(λ)^n‖ is close to its limit 1, which
// the estimate includes exactly, so a few samples suffice.
const hyExtra = 3

// Generator reports on the operator A as a semigroup generator:
// spectral and numerical abscissae, Lumer–Phillips dissipativity and
// Hille–Yosida estimates of M for the chosen ω, and a plain verdict. Every
// sign it decides is compared with the rounding threshold
// roundoff.Threshold(n, ‖A‖_F) first: a value within it is "zero within
// rounding" and the verdict says so with the numbers. It panics with
// ErrShape on a size mismatch and with ErrOption for negative Powers or
// Lambdas.
//
// For a sparse A of order above 1500 (without a weight) it uses sparse
// methods only: ω(A) by shift-and-invert Lanczos on (A + Aᵀ)/2, α(A) by
// shift-and-invert Krylov–Schur about σ = ω(A) + 10⁻³(1 + |ω(A)|) ≥ α(A)
// (the computed rightmost eigenvalues are those nearest σ), and no
// Hille–Yosida estimates (HY is empty, M is NaN unless A is dissipative).
func Generator(ctx context.Context, a linop.Operator, opt *GeneratorOptions) (*GeneratorReport, error) {
	var o GeneratorOptions
	if opt != nil {
		o = *opt
	}
	if o.Powers < 0 || o.Lambdas < 0 {
		panic(ErrOption)
	}
	if o.Powers == 0 {
		o.Powers = 4
	}
	if o.Lambdas == 0 {
		o.Lambdas = 40
	}
	if n, c := a.Dims(); n == c && n > largeGenerator && o.Weight == nil {
		if csr, err := linop.ToCSR(a); err == nil {
			return generatorSparse(ctx, csr, o)
		}
	}
	m0, err := toDense(a)
	if err != nil {
		return nil, err
	}
	m := weighted(m0, o.Weight)
	n, _ := m.Dims()
	// The dense eigensolvers cannot be interrupted: they run abandonably
	// (A, Hessenberg and Schur workspace, complex left and right vectors).
	sp, err := abandonable(ctx, denseBytes(n, 8), fmt.Sprintf("dense eigenvalues of order %d", n), func() (*Spectrum, error) {
		if o.Weight == nil {
			// A reversible rate matrix: real eigenvalues by the symmetric
			// route (relatively accurate for a birth–death chain), α = 0.
			if sp, ok, err := reversibleRateSpectrum(m); ok || err != nil {
				return sp, err
			}
		}
		return denseSpectrum(m)
	})
	if err != nil {
		return nil, err
	}
	fn := mat.Norm(m, 2) // Frobenius
	rep := &GeneratorReport{N: n, SpectralAbscissa: sp.Abscissa, Rounding: roundoff.Threshold(n, fn)}
	if rep.NumericalAbscissa, err = abandonable(ctx, denseBytes(n, 2), fmt.Sprintf("numerical abscissa of order %d", n), func() (float64, error) { return numAbscissa(m) }); err != nil {
		return nil, err
	}
	al, om, tau := rep.SpectralAbscissa, rep.NumericalAbscissa, rep.Rounding
	rep.AbscissaRounding, rep.AbscissaIllCond = sp.AbscissaError()
	rep.AbscissaSign = roundoff.Sign(al, rep.AbscissaRounding)
	rep.Omega = defaultOmega(o, rep)
	w := rep.Omega
	rep.Dissipative = roundoff.Sign(om-w, tau) <= 0
	rep.WithinRounding = rep.Dissipative && om > w
	gap := roundoff.Sign(w-al, rep.AbscissaRounding) // ω beyond α?
	switch {
	case gap > 0:
		if err := rep.hilleYosida(ctx, m, o, fn); err != nil {
			return nil, err
		}
		if rep.Dissipative {
			rep.M = 1 // Lumer–Phillips: exact; the samples can only confirm it
		}
	case rep.Dissipative:
		rep.M = 1
		rep.Sampled = "none: ω = α(A) within rounding puts the resolvent's poles on the sampling line; M = 1 comes from Lumer–Phillips"
	case gap < 0:
		rep.M = math.Inf(1)
		rep.Sampled = "none: ω < α(A)"
	default:
		rep.M = math.NaN()
		rep.Sampled = "none: ω = α(A) within rounding"
	}
	inner := "the Euclidean inner product"
	if o.Weight != nil {
		inner = "the weighted inner product ⟨x,y⟩ = xᵀWy"
		if o.Inner != "" {
			inner = o.Inner
		}
	}
	var v strings.Builder
	fmt.Fprintf(&v, "A (%d×%d) generates the semigroup e^{tA} (every matrix does in finite dimensions); ", n, n)
	v.WriteString(rep.abscissaClause())
	v.WriteString("; ")
	switch {
	case rep.WithinRounding:
		fmt.Fprintf(&v, "A − ωI is dissipative within rounding (%s ≤ %.2g = n·u·‖A‖) in %s, so ‖e^{tA}‖ ≤ e^{(ω+2τ)t} with τ = %.2g (Lumer–Phillips, M = 1).", excess(om, w), tau, inner, tau)
	case rep.Dissipative:
		fmt.Fprintf(&v, "ω(A) = %.4g ≤ ω = %.4g: A − ωI is dissipative in %s, so ‖e^{tA}‖ ≤ e^{ωt} (Lumer–Phillips, M = 1).", om, w, inner)
	case gap < 0:
		fmt.Fprintf(&v, "ω = %.4g < α(A): no bound M e^{ωt} exists for this ω.", w)
	case gap == 0:
		fmt.Fprintf(&v, "ω = %.4g equals α(A) within rounding and A − ωI is not dissipative (%s > %.2g = n·u·‖A‖): a bound M e^{ωt} exists only if the eigenvalues on Re λ = α(A) are semisimple, which rounding cannot decide; test a larger ω.", w, excess(om, w), tau)
	default:
		fmt.Fprintf(&v, "not dissipative (%s > %.2g = n·u·‖A‖), transient growth is possible; Hille–Yosida gives M ≥ %.4g for ‖e^{tA}‖ ≤ M e^{%.4g t}.", excess(om, w), tau, rep.M, w)
	}
	rep.Verdict = v.String()
	rep.Assumptions = "finite-dimensional operator (a discretisation): generation is automatic and the constants, not existence, are the question; constants refer to " + inner + "; Hille–Yosida values use n ≤ " + fmt.Sprint(o.Powers) + " and sampled λ, hence lower estimates of the optimal M"
	rep.Method = "α(A) from the eigenvalues (QR algorithm) with the condition of the rightmost one, ω(A) = λmax((B+Bᵀ)/2) with B = RAR⁻¹ (W = RᵀR); Hille–Yosida: ‖R(λ)^n‖₂, R(λ) = (λI−A)⁻¹, as the largest singular value of R(λ)^n by Golub–Kahan–Lanczos (solves with the LU factors of λI − H, H = QᵀAQ the Hessenberg form), at λ − ω: " + rep.Sampled
	rep.Accuracy = fmt.Sprintf("ω(A) to τ = n·u·‖B‖_F = %.2g (symmetric eigenproblem); α(A) to %.2g (%s); signs within these are reported as zero within rounding; resolvent-power norms to about u·cond(λI−A), each a Lanczos estimate from below settled to 1e-8 relative (to the width of the singular-value cluster far from the spectrum)", tau, rep.AbscissaRounding, map[bool]string{false: "τ × condition of the rightmost eigenvalue", true: "the rightmost eigenvalue is defective or nearly so: √(τ‖B‖_F), as for a 2×2 Jordan block; larger blocks can move further — see its pseudospectra"}[rep.AbscissaIllCond])
	if _, diag := o.Weight.(*linop.DiagWeight); o.Weight != nil && !diag {
		rep.Accuracy += "; for a non-diagonal weight, forming B = RAR⁻¹ adds about n·u·‖R‖‖A‖‖R⁻¹‖, not included"
	}
	return rep, nil
}

// defaultOmega returns the ω to test: o.Omega if set; else 0 when α(A) < 0
// beyond rounding; else ω(A) when ω(A) ≤ α(A), and otherwise a tenth of
// the way from α(A) to ω(A) — with α(A) and ω(A) taken as 0 when they are
// zero within rounding (so an operator with α = ω = 0 is tested at ω = 0).
func defaultOmega(o GeneratorOptions, rep *GeneratorReport) float64 {
	if o.OmegaSet {
		return o.Omega
	}
	al, om := rep.SpectralAbscissa, rep.NumericalAbscissa
	if rep.AbscissaSign == 0 {
		al = 0
	}
	if roundoff.Sign(om, rep.Rounding) == 0 {
		om = 0
	}
	switch {
	case rep.AbscissaSign < 0:
		return 0
	case om <= al:
		return om
	}
	return al + (om-al)/10
}

// abscissaRounding returns the error allowance for α(A) computed from the
// spectrum sp of a matrix with backward error tau and Frobenius norm fn:
// tau times the condition of the rightmost eigenvalue (the largest among
// those within that allowance of α), or √(tau·fn) when it is above
// IllCondLimit (defective or nearly so).
func abscissaRounding(sp *Spectrum, tau, fn float64) (float64, bool) {
	if len(sp.Values) == 0 {
		return tau, false
	}
	c := 1.0
	for k, l := range sp.Values {
		if k > 0 && real(sp.Values[0])-real(l) > tau*c {
			break
		}
		if k < len(sp.Cond) && !(sp.Cond[k] <= c) {
			c = sp.Cond[k]
		}
	}
	if !(c <= IllCondLimit) {
		return math.Max(tau*IllCondLimit, math.Sqrt(tau*fn)), true
	}
	return tau * c, false
}

// excess formats ω(A) − ω for the verdict: "ω(A) = x" when ω = 0.
func excess(om, w float64) string {
	if w == 0 {
		return fmt.Sprintf("ω(A) = %.2g", om)
	}
	return fmt.Sprintf("ω(A) − ω = %.2g", om-w)
}

// abscissaClause states the sign of α(A), or that rounding hides it.
func (r *GeneratorReport) abscissaClause() string {
	al, tol := r.SpectralAbscissa, r.AbscissaRounding
	switch {
	case al == 0 && !r.AbscissaIllCond:
		return "α(A) = 0, so e^{tA} neither decays nor grows exponentially"
	case r.AbscissaSign < 0:
		return fmt.Sprintf("α(A) = %.4g < 0, so e^{tA} → 0 as t → ∞", al)
	case r.AbscissaSign > 0:
		return fmt.Sprintf("α(A) = %.4g > 0, so e^{tA} grows exponentially", al)
	case r.AbscissaIllCond:
		return fmt.Sprintf("α(A) = %.2g is zero within rounding (|α| ≤ %.2g, the rightmost eigenvalue being defective or nearly so; see its pseudospectra), so e^{tA} does not decay exponentially", al, tol)
	}
	return fmt.Sprintf("α(A) = %.2g is zero within rounding (|α| ≤ %.2g = n·u·‖A‖·cond), so e^{tA} neither decays nor grows exponentially", al, tol)
}

// hilleYosida samples (λ−ω)^n‖R(λ)^n‖ for n = 1..o.Powers at o.Lambdas
// log-spaced λ − ω from 10⁻²(ω − α) to 10²·max(ω(A) − ω, ω − α), and at
// decades beyond up to hyFar·max(‖B‖_F, that end), setting HY, M (at
// least 1, the limit λ → ∞) and Sampled. It needs ω > α(A).
//
// The norms come from the Hessenberg form of m (hessenbergOf) by
// normLanczos. λ are taken in a spreading order (the ends of the main
// range, then midpoints of the widest gaps), so that when the work budget
// o.Work runs out the samples taken still cover the range; ctx is checked
// between Lanczos steps.
func (rep *GeneratorReport) hilleYosida(ctx context.Context, m *mat.Dense, o GeneratorOptions, fn float64) error {
	w, al, om := rep.Omega, rep.SpectralAbscissa, rep.NumericalAbscissa
	s1 := w - al
	s2 := math.Max(om-w, s1)
	lams := make([]float64, o.Lambdas)
	for k := range lams {
		lams[k] = w + 1e-2*s1*math.Pow(1e4*s2/s1, float64(k)/float64(max(len(lams)-1, 1)))
	}
	top := 1e2 * s2
	far := hyFar * math.Max(fn, top)
	var extra []float64
	if far > top {
		// hyExtra log-spaced values beyond the main range, up to far.
		for k := 1; k <= hyExtra; k++ {
			extra = append(extra, w+top*math.Pow(far/top, float64(k)/hyExtra))
		}
	}
	h, err := hessenbergOf(ctx, m)
	if err != nil {
		return err
	}
	n, _ := m.Dims()
	if err := memguard.DenseReal(n, n); err != nil { // the LU factors of λI − H
		return err
	}
	f := newHessLU(n)
	rep.M = 1
	best := make([]HilleYosida, o.Powers)
	for p := range best {
		best[p] = HilleYosida{Power: p + 1, M: 1, Lambda: math.Inf(1)}
	}
	used := 0.0 // real multiply–adds: one triangular solve is n²/2
	taken := 0
	for i, k := range spreadOrder(len(lams)) {
		if o.Work > 0 && used > o.Work && i >= 2 {
			break
		}
		solves, err := rep.hySample(ctx, f, h, lams[k], w, best)
		if err != nil {
			return err
		}
		used += float64(solves) * float64(n) * float64(n) / 2
		taken++
		if o.Progress != nil {
			o.Progress(taken, len(lams))
		}
	}
	// The values beyond the main range are near the limit 1 and cheap
	// (Lanczos settles at once): always taken.
	for _, l := range extra {
		if _, err := rep.hySample(ctx, f, h, l, w, best); err != nil {
			return err
		}
	}
	cut := taken < len(lams)
	rep.Taken = taken
	rep.HY = best
	for _, b := range best {
		rep.M = math.Max(rep.M, b.M)
	}
	rep.Sampled = fmt.Sprintf("%d log-spaced values in [%.3g, %.3g] and %d beyond up to %.3g = 10⁶·max(‖B‖_F, %.3g); the sup is taken with 1, the exact limit as λ → ∞", o.Lambdas, 1e-2*s1, top, len(extra), far, top)
	if cut {
		rep.Sampled = fmt.Sprintf("%d of %d log-spaced values in [%.3g, %.3g] (spread over the range; the others were skipped to stay within the work budget of %.2g multiply–adds — ask for all of them to sample every one) and %d beyond up to %.3g = 10⁶·max(‖B‖_F, %.3g); the sup is taken with 1, the exact limit as λ → ∞", taken, o.Lambdas, 1e-2*s1, top, o.Work, len(extra), far, top)
		rep.Skipped = o.Lambdas - taken
	}
	return nil
}

// hySample raises best[p] to (λ−ω)^{p+1}‖R(λ)^{p+1}‖ at λ = l where that
// is larger, and returns the number of triangular solves it took.
func (rep *GeneratorReport) hySample(ctx context.Context, f *hessLU, h []float64, l, w float64, best []HilleYosida) (int, error) {
	vals, solves, err := resolventPowerNormsHess(ctx, f, h, l, len(best))
	if err != nil {
		return solves, err
	}
	for p := range best {
		if v := math.Pow(l-w, float64(p+1)) * vals[p]; v > best[p].M {
			best[p].M, best[p].Lambda = v, l
		}
	}
	return solves, nil
}

// spreadOrder returns 0..m−1 in an order that spreads over the range: both
// ends, then the middle, then the midpoints of the gaps left, widest first
// (so any prefix samples the range evenly).
func spreadOrder(m int) []int {
	if m <= 0 {
		return nil
	}
	out := []int{0}
	if m > 1 {
		out = append(out, m-1)
	}
	type gap struct{ a, b int }
	queue := []gap{{0, m - 1}}
	for len(queue) > 0 {
		g := queue[0]
		queue = queue[1:]
		if g.b-g.a < 2 {
			continue
		}
		c := (g.a + g.b) / 2
		out = append(out, c)
		queue = append(queue, gap{g.a, c}, gap{c, g.b})
	}
	return out
}

func norm2(m *mat.Dense) float64 {
	var svd mat.SVD
	if !svd.Factorize(m, mat.SVDNone) {
		return math.NaN()
	}
	return svd.Values(nil)[0]
}

// MarkovReport describes a continuous-time Markov chain with rate matrix
// Q (q_ij ≥ 0 for i ≠ j, rows summing to zero), u' = uQ for row vectors of
// probabilities, P(t) = e^{tQ}.
type MarkovReport struct {
	// Stationary is π with πQ = 0, Σπ_i = 1.
	Stationary []float64
	// Gap is the spectral gap −max{Re λ : λ ∈ σ(Q), λ ≠ 0}; Relaxation is 1/Gap.
	Gap, Relaxation float64
	// GapError bounds the error of Gap: n·u·‖S‖_F (plus the detailed-balance
	// defect of a general reversible chain) through the symmetric S, or
	// Cond·n·u·‖Q‖_F for a non-reversible chain (first order; +Inf when
	// the eigenvalue is defective or nearly so).
	GapError float64
	// MixingTime is the least t with max_i ‖e_iᵀe^{tQ} − π‖_TV ≤ 1/4, to
	// relative 2⁻²⁰ (one dense exponential, then products of transition
	// matrices: mixingTime).
	MixingTime float64
	// MixingBound is ln(4/π_min)·Relaxation, an upper bound on MixingTime
	// for reversible chains (Levin, Peres & Wilmer, Markov Chains and
	// Mixing Times, 2009, Thm 12.3 and §20.3; quoted from memory); only an
	// indication for non-reversible ones.
	MixingBound float64
	// Reversible: detailed balance π_i q_ij = π_j q_ji holds (to 1e-10
	// relative); always for birth–death chains, whose transition graph is
	// a path (Kolmogorov's criterion). BirthDeath: Q is tridiagonal.
	Reversible, BirthDeath bool
	Method                 string
	Accuracy               string
}

// rateError is a rate-matrix validation failure (it wraps
// linop.ErrGenerator) in this package's words.
type rateError struct{ err error }

func (e rateError) Error() string {
	return "spectra: not a rate matrix: " + strings.TrimPrefix(e.err.Error(), linop.ErrGenerator.Error()+": ")
}

func (e rateError) Unwrap() error { return e.err }

// Markov analyses the rate matrix Q. It returns an error wrapping
// linop.ErrGenerator if Q is not a rate matrix (linop.CheckGenerator:
// a negative off-diagonal rate, or a row sum beyond rounding) and one
// wrapping ErrNumerical if the chain is not irreducible; it panics with
// ErrShape if Q is not square. π comes from the rate products for a
// birth–death chain and by the subtraction-free GTH elimination
// otherwise, so even entries that span many decades are accurate.
//
// A reversible chain's spectrum is real, that of the symmetric
// S = D^{1/2} Q D^{-1/2}, D = diag(π); detailed balance makes
// S_ij = √(q_ij q_ji) for i ≠ j, free of π. Markov computes the gap from S
// by a symmetric eigensolver (the tridiagonal QR iteration for a
// birth–death chain), with absolute error about n·u·‖S‖_F whatever the
// grading of Q; the non-symmetric QR algorithm on Q itself can be far
// off on strongly graded chains, whose eigenvectors are very ill-conditioned.
func Markov(ctx context.Context, q linop.Operator) (*MarkovReport, error) {
	m, err := toDense(q)
	if err != nil {
		return nil, err
	}
	n, _ := m.Dims()
	if n == 0 {
		return nil, numErr("empty rate matrix")
	}
	if err := linop.CheckGenerator(linop.CSRFromDense(m, 0)); err != nil {
		return nil, rateError{err}
	}
	rep := &MarkovReport{BirthDeath: isBirthDeath(m)}
	if rep.BirthDeath {
		rep.Stationary = birthDeathStationary(m)
	} else if rep.Stationary, err = linop.Stationary(linop.CSRFromDense(m, 0)); err != nil {
		// Q passed CheckGenerator above: this is the irreducibility test.
		return nil, numErr("%s", strings.TrimPrefix(err.Error(), linop.ErrGenerator.Error()+": "))
	}
	piMin := math.Inf(1)
	for _, p := range rep.Stationary {
		piMin = math.Min(piMin, p)
	}
	logPiMin := math.Log(piMin)
	if rep.BirthDeath {
		// Irreducible by construction; π_min may lie below the smallest
		// double (a strong drift), so take it from the logarithms.
		logPiMin = birthDeathLogPiMin(m)
	} else if !(piMin > 0) {
		return nil, numErr("stationary distribution has a zero or negative entry (%g): the chain is not irreducible", piMin)
	}
	rep.Reversible = rep.BirthDeath || detailedBalance(m, rep.Stationary)
	var gapHow string
	chain, bd := birthDeathOfDense(m)
	switch {
	case bd:
		vals, how, err := chain.Nearest(ctx, 2, false, 0)
		if err != nil {
			return nil, err
		}
		rel := chain.RelativeError()
		rep.Gap = -vals[1]
		rep.GapError = rep.Gap * rel
		gapHow = fmt.Sprintf("gap = σ², σ the smallest singular value of the bidiagonal factor G of −D^{1/2}QD^{-1/2} = GᵀG, D = diag(π) (G formed from the square roots of the rates by Givens rotations, no subtractions), by %s; relative accuracy: the gap to %.2g of itself (24·n·u), however small it is next to ‖Q‖", map[bool]string{true: "the differential qd algorithm with shifts (Fernando & Parlett 1994)", false: "bisection on the zero-diagonal Golub–Kahan form"}[how == dqdsMethod], rel)
	case rep.Reversible && n > 1:
		type valsTol struct {
			vals []float64
			tol  float64
		}
		vt, err := abandonable(ctx, denseBytes(n, 2), fmt.Sprintf("symmetric eigenvalues of order %d", n), func() (valsTol, error) {
			v, t, err := reversibleSpectrum(m, rep.Stationary)
			return valsTol{v, t}, err
		})
		vals, tol := vt.vals, vt.tol
		if err != nil {
			return nil, err
		}
		// vals ascending; the largest is the stationary 0 (within tol).
		rep.Gap, rep.GapError = -vals[n-2], tol
		gapHow = fmt.Sprintf("gap from the symmetric S = D^{1/2}QD^{-1/2}, S_ij = √(q_ij q_ji) (symmetric QR algorithm), absolute error ≤ %.2g = n·u·‖S‖_F plus the detailed-balance defect", tol)
		if math.Abs(vals[n-1]) > tol {
			gapHow += fmt.Sprintf("; WARNING: the largest eigenvalue of S is %.3g, not 0 within rounding", vals[n-1])
		}
	case n > 1:
		sp, err := abandonable(ctx, denseBytes(n, 8), fmt.Sprintf("dense eigenvalues of order %d", n), func() (*Spectrum, error) { return denseSpectrum(m) })
		if err != nil {
			return nil, err
		}
		// The eigenvalue closest to 0 is the stationary one; the gap is set by the others.
		iz := 0
		for k, l := range sp.Values {
			if cmplx.Abs(l) < cmplx.Abs(sp.Values[iz]) {
				iz = k
			}
		}
		top, at := math.Inf(-1), -1
		for k, l := range sp.Values {
			if k != iz && real(l) > top {
				top, at = real(l), k
			}
		}
		rep.Gap = -top
		tau := roundoff.Threshold(n, mat.Norm(m, 2))
		rep.GapError = tau
		if at >= 0 {
			rep.GapError = tau * sp.Cond[at]
			if sp.IllCond[at] {
				rep.GapError = math.Inf(1)
			}
		}
		gapHow = fmt.Sprintf("gap from all eigenvalues (non-symmetric QR algorithm: the chain is not reversible), error ≲ Cond·n·u·‖Q‖_F = %.2g", rep.GapError)
		if math.IsInf(rep.GapError, 1) {
			gapHow = "gap from all eigenvalues (non-symmetric QR algorithm: the chain is not reversible); the eigenvalue setting the gap is DEFECTIVE OR NEARLY (condition above 1/√u): its error is not bounded to first order — see the pseudospectra of Q"
		}
	}
	if n == 1 {
		rep.Gap, rep.GapError = math.Inf(1), 0
	}
	rep.Relaxation = 1 / rep.Gap
	rep.MixingBound = (math.Log(4) - logPiMin) * rep.Relaxation
	mixHow := "mixing time: none (a single state, or no gap)"
	if n > 1 && rep.Gap > 0 {
		var err error
		if rep.MixingTime, mixHow, err = mixingTime(ctx, m, rep.Stationary, 0.1*rep.Relaxation); err != nil {
			return nil, err
		}
	}
	piHow, piAcc := "π by the Grassmann–Taksar–Heyman elimination (Grassmann, Taksar & Heyman 1985; no subtractions)", "every entry of π to a relative error of order n³·u at worst (O'Cinneide 1993), in practice far less"
	if rep.BirthDeath {
		piHow, piAcc = "π from the birth–death product π_{k+1} = π_k q_{k,k+1}/q_{k+1,k}", "π to relative 2n·u"
	}
	rep.Method = piHow + "; " + gapHow + "; " + mixHow
	rep.Accuracy = fmt.Sprintf("%s; gap ± %.2g; mixing time to relative 2⁻²⁰ ≈ 1e-6 (reversible: %v)", piAcc, rep.GapError, rep.Reversible)
	return rep, nil
}

// isBirthDeath reports whether the rate matrix m is tridiagonal with every
// neighbouring rate positive (an irreducible birth–death chain).
func isBirthDeath(m *mat.Dense) bool {
	n, _ := m.Dims()
	for i := 0; i < n; i++ {
		for j := 0; j < n; j++ {
			if d := i - j; (d > 1 || d < -1) && m.At(i, j) != 0 {
				return false
			}
		}
		if i+1 < n && !(m.At(i, i+1) > 0 && m.At(i+1, i) > 0) {
			return false
		}
	}
	return true
}

// birthDeathStationary returns π of an irreducible birth–death chain by
// detailed balance, π_{k+1} = π_k q_{k,k+1}/q_{k+1,k}, normalised; the
// products are kept as logarithms relative to the largest, so no π_k
// overflows, and every entry has relative error about 2n·u.
func birthDeathStationary(m *mat.Dense) []float64 {
	lp, logZ := birthDeathLogPi(m)
	pi := make([]float64, len(lp))
	for k := range pi {
		pi[k] = math.Exp(lp[k] - logZ)
	}
	return pi
}

// birthDeathLogPi returns log π_k + log Z for the unnormalised products
// (π_0 = 1) and log Z, Z = Σ π_k, summed relative to the largest term.
func birthDeathLogPi(m *mat.Dense) ([]float64, float64) {
	n, _ := m.Dims()
	lp := make([]float64, n)
	top := 0.0
	for k := 0; k+1 < n; k++ {
		lp[k+1] = lp[k] + math.Log(m.At(k, k+1)) - math.Log(m.At(k+1, k))
		top = math.Max(top, lp[k+1])
	}
	sum := 0.0
	for _, l := range lp {
		sum += math.Exp(l - top)
	}
	return lp, top + math.Log(sum)
}

// birthDeathLogPiMin returns log min_k π_k of a birth–death chain, finite
// even when π_min underflows.
func birthDeathLogPiMin(m *mat.Dense) float64 {
	lp, logZ := birthDeathLogPi(m)
	lo := math.Inf(1)
	for _, l := range lp {
		lo = math.Min(lo, l)
	}
	return lo - logZ
}

// detailedBalance reports whether π_i q_ij = π_j q_ji for all i ≠ j, to
// relative 1e-10, flows at the rounding level of the largest flow
// π_i|q_ii| (roundoff.Threshold) counting as zero.
func detailedBalance(m *mat.Dense, pi []float64) bool {
	n, _ := m.Dims()
	flow := 0.0
	for i := 0; i < n; i++ {
		flow = math.Max(flow, pi[i]*math.Abs(m.At(i, i)))
	}
	floor := roundoff.Threshold(n, flow)
	for i := 0; i < n; i++ {
		for j := 0; j < i; j++ {
			f, b := pi[i]*m.At(i, j), pi[j]*m.At(j, i)
			if d := math.Abs(f - b); d > 1e-10*(f+b) && d > floor {
				return false
			}
		}
	}
	return true
}

// reversibleSpectrum returns the eigenvalues (ascending) of the symmetric
// S = D^{1/2} Q D^{-1/2}, D = diag(π), of a reversible rate matrix m,
// formed as S_ii = q_ii, S_ij = √(q_ij q_ji) (detailed balance), and an
// absolute error bound: n·u·‖S‖_F plus ‖E‖_F with E_ij = √(π_i/π_j) q_ij −
// S_ij, the detailed-balance defect (S is then the symmetric part of a
// matrix similar to Q up to E). Birth–death chains take BirthDeathChain's
// relatively accurate route instead.
func reversibleSpectrum(m *mat.Dense, pi []float64) ([]float64, float64, error) {
	n, _ := m.Dims()
	s, defect, err := symmetrised(m, pi)
	if err != nil {
		return nil, 0, err
	}
	var es mat.EigenSym
	if !es.Factorize(s, false) {
		return nil, 0, numErr("symmetric QR algorithm did not converge for the %d-state reversible chain", n)
	}
	return es.Values(nil), roundoff.Threshold(n, mat.Norm(s, 2)) + defect, nil
}

// symmetrised returns S with S_ii = q_ii, S_ij = √(q_ij q_ji) — equal to
// D^{1/2} Q D^{-1/2}, D = diag(π), when detailed balance holds exactly —
// and the defect ‖E‖_F, E_ij = √(π_i/π_j) q_ij − S_ij (+Inf when some π_i
// underflowed to 0; 0 when pi is nil, for a birth–death chain, whose
// detailed balance is exact), or the memory guard's refusal of S.
func symmetrised(m *mat.Dense, pi []float64) (*mat.SymDense, float64, error) {
	n, _ := m.Dims()
	if err := memguard.DenseReal(n, n); err != nil {
		return nil, 0, err
	}
	s := mat.NewSymDense(n, nil)
	defect := 0.0
	for i := 0; i < n; i++ {
		s.SetSym(i, i, m.At(i, i))
		for j := 0; j < i; j++ {
			v := math.Sqrt(m.At(i, j)) * math.Sqrt(m.At(j, i))
			s.SetSym(i, j, v)
			if pi != nil && (m.At(i, j) != 0 || m.At(j, i) != 0) {
				defect = math.Hypot(defect, math.Sqrt(pi[i]/pi[j])*m.At(i, j)-v)
				defect = math.Hypot(defect, math.Sqrt(pi[j]/pi[i])*m.At(j, i)-v)
			}
		}
	}
	if math.IsNaN(defect) {
		defect = math.Inf(1)
	}
	return s, defect, nil
}

// reversibleRateSpectrum returns the dense spectrum of m through the
// symmetric S = D^{1/2} Q D^{-1/2} when m is the rate matrix of an
// irreducible reversible chain (ok = false otherwise, and for order < 2):
// real eigenvalues to n·u·‖S‖_F (plus the detailed-balance defect)
// whatever the grading of Q, with right and left eigenvectors
// x = D^{-1/2}v, y = D^{1/2}v of Q (S v = λ v) and their condition numbers
// ‖x‖‖y‖/|yᵀx|, which measure Q's sensitivity to unstructured
// perturbations, not the error of this route: IllCond stays false.
func reversibleRateSpectrum(m *mat.Dense) (*Spectrum, bool, error) {
	n, _ := m.Dims()
	if n < 2 {
		return nil, false, nil
	}
	for i := 0; i < n; i++ {
		for j := 0; j < n; j++ {
			if i != j && m.At(i, j) < 0 {
				return nil, false, nil
			}
		}
	}
	csr := linop.CSRFromDense(m, 0)
	if linop.CheckGenerator(csr) != nil {
		return nil, false, nil
	}
	// log π, from the rate products (birth–death) or GTH.
	lp := make([]float64, n)
	var pi []float64
	bd := isBirthDeath(m)
	if bd {
		lpu, logZ := birthDeathLogPi(m)
		for k := range lp {
			lp[k] = lpu[k] - logZ
		}
	} else {
		var err error
		if pi, err = linop.Stationary(csr); err != nil || !detailedBalance(m, pi) {
			return nil, false, nil
		}
		for k, p := range pi {
			lp[k] = math.Log(p)
		}
	}
	// S, its eigenvectors, and Q's complex right and left vectors.
	if err := memguard.Check(6*n*n, memguard.RealBytes, fmt.Sprintf("symmetric route for the %d-state reversible chain", n)); err != nil {
		return nil, false, err
	}
	s, defect, err := symmetrised(m, pi)
	if err != nil {
		return nil, false, err
	}
	var es mat.EigenSym
	if !es.Factorize(s, true) {
		return nil, false, numErr("symmetric QR algorithm did not converge for the %d-state reversible chain", n)
	}
	vals := es.Values(nil)
	var chainVals []float64
	if bd {
		// The values to high relative accuracy; EigenSym's vectors stay
		// paired with them (both in order).
		c, _ := birthDeathOfDense(m)
		var err error
		if chainVals, err = c.Eigenvalues(context.Background()); err != nil {
			return nil, false, err
		}
	}
	var v mat.Dense
	es.VectorsTo(&v)
	lo, hi := math.Inf(1), math.Inf(-1)
	for _, l := range lp {
		lo, hi = math.Min(lo, l), math.Max(hi, l)
	}
	tau := roundoff.Threshold(n, mat.Norm(s, 2)) + defect
	sp := &Spectrum{Values: make([]complex128, n), Cond: make([]float64, n), IllCond: make([]bool, n),
		Right: mat.NewCDense(n, n, nil), Left: mat.NewCDense(n, n, nil), Rounding: tau, absolute: true}
	x, y := make([]float64, n), make([]float64, n)
	for k := 0; k < n; k++ {
		col := n - 1 - k // descending
		sp.Values[k] = complex(vals[col], 0)
		if bd {
			sp.Values[k] = complex(chainVals[k], 0)
		}
		// x_i = v_i π_i^{-1/2}, y_i = v_i π_i^{1/2}, each scaled by its
		// largest factor so that nothing overflows.
		var nx, ny float64
		for i := 0; i < n; i++ {
			x[i] = v.At(i, col) * math.Exp((lo-lp[i])/2)
			y[i] = v.At(i, col) * math.Exp((lp[i]-hi)/2)
			nx, ny = math.Hypot(nx, x[i]), math.Hypot(ny, y[i])
		}
		// yᵀx = vᵀv = 1 before scaling: Cond = ‖x‖‖y‖ in the unscaled vectors.
		sp.Cond[k] = nx * ny * math.Exp((hi-lo)/2)
		for i := 0; i < n; i++ {
			sp.Right.Set(i, k, complex(x[i]/nx, 0))
			sp.Left.Set(i, k, complex(y[i]/ny, 0))
		}
	}
	sp.Abscissa = real(sp.Values[0])
	sp.Method = "the rate matrix of a reversible chain (detailed balance π_i q_ij = π_j q_ji): eigenvalues of the symmetric S = D^{1/2}QD^{-1/2} = [√(q_ij q_ji)], D = diag(π), by the symmetric QR algorithm; eigenvectors of Q are D^{∓1/2}v"
	sp.Accuracy = fmt.Sprintf("every eigenvalue to %.2g = n·u·‖S‖_F (including the detailed-balance defect %.2g)", tau, defect)
	if bd {
		c, _ := birthDeathOfDense(m)
		sp.Method = "the rate matrix of a birth–death chain: eigenvalue 0 and −σ² for the " + dqdsMethod + "; the diagonal is taken as minus each state's rates; eigenvectors of Q are D^{∓1/2}v for those of S = D^{1/2}QD^{-1/2} (symmetric QR algorithm)"
		sp.Accuracy = fmt.Sprintf("relative accuracy: every eigenvalue to %.2g = 24·n·u relative to its own size, however small next to ‖Q‖", c.RelativeError())
	}
	sp.Accuracy += "; the conditions shown are Q's under unstructured perturbations (large for a graded chain, whose eigenvectors are nearly parallel in the Euclidean norm and orthogonal in the π-weighted one), not the error of these values"
	return sp, true, nil
}

func generatorSparse(ctx context.Context, a *linop.CSR, o GeneratorOptions) (*GeneratorReport, error) {
	n := a.Rows
	fn := normFrobCSR(a)
	// A symmetric part H = (A + Aᵀ)/2 within rounding of zero (a
	// skew-symmetric A: transport, a conservative wave) leaves the
	// shift-and-invert Lanczos nothing to find; then |ω(A)| ≤ ‖H‖₂ ≤ ‖H‖_F,
	// and ω(A) is bounded above by ‖H‖_F directly.
	var om float64
	hf := normFrobCSR(linop.AddCSR(0.5, a, 0.5, a.Transpose()))
	symZero := hf <= roundoff.Threshold(n, fn)
	if symZero {
		om = hf
	} else {
		var err error
		if om, err = symTopShiftInvert(a); err != nil {
			return nil, err
		}
	}
	var sp *Spectrum
	chain, bd := BirthDeathOf(a)
	if bd {
		var err error
		if sp, err = chain.Spectrum(ctx, 4, false, 0); err != nil {
			return nil, err
		}
	} else {
		sigma := om + 1e-3*(1+math.Abs(om))
		var err error
		if sp, err = Rightmost(ctx, a, &EigsOptions{Count: 4, ShiftInvert: true, Shift: sigma}); err != nil {
			return nil, err
		}
	}
	rep := &GeneratorReport{N: n, SpectralAbscissa: sp.Abscissa, NumericalAbscissa: om}
	// ω(A) carries the Ritz residual (relative 1e-12) besides the rounding.
	rep.Rounding = roundoff.Threshold(n, fn) + 1e-12*math.Abs(om)
	rep.AbscissaRounding = rep.Rounding
	for k := range sp.Values {
		if k < len(sp.Residual) && real(sp.Values[k]) == sp.Abscissa {
			rep.AbscissaRounding = math.Max(rep.AbscissaRounding, sp.Residual[k])
		}
	}
	if bd {
		// α = 0 exactly for rows summing to 0; the given rows do so within
		// rounding, which moves the stationary eigenvalue by at most the
		// largest row sum (first order: π·r for row sums r).
		rep.AbscissaRounding = RowSumRounding(a)
	}
	rep.AbscissaSign = roundoff.Sign(sp.Abscissa, rep.AbscissaRounding)
	tau := rep.Rounding
	rep.Omega = defaultOmega(o, rep)
	rep.Dissipative = roundoff.Sign(om-rep.Omega, tau) <= 0
	rep.WithinRounding = rep.Dissipative && om > rep.Omega
	rep.M = math.NaN()
	if rep.Dissipative {
		rep.M = 1
	}
	rep.Sampled = "none: large operator"
	var v strings.Builder
	fmt.Fprintf(&v, "A (%d×%d, sparse) generates the semigroup e^{tA}; ", n, n)
	if bd {
		v.WriteString(rep.abscissaClause() + " (the stationary eigenvalue of a birth–death chain)")
	} else {
		v.WriteString(strings.Replace(rep.abscissaClause(), "α(A) =", "α(A) ≈", 1))
	}
	if rep.AbscissaSign < 0 && !bd {
		v.WriteString(" (rightmost computed eigenvalue)")
	}
	v.WriteString("; ")
	switch {
	case rep.WithinRounding:
		fmt.Fprintf(&v, "A − ωI is dissipative within rounding (%s ≤ %.2g = n·u·‖A‖ + 10⁻¹²|ω(A)|), so ‖e^{tA}‖ ≤ e^{(ω+2τ)t} with τ = %.2g (Lumer–Phillips, M = 1).", excess(om, rep.Omega), tau, tau)
	case rep.Dissipative:
		fmt.Fprintf(&v, "ω(A) = %.4g ≤ ω = %.4g: A − ωI is dissipative, so ‖e^{tA}‖ ≤ e^{ωt} (Lumer–Phillips, M = 1).", om, rep.Omega)
	default:
		fmt.Fprintf(&v, "not dissipative (%s > %.2g = n·u·‖A‖ + 10⁻¹²|ω(A)|), transient growth up to a factor M is possible (not estimated for large operators; see the growth curve).", excess(om, rep.Omega), tau)
	}
	rep.Verdict = v.String()
	rep.Assumptions = "finite-dimensional operator: generation is automatic; Euclidean inner product; α(A) from the eigenvalues nearest σ = ω(A)+δ, which are the rightmost unless the spectrum has far-out parts with large imaginary parts"
	if bd {
		rep.Assumptions = "finite-dimensional operator: generation is automatic; Euclidean inner product; A is the rate matrix of an irreducible birth–death chain, whose eigenvalues are real: α(A) = 0 (the stationary one) and the rest −σ² < 0"
	}
	rep.Method = "ω(A): shift-and-invert Lanczos on (A+Aᵀ)/2 above its Gershgorin bound; α(A): " + sp.Method
	if symZero {
		rep.Method = fmt.Sprintf("ω(A) ≤ ‖(A+Aᵀ)/2‖_F = %.2g, which is within rounding of 0 (A is skew-symmetric to rounding); α(A): ", hf) + sp.Method
	}
	rep.Accuracy = fmt.Sprintf("ω(A) to τ = n·u·‖A‖_F + 10⁻¹²|ω(A)| = %.2g (rounding and Ritz residual); signs within it are reported as zero within rounding; ", rep.Rounding) + sp.Accuracy
	return rep, nil
}

// RowSumRounding returns max_i n·u·Σ_j |a_ij| over the rows of a (by its
// sparse form; +Inf without one): the rounding within which a rate
// matrix's rows sum to zero (linop.CheckGenerator), and so the first-order
// distance of its stationary eigenvalue from 0.
func RowSumRounding(a linop.Operator) float64 {
	q, err := linop.ToCSR(a)
	if err != nil {
		return math.Inf(1)
	}
	worst := 0.0
	for i := 0; i < q.Rows; i++ {
		abs := 0.0
		for p := q.RowPtr[i]; p < q.RowPtr[i+1]; p++ {
			abs += math.Abs(q.Val[p])
		}
		worst = math.Max(worst, roundoff.Threshold(q.Rows, abs))
	}
	return worst
}

// normFrobCSR returns the Frobenius norm of a.
func normFrobCSR(a *linop.CSR) float64 {
	s := 0.0
	for _, v := range a.Val {
		s = math.Hypot(s, v)
	}
	return s
}
