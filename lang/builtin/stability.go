package builtin

import (
	"context"
	"errors"
	"fmt"
	"math"
	"math/cmplx"
	"slices"
	"sort"
	"strconv"
	"strings"
	"time"

	"gonum.org/v1/gonum/mat"

	"semiflow/lang/eval"
	"semiflow/lang/objects"
	"semiflow/lang/value"
	"semiflow/numerics/linop"
	"semiflow/numerics/memguard"
	"semiflow/numerics/roundoff"
	"semiflow/numerics/spectra"
)

// DenseLimit is the largest order analysed by the dense methods (Schur
// form, QR algorithm, dense exponentials). Larger operators use the Krylov
// methods where the analysis has one, and are refused otherwise.
const DenseLimit = 1500

// stabilityFamily: spectra, numerical range, pseudospectra, resolvent
// norms, transient growth and generator reports.
var stabilityFamily = []*Builtin{
	{
		Name: "spectrum",
		Params: []value.Param{
			req("A", "an operator or a square matrix"),
			opt("count", value.Num(0), "0 for all eigenvalues (dense method), or the number k of eigenvalues wanted"),
			opt("near", value.None, "none for the rightmost eigenvalues, or a real shift σ for those nearest σ (complex σ for a complex A of order ≤ 1500)"),
		},
		Doc: "The eigenvalues λ of A (A x = λ x), ordered by decreasing real part, with the spectral abscissa α(A) = max Re λ. " +
			"With count = 0 all of them, by the QR algorithm without balancing, each with its condition number ‖x‖‖y‖/|yᴴx| (x, y the right and left eigenvectors: a perturbation of size δ moves λ by about cond·δ); this needs order ≤ 1500. " +
			"Eigenvalues with condition above 1/√u ≈ 9.5e7 (u = 2⁻⁵³) are flagged as defective or nearly so: for them the first-order bound cond·n·u·‖A‖_F does not hold (an m×m Jordan block moves by (δ‖A‖^{m−1})^{1/m}) and the report points to pseudospectrum instead. The rate matrix of a reversible chain (birth–death, or detailed balance π_i q_ij = π_j q_ji) takes the symmetric route D^{1/2}QD^{-1/2} = [√(q_ij q_ji)], D = diag(π): real eigenvalues exact to n·u·‖S‖_F however graded Q is. " +
			"A birth–death rate matrix goes further, with relative accuracy: −D^{1/2}QD^{-1/2} = GᵀG with G bidiagonal and formed from √rates without subtractions, so its eigenvalues 0 and −σ² (σ the singular values of G, by dqds, or by bisection for a few) are each right to a few units of roundoff relative to their own size (bound 24·n·u, shown in the last column), however small next to ‖Q‖; it takes this route at any order with count = k, and up to 10⁴ states with count = 0. " +
			"With count = k the k rightmost eigenvalues, or with near = σ the k nearest σ: for order ≤ 1500 selected from the dense spectrum, above by the Krylov–Schur method (Stewart 2001) on A, or on (σI − A)⁻¹ with near, each with its residual ‖Ax − λx‖/‖x‖. " +
			"The result is a table (rows indexable as r[k, j]: k, λ, Re λ, Im λ, condition or residual) and a figure of the eigenvalues in the complex plane with the imaginary axis.",
		Examples: []Example{
			{"s = spectrum({-1, 2 | 0, -3}); s[0, 1]", "-1+0i"},
			{"spectrum({0, 1 | -1, 0}, count=1)[0, 1]", "0+1i"},
		},
		Impl: spectrumImpl,
	},
	{
		Name:   "abscissa",
		Params: []value.Param{req("A", "an operator or a square matrix")},
		Doc: "The spectral abscissa α(A) = max{Re λ : λ ∈ σ(A)}, the asymptotic growth rate: ‖e^{tA}‖ ≤ M_δ e^{(α+δ)t} for every δ > 0, and e^{tA} decays iff α(A) < 0. " +
			"Dense QR for order ≤ 1500; above, the rightmost eigenvalue by shift-and-invert Krylov–Schur about σ = ω(A) + 10⁻³(1 + |ω(A)|) ≥ α(A). The result is a number with a note; q[0] is the plain number. " +
			"A dense α(A) within n·u·‖A‖_F × (condition of the rightmost eigenvalue) of 0 is noted as zero within rounding; a defective rightmost eigenvalue is noted as such.",
		Examples: []Example{
			{"abscissa({-1, 5 | 0, -2})[0]", "-1"},
		},
		Impl: abscissaImpl,
	},
	{
		Name: "numrange",
		Params: []value.Param{
			req("A", "an operator or a square matrix"),
			opt("weight", value.None, stabWeightDoc),
			opt("points", value.Num(64), "number of boundary points (angles), ≥ 3"),
		},
		Doc: "The numerical range (field of values) W(A) = {x*Ax : ‖x‖ = 1}, a compact convex set containing the spectrum (Toeplitz–Hausdorff). " +
			"Its boundary is sampled at equally spaced angles θ by the top eigenvector x of the Hermitian part H_θ = (e^{−iθ}A + e^{iθ}A*)/2, whose eigenvalue h(θ) is the support function (Johnson 1978); the point x*Ax lies on ∂W(A). " +
			"Reports the numerical abscissa ω(A) = max Re W(A) (the initial slope of ‖e^{tA}‖) and the numerical radius r(A) = max |W(A)|, with a table of the boundary points and a figure with the eigenvalues. Order ≤ 1500.",
		Examples: []Example{
			{"numrange({0, 2 | 0, 0}, points=8)[0, 4]", "1"},
		},
		Impl: numrangeImpl,
	},
	{
		Name: "numabscissa",
		Params: []value.Param{
			req("A", "an operator or a square matrix"),
			opt("weight", value.None, stabWeightDoc),
		},
		Doc: "The numerical abscissa ω(A) = λmax((A + A*)/2) = max Re W(A), in the Euclidean or a weighted inner product: the smallest ω with A − ωI dissipative, so ‖e^{tA}‖ ≤ e^{ωt} (Lumer–Phillips), and the initial slope d/dt ‖e^{tA}‖ at t = 0. " +
			"Dense symmetric eigensolver for order ≤ 1500, shift-and-invert Lanczos above. Its accuracy is τ = n·u·‖A‖_F (u = 2⁻⁵³; in the inner product's coordinates); a value within τ of 0 is noted as zero within rounding: A is then dissipative within rounding.",
		Examples: []Example{
			{"numabscissa({-1, 4 | 0, -1})[0]", "1"},
		},
		Impl: numabscissaImpl,
	},
	{
		Name: "pseudospectrum",
		Params: []value.Param{
			req("A", "an operator or a square matrix"),
			opt("re", value.None, "the interval [a, b] of Re z; none: the numerical range's extent widened by the largest level"),
			opt("im", value.None, "the interval [c, d] of Im z; none: as for re"),
			opt("levels", value.None, "the levels ε > 0 of the contour lines; none: up to four levels chosen from the computed σ_min, from 1, 2, 5 × 10ᵏ (powers of ten first), each closed inside the region and large enough to be seen in the figure"),
			opt("n", value.None, "grid points along each side, 2 ≤ n ≤ 400; none: 80, or fewer (at least 10) where 80 × 80 points would exceed the interactive work budget (dense operators of order above about 100)"),
			opt("abscissae", value.Str("auto"), `how to find α_ε (order ≤ 1500): "exact" (the boundary search, however long it takes), "grid" (the rightmost grid point in σ_ε: a lower estimate, one grid step accurate), or "auto": the boundary search within the interactive work budget (a share per level), the grid estimate for a level that would need more`),
		},
		Doc: "The ε-pseudospectra σ_ε(A) = {z : σ_min(zI − A) ≤ ε} = {z : ‖(zI − A)⁻¹‖₂ ≥ 1/ε} on the rectangle re × im: σ_min on an n × n grid, the contour lines of the levels ε, the eigenvalues, and a table of the pseudospectral abscissae α_ε(A) = max Re σ_ε(A) with the lower bounds α_ε/ε ≤ sup_t ‖e^{tA}‖. " +
			"For order ≤ 1500: one complex Schur form A = ZTZᴴ, then inverse Lanczos on (zI − T)ᴴ(zI − T) at every point, without balancing (Trefethen 1999), and α_ε by a boundary search (the option abscissae; by default within the interactive work budget, else the grid estimate, with a note). " +
			"Above: the Krylov-projection approximation σ_min(zĨ − H̃_m) from 100 Arnoldi steps (Toh & Trefethen 1996), which lies above the true σ_min, so the computed sets lie inside the true ones and are reliable only near the outer eigenvalues; α_ε is then the rightmost grid point in the set. " +
			"With re or im none (dense only) the region is the bounding box of W(A) widened by the largest ε, which contains every σ_ε since σ_ε(A) ⊆ W(A) + Δ_ε.",
		Examples: []Example{
			{"p = pseudospectrum({-1, 0 | 0, -2}, re=[-3, 0], im=[-1, 1], levels=[0.5], n=21); p[0, 1]", "-0.5"},
		},
		Impl: pseudospectrumImpl,
	},
	{
		Name:   "psabscissa",
		Params: []value.Param{req("A", "an operator or a square matrix"), req("eps", "the level ε > 0"), stabSearchParam},
		Doc: "The ε-pseudospectral abscissa α_ε(A) = max{Re z : σ_min(zI − A) ≤ ε}; α_ε(A)/ε is a lower bound of sup_{t≥0} ‖e^{tA}‖ (Trefethen & Embree 2005, Thm 15.4) and α(A) ≤ α_ε(A) ≤ ω(A) + ε. " +
			"Found from the rightmost point of σ_ε on horizontal lines through the eigenvalues and across the numerical range, refined by golden-section search; order ≤ 1500. For a normal matrix α_ε = α + ε. " +
			"By default (search = \"auto\") the Schur form and the boundary walk share the interactive work budget (about 2.5 s of the 2-core development machine): an order whose Schur form alone would exceed it is refused at once, and a walk that runs out (strongly non-normal A, small ε: it can take minutes) is an error saying so; search = \"full\" runs it however long it takes. An interrupt stops it at once.",
		Examples: []Example{
			{"psabscissa({-1, 0 | 0, -2}, 0.25)[0]", "-0.75"},
		},
		Impl: psabscissaImpl,
	},
	{
		Name: "resolvent",
		Params: []value.Param{
			req("A", "an operator or a square matrix"),
			req("z", "a real or complex point, not an eigenvalue"),
			opt("data", value.None, "none for the norm, or a vector v for (zI − A)⁻¹v"),
		},
		Doc: "The resolvent R(z) = (zI − A)⁻¹. Without data, its norm ‖(zI − A)⁻¹‖₂ = 1/σ_min(zI − A), from the complex Schur form by inverse Lanczos (order ≤ 1500); for a normal A it is 1/dist(z, σ(A)). " +
			"With data = v the complex vector x = (zI − A)⁻¹v, from a banded, sparse or dense complex LU of zI − A chosen from A's structure (any order), with one step of iterative refinement. " +
			"A z at (or within rounding of) an eigenvalue is an error naming z.",
		Examples: []Example{
			{"resolvent({-1, 0 | 0, -2}, 1)[0]", "0.5"},
			{"resolvent({2, 0 | 0, 4}, 1i, data=[1, 0])", "[-0.4-0.2i, 0+0i]"},
		},
		Impl: resolventImpl,
	},
	{
		Name: "resolventline",
		Params: []value.Param{
			req("A", "an operator or a square matrix"),
			req("re", "the real part c of the line Re z = c"),
			opt("im", value.None, "the interval [c, d] of Im z; none: [−r, r] with r = 1.5 max(1, max |λ|)"),
			opt("n", value.Num(200), "number of points, ≥ 2"),
		},
		Doc: "The resolvent norm ‖(zI − A)⁻¹‖₂ along the vertical line Re z = re at n equally spaced points Im z ∈ im, from one Schur form (inverse Lanczos at each point; order ≤ 1500). " +
			"For re > 0, re · max ‖(zI − A)⁻¹‖ is a lower bound of the Kreiss constant, and by Hille–Yosida sup_{Re z = c} ‖(zI − A)⁻¹‖ ≤ M/(c − ω) when ‖e^{tA}‖ ≤ M e^{ωt}, c > ω. Table and figure (logarithmic axis when the norms span a factor 10).",
		Examples: []Example{
			{"r = resolventline({-1, 0 | 0, -1}, 0, im=[-1, 1], n=3); r[1, 1]", "1"},
		},
		Impl: resolventlineImpl,
	},
	{
		Name: "growth",
		Params: []value.Param{
			req("A", "an operator or a square matrix"),
			opt("t", rangeDefault{&value.Range{Lo: 0, Hi: 10, Step: 0.1, N: 101}}, "the times t ≥ 0: a range, vector or list"),
			opt("weight", value.None, stabWeightDoc+"; the norm is then ‖x‖_W = √(xᵀWx) (order ≤ 1500)"),
			opt("bounds", value.Str("auto"), `which bounds to compute: "all" (Kreiss constant and α_ε/ε, however long they take), "fast" (α_ε/ε only), "none", or "auto": each bound within a quarter of the interactive work budget (about 2.5 s of the 2-core development machine in all), the ones that would need more left out and named`),
			opt("samples", value.Str("auto"), `which of the times to compute (order ≤ 1500): "all" (every one, and the peak refined to 1e-8, however long it takes) or "auto": as many as fit the interactive work budget (about 2.5 s), every k-th and the last when all do not fit, and refused at once when even three would take over ten times the budget`),
		},
		Doc: "The transient growth curve ‖e^{tA}‖₂ at the times t, with its peak (refined between samples) and the optimal initial condition u0 (‖u0‖ = 1, ‖e^{t*A}u0‖ = peak), and the bounds: the initial slope ω(A) = λmax((A + Aᵀ)/2), the asymptotic rate α(A), the Kreiss constant K ≤ sup_t ‖e^{tA}‖ ≤ e·N·K (Spijker 1991) and α_ε/ε ≤ sup_t ‖e^{tA}‖ for ε = 0.1, 0.01, 0.001 (the option bounds chooses which; the Kreiss constant costs most). " +
			"By default (bounds = \"auto\") each of these four bounds gets a quarter of the interactive work budget, counted in n² multiply–adds so the same bounds are left out on every run; a bound that needs more is not computed, and the report says which and how to ask for it (bounds = \"all\", or kreiss(A, search=\"full\") and psabscissa(A, ε, search=\"full\") one at a time). " +
			"The curve has a budget of its own (samples = \"auto\"): at order 300 one value costs about 0.05 s, so of the default 101 times only every k-th is computed, the report says which and how long all would take; samples = \"all\" asks for every one. When the Schur form alone exceeds the bounds' budget (order above about 500), α(A) and the bounds are left out and ω(A) comes from the symmetric part; bounds = \"all\" computes them. " +
			"For order ≤ 1500, e^{tA} by scaling and squaring and its largest singular value; above, a Lanczos estimate on e^{tAᵀ}e^{tA} (a lower bound up to the propagation error, no Kreiss or α_ε bounds). With a weight W the norm is ‖e^{tA}‖_W = ‖R e^{tA} R⁻¹‖₂ (W = RᵀR). Table of (t, ‖e^{tA}‖) and a figure (logarithmic axis when the values span a factor 10) with the bounds as horizontal lines and the initial slope e^{ωt}.",
		Examples: []Example{
			{"g = growth({-1, 0 | 0, -2}, t=[0, 1]); g[1, 1]", "0.3678794412"},
		},
		Impl: growthImpl,
	},
	{
		Name:   "kreiss",
		Params: []value.Param{req("A", "an operator or a square matrix"), stabSearchParam},
		Doc: "The Kreiss constant K(A) = sup_{Re z > 0} Re z ‖(zI − A)⁻¹‖₂, with the point where the supremum is attained. The Kreiss matrix theorem bounds K ≤ sup_{t≥0} ‖e^{tA}‖₂ ≤ e·N·K for N × N matrices (Spijker, BIT 1991). " +
			"It is inf when α(A) ≥ 0, or when α(A) is zero within rounding (|α(A)| ≤ n·u·‖A‖_F × the condition of the rightmost eigenvalue, √(n·u·‖A‖_F·‖A‖_F) if that is defective), and 1 for a normal matrix with α(A) < 0. Order ≤ 1500. " +
			"Its cost grows with the order and the non-normality (8.8 s for the 200×200 shifted Grcar matrix on a 2-core machine), so by default (search = \"auto\") the Schur form and the search share the interactive work budget (about 2.5 s): an order whose Schur form alone would exceed it is refused at once, a search that runs out during its golden-section refinement gives the best of its 28 scanned values of Re z, a lower bound of K, and says so, and one that runs out during the scan is an error with the time the whole search would take (extrapolated from the part done); search = \"full\" runs it however long it takes. An interrupt stops it at once.",
		Examples: []Example{
			{"kreiss({-1, 0 | 0, -2})[0]", "1"},
		},
		Impl: kreissImpl,
	},
	{
		Name: "wellposed",
		Params: []value.Param{
			req("A", "an operator or a square matrix"),
			opt("weight", value.None, stabWeightDoc),
			opt("omega", value.None, "the growth rate ω to test in ‖e^{tA}‖ ≤ M e^{ωt}; none: 0 when α(A) < 0, else a tenth of the way from α(A) to ω(A)"),
			opt("samples", value.Str("auto"), `the Hille–Yosida λ: "auto" (as many of the 40 per power as fit the interactive work budget, about 2 s of one core, spread over the range; the report says how many were skipped) or "all" (every one, however long it takes)`),
		},
		Doc: "A report on A as the generator of the semigroup e^{tA}: the spectral abscissa α(A), the numerical abscissa ω(A) in the chosen inner product, Lumer–Phillips dissipativity of A − ωI (then ‖e^{tA}‖ ≤ e^{ωt}), Hille–Yosida estimates M_n = sup_{λ>ω} (λ−ω)^n ‖R(λ)^n‖ for n = 1..4 (Engel & Nagel 2000, Thm II.3.8: ‖e^{tA}‖ ≤ M e^{ωt} iff all M_n ≤ M; finitely many samples give a lower estimate of the best M), and a plain verdict with its assumptions. " +
			"The tested ω is 0 when α(A) < 0, otherwise a tenth of the way from α(A) to ω(A). Large sparse operators (order > 1500, no weight) get the abscissae by Krylov methods and no Hille–Yosida estimates. For a rate matrix of a Markov chain see markov. " +
			"Signs respect rounding: with τ = n·u·‖A‖_F (u = 2⁻⁵³), ω(A) ≤ ω + τ is reported as dissipative within rounding (then ‖e^{tA}‖ ≤ e^{(ω+2τ)t}), and |α(A)| within τ × the condition of the rightmost eigenvalue (√(τ‖A‖_F) if it is defective) as zero within rounding, either taken as 0 for the default ω. " +
			"The Hille–Yosida λ run from ω + 10⁻²(ω − α) to ω + 10⁶·max(‖A‖_F, …), and each M_n is at least 1, the exact limit as λ → ∞; a dissipative A has M = 1 exactly. " +
			"The norms ‖R(λ)^n‖₂ come from the Hessenberg form of A by Golub–Kahan–Lanczos (O(n²) per λ and step); by default the λ that do not fit the interactive work budget are skipped and counted (samples = \"all\" takes them all). " +
			"A rate matrix of a reversible chain has its α(A) = 0 from the symmetric route (a birth–death chain's eigenvalues to high relative accuracy, at any order).",
		Examples: []Example{
			{"len(wellposed({-1, 0 | 0, -2}))", "4"},
		},
		Impl: generatorImpl,
	},
	{
		Name:   "markov",
		Params: []value.Param{req("Q", "a rate matrix: q_ij ≥ 0 for i ≠ j, rows summing to 0")},
		Doc: "The continuous-time Markov chain with rate matrix Q, whose distributions evolve by p' = pQ (row vectors), p(t) = p(0)e^{tQ}: the stationary distribution π (πQ = 0, Σπ_i = 1), the spectral gap −max{Re λ : λ ∈ σ(Q), λ ≠ 0} and relaxation time 1/gap, " +
			"the mixing time t_mix = min{t : max_i ‖e_iᵀe^{tQ} − π‖_TV ≤ 1/4} to relative 2⁻²⁰ (one dense exponential, then products of transition matrices: doubling t, then its binary digits; an interrupt stops it between products), the bound ln(4/π_min)/gap (for reversible chains; Levin, Peres & Wilmer 2009) and whether detailed balance holds. " +
			"For two states with rates a (0→1) and b (1→0): π = (b, a)/(a + b), gap = a + b. A matrix that is not a rate matrix (a negative rate, or a row sum beyond the rounding n·u·Σ_j|q_ij|) is an error saying why. " +
			"A birth–death chain's gap has relative accuracy: it is σ² for the smallest singular value σ of the bidiagonal factor G of −D^{1/2}QD^{-1/2} = GᵀG, D = diag(π), formed from the square roots of the rates without subtractions (dqds), so it is right to a few units of roundoff relative to itself (bound 24·n·u) however small next to ‖Q‖. " +
			"Another reversible chain has its gap from the symmetric D^{1/2}QD^{-1/2} = [√(q_ij q_ji)] by a symmetric eigensolver, exact to n·u·‖S‖_F however strongly graded Q is; π comes from the products of the rates for a birth–death chain and otherwise from the subtraction-free elimination of Grassmann, Taksar & Heyman (1985), so every entry is accurate however widely they range; a chain that is not irreducible is an error. The gap is shown with its error bound.",
		Examples: []Example{
			{"markov({-1, 1 | 3, -3})[0, 1]", "0.75"},
		},
		Impl: markovImpl,
	},
}

const stabWeightDoc = `the inner product: none (Euclidean), "grid" (the quadrature weights of A's grid, a discrete L²), "energy" (for a system from secondorder, ½(vᵀMv + uᵀKu); from firstorder, uᵀMu), a vector w > 0 (⟨x, y⟩ = Σ w_i x_i y_i) or a symmetric positive definite matrix W (⟨x, y⟩ = xᵀWy)`

// Arguments.

// stabOpArg is argument i as an operator.
func stabOpArg(c *eval.Call, i int) (*objects.Operator, int, error) {
	v, err := c.Arg(i)
	if err != nil {
		return nil, 0, err
	}
	if m, ok := v.(*value.Matrix); ok && m.Rows != m.Cols {
		return nil, 0, value.ValueErrorf("%s: %s must be a square matrix or an operator, not a %d×%d matrix", c.Name, paramName(c, i), m.Rows, m.Cols)
	}
	op, err := objects.AsOperator(v)
	if err != nil {
		var ve *value.Error
		if errors.As(err, &ve) {
			return nil, 0, value.Errorf(ve.Name, "%s: %s %s", c.Name, paramName(c, i), ve.Msg)
		}
		return nil, 0, err
	}
	if err := complexGate(c, i, op); err != nil {
		return nil, 0, err
	}
	n, m := op.Dims()
	if n != m {
		return nil, 0, value.ValueErrorf("%s: %s must be square, not %d×%d", c.Name, paramName(c, i), n, m)
	}
	if n == 0 {
		return nil, 0, value.ValueErrorf("%s: %s is empty (0×0)", c.Name, paramName(c, i))
	}
	return op, n, nil
}

// stabNeedDense refuses an order above DenseLimit for an analysis with only a
// dense method.
// stabComplexDense refuses a complex operator of order above DenseLimit
// where the large-operator route runs in real arithmetic on the real form,
// whose eigenvalues and resolvent norms are not A's.
func stabComplexDense(c *eval.Call, op *objects.Operator, n int) error {
	if op.IsComplex() && n > DenseLimit {
		return value.ValueErrorf("%s: A is a complex operator of order %d; for complex operators this analysis uses the dense methods, limited to order %d (the Krylov methods for large operators run in real arithmetic)", c.Name, n, DenseLimit)
	}
	return nil
}

// stabOrientPoint returns z or z̄, whichever has the smaller σ_min(zI − A),
// for a point found on the real form of a complex A (whose resolvent norm
// at z is the larger of A's at z and z̄); z itself for a real A.
func stabOrientPoint(c *eval.Call, op *objects.Operator, z complex128) complex128 {
	if !op.IsComplex() || imag(z) == 0 || cmplx.IsNaN(z) {
		return z
	}
	s, err := spectra.NewSchurContext(c.Ctx, op.Op)
	if err != nil {
		return z
	}
	if s.SigmaMin(cmplx.Conj(z), 1e-10) < s.SigmaMin(z, 1e-10) {
		return cmplx.Conj(z)
	}
	return z
}

func stabNeedDense(c *eval.Call, n int, alternative string) error {
	if n <= DenseLimit {
		return nil
	}
	msg := fmt.Sprintf("%s: the operator has order %d; this analysis uses dense methods, limited to order %d", c.Name, n, DenseLimit)
	if alternative != "" {
		msg += "; " + alternative
	}
	return value.ValueErrorf("%s", msg)
}

// stabRealArg is argument i as a real number (a Quantity counts as its number).
func stabRealArg(c *eval.Call, i int) (float64, error) {
	v, err := c.Arg(i)
	if err != nil {
		return 0, err
	}
	if q, ok := v.(*objects.Quantity); ok {
		v = q.X
	}
	n, ok := v.(value.Num)
	if !ok {
		return 0, value.TypeErrorf("%s: %s must be a real number, not %s", c.Name, paramName(c, i), value.TypeName(v))
	}
	if math.IsNaN(float64(n)) || math.IsInf(float64(n), 0) {
		return 0, value.ValueErrorf("%s: %s must be finite, not %s", c.Name, paramName(c, i), n)
	}
	return float64(n), nil
}

// stabComplexArg is argument i as a complex number (a real number is allowed).
func stabComplexArg(c *eval.Call, i int) (complex128, error) {
	v, err := c.Arg(i)
	if err != nil {
		return 0, err
	}
	if q, ok := v.(*objects.Quantity); ok {
		v = q.X
	}
	var z complex128
	switch t := v.(type) {
	case value.Num:
		z = complex(float64(t), 0)
	case value.Complex:
		z = complex128(t)
	default:
		return 0, value.TypeErrorf("%s: %s must be a real or complex number, not %s", c.Name, paramName(c, i), value.TypeName(v))
	}
	if cmplx.IsNaN(z) || cmplx.IsInf(z) {
		return 0, value.ValueErrorf("%s: %s must be finite, not %s", c.Name, paramName(c, i), value.FormatComplex(z))
	}
	return z, nil
}

// rangeDefault is a range default shown in signatures in range syntax,
// lo .. hi by step, rather than as its entries.
type rangeDefault struct{ *value.Range }

func (r rangeDefault) String() string {
	return value.FormatNum(r.Lo) + " .. " + value.FormatNum(r.Hi) + " by " + value.FormatNum(r.Step)
}

// stabRealsArg is argument i as a list of finite reals; ok is false when it
// is none.
func stabRealsArg(c *eval.Call, i int) ([]float64, bool, error) {
	v, err := c.Arg(i)
	if err != nil {
		return nil, false, err
	}
	if v == value.None {
		return nil, false, nil
	}
	if r, ok := v.(rangeDefault); ok {
		v = r.Range
	}
	re, cx, err := numbers(c, paramName(c, i), v)
	if err != nil {
		return nil, false, err
	}
	if cx != nil {
		return nil, false, value.TypeErrorf("%s: %s must be real, not complex", c.Name, paramName(c, i))
	}
	for _, x := range re {
		if math.IsNaN(x) || math.IsInf(x, 0) {
			return nil, false, value.ValueErrorf("%s: %s must hold finite numbers, not %s", c.Name, paramName(c, i), value.FormatNum(x))
		}
	}
	return re, true, nil
}

// stabListArg is argument i as a non-empty list of finite reals, each of
// which ok accepts. An empty list (or none) is a "bad value" error with the message
// empty; a value x that ok refuses is one with the message bad, x formatted
// in place of its %s.
func stabListArg(c *eval.Call, i int, empty string, ok func(x float64) bool, bad string) ([]float64, error) {
	xs, _, err := stabRealsArg(c, i)
	if err != nil {
		return nil, err
	}
	if len(xs) == 0 {
		return nil, value.ValueErrorf("%s", empty)
	}
	for _, x := range xs {
		if !ok(x) {
			return nil, value.ValueErrorf(bad, value.FormatNum(x))
		}
	}
	return xs, nil
}

// stabIntervalArg is argument i as an interval [a, b] with a < b.
func stabIntervalArg(c *eval.Call, i int) (lo, hi float64, ok bool, err error) {
	x, ok, err := stabRealsArg(c, i)
	if err != nil || !ok {
		return 0, 0, ok, err
	}
	if len(x) != 2 || !(x[0] < x[1]) {
		return 0, 0, false, value.ValueErrorf("%s: %s must be an interval [a, b] with a < b, not %s", c.Name, paramName(c, i), value.RealVec(x))
	}
	return x[0], x[1], true, nil
}

// stabCountArg is argument i as a whole number in [lo, hi].
func stabCountArg(c *eval.Call, i, lo, hi int) (int, error) {
	f, err := stabRealArg(c, i)
	if err != nil {
		return 0, err
	}
	if f != math.Trunc(f) || f < float64(lo) || f > float64(hi) {
		return 0, value.ValueErrorf("%s: %s must be a whole number from %d to %d, not %s", c.Name, paramName(c, i), lo, hi, value.FormatNum(f))
	}
	return int(f), nil
}

// stabWeightArg is argument i as an inner product for the operator of order n
// (nil for the Euclidean one) with a description.
func stabWeightArg(c *eval.Call, i int, op *objects.Operator, n int) (spectra.Weight, string, error) {
	v, err := c.Arg(i)
	if err != nil {
		return nil, "", err
	}
	name := paramName(c, i)
	if op.IsComplex() {
		if v == value.Str("energy") {
			return nil, "", value.TypeErrorf(`%s: %s="energy" needs a system from secondorder or firstorder, not a complex operator`, c.Name, name)
		}
		w, ip, err := stabRealWeightArg(c, i, op, n, v, name)
		if w != nil {
			// Re(x* W y) on [Re x; Im x]: diag(W, W) for the real form.
			w = linop.ComplexWeight{W: w.(linop.Weight)}
		}
		return w, ip, err
	}
	return stabRealWeightArg(c, i, op, n, v, name)
}

// stabRealWeightArg is stabWeightArg's real weight W of order n from the
// argument v.
func stabRealWeightArg(c *eval.Call, i int, op *objects.Operator, n int, v value.Value, name string) (spectra.Weight, string, error) {
	switch t := v.(type) {
	case value.NoneType:
		return nil, "Euclidean inner product", nil
	case value.Str:
		if t == "energy" {
			return energyWeight(c, op)
		}
		if t != "grid" {
			return nil, "", value.ValueErrorf(`%s: unknown %s %s; the choices are none, "grid", "energy" (a system from secondorder or firstorder), a vector of positive weights or a positive definite matrix`, c.Name, name, t)
		}
		if op.Grid == nil {
			return nil, "", value.ValueErrorf(`%s: %s="grid" needs an operator on a grid, but A (%s) has none`, c.Name, name, op.Label)
		}
		w := op.Grid.QuadWeights()
		if len(w) != n {
			return nil, "", value.ValueErrorf("%s: the grid has %d quadrature weights but A has order %d", c.Name, len(w), n)
		}
		if constant(w) {
			return nil, "discrete L² inner product of the grid (equal quadrature weights: the Euclidean norms)", nil
		}
		dw, err := linop.NewDiagWeight(w)
		if err != nil {
			return nil, "", value.ValueErrorf("%s: the grid's quadrature weights are not all positive", c.Name)
		}
		return dw, "discrete L² inner product of the grid (quadrature weights)", nil
	case *value.Matrix:
		if t.Rows != n || t.Cols != n {
			return nil, "", value.ValueErrorf("%s: %s must be %d×%d like A, not %d×%d", c.Name, name, n, n, t.Rows, t.Cols)
		}
		for r := 0; r < n; r++ {
			for s := 0; s < r; s++ {
				if a, b := t.At(r, s), t.At(s, r); math.Abs(a-b) > 1e-12*math.Max(math.Abs(a), math.Abs(b)) {
					return nil, "", value.ValueErrorf("%s: %s is not symmetric: W[%d, %d] = %s but W[%d, %d] = %s", c.Name, name, r, s, value.FormatNum(a), s, r, value.FormatNum(b))
				}
			}
		}
		sw, err := linop.NewSPDWeight(mat.NewSymDense(n, append([]float64(nil), t.Data...)))
		if err != nil {
			return nil, "", value.ValueErrorf("%s: %s is not positive definite", c.Name, name)
		}
		return sw, "inner product ⟨x, y⟩ = xᵀWy", nil
	}
	w, _, err := stabRealsArg(c, i)
	if err != nil {
		return nil, "", value.TypeErrorf(`%s: %s must be none, "grid", a vector or a matrix, not %s`, c.Name, name, value.TypeName(v))
	}
	if len(w) != n {
		return nil, "", value.ValueErrorf("%s: %s has %d entries but A has order %d", c.Name, name, len(w), n)
	}
	for k, x := range w {
		if !(x > 0) {
			return nil, "", value.ValueErrorf("%s: %s[%d] = %s; the weights must be positive", c.Name, name, k, value.FormatNum(x))
		}
	}
	if constant(w) {
		// W = cI: ‖x‖_W = √c‖x‖, so every operator norm is the Euclidean one.
		return nil, "weighted inner product Σ w_i x_i y_i (constant weights: the Euclidean norms)", nil
	}
	dw, err := linop.NewDiagWeight(w)
	if err != nil {
		return nil, "", value.ValueErrorf("%s: %v", c.Name, err)
	}
	return dw, "weighted inner product Σ w_i x_i y_i", nil
}

// constant reports whether all the positive weights are equal to
// rounding (relative 1e-14).
func constant(w []float64) bool {
	for _, x := range w {
		if math.Abs(x-w[0]) > 1e-14*w[0] {
			return false
		}
	}
	return len(w) > 0
}

// stabProgress returns a stabProgress callback that shows nothing for the first
// second, so quick analyses (and golden scripts) stay silent.
func stabProgress(c *eval.Call) func(done, total int) {
	start := time.Now()
	var show func(done, total int)
	return func(done, total int) {
		if show == nil {
			if time.Since(start) < time.Second {
				return
			}
			show = c.Progress()
		}
		show(done, total)
	}
}

// stabNumErr turns an error from the numerics into a language error:
// cancellation becomes "interrupted", a refused allocation an "over memory budget" error,
// anything else a "numerical failure" error naming the builtin.
func stabNumErr(c *eval.Call, err error) error {
	switch {
	case errors.Is(err, context.Canceled) || errors.Is(err, context.DeadlineExceeded):
		return value.Errorf(value.ClassInterrupted, "interrupted")
	case errors.Is(err, memguard.ErrTooLarge):
		return value.Errorf(value.ClassMemory, "%s: %v", c.Name, err)
	}
	return value.Errorf(value.ClassNumerical, "%s: %v", c.Name, err)
}

// stabGuard runs f and turns a panic with one of the numerics' misuse
// sentinels into a "bad value" error; the builtins validate their arguments, so
// this is a last line of defence.
func stabGuard(c *eval.Call, f func() error) error {
	if err := stabGuardRaw(c, f); err != nil {
		var ve *value.Error
		if errors.As(err, &ve) {
			return err
		}
		return stabNumErr(c, err)
	}
	return nil
}

// stabGuardOr runs f under stabGuardRaw. A language error, a cancellation
// or a refused allocation comes back through stabNumErr; any other error
// through other, which words it for the builtin.
func stabGuardOr(c *eval.Call, f func() error, other func(err error) error) error {
	err := stabGuardRaw(c, f)
	var ve *value.Error
	switch {
	case err == nil:
		return nil
	case errors.As(err, &ve), errors.Is(err, context.Canceled), errors.Is(err, memguard.ErrTooLarge):
		return stabNumErr(c, err)
	default:
		return other(err)
	}
}

// stabGuardRaw is stabGuard without the translation of numerical errors.
func stabGuardRaw(c *eval.Call, f func() error) (err error) {
	defer func() {
		if r := recover(); r != nil {
			e, ok := r.(error)
			if !ok || !(errors.Is(e, spectra.ErrOption) || errors.Is(e, spectra.ErrShape)) {
				panic(r)
			}
			err = value.ValueErrorf("%s: invalid input (%v)", c.Name, e)
		}
	}()
	return f()
}

// Implementations.

func spectrumImpl(c *eval.Call) (value.Value, error) {
	op, n, err := stabOpArg(c, 0)
	if err != nil {
		return nil, err
	}
	k, err := stabCountArg(c, 1, 0, n)
	if err != nil {
		return nil, err
	}
	near, nearSet := 0.0, false
	if v, _ := c.Arg(2); v != value.None {
		if zc, ok := v.(value.Complex); ok {
			if !op.IsComplex() || n > DenseLimit {
				return nil, value.ValueErrorf("spectrum: near must be a real shift (the Krylov–Schur iteration runs in real arithmetic), not %s; a complex shift is taken for complex operators of order ≤ %d", v, DenseLimit)
			}
			return complexNearest(c, op, n, k, complex128(zc))
		}
		if near, err = stabRealArg(c, 2); err != nil {
			return nil, err
		}
		nearSet = true
		if k == 0 {
			return nil, value.ValueErrorf("spectrum: near needs count = k > 0, the number of eigenvalues nearest %s", value.FormatNum(near))
		}
	}
	if r, ok, err := pencilSpectrum(c, op, n, k, near, nearSet); ok {
		return r, err
	}
	if kron, ok := op.Op.(*linop.KronSum); ok && n > DenseLimit && kronFromFactors(kron, n) {
		// A large Kronecker sum of small factors: its eigenvalues are the
		// sums of theirs.
		what := fmt.Sprintf("all %d eigenvalues", n)
		switch {
		case nearSet:
			what = fmt.Sprintf("the %d eigenvalues nearest %s", k, value.FormatNum(near))
		case k > 0:
			what = fmt.Sprintf("the %d rightmost eigenvalues", k)
		}
		var s *spectra.Spectrum
		if err := stabGuard(c, func() (e error) { s, e = spectra.KronSpectrum(c.Ctx, kron, k, nearSet, near); return }); err != nil {
			return nil, err
		}
		return objects.SpectrumReport(op.Label, n, s, what), nil
	}
	if z, ok := op.Op.(*linop.Complex); ok && n > DenseLimit {
		if k == 0 {
			return nil, value.ValueErrorf("spectrum: A is a complex operator of order %d; all its eigenvalues need the dense method, limited to order %d; give count = k for the k rightmost by Krylov–Schur", n, DenseLimit)
		}
		return complexRightmost(c, op, z, n, k, near, nearSet)
	}
	if err := stabComplexDense(c, op, n); err != nil {
		return nil, err
	}
	if k == 0 {
		if chain, ok := spectra.BirthDeathOf(op.Op); ok && n > DenseLimit && n <= spectra.BirthDeathAllMax {
			// A large birth–death rate matrix: all eigenvalues by dqds,
			// each to high relative accuracy (no eigenvectors).
			var s *spectra.Spectrum
			if err := stabGuard(c, func() (e error) { s, e = chain.Spectrum(c.Ctx, n, false, 0); return }); err != nil {
				return nil, err
			}
			r := objects.SpectrumReport(op.Label, n, s, fmt.Sprintf("all %d eigenvalues", n))
			r.Notes = append(r.Notes, stabBirthDeathNote)
			return r, nil
		}
		if err := stabNeedDense(c, n, "give count = k for the k rightmost eigenvalues by Krylov–Schur"); err != nil {
			return nil, err
		}
		var s *spectra.Spectrum
		if err := stabGuard(c, func() (e error) { s, e = spectra.DenseSpectrumContext(c.Ctx, op.Op); return }); err != nil {
			return nil, err
		}
		return objects.SpectrumReport(op.Label, n, s, fmt.Sprintf("all %d eigenvalues", n)), nil
	}
	what := fmt.Sprintf("the %d rightmost eigenvalues", k)
	if nearSet {
		what = fmt.Sprintf("the %d eigenvalues nearest %s", k, value.FormatNum(near))
	}
	if chain, ok := spectra.BirthDeathOf(op.Op); ok {
		// A birth–death rate matrix: each eigenvalue to high relative
		// accuracy from the rates alone, at any order.
		var s *spectra.Spectrum
		if err := stabGuard(c, func() (e error) { s, e = chain.Spectrum(c.Ctx, k, nearSet, near); return }); err != nil {
			return nil, err
		}
		r := objects.SpectrumReport(op.Label, n, s, what)
		r.Notes = append(r.Notes, stabBirthDeathNote)
		return r, nil
	}
	if n <= DenseLimit {
		var s *spectra.Spectrum
		if err := stabGuard(c, func() (e error) { s, e = spectra.DenseSpectrumContext(c.Ctx, op.Op); return }); err != nil {
			return nil, err
		}
		sel := stabSelectEigen(s, k, nearSet, near)
		return objects.SpectrumReport(op.Label, n, sel, what), nil
	}
	if 2*k+12 >= n {
		return nil, value.ValueErrorf("spectrum: count = %d is too many for the Krylov method on order %d", k, n)
	}
	o := &spectra.EigsOptions{Count: k, ShiftInvert: nearSet, Shift: near, Progress: stabProgress(c)}
	var s *spectra.Spectrum
	err = stabGuard(c, func() (e error) {
		if !nearSet && hasSparseForm(op) {
			// The rightmost eigenvalues as those nearest a shift just
			// right of the spectrum: σ = ω(A) + 10⁻³(1 + |ω(A)|) ≥ α(A).
			w, e := spectra.NumericalAbscissa(op.Op, nil)
			if e != nil {
				return e
			}
			o.ShiftInvert, o.Shift = true, w+1e-3*(1+math.Abs(w))
		}
		s, e = spectra.Rightmost(c.Ctx, op.Op, o)
		return e
	})
	if err != nil {
		return nil, err
	}
	sortRightmost(s)
	r := objects.SpectrumReport(op.Label, n, s, what)
	if !nearSet && o.ShiftInvert {
		r.Notes = append(r.Notes, fmt.Sprintf("the rightmost eigenvalues are computed as those nearest σ = ω(A) + 10⁻³(1 + |ω(A)|) = %s ≥ α(A); with eigenvalues far up the imaginary axis, give near= to choose the shift", value.FormatNum(o.Shift)))
	}
	return r, nil
}

// complexNearest is spectrum(A, count=k, near=σ) for a complex operator of
// order ≤ DenseLimit and a complex σ: the k eigenvalues nearest σ from the
// whole dense spectrum.
func complexNearest(c *eval.Call, op *objects.Operator, n, k int, sigma complex128) (value.Value, error) {
	if k == 0 {
		return nil, value.ValueErrorf("spectrum: near needs count = k > 0, the number of eigenvalues nearest %s", value.FormatComplex(sigma))
	}
	var s *spectra.Spectrum
	if err := stabGuard(c, func() (e error) { s, e = spectra.DenseSpectrumContext(c.Ctx, op.Op); return }); err != nil {
		return nil, err
	}
	what := fmt.Sprintf("the %d eigenvalues nearest %s", k, value.FormatComplex(sigma))
	return objects.SpectrumReport(op.Label, n, stabSelectNear(s, k, true, sigma), what), nil
}

// complexRightmost is spectrum(A, count=k) for a complex operator above the
// dense limit: Krylov–Schur on its real form, split into A's eigenpairs.
func complexRightmost(c *eval.Call, op *objects.Operator, z *linop.Complex, n, k int, near float64, nearSet bool) (value.Value, error) {
	if 2*k+12 >= n {
		return nil, value.ValueErrorf("spectrum: count = %d is too many for the Krylov method on order %d", k, n)
	}
	what := fmt.Sprintf("the %d rightmost eigenvalues", k)
	if nearSet {
		what = fmt.Sprintf("the %d eigenvalues nearest %s", k, value.FormatNum(near))
	}
	o := &spectra.EigsOptions{Count: k, ShiftInvert: nearSet, Shift: near, Progress: stabProgress(c)}
	var s *spectra.Spectrum
	err := stabGuard(c, func() (e error) {
		if !nearSet && hasSparseForm(op) {
			w, e := spectra.NumericalAbscissa(op.Op, nil)
			if e != nil {
				return e
			}
			o.ShiftInvert, o.Shift = true, w+1e-3*(1+math.Abs(w))
		}
		s, e = spectra.ComplexRightmost(c.Ctx, z, o)
		return e
	})
	if err != nil {
		return nil, err
	}
	r := objects.SpectrumReport(op.Label, n, s, what)
	if !nearSet && o.ShiftInvert {
		r.Notes = append(r.Notes, fmt.Sprintf("the rightmost eigenvalues are computed as those nearest σ = ω(A) + 10⁻³(1 + |ω(A)|) = %s ≥ α(A); with eigenvalues far up the imaginary axis, give near= to choose the shift", value.FormatNum(o.Shift)))
	}
	return r, nil
}

// stabBirthDeathNote explains the spectrum of a birth–death rate matrix.
const stabBirthDeathNote = "A is the rate matrix of a birth–death chain: its eigenvalues are real, 0 and −σ² for the singular values σ of a bidiagonal factor formed from the rates without subtractions, so each is accurate relative to its own size (the gap too, however small next to ‖A‖); the last column is that error bound, |λ|·24·n·u, not a residual"

// hasSparseForm reports whether the operator has an explicit sparse form,
// so that shift-and-invert costs one sparse factorisation.
func hasSparseForm(op *objects.Operator) bool {
	switch op.Op.(type) {
	case *linop.CSR, linop.Sparser:
		return true
	}
	return false
}

// sortRightmost orders a Krylov spectrum by decreasing real part, then
// decreasing imaginary part, keeping the residuals with their values.
func sortRightmost(s *spectra.Spectrum) {
	idx := make([]int, len(s.Values))
	for i := range idx {
		idx[i] = i
	}
	sort.SliceStable(idx, func(a, b int) bool {
		x, y := s.Values[idx[a]], s.Values[idx[b]]
		if real(x) != real(y) {
			return real(x) > real(y)
		}
		return imag(x) > imag(y)
	})
	vals := make([]complex128, len(idx))
	var res []float64
	for k, i := range idx {
		vals[k] = s.Values[i]
		if i < len(s.Residual) {
			res = append(res, s.Residual[i])
		}
	}
	s.Values, s.Residual = vals, res
}

// stabSelectEigen keeps k eigenvalues of a dense spectrum: the rightmost,
// or the k nearest σ; either way listed in the order of s (decreasing real
// part). The abscissa stays that of the whole spectrum.
func stabSelectEigen(s *spectra.Spectrum, k int, near bool, sigma float64) *spectra.Spectrum {
	return stabSelectNear(s, k, near, complex(sigma, 0))
}

// stabSelectNear is stabSelectEigen with a complex σ.
func stabSelectNear(s *spectra.Spectrum, k int, near bool, sigma complex128) *spectra.Spectrum {
	idx := make([]int, len(s.Values))
	for i := range idx {
		idx[i] = i
	}
	if near {
		sort.SliceStable(idx, func(a, b int) bool {
			return cmplx.Abs(s.Values[idx[a]]-sigma) < cmplx.Abs(s.Values[idx[b]]-sigma)-1e-14
		})
	}
	idx = idx[:k]
	sort.Ints(idx) // back to decreasing real part
	out := &spectra.Spectrum{Abscissa: s.Abscissa, Accuracy: s.Accuracy,
		Method: s.Method + "; selected from the whole dense spectrum"}
	for _, i := range idx {
		out.Values = append(out.Values, s.Values[i])
		if i < len(s.Cond) {
			out.Cond = append(out.Cond, s.Cond[i])
		}
		if i < len(s.IllCond) {
			out.IllCond = append(out.IllCond, s.IllCond[i])
		}
	}
	return out
}

func abscissaImpl(c *eval.Call) (value.Value, error) {
	op, n, err := stabOpArg(c, 0)
	if err != nil {
		return nil, err
	}
	q := &objects.Quantity{Symbol: "α(A)", What: "spectral abscissa max Re λ"}
	if err := stabComplexDense(c, op, n); err != nil {
		return nil, err
	}
	if n <= DenseLimit {
		var s *spectra.Spectrum
		if err := stabGuard(c, func() (e error) { s, e = spectra.DenseSpectrumContext(c.Ctx, op.Op); return }); err != nil {
			return nil, err
		}
		q.X = value.Num(s.Abscissa)
		q.Method, q.Accuracy = s.Method, s.Accuracy
		if tol, ill := s.AbscissaError(); ill {
			q.Where = fmt.Sprintf("the rightmost eigenvalue is defective or nearly so: α(A) is known only to about %s (see pseudospectrum(A))", fmtTol(tol))
		} else if roundoff.Sign(s.Abscissa, tol) == 0 {
			q.Where = fmt.Sprintf("zero within rounding: |α(A)| ≤ %s = n·u·‖A‖_F × condition of the rightmost eigenvalue", fmtTol(tol))
		}
		return q, nil
	}
	if _, ok := spectra.BirthDeathOf(op.Op); ok {
		q.X = value.Num(0)
		q.Method = "A is the rate matrix of an irreducible birth–death chain: its eigenvalues are 0 (the stationary one, A·1 = 0) and −σ² < 0 for the non-zero singular values σ of a bidiagonal factor of −D^{1/2}AD^{-1/2}, D = diag(π)"
		q.Accuracy = fmt.Sprintf("exact for rows summing to 0; the given rows sum to 0 within %s (n·u·Σ_j|a_ij|), which moves α(A) by at most that much", fmtTol(spectra.RowSumRounding(op.Op)))
		return q, nil
	}
	var s *spectra.Spectrum
	var w float64
	err = stabGuard(c, func() (e error) {
		if w, e = spectra.NumericalAbscissa(op.Op, nil); e != nil {
			return e
		}
		sigma := w + 1e-3*(1+math.Abs(w))
		s, e = spectra.Rightmost(c.Ctx, op.Op, &spectra.EigsOptions{Count: 4, ShiftInvert: true, Shift: sigma, Progress: stabProgress(c)})
		return e
	})
	if err != nil {
		return nil, err
	}
	q.X = value.Num(s.Abscissa)
	q.Method = fmt.Sprintf("rightmost of the 4 eigenvalues nearest σ = ω(A) + 10⁻³(1 + |ω(A)|) = %s ≥ α(A), by shift-and-invert Krylov–Schur", value.FormatNum(w+1e-3*(1+math.Abs(w))))
	q.Accuracy = s.Accuracy
	return q, nil
}

func numrangeImpl(c *eval.Call) (value.Value, error) {
	op, n, err := stabOpArg(c, 0)
	if err != nil {
		return nil, err
	}
	if err := stabNeedDense(c, n, "numabscissa gives ω(A) for large operators"); err != nil {
		return nil, err
	}
	w, _, err := stabWeightArg(c, 1, op, n)
	if err != nil {
		return nil, err
	}
	pts, err := stabCountArg(c, 2, 3, 4096)
	if err != nil {
		return nil, err
	}
	var nr *spectra.NumericalRange
	var eigs []complex128
	err = stabGuard(c, func() (e error) {
		if nr, e = spectra.NumRangeContext(c.Ctx, op.Op, w, pts); e != nil {
			return e
		}
		s, e := spectra.DenseSpectrumContext(c.Ctx, op.Op)
		if e == nil {
			eigs = s.Values
		}
		return nil
	})
	if err != nil {
		return nil, err
	}
	return objects.NumRangeReport(op.Label, n, nr, eigs), nil
}

func numabscissaImpl(c *eval.Call) (value.Value, error) {
	op, n, err := stabOpArg(c, 0)
	if err != nil {
		return nil, err
	}
	w, ip, err := stabWeightArg(c, 1, op, n)
	if err != nil {
		return nil, err
	}
	var om float64
	if err := stabGuard(c, func() (e error) { om, e = spectra.NumericalAbscissaContext(c.Ctx, op.Op, w); return }); err != nil {
		return nil, err
	}
	q := &objects.Quantity{X: value.Num(om), Symbol: "ω(A)", What: "numerical abscissa λmax((A + A*)/2), " + ip}
	if w != nil {
		q.Symbol, q.What = "ω_W(A)", "numerical abscissa λmax((B + Bᵀ)/2), B = RAR⁻¹, W = RᵀR, "+ip
	}
	tau, terr := spectra.RoundingThreshold(op.Op, w)
	if n <= DenseLimit {
		q.Method = "largest eigenvalue of the symmetric part (dense symmetric QR)"
		q.Accuracy = "about 1e-15·‖A‖"
		if terr == nil {
			q.Accuracy = fmt.Sprintf("to τ = n·u·‖A‖_F = %s (symmetric eigenproblem)", fmtTol(tau))
		}
	} else {
		q.Method = "largest eigenvalue of the symmetric part by Lanczos (shift-and-invert when A is sparse)"
		q.Accuracy = "Ritz residual below 1e-10·|ω|"
		if terr == nil {
			tau += 1e-10 * math.Abs(om)
			q.Accuracy = fmt.Sprintf("to τ = n·u·‖A‖_F + 10⁻¹⁰|ω| = %s (rounding and Ritz residual)", fmtTol(tau))
		}
	}
	if terr == nil && roundoff.Sign(om, tau) == 0 {
		q.Where = fmt.Sprintf("zero within rounding (|ω(A)| = %s ≤ τ = %s): A is dissipative within rounding in this inner product, ‖e^{tA}‖ ≤ e^{2τt}", fmtTol(math.Abs(om)), fmtTol(tau))
	}
	return q, nil
}

func pseudospectrumImpl(c *eval.Call) (value.Value, error) {
	op, n, err := stabOpArg(c, 0)
	if err != nil {
		return nil, err
	}
	re0, re1, reSet, err := stabIntervalArg(c, 1)
	if err != nil {
		return nil, err
	}
	im0, im1, imSet, err := stabIntervalArg(c, 2)
	if err != nil {
		return nil, err
	}
	var levels []float64 // nil: chosen from the data once the grid is known
	if lv, _ := c.Arg(3); lv != value.None {
		if levels, err = stabListArg(c, 3, "pseudospectrum: levels must hold at least one ε > 0",
			func(e float64) bool { return e > 0 }, "pseudospectrum: every level ε must be positive, not %s"); err != nil {
			return nil, err
		}
	}
	autoLevels := levels == nil
	m, gridNote := stabDefaultGrid, ""
	if nv, _ := c.Arg(4); nv != value.None {
		if m, err = stabCountArg(c, 4, 2, 400); err != nil {
			return nil, err
		}
	} else if n <= DenseLimit && spectra.GridWork(n, m*m) > spectra.InteractiveWork {
		// The largest grid within the budget, but not below 10 × 10.
		m = max(10, int(math.Sqrt(spectra.InteractiveWork/spectra.GridWork(n, 1))))
		gridNote = fmt.Sprintf("a %d × %d grid, to fit the interactive work budget (%d × %d points would take roughly %.2g s at this order); n=%d asks for it", m, m, stabDefaultGrid, stabDefaultGrid, spectra.WorkSeconds(spectra.GridWork(n, stabDefaultGrid*stabDefaultGrid)), stabDefaultGrid)
	}
	av, _ := c.Arg(5)
	absc, ok := av.(value.Str)
	if !ok || (absc != "auto" && absc != "exact" && absc != "grid") {
		return nil, value.ValueErrorf(`pseudospectrum: abscissae must be "auto", "exact" or "grid", not %s`, av)
	}
	dense := n <= DenseLimit
	if err := stabComplexDense(c, op, n); err != nil {
		return nil, err
	}
	if absc == "exact" && !dense {
		return nil, value.ValueErrorf(`pseudospectrum: abscissae="exact" needs the dense methods (order ≤ %d); A has order %d, for which α_ε is the rightmost grid point`, DenseLimit, n)
	}
	if (!reSet || !imSet) && !dense {
		return nil, value.ValueErrorf("pseudospectrum: for order %d (above %d) give the region re=[a, b] and im=[c, d]", n, DenseLimit)
	}
	if !reSet || !imSet {
		// The bounding box of W(A) from its support function at the angles
		// 0, π/2, π, 3π/2: Re W ⊆ [−h(π), h(0)], Im W ⊆ [−h(3π/2), h(π/2)].
		var nr *spectra.NumericalRange
		if err := stabGuard(c, func() (e error) { nr, e = spectra.NumRangeContext(c.Ctx, op.Op, nil, 4); return }); err != nil {
			return nil, err
		}
		lo, hi, blo, bhi := -nr.Support[2], nr.Support[0], -nr.Support[3], nr.Support[1]
		pad := 0.0
		if autoLevels {
			pad = psAutoPad
		}
		for _, l := range levels {
			pad = math.Max(pad, l)
		}
		pad += 0.02 * math.Max(hi-lo, bhi-blo)
		if pad == 0 {
			pad = 1
		}
		if !reSet {
			re0, re1 = lo-pad, hi+pad
		}
		if !imSet {
			im0, im1 = blo-pad, bhi+pad
		}
	}
	reg := spectra.Region{Re0: re0, Re1: re1, Im0: im0, Im1: im1, NRe: m, NIm: m}
	opts := &spectra.GridOptions{Levels: levels, Progress: stabProgress(c)}
	var ps *spectra.Pseudospectra
	var alpha []float64
	var pts []complex128
	how, levelNote := "", ""
	var onGrid []string // levels whose α_ε is the grid estimate in "auto"
	var budget float64
	// pick sets the levels (chosen from the grid when none were given)
	// and the room for their abscissae.
	pick := func() {
		if autoLevels {
			levels, levelNote = psChooseLevels(op.Label, n, ps)
			ps.SetLevels(levels)
		}
		alpha, pts = make([]float64, len(levels)), make([]complex128, len(levels))
		budget = spectra.InteractiveWork / float64(len(levels))
	}
	err = stabGuard(c, func() (e error) {
		if dense {
			s, e := spectra.NewSchurContext(c.Ctx, op.Op)
			if e != nil {
				return e
			}
			if ps, e = s.Pseudo(c.Ctx, reg, opts); e != nil {
				return e
			}
			pick()
			stabGridAbscissae(ps, levels, alpha, pts)
			if absc == "grid" {
				how = "rightmost grid point with σ_min ≤ ε (a lower estimate, at most one grid step accurate; nan when no grid point is in σ_ε)"
				return nil
			}
			ao := &spectra.AbscissaOptions{Schur: s}
			if absc == "auto" {
				ao.Budget = budget
			}
			rs, _, e := spectra.PseudoAbscissae(c.Ctx, op.Op, levels, ao)
			if e != nil {
				return e
			}
			for k, r := range rs {
				if r == nil {
					onGrid = append(onGrid, value.FormatNum(levels[k]))
					continue
				}
				alpha[k], pts[k] = r.Alpha, stabOrientPoint(c, op, r.Z)
				how = r.Method
			}
			return nil
		}
		if ps, e = spectra.PseudoKrylov(c.Ctx, op.Op, reg, min(100, n-1), opts); e != nil {
			return e
		}
		pick()
		stabGridAbscissae(ps, levels, alpha, pts)
		how = "rightmost grid point with σ_min ≤ ε (Krylov approximation from inside: a lower estimate, at most one grid step accurate; nan when no grid point is in σ_ε)"
		return nil
	})
	if err != nil {
		return nil, err
	}
	r := objects.PseudoReport(op.Label, n, ps, alpha, pts, how)
	if gridNote != "" {
		r.Notes = append(r.Notes, gridNote)
	}
	if levelNote != "" {
		r.Notes = append(r.Notes, levelNote)
	}
	if len(onGrid) > 0 {
		r.Notes = append(r.Notes, fmt.Sprintf(`α_ε not computed by the boundary search for ε = %s: it needs more than its share of the interactive work budget (about %.1f s here); the table gives the rightmost grid point in σ_ε instead (a lower estimate, at most one grid step accurate); ask with abscissae="exact", or psabscissa(A, ε, search="full") for one level`,
			strings.Join(onGrid, ", "), spectra.WorkSeconds(budget)))
	}
	return r, nil
}

// stabDefaultGrid is the default number of grid points along each side of a
// pseudospectrum, where it fits the interactive work budget.
const stabDefaultGrid = 80

// stabGridAbscissae sets alpha[k] and pts[k] to the rightmost grid point of
// ps with σ_min ≤ levels[k] (nan when there is none): a lower estimate of
// α_ε, at most one grid step accurate.
func stabGridAbscissae(ps *spectra.Pseudospectra, levels, alpha []float64, pts []complex128) {
	for k, eps := range levels {
		alpha[k], pts[k] = math.NaN(), complex(math.NaN(), 0)
		for i, x := range ps.Re {
			for j, y := range ps.Im {
				if ps.At(i, j) <= eps && !(x <= alpha[k]) {
					alpha[k], pts[k] = x, complex(x, y)
				}
			}
		}
	}
}

func psabscissaImpl(c *eval.Call) (value.Value, error) {
	op, n, err := stabOpArg(c, 0)
	if err != nil {
		return nil, err
	}
	eps, err := stabRealArg(c, 1)
	if err != nil {
		return nil, err
	}
	if !(eps > 0) {
		return nil, value.ValueErrorf("psabscissa: eps must be positive, not %s", value.FormatNum(eps))
	}
	if err := stabNeedDense(c, n, "pseudospectrum with re and im gives a Krylov estimate"); err != nil {
		return nil, err
	}
	budget, err := stabSearchArg(c, 2)
	if err != nil {
		return nil, err
	}
	var a *spectra.AbscissaResult
	var refused *spectra.BudgetError
	err = stabGuard(c, func() (e error) {
		a, e = spectra.PseudoAbscissaWithin(c.Ctx, op.Op, eps, budget)
		if errors.As(e, &refused) {
			return nil
		}
		return e
	})
	if err != nil {
		return nil, err
	}
	if refused != nil {
		return nil, stabRefusal(c, "the boundary search for α_ε", n, refused)
	}
	return &objects.Quantity{X: value.Num(a.Alpha), Symbol: "α_ε(A)", What: "ε-pseudospectral abscissa, ε = " + value.FormatNum(eps),
		Where: "attained at z = " + value.FormatComplex(stabOrientPoint(c, op, a.Z)), Method: a.Method, Accuracy: a.Accuracy}, nil
}

// stabSingularTol is the relative σ_min below which zI − A counts as singular.
const stabSingularTol = 1e-14

func resolventImpl(c *eval.Call) (value.Value, error) {
	op, n, err := stabOpArg(c, 0)
	if err != nil {
		return nil, err
	}
	z, err := stabComplexArg(c, 1)
	if err != nil {
		return nil, err
	}
	zs := value.FormatComplex(z)
	if imag(z) == 0 {
		zs = value.FormatNum(real(z))
	}
	data, _ := c.Arg(2)
	if data != value.None {
		var b []complex128
		switch t := data.(type) {
		case *value.Vec:
			b = t.Complex128()
		case *value.Range:
			b = t.Vec().Complex128()
		default:
			return nil, value.TypeErrorf("resolvent: data must be a vector, not %s", value.TypeName(data))
		}
		if len(b) != n {
			return nil, value.ValueErrorf("resolvent: data has %d entries but A has order %d", len(b), n)
		}
		var x []complex128
		var res float64
		if err := stabComplexDense(c, op, n); err != nil {
			return nil, err
		}
		solve := func() (e error) { x, res, e = spectra.ResolventApplyContext(c.Ctx, op.Op, z, b); return }
		if op.IsComplex() {
			solve = func() (e error) { x, res, e = spectra.ComplexResolventApply(c.Ctx, op.Op, z, b); return }
		}
		err := stabGuardOr(c, solve, func(err error) error {
			return value.Errorf(value.ClassNumerical, "resolvent: zI − A is singular at z = %s: z is an eigenvalue of A or within rounding of one (%s)", zs, strings.TrimPrefix(err.Error(), "spectra: "))
		})
		if err != nil {
			return nil, err
		}
		if !(res <= 1e-6) {
			return nil, value.Errorf(value.ClassNumerical, "resolvent: zI − A is numerically singular at z = %s: relative residual %s after refinement", zs, value.FormatNum(res))
		}
		for i := range x {
			x[i] = stabCleanPart(x[i])
		}
		return value.ComplexVec(x), nil
	}
	if err := stabNeedDense(c, n, "data=v gives (zI − A)⁻¹v for any order"); err != nil {
		return nil, err
	}
	var s *spectra.Schur
	if err := stabGuard(c, func() (e error) { s, e = spectra.NewSchurContext(c.Ctx, op.Op); return }); err != nil {
		return nil, err
	}
	nrm := s.ResolventNorm(z)
	scale := 1.0
	for i := 0; i < n; i++ {
		for j := i; j < n; j++ {
			scale = math.Max(scale, cmplx.Abs(s.T[i*n+j]))
		}
	}
	scale = math.Max(scale, cmplx.Abs(z))
	if math.IsInf(nrm, 1) || math.IsNaN(nrm) || 1/nrm <= stabSingularTol*scale {
		return nil, value.Errorf(value.ClassNumerical, "resolvent: zI − A is singular at z = %s: z is an eigenvalue of A (σ_min(zI − A) = %s)", zs, value.FormatNum(1/nrm))
	}
	return &objects.Quantity{X: value.Num(nrm), Symbol: "‖(zI − A)⁻¹‖₂", What: "resolvent norm at z = " + zs,
		Method:   "1/σ_min(zI − T) by inverse Lanczos on the complex Schur form A = ZTZᴴ (no balancing)",
		Accuracy: "relative about 1e-10"}, nil
}

// stabCleanPart sets to 0 a part of z below 1e-15 of |z| (rounding noise).
func stabCleanPart(z complex128) complex128 {
	a := cmplx.Abs(z)
	re, im := real(z), imag(z)
	if math.Abs(re) <= 1e-15*a {
		re = 0
	}
	if math.Abs(im) <= 1e-15*a {
		im = 0
	}
	return complex(re, im)
}

func resolventlineImpl(c *eval.Call) (value.Value, error) {
	op, n, err := stabOpArg(c, 0)
	if err != nil {
		return nil, err
	}
	x, err := stabRealArg(c, 1)
	if err != nil {
		return nil, err
	}
	im0, im1, imSet, err := stabIntervalArg(c, 2)
	if err != nil {
		return nil, err
	}
	m, err := stabCountArg(c, 3, 2, 100000)
	if err != nil {
		return nil, err
	}
	if err := stabNeedDense(c, n, ""); err != nil {
		return nil, err
	}
	var s *spectra.Schur
	if err := stabGuard(c, func() (e error) { s, e = spectra.NewSchurContext(c.Ctx, op.Op); return }); err != nil {
		return nil, err
	}
	if !imSet {
		r := 1.0
		for _, z := range s.Eigenvalues() {
			r = math.Max(r, cmplx.Abs(z))
		}
		im0, im1 = -1.5*r, 1.5*r
	}
	var p *spectra.ResolventProfile
	err = stabGuard(c, func() (e error) {
		p, e = s.ResolventLine(c.Ctx, x, im0, im1, m, &spectra.GridOptions{Progress: stabProgress(c)})
		return
	})
	if err != nil {
		return nil, err
	}
	return objects.ResolventLineReport(op.Label, n, x, p), nil
}

// stabGrowthEps are the levels of the lower bounds α_ε/ε in growth.
var stabGrowthEps = []float64{1e-1, 1e-2, 1e-3}

func growthImpl(c *eval.Call) (value.Value, error) {
	op, n, err := stabOpArg(c, 0)
	if err != nil {
		return nil, err
	}
	ts, err := stabListArg(c, 1, "growth: t must hold at least one time",
		func(t float64) bool { return !(t < 0) }, "growth: the times must be ≥ 0, not %s")
	if err != nil {
		return nil, err
	}
	w, ip, err := stabWeightArg(c, 2, op, n)
	if err != nil {
		return nil, err
	}
	if w != nil && n > DenseLimit {
		return nil, value.ValueErrorf("growth: a weight needs the dense methods (order ≤ %d); A has order %d", DenseLimit, n)
	}
	if err := stabComplexDense(c, op, n); err != nil {
		return nil, err
	}
	bv, _ := c.Arg(3)
	bounds, ok := bv.(value.Str)
	if !ok {
		return nil, value.TypeErrorf(`growth: bounds must be a string: "auto", "all", "fast" or "none", not %s`, value.TypeName(bv))
	}
	switch bounds {
	case "auto", "all", "fast", "none":
	default:
		return nil, value.ValueErrorf(`growth: unknown bounds %s; the choices are "auto", "all", "fast" and "none"`, bounds)
	}
	sv, _ := c.Arg(4)
	samples, ok := sv.(value.Str)
	if !ok {
		return nil, value.TypeErrorf(`growth: samples must be a string: "auto" or "all", not %s`, value.TypeName(sv))
	}
	if samples != "auto" && samples != "all" {
		return nil, value.ValueErrorf(`growth: unknown samples %s; the choices are "auto" and "all"`, samples)
	}
	gopt := &spectra.GrowthOptions{Eps: stabGrowthEps, NoKreiss: bounds == "fast" || bounds == "none", Weight: w, Progress: stabProgress(c)}
	if bounds == "none" {
		gopt.Eps = nil
	}
	if samples == "auto" {
		gopt.CurveBudget = spectra.InteractiveWork
	}
	// "auto": every bound, each within a quarter of the interactive budget.
	share := spectra.InteractiveWork / float64(len(stabGrowthEps)+1)
	if bounds == "auto" {
		gopt.Budget = share
	}
	var g *spectra.Growth
	var refused *spectra.BudgetError
	err = stabGuard(c, func() (e error) {
		if n <= DenseLimit {
			g, e = spectra.GrowthCurve(c.Ctx, op.Op, ts, gopt)
			if errors.As(e, &refused) {
				return nil
			}
		} else {
			if g, e = spectra.GrowthEstimate(c.Ctx, op.Op, ts, 0, 0, stabProgress(c)); e != nil {
				return e
			}
			// The slopes the estimate leaves out, by the sparse methods.
			w, e := spectra.NumericalAbscissaContext(c.Ctx, op.Op, nil)
			if e != nil {
				return e
			}
			g.InitialSlope = w
			if hasSparseForm(op) {
				s, e := spectra.Rightmost(c.Ctx, op.Op, &spectra.EigsOptions{Count: 4, ShiftInvert: true, Shift: w + 1e-3*(1+math.Abs(w))})
				if e != nil {
					return e
				}
				g.Abscissa = s.Abscissa
			}
		}
		return
	})
	if err != nil {
		return nil, err
	}
	if be := refused; be != nil {
		return nil, value.ValueErrorf(`growth: at order %d even three of the %d times (each a dense exponential and an SVD, and the peak's singular vector) would take about %.2g s, over ten times the interactive work budget (about %.2g s); samples="all" computes them anyway`,
			n, len(ts), spectra.WorkSeconds(be.Estimate), spectra.WorkSeconds(spectra.InteractiveWork))
	}
	if err != nil {
		return nil, err
	}
	if g.Kreiss != nil && (g.Kreiss.K < 1 || op.IsComplex()) {
		// e·N·K with N the order of A (of B + iC, not of its real form).
		h := *g
		h.Kreiss = stabKreissFloor(g.Kreiss)
		h.Upper = math.E * float64(n) * h.Kreiss.K
		g = &h
	}
	r := objects.GrowthReport(op.Label, n, g)
	if v, _ := c.Arg(2); w != nil && v == value.Str("energy") {
		r.EnergyNorm()
		r.Title += ", in the " + ip
	} else if w != nil {
		r.WeightedNorm()
		r.Title += ", in the " + ip
		r.Notes = append(r.Notes, "weighted: ‖e^{tA}‖_W = ‖e^{tB}‖₂ with B = RAR⁻¹, W = RᵀR; every bound refers to B")
	}
	if g.Asked > len(g.T) {
		peak := "the peak is the largest of these"
		if g.PeakTimeWidth > 0 {
			peak += fmt.Sprintf(", refined between its neighbours to t ± %.2g", g.PeakTimeWidth)
		}
		r.Notes = append(r.Notes, fmt.Sprintf(`‖e^{tA}‖ at %d of the %d times (every %s and the last), to fit the interactive work budget (about %.2g s; all of them, with the peak refined to 1e-8, would take about %.2g s at this order); %s, and a narrower peak between samples can be missed; samples="all" computes every time`,
			len(g.T), g.Asked, stabOrdinal(g.Stride), spectra.WorkSeconds(spectra.InteractiveWork), spectra.WorkSeconds(g.CurveNeeds), peak))
	}
	switch {
	case n > DenseLimit:
		r.Notes = append(r.Notes, "the Kreiss and α_ε/ε bounds need the dense methods and are not computed above order 1500")
	case g.ShapeNeeds > 0:
		r.Notes = append(r.Notes, fmt.Sprintf(`α(A) and the bounds (%s) were not computed: the Schur form of order %d they start from takes about %.2g s alone, beyond the bounds' share of the interactive work budget (about %.2g s); ω(A) comes from the symmetric part; bounds="all" computes them, spectrum(A) gives α(A)`,
			strings.Join(g.Skipped, ", "), n, spectra.WorkSeconds(g.ShapeNeeds), spectra.WorkSeconds(share*float64(len(stabGrowthEps)+1))))
	case bounds == "fast":
		r.Notes = append(r.Notes, `the Kreiss constant (and with it the upper bound e·N·K) was not computed: it is the costliest bound; kreiss(A, search="full") or bounds="all" computes it`)
	case bounds == "none":
		r.Notes = append(r.Notes, `the Kreiss and α_ε/ε bounds were not computed; bounds="fast" or "all" computes them`)
	case len(g.Skipped) > 0:
		ask := `bounds="all" computes every bound however long it takes`
		if slices.Contains(g.Skipped, "Kreiss constant") {
			ask += `, kreiss(A, search="full") the Kreiss constant alone`
		}
		if len(g.Skipped) > 1 || g.Skipped[0] != "Kreiss constant" {
			ask += `, psabscissa(A, ε, search="full") one α_ε`
		}
		skipped := slices.Clone(g.Skipped)
		for k, what := range skipped {
			if what != "Kreiss constant" || g.KreissNeeds == 0 {
				continue
			}
			if g.KreissAtLeast {
				skipped[k] += fmt.Sprintf(" (at least %.2g s at this order)", spectra.WorkSeconds(g.KreissNeeds))
			} else {
				skipped[k] += fmt.Sprintf(" (roughly %.2g s at this order, extrapolated from the part done: within about a factor 2)", spectra.WorkSeconds(g.KreissNeeds))
			}
		}
		r.Notes = append(r.Notes, fmt.Sprintf("not computed within the interactive work budget (each bound gets about %.1f s of a 2-core machine; %.1f s were spent before giving up), so their bounds are missing: %s; %s",
			spectra.WorkSeconds(share), spectra.WorkSeconds(g.SkippedWork), strings.Join(skipped, ", "), ask))
	}
	return r, nil
}

func kreissImpl(c *eval.Call) (value.Value, error) {
	op, n, err := stabOpArg(c, 0)
	if err != nil {
		return nil, err
	}
	if err := stabNeedDense(c, n, ""); err != nil {
		return nil, err
	}
	budget, err := stabSearchArg(c, 1)
	if err != nil {
		return nil, err
	}
	var k *spectra.KreissResult
	var refused *spectra.BudgetError
	err = stabGuard(c, func() (e error) {
		k, e = spectra.KreissWithin(c.Ctx, op.Op, budget)
		if errors.As(e, &refused) {
			return nil
		}
		return e
	})
	if err != nil {
		return nil, err
	}
	if refused != nil {
		return nil, stabRefusal(c, "the Kreiss search", n, refused)
	}
	atInf := k.K < 1
	k = stabKreissFloor(k)
	q := &objects.Quantity{X: value.Num(k.K), Symbol: "K(A)", What: "Kreiss constant sup_{Re z > 0} Re z ‖(zI − A)⁻¹‖₂",
		Method: k.Method, Accuracy: k.Accuracy}
	switch {
	case atInf:
		q.Where = fmt.Sprintf("attained as z → +∞ (x‖(xI − A)⁻¹‖ → 1); K ≤ sup ‖e^{tA}‖ ≤ e·N·K = %s", value.FormatNum(math.E*float64(n)*k.K))
	case !math.IsInf(k.K, 1):
		q.Where = "attained near z = " + objects.Approx(stabOrientPoint(c, op, k.Z)) + fmt.Sprintf("; K ≤ sup ‖e^{tA}‖ ≤ e·N·K = %s", value.FormatNum(math.E*float64(n)*k.K))
	case k.ZeroWithinRounding:
		q.Where = fmt.Sprintf("α(A) = %s is zero within rounding (|α(A)| ≤ %s): an eigenvalue on the imaginary axis cannot be ruled out, so the resolvent norm may be unbounded in the right half plane", value.FormatNum(k.Abscissa), fmtTol(k.AbscissaTol))
	default:
		q.Where = "α(A) ≥ 0: the resolvent norm is unbounded in the right half plane"
	}
	return q, nil
}

// stabSearchParam is the option of the searches over the complex plane.
var stabSearchParam = opt("search", value.Str("auto"), `"auto": the Schur form and the search within the interactive work budget (about 2.5 s), refused with what it would take otherwise; "full": however long it takes`)

// stabSearchArg reads the search option at index i: the work budget of
// "auto" (spectra.InteractiveWork), or 0 (none) for "full".
func stabSearchArg(c *eval.Call, i int) (float64, error) {
	v, _ := c.Arg(i)
	s, ok := v.(value.Str)
	if !ok {
		return 0, value.TypeErrorf(`%s: search must be a string: "auto" or "full", not %s`, c.Name, value.TypeName(v))
	}
	switch s {
	case "auto":
		return spectra.InteractiveWork, nil
	case "full":
		return 0, nil
	}
	return 0, value.ValueErrorf(`%s: unknown search %s; the choices are "auto" and "full"`, c.Name, s)
}

// stabRefusal is the error of a search refused or stopped by the
// interactive work budget, with what it would need.
func stabRefusal(c *eval.Call, what string, n int, be *spectra.BudgetError) error {
	need := "more than the budget"
	switch {
	case be.AtLeast:
		need = fmt.Sprintf("at least %.2g s (the Schur form of order %d alone, predicted; nothing was computed)", spectra.WorkSeconds(be.Estimate), n)
	case be.Estimate > 0:
		need = fmt.Sprintf("roughly %.2g s (extrapolated from the part done: within about a factor 2)", spectra.WorkSeconds(be.Estimate))
	}
	return value.ValueErrorf(`%s: %s needs %s, beyond the interactive work budget (about %.2g s of the 2-core development machine); search="full" runs it however long it takes, and an interrupt stops it`,
		c.Name, what, need, spectra.WorkSeconds(spectra.InteractiveWork))
}

// stabOrdinal writes k as an English ordinal: 2nd, 3rd, 11th, 21st.
func stabOrdinal(k int) string {
	suffix := "th"
	if k%100 < 11 || k%100 > 13 {
		switch k % 10 {
		case 1:
			suffix = "st"
		case 2:
			suffix = "nd"
		case 3:
			suffix = "rd"
		}
	}
	return strconv.Itoa(k) + suffix
}

// stabKreissFloor applies K(A) ≥ lim_{x→+∞} x‖(xI − A)⁻¹‖ = 1 (x(xI − A)⁻¹ →
// I), which a search over a bounded range of Re z can miss: for a normal
// A with α(A) < 0 the supremum 1 is approached only as z → +∞.
func stabKreissFloor(k *spectra.KreissResult) *spectra.KreissResult {
	if !(k.K < 1) {
		return k
	}
	out := *k
	out.K = 1
	out.Z = complex(math.Inf(1), 0)
	out.Method += "; raised to the limit 1 = lim_{x→+∞} x‖(xI − A)⁻¹‖, which exceeds the searched values"
	return &out
}

func generatorImpl(c *eval.Call) (value.Value, error) {
	op, n, err := stabOpArg(c, 0)
	if err != nil {
		return nil, err
	}
	w, ip, err := stabWeightArg(c, 1, op, n)
	if err != nil {
		return nil, err
	}
	if n > DenseLimit && w != nil {
		return nil, value.ValueErrorf("wellposed: a weight needs the dense methods (order ≤ %d); A has order %d", DenseLimit, n)
	}
	if err := stabComplexDense(c, op, n); err != nil {
		return nil, err
	}
	if n > DenseLimit {
		if _, ok := op.Op.(linop.Sparser); !ok {
			if _, ok := op.Op.(*linop.CSR); !ok {
				return nil, value.ValueErrorf("wellposed: A has order %d and no sparse form; the dense methods are limited to order %d", n, DenseLimit)
			}
		}
	}
	gopt := &spectra.GeneratorOptions{Weight: w, Progress: stabProgress(c), Work: spectra.HYInteractiveWork}
	if v, _ := c.Arg(1); v == value.Str("energy") {
		gopt.Inner = "the " + ip
	}
	sv, _ := c.Arg(3)
	switch sv {
	case value.Str("auto"):
	case value.Str("all"):
		gopt.Work = 0
	default:
		if _, ok := sv.(value.Str); !ok {
			return nil, value.TypeErrorf(`generator: samples must be a string, "auto" or "all", not %s`, value.TypeName(sv))
		}
		return nil, value.ValueErrorf(`generator: unknown samples %s; the choices are "auto" and "all"`, sv)
	}
	if v, _ := c.Arg(2); v != value.None {
		om, err := stabRealArg(c, 2)
		if err != nil {
			return nil, err
		}
		gopt.Omega, gopt.OmegaSet = om, true
	}
	var g *spectra.GeneratorReport
	retried := ""
	err = stabGuardRaw(c, func() (e error) {
		g, e = spectra.Generator(c.Ctx, op.Op, gopt)
		if e == nil || gopt.OmegaSet || c.Ctx.Err() != nil || !errors.Is(e, spectra.ErrNumerical) {
			return e
		}
		// The default ω can sit on an eigenvalue (α(A) = ω(A), as for a
		// rate matrix), where the sampled resolvents are singular: test
		// ω(A) + 10⁻³(1 + |ω(A)|) instead, at which A − ωI is dissipative.
		wa, e2 := spectra.NumericalAbscissa(op.Op, w)
		if e2 != nil {
			return e
		}
		gopt.Omega, gopt.OmegaSet = wa+1e-3*(1+math.Abs(wa)), true
		retried = fmt.Sprintf("the default growth rate ω met a singular resolvent (%s); the report tests ω = ω(A) + 10⁻³(1 + |ω(A)|) instead", strings.TrimPrefix(e.Error(), "spectra: numerical failure: "))
		g, e = spectra.Generator(c.Ctx, op.Op, gopt)
		return e
	})
	if err != nil {
		return nil, stabNumErr(c, err)
	}
	if op.IsComplex() {
		// Computed on the real form [B −C; C B] (the same α, ω and real-λ
		// resolvent norms); report A's order.
		h := *g
		h.N = n
		h.Verdict = strings.ReplaceAll(h.Verdict, fmt.Sprintf("A (%d×%d)", 2*n, 2*n), fmt.Sprintf("A (%d×%d, complex)", n, n))
		g = &h
	}
	r := objects.GeneratorReport(op.Label, ip, g)
	if g.Skipped > 0 {
		r.Notes = append(r.Notes, fmt.Sprintf("Hille–Yosida: %d of the %d λ of the main range were skipped to stay within the interactive work budget (those taken are spread over the range, so M is a lower estimate from fewer samples); wellposed(A, samples=\"all\") takes them all", g.Skipped, g.Skipped+g.Taken))
	}
	if retried != "" {
		r.Notes = append(r.Notes, retried)
	}
	if n <= DenseLimit && looksLikeRates(op) {
		r.Notes = append(r.Notes, "A has the form of a rate matrix (q_ij ≥ 0 off the diagonal, rows summing to 0): markov(A) reports the chain; its probability row vectors evolve by p' = pA, i.e. by the adjoint of A acting on columns")
	}
	return r, nil
}

// fmtTol formats an error allowance to 2 significant digits.
func fmtTol(x float64) string { return strconv.FormatFloat(x, 'g', 2, 64) }

// looksLikeRates reports whether A is a non-zero rate matrix by
// linop.CheckGenerator (off-diagonal entries ≥ 0, row sums zero within
// rounding).
func looksLikeRates(op *objects.Operator) bool {
	d, err := linop.ToDense(op.Op)
	if err != nil || mat.Norm(d, 1) == 0 {
		return false
	}
	return linop.CheckGenerator(linop.CSRFromDense(d, 0)) == nil
}

func markovImpl(c *eval.Call) (value.Value, error) {
	op, n, err := stabOpArg(c, 0)
	if err != nil {
		return nil, err
	}
	alt := ""
	if n > DenseLimit {
		if _, ok := spectra.BirthDeathOf(op.Op); ok {
			alt = "for this birth–death chain, spectrum(Q, count=2) gives the gap with relative accuracy at any order (its second eigenvalue is −gap)"
		}
	}
	if err := stabNeedDense(c, n, alt); err != nil {
		return nil, err
	}
	var m *spectra.MarkovReport
	err = stabGuardOr(c, func() (e error) { m, e = spectra.Markov(c.Ctx, op.Op); return }, func(err error) error {
		why := strings.TrimPrefix(strings.TrimPrefix(err.Error(), "spectra: "), "not a rate matrix: ")
		return value.ValueErrorf("markov: Q is not the rate matrix of a Markov chain with a unique stationary distribution (q_ij ≥ 0 for i ≠ j, rows summing to 0): %s", why)
	})
	if err != nil {
		return nil, err
	}
	return objects.MarkovReport(op.Label, m), nil
}

// kronFromFactors reports whether spectrum takes the eigenvalues of the
// Kronecker sum k of order n from its factors: every factor small enough
// for a dense spectrum and n within spectra.KronMaxOrder.
func kronFromFactors(k *linop.KronSum, n int) bool {
	if n > spectra.KronMaxOrder {
		return false
	}
	for _, f := range linop.KronFactors(k) {
		if m, _ := f.Dims(); m > spectra.KronMaxFactor {
			return false
		}
	}
	return true
}
