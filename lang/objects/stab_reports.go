package objects

import (
	"fmt"
	"math"
	"math/cmplx"
	"strconv"
	"strings"

	"semiflow/lang/plot"
	"semiflow/lang/value"
	"semiflow/numerics/spectra"
)

// Report constructors: each turns a numerics result into an Analysis with
// its facts, table and figure. Displayed values go through the language's
// number format (10 significant digits); parts below 1e-13 of the scale of
// their number are shown as 0 (rounding noise of the QR algorithm).

// clean returns x, or 0 when |x| ≤ 1e-13·scale.
func clean(x, scale float64) float64 {
	if math.Abs(x) <= 1e-13*scale {
		return 0
	}
	return x
}

// cleanC rounds away noise in either part of z relative to |z| (and 1).
func cleanC(z complex128) complex128 {
	s := math.Max(cmplx.Abs(z), 1)
	return complex(clean(real(z), s), clean(imag(z), s))
}

func num(x float64) value.Value { return value.Num(x) }

func fnum(x float64) string { return value.FormatNum(x) }

func fcx(z complex128) string { return value.FormatComplex(z) }

// Approx formats a point of the complex plane found by a search (where a
// supremum is attained) to 4 significant digits, rounding noise removed.
func Approx(z complex128) string {
	z = cleanC(z)
	s := math.Max(cmplx.Abs(z), 1e-300)
	re, im := real(z), imag(z)
	if math.Abs(im) < 1e-6*s {
		im = 0
	}
	if math.Abs(re) < 1e-6*s {
		re = 0
	}
	f := func(x float64) string { return strconv.FormatFloat(x, 'g', 4, 64) }
	if im == 0 {
		return f(re)
	}
	sign := "+"
	if im < 0 {
		sign, im = "-", -im
	}
	return f(re) + sign + f(im) + "i"
}

// subject names the operator in a figure title in words: "the 2 × 2
// matrix", "the rate matrix of 7 states", or "the operator of order n"
// (the formula an operator was built from stays in the report's text).
func subject(label string, n int) string {
	switch label {
	case "matrix":
		return fmt.Sprintf("the %d × %d matrix", n, n)
	case "rate matrix":
		return fmt.Sprintf("the rate matrix of %d states", n)
	}
	return fmt.Sprintf("the operator of order %d", n)
}

// planeFigure is an empty figure of the complex plane with the imaginary
// axis drawn.
func planeFigure(title string) *plot.Figure {
	f := &plot.Figure{Title: title, EqualAspect: true}
	f.X.Label = "Re z"
	f.Y.Label = "Im z"
	f.AddVLine(0, "imaginary axis").Dash = plot.Dotted
	return f
}

func addEigenvalues(f *plot.Figure, vals []complex128, label string) {
	if len(vals) == 0 {
		return
	}
	x := make([]float64, len(vals))
	y := make([]float64, len(vals))
	for i, z := range vals {
		x[i], y[i] = real(z), imag(z)
	}
	p := f.AddPoints(x, y, label)
	p.Color = "#23262e"
	p.Marker = plot.Cross
	p.Halo = true // visible on a heat map's dark end too
}

// SpectrumReport describes the eigenvalues of the operator labelled label
// (order n). Dense results carry condition numbers, Krylov ones residuals.
func SpectrumReport(label string, n int, s *spectra.Spectrum, what string) *Analysis {
	r := &Analysis{Kind: "spectrum", Data: s, Method: s.Method, Accuracy: s.Accuracy}
	r.Title = fmt.Sprintf("spectrum of %s (%d×%d): %s", label, n, n, what)
	r.Facts = []Fact{{"spectral abscissa α(A)", fnum(s.Abscissa)}}
	r.name("abscissa", num(s.Abscissa))
	r.name("values", value.ComplexVec(cleanAll(s.Values)))
	last := "condition"
	if len(s.Cond) == 0 {
		last = "residual"
	}
	r.Columns = []string{"k", "λ", "Re λ", "Im λ", last}
	for k, z := range s.Values {
		z = cleanC(z)
		extra := math.NaN()
		if k < len(s.Cond) {
			extra = s.Cond[k]
		} else if k < len(s.Residual) {
			extra = s.Residual[k]
		}
		r.Rows = append(r.Rows, []value.Value{num(float64(k)), value.Complex(z), num(real(z)), num(imag(z)), num(extra)})
	}
	var bad []string
	for k, c := range s.Cond {
		ill := !(c <= spectra.IllCondLimit)
		if len(s.IllCond) == len(s.Cond) {
			ill = s.IllCond[k] // the method's own judgement (a reversible chain's route is exact)
		}
		if ill {
			bad = append(bad, strconv.Itoa(k))
		}
	}
	if len(bad) > 0 {
		if len(bad) > 8 {
			bad = append(bad[:8], "…")
		}
		r.Notes = append(r.Notes, fmt.Sprintf("eigenvalue(s) k = %s have condition above 1/√u ≈ %s: defective or nearly so; their computed values can be off by far more than condition × n·u·‖A‖ — pseudospectrum(A) shows where they can lie", strings.Join(bad, ", "), fnum2(spectra.IllCondLimit)))
	}
	f := planeFigure("Eigenvalues of " + subject(label, n))
	addEigenvalues(f, s.Values, "eigenvalues")
	if len(s.Values) > 0 {
		f.AddVLine(s.Abscissa, "α(A) = "+plot.FormatValue(s.Abscissa)).Dash = plot.Dashed
	}
	r.Figure = f
	return r
}

// NumRangeReport describes the sampled boundary of the numerical range;
// eigs (may be nil) are overlaid in the figure.
func NumRangeReport(label string, n int, nr *spectra.NumericalRange, eigs []complex128) *Analysis {
	r := &Analysis{Kind: "numrange", Data: nr, Method: nr.Method, Accuracy: nr.Accuracy}
	ip := "Euclidean inner product"
	if nr.Weighted {
		ip = "weighted inner product ⟨x, y⟩ = xᵀWy"
	}
	r.Title = fmt.Sprintf("numerical range W(A) of %s (%d×%d), %s", label, n, n, ip)
	r.Facts = []Fact{
		{"numerical abscissa ω(A) = max Re W(A)", fnum(nr.Abscissa)},
		{"numerical radius r(A) = max |W(A)|", fnum(nr.Radius)},
		{"boundary points", fmt.Sprint(len(nr.Boundary))},
	}
	r.name("abscissa", num(nr.Abscissa))
	r.name("radius", num(nr.Radius))
	r.Columns = []string{"θ", "boundary point z", "Re z", "Im z", "support h(θ)"}
	for k, z := range nr.Boundary {
		z = cleanC(z)
		r.Rows = append(r.Rows, []value.Value{num(nr.Angles[k]), value.Complex(z), num(real(z)), num(imag(z)), num(nr.Support[k])})
	}
	f := planeFigure("Numerical range of " + subject(label, n))
	if nr.Weighted {
		f.Title += " in the weighted inner product"
	}
	if m := len(nr.Boundary); m > 0 {
		x := make([]float64, m+1)
		y := make([]float64, m+1)
		for i := 0; i <= m; i++ {
			z := nr.Boundary[i%m]
			x[i], y[i] = real(z), imag(z)
		}
		f.AddLine(x, y, "boundary of W(A)")
		f.AddVLine(nr.Abscissa, "ω(A) = "+plot.FormatValue(nr.Abscissa)).Dash = plot.Dashed
	}
	addEigenvalues(f, eigs, "eigenvalues")
	r.Figure = f
	return r
}

// PseudoReport describes pseudospectra on a grid; abscissae[k] (NaN when
// not computed) is α_ε for ps.Contours[k].Level, at points[k].
func PseudoReport(label string, n int, ps *spectra.Pseudospectra, abscissae []float64, points []complex128, abscissaMethod string) *Analysis {
	r := &Analysis{Kind: "pseudospectrum", Data: ps, Method: ps.Method, Accuracy: ps.Accuracy}
	r.Title = fmt.Sprintf("ε-pseudospectra of %s (%d×%d): σ_ε(A) = {z : σ_min(zI − A) ≤ ε}", label, n, n)
	re, im := ps.Re, ps.Im
	r.Facts = []Fact{
		{"region", fmt.Sprintf("Re z ∈ [%s, %s], Im z ∈ [%s, %s]", fnum(re[0]), fnum(re[len(re)-1]), fnum(im[0]), fnum(im[len(im)-1]))},
		{"grid", fmt.Sprintf("%d × %d points", len(re), len(im))},
		{"smallest σ_min on the grid", fnum(minFinite(ps.Sigma))},
	}
	r.name("sigma_min", num(minFinite(ps.Sigma)))
	if ps.Unconverged > 0 {
		r.Notes = append(r.Notes, fmt.Sprintf("%d grid points reached the iteration limit; their σ_min is less accurate", ps.Unconverged))
	}
	if abscissaMethod != "" {
		r.Notes = append(r.Notes, "α_ε: "+abscissaMethod)
	}
	r.Columns = []string{"ε", "α_ε(A)", "α_ε/ε", "rightmost point"}
	for k, c := range ps.Contours {
		a, z := math.NaN(), complex(math.NaN(), 0)
		if k < len(abscissae) {
			a, z = abscissae[k], cleanC(points[k])
		}
		r.Rows = append(r.Rows, []value.Value{num(c.Level), num(a), num(a / c.Level), value.Complex(z)})
	}
	f := planeFigure("Pseudospectra of " + subject(label, n))
	f.X.Min, f.X.Max = re[0], re[len(re)-1]
	f.Y.Min, f.Y.Max = im[0], im[len(im)-1]
	levels := make([]float64, len(ps.Contours))
	for k, c := range ps.Contours {
		levels[k] = c.Level
	}
	// σ_min as a heat map on a logarithmic colour scale. The contour lines are traced on log₁₀ σ_min (marching squares with linear
	// interpolation of the logarithm, which varies more evenly than σ).
	z := make([][]float64, len(re))
	logz := make([][]float64, len(re))
	for i := range re {
		z[i] = ps.Sigma[i*len(im) : (i+1)*len(im)]
		logz[i] = make([]float64, len(im))
		for j, v := range z[i] {
			logz[i][j] = math.Log10(v)
		}
	}
	loglev := make([]float64, len(levels))
	for k, l := range levels {
		loglev[k] = math.Log10(l)
	}
	lines := plot.Contours(logz, re, im, loglev)
	lo, hi := math.Inf(1), 0.0
	for _, l := range levels {
		lo, hi = math.Min(lo, l), math.Max(hi, l)
	}
	hm := f.AddHeatMap(z, re[0], re[len(re)-1], im[0], im[len(im)-1], "σ_min(zI − A)")
	// The colours span the σ_min the grid holds, at most a decade beyond
	// the levels on either side, so the map's contrast falls where the
	// curves are.
	smin, smax := math.Inf(1), 0.0
	for _, v := range ps.Sigma {
		if v > 0 && !math.IsInf(v, 0) {
			smin, smax = math.Min(smin, v), math.Max(smax, v)
		}
	}
	hm.Log, hm.Min, hm.Max = true, math.Max(lo/10, smin), math.Min(hi*10, smax)
	f.AddContours(levels, lines, "ε") // coloured against the heat map under each curve
	addEigenvalues(f, ps.Eigenvalues, "eigenvalues")
	r.Figure = f
	return r
}

// spansDecade reports whether the finite positive values span at least a
// factor 10, so that a logarithmic axis shows them better than a linear one.
func spansDecade(x []float64) bool {
	lo, hi := math.Inf(1), 0.0
	for _, v := range x {
		if v > 0 && !math.IsInf(v, 0) {
			lo, hi = math.Min(lo, v), math.Max(hi, v)
		}
	}
	return hi >= 10*lo
}

func minFinite(x []float64) float64 {
	m := math.Inf(1)
	for _, v := range x {
		if v < m {
			m = v
		}
	}
	return m
}

// ResolventLineReport describes ‖(zI − A)⁻¹‖ along Re z = c.
func ResolventLineReport(label string, n int, c float64, p *spectra.ResolventProfile) *Analysis {
	r := &Analysis{Kind: "resolventline", Data: p, Method: p.Method, Accuracy: p.Accuracy}
	r.Title = fmt.Sprintf("resolvent norm ‖(zI − A)⁻¹‖₂ of %s (%d×%d) along Re z = %s", label, n, n, fnum(c))
	r.Facts = []Fact{
		{"largest norm", fnum(p.Max)},
		{"attained at z", fcx(cleanC(p.ArgMax))},
		{"points", fmt.Sprint(len(p.Z))},
	}
	r.name("max", num(p.Max))
	r.name("argmax", value.Complex(cleanC(p.ArgMax)))
	if c > 0 && !math.IsInf(p.Max, 0) {
		r.Facts = append(r.Facts, Fact{"Re z · largest norm (a lower bound of the Kreiss constant)", fnum(c * p.Max)})
		r.name("kreiss_lower", num(c*p.Max))
	}
	r.Columns = []string{"Im z", "‖(zI − A)⁻¹‖₂"}
	y := make([]float64, len(p.Z))
	for k, z := range p.Z {
		y[k] = imag(z)
		r.Rows = append(r.Rows, []value.Value{num(imag(z)), num(p.Norm[k])})
	}
	f := &plot.Figure{Title: "Resolvent norm of " + subject(label, n) + " along Re z = " + plot.FormatValue(c), DropNonPositive: true}
	f.X.Label = "Im z"
	f.Y.Label = "‖(zI − A)⁻¹‖₂"
	f.Y.Log = spansDecade(p.Norm)
	f.AddLine(y, p.Norm, "")
	f.Legend = plot.LegendNone
	r.Figure = f
	return r
}

// WeightedNorm labels a growth report's figure for the weighted norm
// ‖x‖_W = √(xᵀWx) its curve was computed in.
func (r *Analysis) WeightedNorm() { r.namedNorm("W", "weighted norm") }

// EnergyNorm relabels a growth report measured in the energy inner product
// of a second-order system (or the mass inner product of M u' = K u): the
// figure, the table's column and the facts read ‖e^{tA}‖_E.
func (r *Analysis) EnergyNorm() {
	r.namedNorm("E", "energy norm")
	r.Title = strings.Replace(r.Title, "‖e^{tA}‖₂", "‖e^{tA}‖_E", 1)
	for i, c := range r.Columns {
		r.Columns[i] = strings.ReplaceAll(c, "‖e^{tA}‖₂", "‖e^{tA}‖_E")
	}
	for i := range r.Facts {
		r.Facts[i].Label = strings.ReplaceAll(r.Facts[i].Label, "‖e^{tA}‖₂", "‖e^{tA}‖_E")
	}
}

func (r *Analysis) namedNorm(sub, words string) {
	f := r.Figure
	if f == nil {
		return
	}
	f.Title += " in the " + words + " ‖·‖_" + sub
	f.Y.Label = "‖exp(tA)‖_" + sub + " (" + words + ")"
	for _, s := range f.Series {
		if l, ok := s.(*plot.Line); ok && l.Label == "‖exp(tA)‖₂" {
			l.Label = "‖exp(tA)‖_" + sub
		}
	}
}

// GrowthReport describes the transient growth curve with its bounds.
func GrowthReport(label string, n int, g *spectra.Growth) *Analysis {
	r := &Analysis{Kind: "growth", Data: g, Method: g.Method, Accuracy: g.Accuracy}
	r.Title = fmt.Sprintf("transient growth ‖e^{tA}‖₂ of %s (%d×%d), t ∈ [%s, %s]", label, n, n, fnum(g.T[0]), fnum(g.T[len(g.T)-1]))
	r.Facts = []Fact{
		{"peak max ‖e^{tA}‖₂", fnum(g.Peak) + " at t = " + fnum(g.PeakTime)},
		{"initial slope ω(A) = λmax((A + Aᵀ)/2)", fnum(g.InitialSlope)},
		{"spectral abscissa α(A) (asymptotic rate)", fnum(g.Abscissa)},
	}
	if math.IsNaN(g.Abscissa) {
		r.Facts[2].Value = "not computed"
	}
	r.name("peak", num(g.Peak))
	r.name("peak_time", num(g.PeakTime))
	r.name("slope", num(g.InitialSlope))
	r.name("abscissa", num(g.Abscissa))
	lowerName, bestLower := "", 0.0
	if g.Kreiss != nil {
		r.Facts = append(r.Facts,
			Fact{"Kreiss constant K ≤ sup ‖e^{tA}‖", fnum(g.Kreiss.K) + " (near z = " + Approx(g.Kreiss.Z) + ")"},
			Fact{"upper bound sup ‖e^{tA}‖ ≤ e·N·K", fnum(g.Upper)})
		lowerName, bestLower = "Kreiss K", g.Kreiss.K
		r.name("kreiss", num(g.Kreiss.K))
		r.name("upper", num(g.Upper))
	}
	for _, b := range g.EpsBounds {
		label := fmt.Sprintf("lower bound α_ε/ε, ε = %s", fnum(b.Eps))
		if !(b.Alpha > 0) {
			r.Facts = append(r.Facts, Fact{label, fmt.Sprintf("none (α_ε = %s ≤ 0)", fnum(b.Alpha))})
			continue
		}
		r.Facts = append(r.Facts, Fact{label, fmt.Sprintf("%s (α_ε = %s)", fnum(b.Bound), fnum(b.Alpha))})
		if b.Bound > bestLower {
			lowerName, bestLower = "α_ε/ε, ε = "+plot.FormatValue(b.Eps), b.Bound
		}
	}
	if lowerName != "" {
		r.name("lower", num(bestLower))
	}
	if len(g.Initial) > 0 {
		u0 := value.Value(value.RealVec(append([]float64(nil), g.Initial...)))
		if len(g.Initial) == 2*n {
			// A complex operator's growth comes from its real form: the
			// vector is [Re u0; Im u0].
			z := make([]complex128, n)
			for i := range z {
				z[i] = complex(g.Initial[i], g.Initial[n+i])
			}
			u0 = value.ComplexVec(z)
		}
		r.Facts = append(r.Facts, Fact{"optimal initial condition u0 (‖u0‖ = 1)", u0.String()})
		r.name("initial", u0)
	}
	r.Columns = []string{"t", "‖e^{tA}‖₂"}
	for k, t := range g.T {
		r.Rows = append(r.Rows, []value.Value{num(t), num(g.Norm[k])})
	}
	f := &plot.Figure{Title: "Transient growth of " + subject(label, n), DropNonPositive: true}
	f.X.Label = "t"
	f.Y.Label = "‖exp(tA)‖₂"
	f.Y.Log = spansDecade(append([]float64{g.Upper}, g.Norm...))
	f.AddLine(g.T, g.Norm, "‖exp(tA)‖₂")
	// The initial slope: e^{ωt} while it stays below twice the peak.
	if w := g.InitialSlope; w > 0 && len(g.T) > 1 {
		var xs, ys []float64
		for _, t := range g.T {
			if v := math.Exp(w * t); v <= 2*math.Max(g.Peak, 1) {
				xs, ys = append(xs, t), append(ys, v)
			}
		}
		if len(xs) > 1 {
			f.AddLine(xs, ys, "exp(ωt), ω = "+plot.FormatValue(w)).Dash = plot.Dashed
		}
	}
	if lowerName != "" && bestLower > 0 && !math.IsInf(bestLower, 0) {
		f.AddHLine(bestLower, "lower bound "+lowerName+" = "+plot.FormatValue(bestLower)).Dash = plot.Dashed
	}
	if g.Kreiss != nil && lowerName != "Kreiss K" && g.Kreiss.K > 0 && !math.IsInf(g.Kreiss.K, 0) {
		f.AddHLine(g.Kreiss.K, "Kreiss K = "+plot.FormatValue(g.Kreiss.K)).Dash = plot.Dotted
	}
	if g.Upper > 0 && !math.IsInf(g.Upper, 0) {
		f.AddHLine(g.Upper, "upper bound e·N·K = "+plot.FormatValue(g.Upper)).Dash = plot.DashDot
	}
	if g.Peak > 0 {
		f.AddPoints([]float64{g.PeakTime}, []float64{g.Peak}, "peak "+plot.FormatValue(g.Peak))
	}
	r.Figure = f
	return r
}

// GeneratorReport describes A as the generator of a semigroup. Values
// within rounding of zero (spectra.GeneratorReport's Rounding and
// AbscissaRounding) are shown with that allowance, never with a bare sign.
func GeneratorReport(label string, ip string, g *spectra.GeneratorReport) *Analysis {
	r := &Analysis{Kind: "generator", Data: g, Method: g.Method, Accuracy: g.Accuracy}
	r.Title = fmt.Sprintf("generator report for %s (%d×%d), %s", label, g.N, g.N, ip)
	alpha := fnum(g.SpectralAbscissa)
	if g.AbscissaSign == 0 && g.SpectralAbscissa != 0 {
		alpha = fmt.Sprintf("0 within rounding (computed %s, |α| ≤ %s)", alpha, fnum2(g.AbscissaRounding))
	}
	if g.AbscissaIllCond {
		alpha += "; the rightmost eigenvalue is defective or nearly so: see its pseudospectra"
	}
	omega := fnum(g.NumericalAbscissa)
	if math.Abs(g.NumericalAbscissa) <= g.Rounding && g.NumericalAbscissa != 0 {
		omega = fmt.Sprintf("0 within rounding (computed %s, |ω(A)| ≤ %s = n·u·‖A‖)", omega, fnum2(g.Rounding))
	}
	var diss string
	switch {
	case g.WithinRounding:
		diss = fmt.Sprintf("yes, within rounding: ω(A) − ω = %s ≤ %s = n·u·‖A‖, so ‖e^{tA}‖ ≤ e^{(ω+2τ)t}, τ = %s (Lumer–Phillips)", fnum2(g.NumericalAbscissa-g.Omega), fnum2(g.Rounding), fnum2(g.Rounding))
	case g.Dissipative:
		diss = fmt.Sprintf("yes: A − ωI is dissipative for ω = %s, so ‖e^{tA}‖ ≤ e^{ωt} (Lumer–Phillips)", fnum(g.Omega))
	default:
		diss = fmt.Sprintf("no: ω(A) = %s > ω = %s beyond rounding (n·u·‖A‖ = %s), A − ωI is not dissipative in this inner product", fnum(g.NumericalAbscissa), fnum(g.Omega), fnum2(g.Rounding))
	}
	m := fnum(g.M)
	switch {
	case math.IsNaN(g.M):
		m = "not estimated (" + g.Sampled + ")"
	case math.IsInf(g.M, 1):
		m = "inf: no bound M e^{ωt} exists for ω < α(A)"
	case g.Dissipative:
		m += " (exact: Lumer–Phillips)"
	case g.M >= 1 && len(g.HY) > 0:
		m += " (a lower estimate; at least 1, the limit as λ → ∞)"
	}
	r.Facts = []Fact{
		{"spectral abscissa α(A)", alpha},
		{"numerical abscissa ω(A)", omega},
		{"growth rate ω tested", fnum(g.Omega)},
		{"dissipative (Lumer–Phillips)", diss},
		{"Hille–Yosida estimate of M", m},
		{"verdict", g.Verdict},
	}
	r.name("abscissa", num(g.SpectralAbscissa))
	r.name("numabscissa", num(g.NumericalAbscissa))
	r.name("omega", num(g.Omega))
	r.name("M", num(g.M))
	r.name("dissipative", value.Bool(g.Dissipative || g.WithinRounding))
	r.name("verdict", value.Str(g.Verdict))
	if g.Assumptions != "" {
		r.Notes = append(r.Notes, "assumptions: "+g.Assumptions)
	}
	if len(g.HY) > 0 {
		r.Columns = []string{"power n", "M_n = sup (λ−ω)^n ‖R(λ)^n‖", "at λ"}
		far := false
		for _, h := range g.HY {
			r.Rows = append(r.Rows, []value.Value{num(float64(h.Power)), num(h.M), num(h.Lambda)})
			far = far || math.IsInf(h.Lambda, 1)
		}
		if far {
			r.Notes = append(r.Notes, "at λ = inf: no sample exceeded 1, the limit of (λ−ω)^n‖R(λ)^n‖ as λ → ∞")
		}
	}
	return r
}

// fnum2 formats an error allowance to 2 significant digits.
func fnum2(x float64) string { return strconv.FormatFloat(x, 'g', 2, 64) }

// MarkovReport describes a continuous-time Markov chain.
func MarkovReport(label string, m *spectra.MarkovReport) *Analysis {
	r := &Analysis{Kind: "markov", Data: m, Method: m.Method, Accuracy: m.Accuracy}
	n := len(m.Stationary)
	r.Title = fmt.Sprintf("Markov chain with rate matrix Q (%d states), p' = pQ", n)
	if label != "matrix" {
		r.Title += ", Q = " + label
	}
	rev := "no"
	switch {
	case m.BirthDeath:
		rev = "yes (a birth–death chain: detailed balance π_i q_ij = π_j q_ji always holds)"
	case m.Reversible:
		rev = "yes (detailed balance π_i q_ij = π_j q_ji)"
	}
	gap := fnum(m.Gap)
	switch {
	case math.IsInf(m.Gap, 0):
	case math.IsInf(m.GapError, 1):
		gap += " (error not bounded: the eigenvalue setting it is defective or nearly so; see the pseudospectra of Q)"
	case m.GapError > 0:
		gap += " ± " + fnum2(m.GapError)
	}
	r.Facts = []Fact{
		{"spectral gap", gap},
		{"relaxation time 1/gap", fnum(m.Relaxation)},
		{"mixing time t_mix(1/4)", fnum(m.MixingTime)},
		{"bound ln(4/π_min)/gap", fnum(m.MixingBound)},
		{"reversible", rev},
	}
	r.name("gap", num(m.Gap))
	r.name("gap_error", num(m.GapError))
	r.name("relaxation", num(m.Relaxation))
	r.name("mixing_time", num(m.MixingTime))
	r.name("mixing_bound", num(m.MixingBound))
	r.name("reversible", value.Bool(m.Reversible))
	r.name("stationary", value.RealVec(append([]float64(nil), m.Stationary...)))
	if !m.Reversible {
		r.Notes = append(r.Notes, "the chain is not reversible: the bound ln(4/π_min)/gap is only an indication")
	}
	r.Columns = []string{"state", "stationary π"}
	for i, p := range m.Stationary {
		r.Rows = append(r.Rows, []value.Value{num(float64(i)), num(p)})
	}
	return r
}

// cleanAll applies cleanC to each value (a copy).
func cleanAll(z []complex128) []complex128 {
	out := make([]complex128, len(z))
	for i, v := range z {
		out[i] = cleanC(v)
	}
	return out
}
