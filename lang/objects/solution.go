package objects

import (
	"fmt"
	"math"
	"time"

	"semiflow/lang/plot"
	"semiflow/lang/value"
	"semiflow/numerics/expo"
)

// Solution is the result of propagate: the values u(t_i) at the output
// times with the method, its reason, the error estimate per time and the
// work done. sol[k] is the vector at the k-th output time.
type Solution struct {
	S       *expo.Solution
	Grid    *Grid  // grid of the operator, or nil
	Problem string // the equation solved, e.g. "u' = A u"
	Label   string // label of the operator
	// EndValues, when set, holds per output time the values prescribed at
	// an interval's Dirichlet ends by boundary data (NaN where none), shown
	// by the profiles in place of 0.
	EndValues [][2]float64
	// Complex: the operator was complex and S.Values[i] holds [Re u; Im u]
	// (see linop.Complex); sol[k] is then a complex vector and the
	// figures, norms and tables show moduli |u_k|.
	Complex bool
	// Energy, when set (a system from secondorder or firstorder), gives
	// the energy of a state; the table of output times then has a column
	// "energy E(t)".
	Energy func(x []float64) float64

	// Flow is what evaluating the solution between its output times needs
	// (the problem, to propagate again from an output time): set and read
	// by the builtin package, nil when the problem cannot be restarted.
	Flow any

	warned bool // the shortfall was reported once as a warning
}

func (s *Solution) Type() string { return "solution" }

// shortfall is the one-line statement that the tolerance asked was not
// met, or "" when it was. The numerics set Shortfall whenever TolMet is
// false after judging the estimates (expo.Solution.CheckTol).
func (s *Solution) shortfall() string {
	if s.S.TolMet || s.S.Shortfall == "" {
		return ""
	}
	return s.S.Shortfall
}

// Warnings implements value.Warner: a solution that missed its tolerance
// says so once in the output of the cell that made it, as well as in its
// display every time.
func (s *Solution) Warnings() []string {
	if m := s.shortfall(); m != "" && !s.warned {
		s.warned = true
		return []string{"propagate: " + m}
	}
	return nil
}

// Len is the number of output times.
func (s *Solution) Len() int { return len(s.S.Times) }

// Index returns the vector u(t_i) (a copy).
func (s *Solution) Index(i int) value.Value {
	if s.Complex {
		u := s.S.Values[i]
		n := len(u) / 2
		out := make([]complex128, n)
		for k := range out {
			out[k] = complex(u[k], u[n+k])
		}
		return value.ComplexVec(out)
	}
	return value.RealVec(append([]float64(nil), s.S.Values[i]...))
}

// shownValues is u(t_i) for a real solution and the moduli |u_k(t_i)| for
// a complex one: what the figures and norms show.
func (s *Solution) shownValues(i int) []float64 {
	u := s.S.Values[i]
	if !s.Complex {
		return u
	}
	n := len(u) / 2
	out := make([]float64, n)
	for k := range out {
		out[k] = math.Hypot(u[k], u[n+k])
	}
	return out
}

func g3(x float64) string {
	if x == 0 {
		return "0"
	}
	return fmt.Sprintf("%.3g", x)
}

func supNorm(u []float64) float64 {
	m := 0.0
	for _, x := range u {
		m = math.Max(m, math.Abs(x))
	}
	return m
}

// summary is the table of how the solution was computed.
func (s *Solution) summary() *textTable {
	S := s.S
	n := 0
	if len(S.Values) > 0 {
		n = len(S.Values[0])
	}
	if s.Complex {
		n /= 2
	}
	plural := "s"
	if len(S.Times) == 1 {
		plural = ""
	}
	kind := ""
	if s.Complex {
		kind = " complex"
	}
	t := &textTable{caption: fmt.Sprintf("solution of %s, A = %s, %d%s unknowns, %d output time%s", s.Problem, s.Label, n, kind, len(S.Times), plural), left: true}
	t.add("method", S.Method)
	t.add("why", S.Reason)
	t.add("tolerance", g3(S.Tol))
	if s.Complex {
		t.add("largest error estimate", g3(S.MaxErrEst())+" (‖·‖∞, max of the moduli)")
	} else {
		t.add("largest error estimate", g3(S.MaxErrEst())+" (‖·‖∞)")
	}
	if m := s.shortfall(); m != "" {
		t.add("tolerance met", "NO: "+m)
	} else {
		t.add("tolerance met", "yes")
	}
	if S.Escalation != "" {
		t.add("escalation", S.Escalation)
	}
	t.add("matrix–vector products", fmt.Sprint(S.MatVecs))
	t.add("shifted solves", fmt.Sprintf("%d (%d factorisations)", S.Solves, S.Factors))
	t.add("time taken", S.Elapsed.Round(time.Microsecond).String())
	if c := S.Cross; c != nil && c.Skipped != "" {
		t.add("cross-check", "not run: "+c.Skipped)
	} else if c != nil {
		t.add("cross-check", fmt.Sprintf("%s: largest difference %s (its estimate %s, %s)", c.Method, g3(c.MaxDiff), g3(c.ErrEst), c.Elapsed.Round(time.Microsecond)))
	} else {
		t.add("cross-check", "not asked (crosscheck=true runs a second method)")
	}
	return t
}

// Record is the solution's computation record for the display metadata:
// method, reason, tolerance, error estimates (∞-norm, one per output time),
// work and wall time, and the cross-check when one was run.
func (s *Solution) Record() map[string]any {
	S := s.S
	r := map[string]any{
		"method":       S.Method,
		"reason":       S.Reason,
		"tolerance":    S.Tol,
		"errest":       finiteOrNil(S.MaxErrEst()),
		"errest_times": finiteList(S.ErrEst),
		"times":        finiteList(S.Times),
		"matvecs":      S.MatVecs,
		"solves":       S.Solves,
		"seconds":      S.Elapsed.Seconds(),
		"problem":      s.Problem,
		"tol_met":      s.shortfall() == "",
	}
	if m := s.shortfall(); m != "" {
		r["shortfall"] = m
	}
	if S.Escalation != "" {
		r["escalation"] = S.Escalation
	}
	if c := S.Cross; c != nil && c.Skipped != "" {
		r["crosscheck"] = map[string]any{"method": c.Method, "skipped": c.Skipped}
	} else if c != nil {
		r["crosscheck"] = map[string]any{"method": c.Method, "maxdiff": finiteOrNil(c.MaxDiff), "errest": finiteOrNil(c.ErrEst)}
	}
	return r
}

// finiteOrNil keeps JSON valid: nan and ±inf become null.
func finiteOrNil(x float64) any {
	if math.IsNaN(x) || math.IsInf(x, 0) {
		return nil
	}
	return x
}

func finiteList(xs []float64) []any {
	out := make([]any, len(xs))
	for i, x := range xs {
		out[i] = finiteOrNil(x)
	}
	return out
}

// perTime is the table of output times with the error estimates.
func (s *Solution) perTime() *textTable {
	t := &textTable{head: []string{"t", "error estimate", "‖u(t)‖∞"}}
	if s.Energy != nil {
		t.head = append(t.head, "energy E(t)")
	}
	for i, tt := range s.S.Times {
		row := []string{value.FormatNum(tt), g3(s.S.ErrEst[i]), g3(supNorm(s.shownValues(i)))}
		if s.Energy != nil {
			row = append(row, g3(s.Energy(s.S.Values[i])))
		}
		t.add(row...)
	}
	return t
}

func (s *Solution) String() string {
	pt := s.perTime()
	if len(pt.rows) > 12 {
		rows := append(append([][]string{}, pt.rows[:6]...), []string{"..."})
		pt.rows = append(rows, pt.rows[len(pt.rows)-5:]...)
	}
	text := s.summary().text() + "\n" + pt.text()
	if m := s.shortfall(); m != "" {
		// The first line, where nobody can miss it.
		text = "WARNING: " + m + "\n" + text
	}
	return text
}

// MIME returns the HTML report and, where there is something to draw, the
// figure as SVG and PNG: the profiles at the output times on a 1-D grid, a
// heat map of the last time on a 2-D grid, and the components against t
// otherwise. The HTML shows a shortfall first, then the figure, the summary
// and the table per output time (folded away beyond FoldRows rows).
func (s *Solution) MIME() map[string]any {
	html := "<div>"
	if m := s.shortfall(); m != "" {
		html += `<p class="semiflow-warning"><strong>WARNING:</strong> ` + MathHTML(m) + `</p>`
	}
	out := map[string]any{}
	if f := s.Figure(); f != nil {
		html += addFigure(f, out)
	}
	pt := s.perTime()
	html += s.summary().html() + fold(pt.html(), len(pt.rows), pt.head)
	out["text/html"] = html + "</div>"
	return out
}

// shown picks at most max indices out of n, evenly spread, first and last
// included.
func shown(n, max int) []int {
	if n <= max {
		idx := make([]int, n)
		for i := range idx {
			idx[i] = i
		}
		return idx
	}
	idx := make([]int, max)
	for k := range idx {
		idx[k] = int(math.Round(float64(k) * float64(n-1) / float64(max-1)))
	}
	return idx
}

// Figure returns the figure of the solution, or nil when there is none.
func (s *Solution) Figure() *plot.Figure {
	S := s.S
	if len(S.Times) == 0 || len(S.Values[0]) == 0 {
		return nil
	}
	f := &plot.Figure{Title: "The solution at the output times"}
	uName := "u"
	if s.Complex {
		f.Title = "The modulus of the solution at the output times"
		uName = "|u|"
	}
	// The times in the legend, in one number format.
	when := func(idx []int) []string {
		ts := make([]float64, len(idx))
		for k, i := range idx {
			ts[k] = S.Times[i]
		}
		return plot.FormatLevels(ts)
	}
	switch {
	case s.Grid != nil && s.Grid.Dim() == 1:
		f.X.Label, f.Y.Label = "x", uName+"(t, x)"
		if s.Complex {
			f.Y.Label = "|u(t, x)|"
		}
		idx := shown(len(S.Times), 8)
		names := when(idx)
		for k, i := range idx {
			x, u := s.Grid.Profile(s.shownValues(i))
			if s.EndValues != nil && s.Grid.Kind == KindInterval {
				for side, v := range s.EndValues[i] {
					if !math.IsNaN(v) {
						u[side*(len(u)-1)] = v
					}
				}
			}
			cycleDash(f.AddLine(x, u, "t = "+names[k]), k)
		}
	case s.Grid != nil && s.Grid.Dim() == 3:
		// A heat map of the plane z = z_iz through the middle unknown
		// along z, at the last time.
		last := len(S.Times) - 1
		gx, gy, gz := s.Grid.X.X1(), s.Grid.Y.X1(), s.Grid.Z.X1()
		ny, nz := len(gy), len(gz)
		iz := nz / 2
		z := make([][]float64, len(gx))
		for ix := range z {
			z[ix] = make([]float64, ny)
			for iy := range z[ix] {
				z[ix][iy] = S.Values[last][(ix*ny+iy)*nz+iz]
			}
		}
		f.Title = fmt.Sprintf("The solution at t = %s on the plane z = %s (unknown %d of %d along z)", plot.FormatValue(S.Times[last]), plot.FormatValue(gz[iz]), iz+1, nz)
		f.X.Label, f.Y.Label = "x", "y"
		f.EqualAspect = true
		x0, x1 := cellEdges(gx)
		y0, y1 := cellEdges(gy)
		f.AddHeatMap(z, x0, x1, y0, y1, "u")
	case s.Grid != nil:
		last := len(S.Times) - 1
		gx, gy := s.Grid.X.X1(), s.Grid.Y.X1()
		ny := len(gy)
		z := make([][]float64, len(gx))
		lastValues := s.shownValues(last)
		for ix := range z {
			z[ix] = lastValues[ix*ny : (ix+1)*ny]
		}
		f.Title = fmt.Sprintf("The solution at t = %s", plot.FormatValue(S.Times[last]))
		if s.Complex {
			f.Title = fmt.Sprintf("The modulus of the solution at t = %s", plot.FormatValue(S.Times[last]))
		}
		f.X.Label, f.Y.Label = "x", "y"
		f.EqualAspect = true
		x0, x1 := cellEdges(gx)
		y0, y1 := cellEdges(gy)
		f.AddHeatMap(z, x0, x1, y0, y1, uName)
	case len(S.Times) > 1 && len(s.shownValues(0)) <= 12:
		f.Title = "Components of the solution"
		f.X.Label, f.Y.Label = "t", "u_i(t)"
		if s.Complex {
			f.Title, f.Y.Label = "Moduli of the components of the solution", "|u_i(t)|"
		}
		order := sortedTimes(S.Times)
		ts := make([]float64, len(order))
		for k, i := range order {
			ts[k] = S.Times[i]
		}
		for j := range s.shownValues(0) {
			y := make([]float64, len(order))
			for k, i := range order {
				y[k] = s.shownValues(i)[j]
			}
			cycleDash(f.AddLine(ts, y, fmt.Sprintf("u_%d", j)), j)
		}
	default:
		f.X.Label, f.Y.Label = "index i", "u_i"
		if s.Complex {
			f.Y.Label = "|u_i|"
		}
		times := shown(len(S.Times), 8)
		names := when(times)
		for k, i := range times {
			vals := s.shownValues(i)
			idx := make([]float64, len(vals))
			for j := range idx {
				idx[j] = float64(j)
			}
			cycleDash(f.AddLine(idx, vals, "t = "+names[k]), k)
		}
	}
	return f
}

// cycleDash dashes the k-th line once the palette's colours repeat, so
// that two curves of the same colour stay apart.
func cycleDash(l *plot.Line, k int) {
	if (k/len(plot.Palette))%2 == 1 {
		l.Dash = plot.Dashed
	}
}

// cellEdges returns the outer edges of cells centred on the (monotone)
// points p, in increasing order.
func cellEdges(p []float64) (lo, hi float64) {
	a, b := p[0], p[len(p)-1]
	if a > b {
		a, b = b, a
	}
	if len(p) == 1 {
		return a - 0.5, b + 0.5
	}
	h := (b - a) / float64(len(p)-1) / 2
	return a - h, b + h
}

func sortedTimes(ts []float64) []int {
	idx := make([]int, len(ts))
	for i := range idx {
		idx[i] = i
	}
	for i := 1; i < len(idx); i++ {
		for j := i; j > 0 && ts[idx[j]] < ts[idx[j-1]]; j-- {
			idx[j], idx[j-1] = idx[j-1], idx[j]
		}
	}
	return idx
}
