package builtin

import (
	"math"
	"strings"

	"semiflow/lang/eval"
	"semiflow/lang/objects"
	"semiflow/lang/value"
	"semiflow/numerics/grid"
)

// stretchedFamily: 1-D grids on given or mapped points, and the
// quadrature weights of any grid.
var stretchedFamily = []*Builtin{
	{
		Name: "stretched",
		Params: []value.Param{
			req("x", "the grid points: an increasing vector x_0 < … < x_{n−1}, or a map ξ ↦ x(ξ) of [0, 1], increasing, sampled at ξ_j = j/(n − 1)"),
			opt("n", value.None, "the number of points when x is a map"),
			opt("ends", value.Str("dirichlet"), `boundary condition at both ends, or a list [left, right]: "dirichlet", "neumann" or "robin" (as for interval; not periodic)`),
			opt("order", value.Num(2), "order of the finite differences, 2 or 4"),
			opt("alpha", value.Num(1), "α of the Robin condition αu + βu' = 0: one number for both ends or [left, right]"),
			opt("beta", value.Num(0), "β of the Robin condition αu + βu' = 0: one number for both ends or [left, right]"),
			opt("boundary", value.None, "boundary data [g_left, g_right], as for interval"),
		},
		Doc: "A 1-D grid on non-uniform points — given, or the image x_j = x(j/(n − 1)) of equally spaced ξ under a map, for a grid stretched where the solution varies fast — with the ends of interval. " +
			"Derivatives use the stencils of a uniform grid with weights for the actual offsets (exact on the same polynomials): the uniform grid's order on the image of a smooth increasing map, at least one order less on arbitrary points. " +
			"The quadrature weights (used by norms and weight=\"grid\") are the trapezoid rule on the points, (x_{j+1} − x_{j−1})/2, half an end interval at a kept end point: second order on a smooth map. " +
			"The fourth derivative's beam closures need equally spaced points and are refused here.",
		Examples: []Example{
			{"stretched([0, 0.1, 0.3, 0.6, 1])", "grid: stretched interval [0, 1], 5 points, h from 0.1 to 0.4, dirichlet ends, order 2, 3 unknowns"},
			{"coords(stretched(s -> s^2, n=5, ends=\"neumann\"))", "[0, 0.0625, 0.25, 0.5625, 1]"},
		},
		Impl: stretchedImpl,
	},
	{
		Name:   "quadrature",
		Params: []value.Param{req("g", "a grid")},
		Doc: "The quadrature weights w_k of the grid's unknowns, Σ_k w_k u_k ≈ ∫ u: the trapezoid rule on intervals (on a stretched grid on its points), Clenshaw–Curtis on Chebyshev points, products on tensor grids. " +
			"Dirichlet end points are not unknowns and carry no weight (u = 0 there); their neighbours' weights reach to them. These are the weights of weight=\"grid\" (the discrete L² inner product).",
		Examples: []Example{
			{"quadrature(interval(0, 1, 5, ends=\"neumann\"))", "[0.125, 0.25, 0.25, 0.25, 0.125]"},
			{"dot(quadrature(stretched(s -> s^2, n=41, ends=\"neumann\")), ones(41))", "1"},
		},
		Impl: func(c *eval.Call) (value.Value, error) {
			g, err := argGrid(c, 0)
			if err != nil {
				return nil, err
			}
			return value.RealVec(g.QuadWeights()), nil
		},
	},
}

func stretchedImpl(c *eval.Call) (value.Value, error) {
	kinds, err := endsArg(c, 2)
	if err != nil {
		return nil, err
	}
	order, err := argInt(c, 3)
	if err != nil {
		return nil, err
	}
	if order != 2 && order != 4 {
		return nil, value.ValueErrorf("stretched: order must be 2 or 4, not %d", order)
	}
	alpha, err := perEndReals(c, 4)
	if err != nil {
		return nil, err
	}
	beta, err := perEndReals(c, 5)
	if err != nil {
		return nil, err
	}
	if kinds[0] == "periodic" || kinds[1] == "periodic" {
		return nil, value.ValueErrorf("stretched: periodic ends need equally spaced points; use interval(a, b, n, ends=\"periodic\")")
	}
	x, err := stretchedPoints(c)
	if err != nil {
		return nil, err
	}
	least := order + 3
	if len(x) < least {
		return nil, value.ValueErrorf("stretched: %d points for differences of order %d (at least %d)", len(x), order, least)
	}
	for j := 1; j < len(x); j++ {
		if h := x[j] - x[j-1]; math.IsInf(1/(h*h), 0) || math.IsInf(h, 0) {
			return nil, value.ValueErrorf("stretched: the spacing x[%d] − x[%d] = %s is out of range for differences (1/h² must be finite)", j, j-1, value.FormatNum(h))
		}
	}
	e, err := makeEnds(c, kinds, alpha, beta)
	if err != nil {
		return nil, err
	}
	iv, err := grid.NewIntervalPoints(x, e[0], e[1])
	if err != nil {
		return nil, value.ValueErrorf("stretched: %s", strings.TrimPrefix(err.Error(), "grid: invalid grid: "))
	}
	g := &objects.Grid{Kind: objects.KindInterval, Interval: iv, Order: order}
	if g.Data, err = boundaryArg(c, 6, false); err != nil {
		return nil, err
	}
	return g, nil
}

// stretchedPoints reads the points of stretched: a vector, or a map
// sampled at n equally spaced ξ in [0, 1]. Points that do not increase
// are an error naming the first pair (and ξ for a map).
func stretchedPoints(c *eval.Call) ([]float64, error) {
	nv, err := c.Arg(1)
	if err != nil {
		return nil, err
	}
	var x []float64
	isMap := false
	switch f := c.Args[0].(type) {
	case value.Callable:
		if nv == value.None {
			return nil, value.ValueErrorf("stretched: x is a map ξ ↦ x(ξ); give the number of points as n")
		}
		n, err := argInt(c, 1)
		if err != nil {
			return nil, err
		}
		if n < 3 {
			return nil, value.ValueErrorf("stretched: n must be at least 3, not %d", n)
		}
		if err := c.CheckSize(float64(n), "stretched: the grid"); err != nil {
			return nil, err
		}
		xi := make([]float64, n)
		for j := range xi {
			xi[j] = float64(j) / float64(n-1)
		}
		if x, err = callVector(c, "the map x", f, n, value.RealVec(xi)); isStop(err) {
			return nil, err
		} else if err != nil || len(x) != n {
			// Point by point when the map does not act on vectors.
			x = make([]float64, n)
			for j, s := range xi {
				r, err := c.Apply(f, value.Num(s))
				if err != nil {
					return nil, err
				}
				v, ok := r.(value.Num)
				if !ok {
					return nil, value.TypeErrorf("stretched: the map x must return a number, but x(%s) is %s", value.FormatNum(s), value.TypeName(r))
				}
				x[j] = float64(v)
			}
		}
		x = append([]float64(nil), x...)
		isMap = true
	default:
		if nv != value.None {
			return nil, value.ValueErrorf("stretched: n applies to a map; the vector x gives the points itself")
		}
		re, cx, err := numbers(c, "x", f)
		if err != nil {
			return nil, err
		}
		if cx != nil {
			return nil, value.TypeErrorf("stretched: the points must be real")
		}
		x = append([]float64(nil), re...)
	}
	for j, v := range x {
		if math.IsNaN(v) || math.IsInf(v, 0) {
			return nil, value.ValueErrorf("stretched: the points must be finite; x[%d] = %s", j, value.FormatNum(v))
		}
		if j > 0 && !(v > x[j-1]) {
			if isMap {
				n := len(x)
				return nil, value.ValueErrorf("stretched: the map is not increasing: x(%s) = %s ≤ x(%s) = %s (points %d and %d); a grid's points must increase", value.FormatNum(float64(j)/float64(n-1)), value.FormatNum(v), value.FormatNum(float64(j-1)/float64(n-1)), value.FormatNum(x[j-1]), j, j-1)
			}
			return nil, value.ValueErrorf("stretched: the points must increase, but x[%d] = %s ≤ x[%d] = %s", j, value.FormatNum(v), j-1, value.FormatNum(x[j-1]))
		}
	}
	return x, nil
}
