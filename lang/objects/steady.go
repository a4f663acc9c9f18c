package objects

import (
	"fmt"
	"math"

	"semiflow/lang/plot"
	"semiflow/lang/value"
	"semiflow/numerics/steady"
)

// SteadyState is the result of steadystate: a report (facts, the Newton
// history as a table, a figure of the state) that also carries the state
// and the linearisation there. s.state is the state as a vector; the
// linearisation builtin returns s's operator A + N'(u*).
type SteadyState struct {
	*Analysis
	Res    *steady.Result
	Lin    *Operator // A + N'(u*)
	warned bool
}

// Warnings implements value.Warner: a state whose error estimate misses the
// tolerance says so once on the cell's standard error.
func (s *SteadyState) Warnings() []string {
	if !s.Res.TolMet && !s.warned {
		s.warned = true
		return []string{"steadystate: " + s.shortfall()}
	}
	return nil
}

func (s *SteadyState) shortfall() string {
	return fmt.Sprintf("tolerance %s not met: the error estimate %s exceeds tol·‖u*‖∞ (the rounding of F amplified by ‖J⁻¹‖∞ ≈ %s sets a floor; a looser tol, or a better-conditioned discretisation, is needed)",
		fnum(s.Res.Tol), fnum(s.Res.ErrEst), fnum(s.Res.InvNorm))
}

// NewSteadyState builds the report of a steady state of A u + N(u) + f = 0
// on the operator a (whose grid, if any, draws the figure); guess is the
// starting vector, problem the equation in words; ends, if not nil, holds
// the values prescribed at the ends of an interval (NaN where none), for
// the figure.
func NewSteadyState(res *steady.Result, a *Operator, guess []float64, problem string, ends *[2]float64) *SteadyState {
	n := len(res.U)
	damped := 0
	for _, st := range res.Steps {
		if st.Damping < 1 {
			damped++
		}
	}
	lin := &Operator{Op: res.J, Grid: a.Grid, Label: "A + N'(u*)"}
	r := &Analysis{
		Kind:    "steady state",
		Title:   fmt.Sprintf("Steady state of %s, %d unknowns", problem, n),
		Columns: []string{"step", "‖F(u_k)‖∞", "‖Δu_k‖∞", "damping"},
		Method: fmt.Sprintf("Newton's method with a backtracking line search on ‖F‖₂; Jacobian A + N'(u), N'(u) %s; linear systems by %s",
			res.Jac.Describe(), res.Solver),
		Accuracy: fmt.Sprintf("‖u − u*‖∞ ≲ %s: the next Newton step ‖J⁻¹F(u)‖∞ = %s plus the rounding of F (%s) times ‖J⁻¹‖∞ ≈ %s (Hager–Higham estimate, a lower bound within a small factor)",
			fnum(res.ErrEst), fnum(res.NextStep), fnum(res.Rounding), fnum(res.InvNorm)),
		Data: res,
	}
	norm := 0.0
	for _, x := range res.U {
		norm = max(norm, abs(x))
	}
	r.Facts = []Fact{
		{"state", fmt.Sprintf("‖u*‖∞ = %s", fnum(norm))},
		{"residual", fmt.Sprintf("‖F(u*)‖∞ = %s", fnum(res.Residual))},
		{"error estimate", fmt.Sprintf("%s (tol %s·‖u*‖∞: %s)", fnum(res.ErrEst), fnum(res.Tol), met(res.TolMet))},
		{"‖J⁻¹‖∞", "≈ " + fnum(res.InvNorm)},
		{"Newton steps", fmt.Sprintf("%d (%d damped), %d evaluations of N", len(res.Steps), damped, res.Evals)},
		{"linearisation", "A + N'(u*): " + lin.Structure()},
	}
	for k, st := range res.Steps {
		r.Rows = append(r.Rows, []value.Value{value.Num(float64(k + 1)), num(st.Residual), num(st.Update), num(st.Damping)})
	}
	r.name("state", value.RealVec(append([]float64(nil), res.U...)))
	r.name("residual", num(res.Residual))
	r.name("errest", num(res.ErrEst))
	r.name("tol", num(res.Tol))
	r.name("tol_met", value.Bool(res.TolMet))
	r.name("steps", num(float64(len(res.Steps))))
	r.name("inverse_norm", num(res.InvNorm))
	r.name("evaluations", num(float64(res.Evals)))
	r.Figure = steadyFigure(res.U, guess, a.Grid, ends)
	s := &SteadyState{Analysis: r, Res: res, Lin: lin}
	if !res.TolMet {
		r.Title = "WARNING: " + s.shortfall() + "\n" + r.Title
	}
	return s
}

func met(ok bool) string {
	if ok {
		return "met"
	}
	return "NOT met"
}

func abs(x float64) float64 {
	if x < 0 {
		return -x
	}
	return x
}

// steadyFigure draws the state (and the guess, dashed) along a 1-D grid,
// as a heat map on a 2-D grid, or against the index.
func steadyFigure(u, guess []float64, g *Grid, ends *[2]float64) *plot.Figure {
	if len(u) == 0 {
		return nil
	}
	f := &plot.Figure{Title: "The steady state and the guess"}
	switch {
	case g != nil && g.Dim() == 1:
		f.X.Label, f.Y.Label = "x", "u(x)"
		withEnds := func(v []float64) []float64 {
			if ends != nil && g.Kind == KindInterval {
				for side, e := range ends {
					if !math.IsNaN(e) {
						v[side*(len(v)-1)] = e
					}
				}
			}
			return v
		}
		x, v := g.Profile(u)
		f.AddLine(x, withEnds(v), "steady state u*")
		x, v = g.Profile(guess)
		f.AddLine(x, withEnds(v), "guess").Dash = plot.Dashed
	case g != nil:
		gx, gy := g.X.X1(), g.Y.X1()
		ny := len(gy)
		z := make([][]float64, len(gx))
		for ix := range z {
			z[ix] = u[ix*ny : (ix+1)*ny]
		}
		f.Title = "The steady state"
		f.X.Label, f.Y.Label = "x", "y"
		f.EqualAspect = true
		x0, x1 := cellEdges(gx)
		y0, y1 := cellEdges(gy)
		f.AddHeatMap(z, x0, x1, y0, y1, "u*")
	default:
		f.X.Label, f.Y.Label = "index i", "u_i"
		idx := make([]float64, len(u))
		for i := range idx {
			idx[i] = float64(i)
		}
		f.AddLine(idx, u, "steady state u*")
		f.AddLine(idx, guess, "guess").Dash = plot.Dashed
	}
	return f
}

// Record adds the tolerance verdict to the report's record.
func (s *SteadyState) Record() map[string]any {
	r := s.Analysis.Record()
	r["tol_met"] = s.Res.TolMet
	if !s.Res.TolMet {
		r["shortfall"] = s.shortfall()
	}
	return r
}
