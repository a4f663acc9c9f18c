package objects

import (
	"fmt"
	"strings"

	"semiflow/lang/value"
	"semiflow/numerics/linop"
)

// LiftTerm is one part Vec·g(t) of the forcing through which the
// boundary data of a grid enter an operator built on it: a derivative on
// an interval whose ends carry data g is D u + Σ Vec_j g_j(t), D the
// derivative with homogeneous conditions (see grid.Interval.Lift). The
// operator itself stays the homogeneous D; propagate adds the terms as a
// forcing b(t).
type LiftTerm struct {
	Vec  []float64
	G    value.Value // value.Num or a value.Callable of t
	Side string      // "left" or "right", for the display
}

// scaled returns the terms with each vector multiplied by s.
func scaleLift(s float64, ts []LiftTerm) []LiftTerm {
	if ts == nil {
		return nil
	}
	out := make([]LiftTerm, len(ts))
	for k, t := range ts {
		v := make([]float64, len(t.Vec))
		for i, x := range t.Vec {
			v[i] = s * x
		}
		out[k] = LiftTerm{Vec: v, G: t.G, Side: t.Side}
	}
	return out
}

// mapLift returns the terms with each vector replaced by op·Vec: the data
// of B pass through the product A·B as A(Bu + b) = ABu + Ab.
func mapLift(op linop.Operator, ts []LiftTerm) []LiftTerm {
	if ts == nil {
		return nil
	}
	r, _ := op.Dims()
	out := make([]LiftTerm, len(ts))
	for k, t := range ts {
		v := make([]float64, r)
		op.Apply(v, t.Vec)
		out[k] = LiftTerm{Vec: v, G: t.G, Side: t.Side}
	}
	return out
}

// LiftConst returns Σ Vec_j g_j for the terms whose data are numbers, and
// whether every term is one (n is the order).
func LiftConst(ts []LiftTerm, n int) (b []float64, allConst bool) {
	b = make([]float64, n)
	allConst = true
	for _, t := range ts {
		g, ok := t.G.(value.Num)
		if !ok {
			allConst = false
			continue
		}
		for i, x := range t.Vec {
			b[i] += x * float64(g)
		}
	}
	return b, allConst
}

// dataText describes one end's datum: a number or the name of a function
// of t.
func dataText(g value.Value) string {
	if f, ok := g.(value.Callable); ok {
		return f.Name() + "(t)"
	}
	return g.String()
}

// liftText describes the boundary data an operator carries, or "" for
// none.
func liftText(ts []LiftTerm) string {
	if len(ts) == 0 {
		return ""
	}
	seen := map[string]bool{}
	var parts []string
	for _, t := range ts {
		s := fmt.Sprintf("%s %s", t.Side, dataText(t.G))
		if !seen[s] {
			seen[s] = true
			parts = append(parts, s)
		}
	}
	return "boundary data " + strings.Join(parts, ", ") + " (enter propagate as a forcing; A itself is homogeneous)"
}
