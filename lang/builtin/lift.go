package builtin

import (
	"math"

	"semiflow/lang/eval"
	"semiflow/lang/objects"
	"semiflow/lang/value"
	"semiflow/numerics/expo"
)

// withLift returns the forcing of u' = Au + f(t) + b(t): the user's f
// (nil for none) plus b(t) = Σ Vec_j g_j(t), the boundary data the
// operator carries (objects.LiftTerm). Constant data and a constant or
// absent f stay a constant forcing; otherwise the sum is a function of t,
// assumed smooth between the switches given. The first error of a datum
// g_j(t) (not a finite number) is kept in *callErr, as for a forcing
// function.
func withLift(c *eval.Call, lift []objects.LiftTerm, user *expo.Forcing, n int, switches []float64, callErr *error) (*expo.Forcing, error) {
	b, allConst := objects.LiftConst(lift, n)
	if allConst && (user == nil || user.Const != nil) {
		if user != nil {
			for i, x := range user.Const {
				b[i] += x
			}
		}
		return &expo.Forcing{Const: b}, nil
	}
	for _, t := range lift {
		if _, ok := t.G.(value.Callable); ok {
			if _, err := callDatum(c, t.G, t.Side, 0); err != nil {
				return nil, err
			}
		}
	}
	var userF func(float64, []float64)
	var userC []float64
	if user != nil {
		userF, userC = user.Func, user.Const
	}
	tmp := make([]float64, n)
	f := func(t float64, dst []float64) {
		copy(dst, b)
		if userC != nil {
			for i, x := range userC {
				dst[i] += x
			}
		}
		if userF != nil {
			userF(t, tmp)
			for i, x := range tmp {
				dst[i] += x
			}
		}
		for _, term := range lift {
			if _, ok := term.G.(value.Callable); !ok || *callErr != nil {
				continue
			}
			g, err := callDatum(c, term.G, term.Side, t)
			if err != nil {
				*callErr = err
				return
			}
			for i, x := range term.Vec {
				dst[i] += x * g
			}
		}
	}
	return &expo.Forcing{Breaks: switches, Func: f}, nil
}

// callDatum evaluates the boundary datum g at time t: a finite number.
func callDatum(c *eval.Call, g value.Value, side string, t float64) (float64, error) {
	r, err := c.Apply(g, value.Num(t))
	if err != nil {
		return 0, err
	}
	num, ok := r.(value.Num)
	if !ok {
		return 0, value.TypeErrorf("%s: the boundary datum at the %s end must return a number, but at t = %s it returned %s", c.Name, side, value.FormatNum(t), value.TypeName(r))
	}
	if math.IsNaN(float64(num)) || math.IsInf(float64(num), 0) {
		return 0, value.ValueErrorf("%s: the boundary datum at the %s end must be finite, but at t = %s it is %s", c.Name, side, value.FormatNum(t), value.FormatNum(float64(num)))
	}
	return float64(num), nil
}

// liftHasFunc reports whether a datum is a function of t.
func liftHasFunc(lift []objects.LiftTerm) bool {
	for _, t := range lift {
		if _, ok := t.G.(value.Callable); ok {
			return true
		}
	}
	return false
}

// endValues returns, for a solution on an interval with boundary data,
// the values prescribed at its Dirichlet ends at each time (NaN at an end
// that is not Dirichlet or has no datum), so the profile shows them; nil
// otherwise.
func endValues(c *eval.Call, a *objects.Operator, times []float64) ([][2]float64, error) {
	g := a.Grid
	if len(a.Lift) == 0 || g == nil || g.Kind != objects.KindInterval {
		return nil, nil
	}
	out := make([][2]float64, len(times))
	for i, t := range times {
		for side := range 2 {
			out[i][side] = math.NaN()
			d := g.Data[side]
			if d == nil {
				continue
			}
			v := 0.0
			if num, ok := d.(value.Num); ok {
				v = float64(num)
			} else {
				var err error
				if v, err = callDatum(c, d, sideName[side], t); err != nil {
					return nil, err
				}
			}
			if u, ok := g.Interval.EndValue(side, v); ok {
				out[i][side] = u
			}
		}
	}
	return out, nil
}
