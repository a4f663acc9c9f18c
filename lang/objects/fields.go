package objects

import (
	"math"

	"semiflow/lang/value"
	"semiflow/numerics/linop"
)

// Named is a number (or vector, or flag) of a report that a script can
// read by name: r.peak, r["peak"].
type Named struct {
	Name string
	X    value.Value
}

// name adds a named value to the report.
func (r *Analysis) name(key string, x value.Value) { r.Named = append(r.Named, Named{key, x}) }

// Field returns the value called name: one of the report's named numbers,
// a column of its table by its heading or by a typed name for a heading in
// mathematics (g.norms for ‖e^{tA}‖₂), or "method" and "accuracy"
// (strings).
func (r *Analysis) Field(name string) (value.Value, bool) {
	for _, n := range r.Named {
		if n.Name == name {
			return n.X, true
		}
	}
	for j, c := range r.Columns {
		if c == name {
			return r.column(j), true
		}
	}
	if j, ok := columnAliases[r.Kind][name]; ok && j < len(r.Columns) {
		return r.column(j), true
	}
	switch name {
	case "method":
		return value.Str(r.Method), true
	case "accuracy":
		return value.Str(r.Accuracy), true
	}
	return nil, false
}

// FieldNames lists the named numbers, the column headings and "method",
// "accuracy".
func (r *Analysis) FieldNames() []string {
	var out []string
	for _, n := range r.Named {
		out = append(out, n.Name)
	}
	for _, a := range aliasOrder[r.Kind] {
		if columnAliases[r.Kind][a] < len(r.Columns) {
			out = append(out, a)
		}
	}
	out = append(out, r.Columns...)
	return append(out, "method", "accuracy")
}

// columnAliases give the table columns whose headings are mathematics
// (‖e^{tA}‖₂, Re λ) a name that can be typed: g.norms, s.re.
var columnAliases = map[string]map[string]int{
	"spectrum":       {"re": 2, "im": 3},
	"numrange":       {"angles": 0, "boundary": 1, "support": 4},
	"pseudospectrum": {"levels": 0, "abscissae": 1, "ratios": 2, "points": 3},
	"resolventline":  {"im": 0, "norms": 1},
	"growth":         {"norms": 1},
	"generator":      {"powers": 0, "M_n": 1, "lambdas": 2},
	"steady state":   {"residuals": 1, "updates": 2},
}

// aliasOrder lists each kind's aliases in column order, for FieldNames.
var aliasOrder = map[string][]string{
	"spectrum":       {"re", "im"},
	"numrange":       {"angles", "boundary", "support"},
	"pseudospectrum": {"levels", "abscissae", "ratios", "points"},
	"resolventline":  {"im", "norms"},
	"growth":         {"norms"},
	"generator":      {"powers", "M_n", "lambdas"},
	"steady state":   {"residuals", "updates"},
}

// column returns column j of the table as a vector (a list when it holds
// strings).
func (r *Analysis) column(j int) value.Value {
	cells := make([]value.Value, len(r.Rows))
	for i, row := range r.Rows {
		cells[i] = row[j]
	}
	return cellsVec(cells)
}

// Field returns the quantity's number as "value", and "method",
// "accuracy".
func (q *Quantity) Field(name string) (value.Value, bool) {
	switch name {
	case "value":
		return q.X, true
	case "method":
		return value.Str(q.Method), true
	case "accuracy":
		return value.Str(q.Accuracy), true
	}
	return nil, false
}

// FieldNames lists value, method and accuracy.
func (q *Quantity) FieldNames() []string { return []string{"value", "method", "accuracy"} }

// solutionFields are the named parts of a solution, in the order listed.
var solutionFields = []string{"times", "final", "norms", "errest", "errest_times", "tol", "tol_met", "matvecs", "solves", "factorisations", "seconds", "crossdiff", "cross_errest", "method"}

// Field returns a named part of the solution, one for each number its
// display shows: times (vector), final (u at the last time), norms
// (‖u(t)‖∞ per time), errest (the largest error estimate), errest_times
// (one per time), tol, tol_met, matvecs, solves, factorisations, seconds
// (wall time), crossdiff and cross_errest (nan when no cross-check ran)
// and method.
func (s *Solution) Field(name string) (value.Value, bool) {
	S := s.S
	switch name {
	case "times":
		return value.RealVec(append([]float64(nil), S.Times...)), true
	case "final":
		if len(S.Values) == 0 {
			return value.RealVec(nil), true
		}
		return s.Index(len(S.Values) - 1), true
	case "errest":
		return value.Num(S.MaxErrEst()), true
	case "errest_times":
		return value.RealVec(append([]float64(nil), S.ErrEst...)), true
	case "tol":
		return value.Num(S.Tol), true
	case "tol_met":
		return value.Bool(s.shortfall() == ""), true
	case "matvecs":
		return value.Num(float64(S.MatVecs)), true
	case "solves":
		return value.Num(float64(S.Solves)), true
	case "norms":
		n := make([]float64, len(S.Values))
		for i := range S.Values {
			n[i] = supNorm(s.shownValues(i))
		}
		return value.RealVec(n), true
	case "factorisations":
		return value.Num(float64(S.Factors)), true
	case "seconds":
		return value.Num(S.Elapsed.Seconds()), true
	case "crossdiff", "cross_errest":
		if c := S.Cross; c != nil && c.Skipped == "" {
			if name == "crossdiff" {
				return value.Num(c.MaxDiff), true
			}
			return value.Num(c.ErrEst), true
		}
		return value.Num(math.NaN()), true
	case "method":
		return value.Str(S.Method), true
	}
	return nil, false
}

// FieldNames lists the solution's named parts.
func (s *Solution) FieldNames() []string { return append([]string(nil), solutionFields...) }

// NewTable returns a table of numbers with named columns (Kind "table"):
// t.name (or t["name"]) is a column as a vector, t[i] row i, t[i, j] an
// entry. Each cell is a value.Num or value.Complex.
func NewTable(title string, columns []string, rows [][]value.Value) *Analysis {
	return &Analysis{Kind: "table", Title: title, Columns: columns, Rows: rows}
}

// Field returns a number the grid's display shows: unknowns, and for an
// interval a, b, points, h and order; for a Chebyshev grid a, b and
// degree; for a tensor grid its factors x and y (grids).
func (g *Grid) Field(name string) (value.Value, bool) {
	if name == "unknowns" {
		return value.Num(float64(g.Size())), true
	}
	switch g.Kind {
	case KindInterval:
		iv := g.Interval
		switch name {
		case "a":
			return value.Num(iv.A), true
		case "b":
			return value.Num(iv.B), true
		case "points":
			return value.Num(float64(iv.N)), true
		case "h":
			return value.Num(iv.H), true
		case "order":
			return value.Num(float64(g.Order)), true
		}
	case KindChebyshev:
		switch name {
		case "a":
			return value.Num(g.Cheb.A), true
		case "b":
			return value.Num(g.Cheb.B), true
		case "degree":
			return value.Num(float64(g.Cheb.N)), true
		}
	case KindTensor:
		switch name {
		case "x":
			return g.X, true
		case "y":
			return g.Y, true
		case "z":
			if g.Z != nil {
				return g.Z, true
			}
		}
	}
	return nil, false
}

// FieldNames lists the grid's named parts.
func (g *Grid) FieldNames() []string {
	switch g.Kind {
	case KindInterval:
		return []string{"a", "b", "points", "h", "order", "unknowns"}
	case KindChebyshev:
		return []string{"a", "b", "degree", "unknowns"}
	}
	if g.Z != nil {
		return []string{"x", "y", "z", "unknowns"}
	}
	return []string{"x", "y", "unknowns"}
}

// Field returns rows, cols, nonzeros (a sparse operator only) or grid (the
// grid it acts on, when it has one).
func (a *Operator) Field(name string) (value.Value, bool) {
	r, c := a.Op.Dims()
	switch name {
	case "rows":
		return value.Num(float64(r)), true
	case "cols":
		return value.Num(float64(c)), true
	case "nonzeros":
		if s, ok := a.Op.(*linop.CSR); ok {
			return value.Num(float64(s.NNZ())), true
		}
	case "grid":
		if a.Grid != nil {
			return a.Grid, true
		}
	}
	return nil, false
}

// FieldNames lists the operator's named parts.
func (a *Operator) FieldNames() []string {
	out := []string{"rows", "cols"}
	if _, ok := a.Op.(*linop.CSR); ok {
		out = append(out, "nonzeros")
	}
	if a.Grid != nil {
		out = append(out, "grid")
	}
	return out
}
