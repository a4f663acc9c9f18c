package builtin

import (
	"fmt"
	"math"
	"sort"
	"strings"

	"semiflow/lang/eval"
	"semiflow/lang/objects"
	"semiflow/lang/syntax"
	"semiflow/lang/value"
	"semiflow/numerics/grid"
)

// objectFamily is the family of grids, operators and propagation, kept in
// three files (grids.go, operators.go, propagate.go).
var objectFamily = join(gridFamily, stretchedFamily, operatorFamily, propagateFamily)

func join(fams ...[]*Builtin) []*Builtin {
	var out []*Builtin
	for _, f := range fams {
		out = append(out, f...)
	}
	return out
}

// gridFamily: 1-D and 2-D grids and grid functions.
var gridFamily = []*Builtin{
	{
		Name: "interval",
		Params: []value.Param{
			req("a", "left end"),
			req("b", "right end, b > a"),
			req("n", "number of grid points, counting both ends (for periodic ends x = b is x = a and there are n unknowns)"),
			opt("ends", value.Str("dirichlet"), `boundary condition at both ends, or a list [left, right] of two: "dirichlet" (u = 0), "neumann" (u' = 0), "robin" (αu + βu' = 0) or "periodic" (both ends only)`),
			opt("order", value.Num(2), "order of the finite differences, 2 or 4"),
			opt("alpha", value.Num(1), "α of the Robin condition αu + βu' = 0: one number for both ends or [left, right]"),
			opt("beta", value.Num(0), "β of the Robin condition αu + βu' = 0: one number for both ends or [left, right]"),
			opt("boundary", value.None, "boundary data [g_left, g_right]: the right-hand sides of the end conditions (u = g, u' = g, αu + βu' = g), each a number or a function g(t); none for 0 at both ends"),
		},
		Doc: "The uniform grid x_j = a + j h, h = (b − a)/(n − 1), j = 0..n−1, on [a, b] with a boundary condition at both ends and finite differences of order 2 or 4. " +
			"The unknowns of a grid function are the points where u is not prescribed: Dirichlet end points are left out (u = 0 there); with periodic ends h = (b − a)/n and x = b is identified with x = a. " +
			"Robin ends impose αu + βu' = 0 with u' = du/dx (not the outward normal derivative) at either end. " +
			`The two ends may differ: ends=["dirichlet", "neumann"] is u(a) = 0, u'(b) = 0, and alpha, beta given as [left, right] set each Robin end's coefficients. ` +
			"Non-zero boundary data (boundary=[g_left, g_right], numbers or functions of t) are lifted into a forcing: deriv and laplacian on the grid stay homogeneous operators A and carry the data, so that a derivative of the grid function is A u + b(t), and propagate adds b(t) to any forcing given (spectrum, growth and the other analyses see A alone). " +
			"A function g(t) is taken as smooth; give the times where it jumps to propagate as switches.",
		Examples: []Example{
			{"interval(0, 1, 11)", "grid: interval [0, 1], 11 points, h = 0.1, dirichlet ends, order 2, 9 unknowns"},
			{`interval(0, 2*pi, 64, ends="periodic", order=4)`, "grid: interval [0, 6.283185307], 64 points, h = 0.0981748, periodic ends, order 4, 64 unknowns"},
			{`interval(0, 1, 11, ends=["dirichlet", "robin"], alpha=[0, 2], beta=[0, 1])`, "grid: interval [0, 1], 11 points, h = 0.1, left end dirichlet, right end robin 2·u + 1·u' = 0, order 2, 10 unknowns"},
		},
		Impl: intervalImpl,
	},
	{
		Name: "chebyshev",
		Params: []value.Param{
			req("n", "polynomial degree N ≥ 2: the grid has N + 1 points"),
			opt("a", value.Num(-1), "left end"),
			opt("b", value.Num(1), "right end, b > a"),
		},
		Doc: "The Chebyshev points x_j = (a+b)/2 + (b−a)/2 cos(jπ/N), j = 0..N, with spectral differentiation: derivatives are those of the polynomial of degree N through the values. " +
			"The ends carry homogeneous Dirichlet conditions, so the unknowns are the N − 1 interior points (in decreasing order of x); d²/dx² on them has the eigenvalues of the Dirichlet problem to spectral accuracy.",
		Examples: []Example{
			{"chebyshev(16)", "grid: chebyshev [-1, 1], degree 16, dirichlet ends, 15 unknowns"},
			{"coords(chebyshev(4))", "[0.7071067812, 0, -0.7071067812]"},
		},
		Impl: func(c *eval.Call) (value.Value, error) {
			n, err := argInt(c, 0)
			if err != nil {
				return nil, err
			}
			a, err := argReal(c, 1)
			if err != nil {
				return nil, err
			}
			b, err := argReal(c, 2)
			if err != nil {
				return nil, err
			}
			if n < 2 {
				return nil, value.ValueErrorf("chebyshev: n must be at least 2 (one interior point), not %d", n)
			}
			if !(a < b) || math.IsInf(a, 0) || math.IsInf(b, 0) {
				return nil, value.ValueErrorf("chebyshev: needs finite ends a < b, got a = %s, b = %s", value.FormatNum(a), value.FormatNum(b))
			}
			if math.IsInf(b-a, 0) {
				return nil, value.ValueErrorf("chebyshev: the length b − a of [%s, %s] overflows double precision", value.FormatNum(a), value.FormatNum(b))
			}
			if err := c.CheckSize(float64(n)*float64(n), "chebyshev: the differentiation matrix"); err != nil {
				return nil, err
			}
			g, err := grid.NewChebyshev(a, b, n)
			if err != nil {
				return nil, value.ValueErrorf("chebyshev: %s", strings.TrimPrefix(err.Error(), "grid: "))
			}
			return &objects.Grid{Kind: objects.KindChebyshev, Cheb: g}, nil
		},
	},
	{
		Name: "tensorgrid",
		Params: []value.Param{
			req("gx", "the 1-D grid along x"),
			req("gy", "the 1-D grid along y"),
			opt("gz", value.None, "the 1-D grid along z, for a 3-D grid; none for 2-D"),
		},
		Doc: "The tensor-product grid of two or three 1-D grids: its unknowns are the pairs (x_ix, y_iy) of unknowns of gx and gy, numbered k = ix·ny + iy (y fastest), or with gz the triples numbered k = (ix·ny + iy)·nz + iz (z fastest). " +
			"Derivatives along an axis are the factor's derivative in its place of a Kronecker product with identities (D_x ⊗ I_ny, I_nx ⊗ D_y; in 3-D I_nx ⊗ D_y ⊗ I_nz and so on), and the Laplacian is the Kronecker sum D2_x ⊕ D2_y (⊕ D2_z), which propagate applies as e^{tD2_x} ⊗ e^{tD2_y} (⊗ e^{tD2_z}) by products along each axis.",
		Examples: []Example{
			{"tensorgrid(interval(0, 1, 5), interval(0, 2, 6))", "grid: tensor 3×4 unknowns\n  x: interval [0, 1], 5 points, h = 0.25, dirichlet ends, order 2, 3 unknowns\n  y: interval [0, 2], 6 points, h = 0.4, dirichlet ends, order 2, 4 unknowns"},
			{"tensorgrid(interval(0, 1, 5), interval(0, 1, 6), interval(0, 1, 7)).unknowns", "60"},
		},
		Impl: func(c *eval.Call) (value.Value, error) {
			var gs []*objects.Grid
			for i := 0; i < 3; i++ {
				if i == 2 && c.Args[2] == value.None {
					break
				}
				g, err := argGrid(c, i)
				if err != nil {
					return nil, err
				}
				if g.Dim() != 1 {
					return nil, value.ValueErrorf("tensorgrid: %s must be a 1-D grid, not a %d-D one", paramName(c, i), g.Dim())
				}
				if g.HasData() {
					return nil, value.ValueErrorf("tensorgrid: %s carries boundary data, which on a tensor grid would vary along the boundary; give the factors homogeneous ends and the data as a forcing", paramName(c, i))
				}
				gs = append(gs, g)
			}
			size := 1.0
			for _, g := range gs {
				size *= float64(g.Size())
			}
			if err := c.CheckSize(size, "tensorgrid: the grid"); err != nil {
				return nil, err
			}
			if len(gs) == 3 {
				return objects.NewTensor3(gs[0], gs[1], gs[2]), nil
			}
			return objects.NewTensor(gs[0], gs[1]), nil
		},
	},
	{
		Name: "coords",
		Params: []value.Param{
			req("g", "a grid"),
			opt("axis", value.Str("x"), `"x", "y" (2-D and 3-D grids) or "z" (3-D grids)`),
		},
		Doc: "The coordinate vector of the grid's unknowns: x_k for a 1-D grid; on a tensor grid the x (or y, or z) value of every unknown in the order k = ix·ny + iy (k = (ix·ny + iy)·nz + iz in 3-D).",
		Examples: []Example{
			{"coords(interval(0, 1, 5))", "[0.25, 0.5, 0.75]"},
			{`coords(tensorgrid(interval(0, 1, 5), interval(0, 1, 5)), axis="y")`, "[0.25, 0.5, 0.75, 0.25, 0.5, 0.75, 0.25, 0.5, 0.75]"},
		},
		Impl: func(c *eval.Call) (value.Value, error) {
			g, err := argGrid(c, 0)
			if err != nil {
				return nil, err
			}
			axis, err := argChoice(c, 1, "x", "y", "z")
			if err != nil {
				return nil, err
			}
			d := strings.Index("xyz", axis)
			if d >= g.Dim() {
				return nil, value.ValueErrorf("coords: axis=%q needs a %d-D grid; this grid is %d-D", axis, d+1, g.Dim())
			}
			if g.Dim() == 1 {
				return value.RealVec(g.X1()), nil
			}
			return value.RealVec(g.CoordsAll()[d]), nil
		},
	},
	{
		Name: "tabulate",
		Params: []value.Param{
			req("f", "a function f(x) (1-D grid), f(x, y) (2-D grid) or f(x, y, z) (3-D grid) returning a number, or a number"),
			req("g", "a grid"),
		},
		Doc: "The grid function u_k = f(x_k) (or f(x_k, y_k), f(x_k, y_k, z_k) on a tensor grid) at the grid's unknowns, as a vector (complex when f gives complex values). A number gives the constant function. " +
			"f is first called once with the coordinate vectors (arithmetic acts entry-wise) and, if that does not give one number per unknown, once per unknown.",
		Examples: []Example{
			{"f(x) = x^2; tabulate(f, interval(0, 1, 5))", "[0.0625, 0.25, 0.5625]"},
			{"tabulate(3, interval(0, 1, 5))", "[3, 3, 3]"},
		},
		Impl: func(c *eval.Call) (value.Value, error) {
			g, err := argGrid(c, 1)
			if err != nil {
				return nil, err
			}
			re, im, err := sampleOnComplex(c, "f", c.Args[0], g)
			if err != nil {
				return nil, err
			}
			if im == nil {
				return value.RealVec(re), nil
			}
			z := make([]complex128, len(re))
			for i := range z {
				z[i] = complex(re[i], im[i])
			}
			return value.ComplexVec(z), nil
		},
	},
}

func intervalImpl(c *eval.Call) (value.Value, error) {
	a, err := argReal(c, 0)
	if err != nil {
		return nil, err
	}
	b, err := argReal(c, 1)
	if err != nil {
		return nil, err
	}
	n, err := argInt(c, 2)
	if err != nil {
		return nil, err
	}
	kinds, err := endsArg(c, 3)
	if err != nil {
		return nil, err
	}
	order, err := argInt(c, 4)
	if err != nil {
		return nil, err
	}
	if order != 2 && order != 4 {
		return nil, value.ValueErrorf("interval: order must be 2 or 4, not %d", order)
	}
	alpha, err := perEndReals(c, 5)
	if err != nil {
		return nil, err
	}
	beta, err := perEndReals(c, 6)
	if err != nil {
		return nil, err
	}
	if !(a < b) || math.IsInf(a, 0) || math.IsInf(b, 0) {
		return nil, value.ValueErrorf("interval: needs finite ends a < b, got a = %s, b = %s", value.FormatNum(a), value.FormatNum(b))
	}
	if err := c.CheckSize(float64(n), "interval: the grid"); err != nil {
		return nil, err
	}
	periodic := kinds[0] == "periodic" || kinds[1] == "periodic"
	if periodic && kinds[0] != kinds[1] {
		return nil, value.ValueErrorf("interval: a periodic grid is periodic at both ends, not %q at the left end and %q at the right", kinds[0], kinds[1])
	}
	// The fewest points the stencils of the order need: the central
	// stencil and its one-sided closures (order + 3 points) at ends, the
	// central stencil alone (order + 1) on a periodic grid.
	least := order + 3
	if periodic {
		least = order + 1
	}
	if n < least && periodic {
		return nil, value.ValueErrorf("interval: periodic grid of %d points for order %d (at least %d)", n, order, least)
	}
	if n < least {
		return nil, value.ValueErrorf("interval: %d points for a derivative of order %d (at least %d)", n, order, least)
	}
	cells := float64(n - 1)
	if periodic {
		cells = float64(n)
	}
	if h := (b - a) / cells; math.IsInf(b-a, 0) || math.IsInf(1/(h*h), 0) {
		return nil, value.ValueErrorf("interval: the spacing h = (b − a)/%s is out of range for differences (1/h² must be finite); got a = %s, b = %s", value.FormatNum(cells), value.FormatNum(a), value.FormatNum(b))
	}
	e, err := makeEnds(c, kinds, alpha, beta)
	if err != nil {
		return nil, err
	}
	iv, err := grid.NewInterval(a, b, n, e[0], e[1])
	if err != nil {
		return nil, value.ValueErrorf("interval: %s", strings.TrimPrefix(err.Error(), "grid: invalid grid: "))
	}
	g := &objects.Grid{Kind: objects.KindInterval, Interval: iv, Order: order}
	if g.Data, err = boundaryArg(c, 7, periodic); err != nil {
		return nil, err
	}
	// Too few points for the stencils is reported now rather than by the
	// first derivative built on the grid. Grids of more than 8 points have
	// enough for both orders, and building D2 of a large grid is not free.
	if n <= 8 {
		if _, err := iv.D2(order); err != nil {
			return nil, value.ValueErrorf("interval: %s", strings.TrimPrefix(err.Error(), "grid: invalid grid: "))
		}
	}
	return g, nil
}

// makeEnds returns the end conditions named by kinds, with the Robin
// coefficients of each end.
func makeEnds(c *eval.Call, kinds [2]string, alpha, beta [2]float64) ([2]grid.End, error) {
	var e [2]grid.End
	for side, kind := range kinds {
		switch kind {
		case "dirichlet":
			e[side] = grid.DirichletEnd
		case "neumann":
			e[side] = grid.NeumannEnd
		case "periodic":
			e[side] = grid.PeriodicEnd
		case "robin":
			if alpha[side] == 0 && beta[side] == 0 {
				return e, value.ValueErrorf("%s: the Robin condition αu + βu' = 0 at the %s end needs α or β non-zero; both are 0", c.Name, sideName[side])
			}
			e[side] = grid.RobinEnd(alpha[side], beta[side])
		}
	}
	return e, nil
}

// boundaryArg is argument i as the boundary data [g_left, g_right]: each
// a finite number or a function of t (nil stands for 0).
func boundaryArg(c *eval.Call, i int, periodic bool) ([2]value.Value, error) {
	var out [2]value.Value
	v, err := c.Arg(i)
	if err != nil || v == value.None {
		return out, err
	}
	name := paramName(c, i)
	var items []value.Value
	switch t := v.(type) {
	case value.List:
		items = t
	case *value.Vec, *value.Range:
		s := t.(value.Indexable)
		for k := 0; k < s.Len(); k++ {
			items = append(items, s.Index(k))
		}
	default:
		return out, value.TypeErrorf("%s: %s must be a list [g_left, g_right] of numbers or functions of t, not %s", c.Name, name, value.TypeName(v))
	}
	if len(items) != 2 {
		return out, value.ValueErrorf("%s: %s holds the data at the left and the right end: two entries, not %d", c.Name, name, len(items))
	}
	for side, it := range items {
		switch g := it.(type) {
		case value.Num:
			if math.IsNaN(float64(g)) || math.IsInf(float64(g), 0) {
				return out, value.ValueErrorf("%s: %s at the %s end must be finite, not %s", c.Name, name, sideName[side], value.FormatNum(float64(g)))
			}
			if g != 0 {
				out[side] = g
			}
		case value.Callable:
			if requiredParams(g) > 1 || (len(g.Params()) < 1 && !variadic(g)) {
				return out, value.TypeErrorf("%s: %s at the %s end must be a function of t alone, not %s", c.Name, name, sideName[side], eval.SignatureText(g.Name(), g.Params()))
			}
			out[side] = g
		default:
			return out, value.TypeErrorf("%s: %s at the %s end must be a number or a function of t, not %s", c.Name, name, sideName[side], value.TypeName(it))
		}
	}
	if periodic && (out[0] != nil || out[1] != nil) {
		return out, value.ValueErrorf("%s: a periodic grid has no ends to carry boundary data", c.Name)
	}
	return out, nil
}

// sideName names the ends of an interval, left (index 0) and right (1).
var sideName = [2]string{"left", "right"}

// endKinds are the boundary conditions an interval's end may carry.
var endKinds = []string{"dirichlet", "neumann", "periodic", "robin"}

// endsArg is argument i as the conditions at the two ends: one name for
// both, or a list [left, right] of two names.
func endsArg(c *eval.Call, i int) ([2]string, error) {
	v, err := c.Arg(i)
	if err != nil {
		return [2]string{}, err
	}
	check := func(s value.Value, where string) (string, error) {
		str, ok := s.(value.Str)
		if !ok {
			return "", value.TypeErrorf("%s: %s must be a condition name or a list [left, right] of two, not %s", c.Name, where, value.TypeName(s))
		}
		for _, k := range endKinds {
			if string(str) == k {
				return k, nil
			}
		}
		q := make([]string, len(endKinds))
		for k, v := range endKinds {
			q[k] = fmt.Sprintf("%q", v)
		}
		return "", value.ValueErrorf("%s: unknown %s %q; valid values are %s", c.Name, where, syntax.Shorten(string(str), syntax.QuoteWidth), strings.Join(q, ", "))
	}
	name := paramName(c, i)
	if l, ok := v.(value.List); ok {
		if len(l) != 2 {
			return [2]string{}, value.ValueErrorf("%s: %s as a list names the left and the right end: two entries, not %d", c.Name, name, len(l))
		}
		var out [2]string
		for side := range out {
			if out[side], err = check(l[side], fmt.Sprintf("%s[%d] (%s end)", name, side, sideName[side])); err != nil {
				return out, err
			}
		}
		return out, nil
	}
	k, err := check(v, name)
	return [2]string{k, k}, err
}

// perEndReals is argument i as a finite real for both ends, or a vector
// [left, right] of two.
func perEndReals(c *eval.Call, i int) ([2]float64, error) {
	v, err := c.Arg(i)
	if err != nil {
		return [2]float64{}, err
	}
	re, cx, err := numbers(c, paramName(c, i), v)
	if err != nil {
		return [2]float64{}, err
	}
	if cx != nil {
		return [2]float64{}, value.TypeErrorf("%s: %s must be real, not complex", c.Name, paramName(c, i))
	}
	var out [2]float64
	switch len(re) {
	case 1:
		out = [2]float64{re[0], re[0]}
	case 2:
		if _, one := v.(value.Num); !one {
			out = [2]float64{re[0], re[1]}
			break
		}
		fallthrough
	default:
		return out, value.ValueErrorf("%s: %s is one number for both ends or [left, right], not %d numbers", c.Name, paramName(c, i), len(re))
	}
	for side, x := range out {
		if math.IsNaN(x) || math.IsInf(x, 0) {
			return out, value.ValueErrorf("%s: %s at the %s end must be finite, not %s", c.Name, paramName(c, i), sideName[side], value.FormatNum(x))
		}
	}
	return out, nil
}

// sampleOn evaluates f (a function or a number) at the unknowns of g; f
// must give real values.
func sampleOn(c *eval.Call, name string, f value.Value, g *objects.Grid) ([]float64, error) {
	re, im, err := sampleOnComplex(c, name, f, g)
	if err != nil {
		return nil, err
	}
	if im != nil {
		return nil, value.TypeErrorf("%s: %s must give real numbers here, not complex ones", c.Name, name)
	}
	return re, nil
}

// sampleOnComplex evaluates f (a function, a number or a complex number)
// at the unknowns of g: the real parts, and the imaginary parts (nil when
// every value is real).
func sampleOnComplex(c *eval.Call, name string, f value.Value, g *objects.Grid) (re, im []float64, err error) {
	var coords [][]float64
	if g.Dim() == 1 {
		coords = [][]float64{g.X1()}
	} else {
		coords = g.CoordsAll()
	}
	x := coords[0]
	n := len(x)
	switch num := f.(type) {
	case value.Num, value.Complex:
		z, _ := asComplex(num)
		re = make([]float64, n)
		for i := range re {
			re[i] = real(z)
		}
		if _, ok := num.(value.Complex); ok {
			im = make([]float64, n)
			for i := range im {
				im[i] = imag(z)
			}
		}
		return re, im, nil
	}
	fn, ok := f.(value.Callable)
	if !ok {
		return nil, nil, value.TypeErrorf("%s: %s must be a function or a number, not %s", c.Name, name, value.TypeName(f))
	}
	want := len(coords)
	if requiredParams(fn) > want || (len(fn.Params()) < want && !variadic(fn)) {
		of := [...]string{"x on a 1-D grid", "(x, y) on a 2-D grid", "(x, y, z) on a 3-D grid"}[want-1]
		return nil, nil, value.TypeErrorf("%s: %s must be a function of %s, not %s", c.Name, name, of, eval.SignatureText(fn.Name(), fn.Params()))
	}
	// Whole-vector call first.
	args := make([]value.Value, want)
	for d, xd := range coords {
		args[d] = value.RealVec(xd)
	}
	if r, err := c.Apply(f, args...); err == nil {
		switch t := r.(type) {
		case *value.Vec:
			if t.Len() == n {
				if !t.IsComplex() {
					return append([]float64(nil), t.R...), nil, nil
				}
				re, im = make([]float64, n), make([]float64, n)
				for i, z := range t.C {
					re[i], im[i] = real(z), imag(z)
				}
				return re, im, nil
			}
		case value.Num, value.Complex:
			return sampleOnComplex(c, name, t, g)
		}
	} else if isStop(err) {
		return nil, nil, err
	}
	re = make([]float64, n)
	for i := range re {
		for d, xd := range coords {
			args[d] = value.Num(xd[i])
		}
		r, err := c.Apply(f, args...)
		if err != nil {
			return nil, nil, err
		}
		z, ok := asComplex(r)
		if !ok {
			return nil, nil, value.TypeErrorf("%s: %s must return a number, but at x = %s it returned %s", c.Name, name, value.FormatNum(x[i]), value.TypeName(r))
		}
		re[i] = real(z)
		if _, isC := r.(value.Complex); isC {
			if im == nil {
				im = make([]float64, n)
			}
			im[i] = imag(z)
		}
	}
	return re, im, nil
}

// asComplex returns a number or complex number as a complex128.
func asComplex(v value.Value) (complex128, bool) {
	switch t := v.(type) {
	case value.Num:
		return complex(float64(t), 0), true
	case value.Complex:
		return complex128(t), true
	}
	return 0, false
}

// isStop reports errors that must not be retried (interrupts and limits).
func isStop(err error) bool {
	if e, ok := err.(*eval.Error); ok {
		return e.Name == value.ClassInterrupted || e.Name == value.ClassWork
	}
	return false
}

func requiredParams(f value.Callable) int {
	n := 0
	for _, p := range f.Params() {
		if p.Default == nil && !p.Variadic {
			n++
		}
	}
	return n
}

func variadic(f value.Callable) bool {
	ps := f.Params()
	return len(ps) > 0 && ps[len(ps)-1].Variadic
}

// Argument helpers of the object family.

// argInt is an integer argument (any sign).
func argInt(c *eval.Call, i int) (int, error) {
	f, err := argReal(c, i)
	if err != nil {
		return 0, err
	}
	if f != math.Trunc(f) || math.Abs(f) > 1<<40 {
		return 0, value.ValueErrorf("%s: %s must be a whole number, not %s", c.Name, paramName(c, i), value.FormatNum(f))
	}
	return int(f), nil
}

func argString(c *eval.Call, i int) (string, error) {
	v, err := c.Arg(i)
	if err != nil {
		return "", err
	}
	s, ok := v.(value.Str)
	if !ok {
		return "", value.TypeErrorf("%s: %s must be a string, not %s", c.Name, paramName(c, i), value.TypeName(v))
	}
	return string(s), nil
}

// argChoice is a string argument from a fixed set; the error lists the set.
func argChoice(c *eval.Call, i int, valid ...string) (string, error) {
	s, err := argString(c, i)
	if err != nil {
		return "", err
	}
	for _, v := range valid {
		if s == v {
			return s, nil
		}
	}
	q := make([]string, len(valid))
	for k, v := range valid {
		q[k] = fmt.Sprintf("%q", v)
	}
	return "", value.ValueErrorf("%s: unknown %s %q; valid values are %s", c.Name, paramName(c, i), s, strings.Join(q, ", "))
}

func argGrid(c *eval.Call, i int) (*objects.Grid, error) {
	v, err := c.Arg(i)
	if err != nil {
		return nil, err
	}
	g, ok := v.(*objects.Grid)
	if !ok {
		return nil, value.TypeErrorf("%s: %s must be a grid, not %s", c.Name, paramName(c, i), value.TypeName(v))
	}
	return g, nil
}

func argOperator(c *eval.Call, i int) (*objects.Operator, error) {
	v, err := c.Arg(i)
	if err != nil {
		return nil, err
	}
	a, err := objects.AsOperator(v)
	if err != nil {
		e := err.(*value.Error)
		return nil, &value.Error{Name: e.Name, Msg: fmt.Sprintf("%s: %s %s", c.Name, paramName(c, i), e.Msg), Cause: e.Cause}
	}
	if err := complexGate(c, i, a); err != nil {
		return nil, err
	}
	return a, nil
}

// complexGate refuses a complex operator as argument i of a builtin that
// works on real operators only.
func complexGate(c *eval.Call, i int, a *objects.Operator) error {
	if a.IsComplex() && !complexReady[c.Name] {
		return value.TypeErrorf("%s: %s is a complex operator; %s works on real operators only (complex operators go to %s)", c.Name, paramName(c, i), c.Name, complexReadyList())
	}
	return nil
}

// complexReady names the builtins that accept complex operators; every
// other builtin taking an operator refuses one with a clear message.
var complexReady = map[string]bool{
	"operator": true, "kronsum": true, "adjoint": true, "dense": true, "size": true,
	"propagate": true, "semigroup": true,
	"spectrum": true, "abscissa": true, "numrange": true, "numabscissa": true,
	"pseudospectrum": true, "psabscissa": true, "resolvent": true, "resolventline": true,
	"growth": true, "kreiss": true, "wellposed": true,
}

// complexReadyList lists complexReady's names, sorted.
func complexReadyList() string {
	names := make([]string, 0, len(complexReady))
	for k := range complexReady {
		names = append(names, k)
	}
	sort.Strings(names)
	return strings.Join(names, ", ")
}
