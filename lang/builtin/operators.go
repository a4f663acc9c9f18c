package builtin

import (
	"bufio"
	"encoding/json"
	"errors"
	"fmt"
	"math"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"syscall"

	"gonum.org/v1/gonum/mat"

	"semiflow/lang/eval"
	"semiflow/lang/objects"
	"semiflow/lang/syntax"
	"semiflow/lang/value"
	"semiflow/numerics/grid"
	"semiflow/numerics/linop"
	"semiflow/numerics/memguard"
	"semiflow/numerics/mmio"
)

// operatorFamily: operators on grids, explicit and Markov-chain operators,
// algebra helpers, and file export.
var operatorFamily = []*Builtin{
	{
		Name: "deriv",
		Params: []value.Param{
			req("g", "a grid"),
			opt("k", value.Num(1), "the order of the derivative, 1 to 4 (3 and 4 on intervals)"),
			opt("along", value.Str("x"), `"x", "y" (2-D and 3-D grids) or "z" (3-D grids)`),
			opt("beam", value.Str("supported"), `for k = 4 on Dirichlet ends, the second condition at each end: "supported" (u'' = 0) or "clamped" (u' = 0), or a list [left, right]`),
		},
		Doc: "The k-th derivative d^k/dx^k (k = 1 to 4) as an operator on the grid's unknowns, with the grid's boundary conditions: " +
			"central differences of the grid's order (2 or 4) inside and one-sided closures of the same order at the ends on an interval; " +
			"the spectral differentiation matrix restricted to the interior points on a Chebyshev grid (k = 1, 2); D_x ⊗ I_ny or I_nx ⊗ D_y on a tensor grid. " +
			"k = 3 uses the 5-point central stencil (7 at order 4) and at a Neumann or Robin end point the condition on u'. " +
			"k = 4 needs two conditions per end: on a periodic grid none; otherwise Dirichlet ends (u = 0, or the grid's boundary data) with beam's second condition, u'' = 0 (supported) or u' = 0 (clamped), imposed through the ghost value the stencil (1, −4, 6, −4, 1)/h⁴ reaches beyond the end; " +
			"these closures are of order 2 (a grid of order 4 is refused for k = 4 with ends), and with supported ends the operator is exactly the square of the second difference. Neumann and Robin ends are refused for k = 4.",
		Examples: []Example{
			{"deriv(interval(0, 1, 5), k=2) * [1, 0, 0]", "[-32, 16, 0]"},
			{"deriv(interval(0, 1, 100, ends=\"periodic\"))", "operator d/dx: 100×100, sparse, 200 nonzeros\n  on interval [0, 1], 100 points, h = 0.01, periodic ends, order 2, 100 unknowns"},
			{"dense(deriv(interval(0, 1, 6), k=4, beam=\"clamped\"))", "{ 4375, -2500,   625,     0 |\n -2500,  3750, -2500,   625 |\n   625, -2500,  3750, -2500 |\n     0,   625, -2500,  4375}"},
		},
		Impl: func(c *eval.Call) (value.Value, error) {
			g, err := argGrid(c, 0)
			if err != nil {
				return nil, err
			}
			k, err := argInt(c, 1)
			if err != nil {
				return nil, err
			}
			along, err := argChoice(c, 2, "x", "y", "z")
			if err != nil {
				return nil, err
			}
			beam, err := beamArg(c, 3)
			if err != nil {
				return nil, err
			}
			op, err := objects.DerivBeam(g, k, along, beam)
			if err != nil {
				return nil, err
			}
			label := "d/d" + along
			if k > 1 {
				label = "d" + superscript[k] + "/d" + along + superscript[k]
			}
			if k == 4 && g.Dim() == 1 && g.Kind == objects.KindInterval && !g.Interval.Periodic() {
				label += " (" + beam[0].String() + "–" + beam[1].String() + ")"
				if beam[0] == beam[1] {
					label = label[:strings.LastIndex(label, " (")] + " (" + beam[0].String() + " ends)"
				}
			}
			var lift []objects.LiftTerm
			if g.Dim() == 1 {
				if lift, err = objects.LiftOf(g, k, beam); err != nil {
					return nil, err
				}
			}
			return &objects.Operator{Op: op, Grid: g, Label: label, Lift: lift}, nil
		},
	},
	{
		Name:   "laplacian",
		Params: []value.Param{req("g", "a grid")},
		Doc: "The Laplacian: d²/dx² on a 1-D grid, and ∂²/∂x² + ∂²/∂y² = D2_x ⊕ D2_y (the Kronecker sum D2_x ⊗ I + I ⊗ D2_y) on a 2-D tensor grid, D2_x ⊕ D2_y ⊕ D2_z on a 3-D one, with each grid's ends and order. " +
			"The Kronecker structure is kept, so propagate can use e^{t(X⊕Y)} = e^{tX} ⊗ e^{tY} (three factors in 3-D, applied along each axis in turn).",
		Examples: []Example{
			{"laplacian(interval(0, 1, 5)) * [1, 1, 1]", "[-16, 0, -16]"},
			{"size(laplacian(tensorgrid(interval(0, 1, 5), interval(0, 1, 6))))", "[12, 12]"},
		},
		Impl: func(c *eval.Call) (value.Value, error) {
			g, err := argGrid(c, 0)
			if err != nil {
				return nil, err
			}
			op, err := objects.Laplacian(g)
			if err != nil {
				return nil, err
			}
			lift, err := objects.LiftOf(g, 2, [2]grid.Support{})
			if err != nil {
				return nil, err
			}
			return &objects.Operator{Op: op, Grid: g, Label: "Δ", Lift: lift}, nil
		},
	},
	{
		Name: "multiplier",
		Params: []value.Param{
			req("g", "a grid"),
			req("f", "the coefficient: a function f(x) (f(x, y) on a 2-D grid), a number, or a vector of values at the unknowns; real or complex"),
		},
		Doc: "Multiplication by a coefficient function, (M u)_k = f(x_k) u_k: the diagonal operator diag(f(x_k)) on the grid's unknowns. Combined with deriv it builds variable-coefficient operators such as multiplier(g, a) * deriv(g, k=2). A complex coefficient gives a complex operator.",
		Examples: []Example{
			{"g = interval(0, 1, 5); sq(x) = x^2; multiplier(g, sq) * [1, 1, 1]", "[0.0625, 0.25, 0.5625]"},
		},
		Impl: func(c *eval.Call) (value.Value, error) {
			g, err := argGrid(c, 0)
			if err != nil {
				return nil, err
			}
			var d, di []float64
			label := "multiplier"
			switch f := c.Args[1].(type) {
			case *value.Vec, *value.Range:
				re, cx, err := numbers(c, "f", f)
				if err != nil {
					return nil, err
				}
				if cx != nil {
					re, di = make([]float64, len(cx)), make([]float64, len(cx))
					for i, z := range cx {
						re[i], di[i] = real(z), imag(z)
					}
				}
				if len(re) != g.Size() {
					return nil, value.ValueErrorf("multiplier: the grid has %d unknowns but the vector f has %d entries", g.Size(), len(re))
				}
				d = append([]float64(nil), re...)
			default:
				if fn, ok := f.(value.Callable); ok {
					label = "multiplier(" + fn.Name() + ")"
				}
				if d, di, err = sampleOnComplex(c, "f", f, g); err != nil {
					return nil, err
				}
			}
			for _, part := range [][]float64{d, di} {
				if k := firstNonFinite(part); k >= 0 {
					x, y := g.Coords()
					at := "x = " + value.FormatNum(x[k])
					if y != nil {
						at = "(x, y) = (" + value.FormatNum(x[k]) + ", " + value.FormatNum(y[k]) + ")"
					}
					return nil, value.ValueErrorf("multiplier: the coefficient must be finite, but at unknown %d, %s, it is %s", k, at, value.FormatNum(part[k]))
				}
			}
			if di != nil {
				return &objects.Operator{Op: linop.NewComplex(&linop.Diag{D: d}, &linop.Diag{D: di}), Grid: g, Label: label}, nil
			}
			return &objects.Operator{Op: &linop.Diag{D: d}, Grid: g, Label: label}, nil
		},
	},
	{
		Name:   "operator",
		Params: []value.Param{req("M", "a square matrix, e.g. {1, 2 | 3, 4}, or an operator")},
		Doc:    "The operator x ↦ M x of a square matrix (dense). Operators and square matrices mix in arithmetic: A + M, M * A, s * A, A * v.",
		Examples: []Example{
			{"operator({0, 1 | -1, 0}) * [1, 2]", "[2, -1]"},
			{"operator({1, 2 | 3, 4})", "operator matrix: 2×2, dense\n  entries {1, 2 |\n           3, 4}"},
		},
		Impl: func(c *eval.Call) (value.Value, error) {
			if m, ok := c.Args[0].(*value.Matrix); ok && m.Rows == m.Cols {
				if k := firstNonFinite(m.Data); k >= 0 {
					return nil, value.ValueErrorf("operator: an operator needs finite entries; M[%d, %d] = %s", k/m.Cols, k%m.Cols, value.FormatNum(m.Data[k]))
				}
			}
			if m, ok := c.Args[0].(*value.CMatrix); ok && m.Rows == m.Cols {
				for k, z := range m.Data {
					if math.IsNaN(real(z)) || math.IsNaN(imag(z)) || math.IsInf(real(z), 0) || math.IsInf(imag(z), 0) {
						return nil, value.ValueErrorf("operator: an operator needs finite entries; M[%d, %d] = %s", k/m.Cols, k%m.Cols, value.FormatComplex(z))
					}
				}
			}
			return argOperator(c, 0)
		},
	},
	{
		Name: "kronsum",
		Params: []value.Param{
			req("A", "a square operator or matrix (n×n), acting along x"),
			req("B", "a square operator or matrix (m×m), acting along y"),
		},
		Doc: "The Kronecker sum A ⊕ B = A ⊗ I_m + I_n ⊗ B acting on vectors indexed k = i·m + j; its eigenvalues are the sums λ_i(A) + μ_j(B) and e^{t(A⊕B)} = e^{tA} ⊗ e^{tB}. " +
			"When A and B live on 1-D grids the result lives on their tensor grid.",
		Examples: []Example{
			{"dense(kronsum({1, 0 | 0, 2}, {10, 0 | 0, 20}))", "{11,  0,  0,  0 |\n  0, 21,  0,  0 |\n  0,  0, 12,  0 |\n  0,  0,  0, 22}"},
		},
		Impl: func(c *eval.Call) (value.Value, error) {
			a, err := argOperator(c, 0)
			if err != nil {
				return nil, err
			}
			b, err := argOperator(c, 1)
			if err != nil {
				return nil, err
			}
			na, _ := a.Op.Dims()
			nb, _ := b.Op.Dims()
			if n := float64(na) * float64(nb); n > linop.MaxOrder {
				return nil, value.ValueErrorf("kronsum: the Kronecker sum of orders %d and %d would have order %s, beyond the largest supported, 2⁵³ ≈ 9.0e15", na, nb, value.FormatNum(n))
			}
			out, err := objects.KronSum(a, b)
			if err != nil {
				return nil, prefix(c, err)
			}
			return out, nil
		},
	},
	{
		Name: "adjoint",
		Params: []value.Param{
			req("A", "an operator or matrix"),
			opt("weight", value.None, "none for the Euclidean inner product, a vector w > 0 for ⟨x, y⟩ = Σ w_i x_i y_i, or a symmetric positive definite matrix W for ⟨x, y⟩ = xᵀ W y"),
		},
		Doc: "The adjoint A* of A in an inner product: ⟨A x, y⟩_W = ⟨x, A* y⟩_W, so A* = W⁻¹ Aᵀ W (Aᵀ without a weight). " +
			"A is dissipative in ⟨·,·⟩_W exactly when A + A* is negative semidefinite (Lumer–Phillips). For a rate matrix Q, adjoint(Q) = Qᵀ evolves probability distributions, p' = Qᵀ p.",
		Examples: []Example{
			{"dense(adjoint({1, 2 | 3, 4}))", "{1, 3 |\n 2, 4}"},
			{"dense(adjoint({1, 2 | 3, 4}, weight=[1, 2]))", "{1, 6 |\n 1, 4}"},
		},
		Impl: adjointImpl,
	},
	{
		Name:   "dense",
		Params: []value.Param{req("A", "an operator or matrix")},
		Doc:    "The matrix of an operator, column j = A e_j. Refused with the size it would need when the matrix would not fit in the machine's memory.",
		Examples: []Example{
			{"dense(deriv(interval(0, 1, 5), k=2))", "{-32,  16,   0 |\n  16, -32,  16 |\n   0,  16, -32}"},
		},
		Impl: func(c *eval.Call) (value.Value, error) {
			v, err := c.Arg(0)
			if err != nil {
				return nil, err
			}
			switch m := v.(type) {
			case *value.Matrix, *value.CMatrix:
				return m, nil
			}
			a, err := argOperator(c, 0)
			if err != nil {
				return nil, err
			}
			if z, ok := a.Op.(*linop.Complex); ok {
				return complexDenseOf(c, z)
			}
			return denseOf(c, a)
		},
	},
	{
		Name:   "size",
		Params: []value.Param{req("A", "an operator, matrix or grid")},
		Doc:    "The dimensions [rows, columns] of an operator or matrix; for a grid, the number of unknowns (the length of its grid functions).",
		Examples: []Example{
			{"size(deriv(interval(0, 1, 11)))", "[9, 9]"},
			{"size(tensorgrid(interval(0, 1, 5), chebyshev(6)))", "15"},
		},
		Impl: func(c *eval.Call) (value.Value, error) {
			v, err := c.Arg(0)
			if err != nil {
				return nil, err
			}
			switch t := v.(type) {
			case *objects.Grid:
				return value.Num(t.Size()), nil
			case *objects.Operator:
				r, k := t.Dims()
				return value.RealVec([]float64{float64(r), float64(k)}), nil
			case *value.Matrix:
				return value.RealVec([]float64{float64(t.Rows), float64(t.Cols)}), nil
			case *value.CMatrix:
				return value.RealVec([]float64{float64(t.Rows), float64(t.Cols)}), nil
			}
			return nil, value.TypeErrorf("size: A must be an operator, matrix or grid, not %s", value.TypeName(v))
		},
	},
	{
		Name: "chain",
		Params: []value.Param{
			req("n", "the number of states, numbered 0..n−1"),
			req("transitions", "a list of [from, to, rate] triples"),
		},
		Doc: "The rate matrix (generator) Q of a continuous-time Markov chain on the states 0..n−1: Q_ij = the total rate of the jumps i → j (i ≠ j), Q_ii = −Σ_{j≠i} Q_ij, so every row sums to zero. " +
			"Expected values E[f(X_t) | X_0 = i] = (e^{tQ} f)_i solve u' = Q u; distributions solve p' = Qᵀ p (use adjoint(Q)). " +
			"Each transition is checked: states must lie in 0..n−1, differ, and rates must be finite and ≥ 0; the error names the transition.",
		Examples: []Example{
			{"dense(chain(2, [[0, 1, 3], [1, 0, 1]]))", "{-3,  3 |\n  1, -1}"},
		},
		Impl: chainImpl,
	},
	{
		Name:   "ratematrix",
		Params: []value.Param{req("M", "a square matrix or operator")},
		Doc: "Checks that M is the generator of a continuous-time Markov chain — off-diagonal entries ≥ 0 and every row sum zero within rounding, |Σ_j M_ij| ≤ n·u·Σ_j |M_ij| (n the order, u = 2⁻⁵³) — and returns it as an operator. " +
			"The error names the first offending row and entry.",
		Examples: []Example{
			{"ratematrix({-2, 2 | 0.5, -0.5}) * [1, 1]", "[0, 0]"},
		},
		Impl: func(c *eval.Call) (value.Value, error) {
			a, err := argOperator(c, 0)
			if err != nil {
				return nil, err
			}
			q, err := csrOf(c, a)
			if err != nil {
				return nil, err
			}
			if err := linop.CheckGenerator(q); err != nil {
				return nil, value.ValueErrorf("ratematrix: %s", strings.TrimPrefix(err.Error(), "linop: not the generator of a Markov chain: "))
			}
			return &objects.Operator{Op: a.Op, Grid: a.Grid, Label: "rate matrix"}, nil
		},
	},
	{
		Name:   "readmm",
		Params: []value.Param{req("path", "the file name")},
		Doc: "Reads an operator from a Matrix Market file (the NIST exchange format: coordinate or array; real, integer or pattern; general, symmetric or skew-symmetric). " +
			"Coordinate files give sparse operators, array files dense ones. A malformed file is reported with its line number. " +
			"The size line is checked against the memory guard before any entry is read (a header declaring 10¹²×10¹² is refused at once), and entries are stored as they arrive." + regularOnly,
		Examples: []Example{
			{`writemm({2, 0 | 0, 3}, "/tmp/semiflow_readmm_example.mtx"); readmm("/tmp/semiflow_readmm_example.mtx") * [1, 1]`, "[2, 3]"},
		},
		Impl: readmmImpl,
	},
	{
		Name: "writemm",
		Params: []value.Param{
			req("A", "an operator or matrix"),
			req("path", "the file name (overwritten)"),
		},
		Doc: "Writes A to a Matrix Market file as real general data: in coordinate form (the stored nonzeros) for sparse operators, in array form for matrices and dense operators. " +
			"Values are written in the shortest form that reads back exactly, so readmm(path) reproduces A." + regularOnly,
		Examples: []Example{
			{`writemm(deriv(interval(0, 1, 5), k=2), "/tmp/semiflow_writemm_example.mtx")`, ""},
		},
		Impl: writemmImpl,
	},
	{
		Name: "writecsv",
		Params: []value.Param{
			req("x", "a vector, matrix, solution or analysis table"),
			req("path", "the file name (overwritten)"),
		},
		Doc: "Writes comma-separated values: a vector as one value per line; a matrix as one line per row; an analysis table (spectrum, growth, ...) as a header of its column names and one line per row, complex entries as a+bi; a solution as one line per output time, " +
			"t, u_0(t), ..., u_{n−1}(t), after a header line t,u0,...,u{n−1} — in the order of the times given to propagate. Numbers are written in the shortest form that reads back exactly." + regularOnly,
		Examples: []Example{
			{`writecsv([1, 2.5], "/tmp/semiflow_writecsv_example.csv")`, ""},
		},
		Impl: writecsvImpl,
	},
	{
		Name: "writejson",
		Params: []value.Param{
			req("x", "a number, string, bool, vector, matrix, list, grid or solution"),
			req("path", "the file name (overwritten)"),
		},
		Doc: "Writes x as JSON: numbers, strings and bools as themselves, vectors and lists as arrays, a matrix as an array of rows, a complex number as {\"re\": ..., \"im\": ...}, " +
			"a grid as {\"grid\": description, \"x\": coordinates (and \"y\")}, an analysis result (spectrum, growth, ...) as its record {\"kind\", \"method\", \"accuracy\", \"facts\", \"columns\", \"rows\"}, a solution as {\"method\", \"reason\", \"tol\", \"times\", \"values\" (one array per time), \"errest\", \"matvecs\", \"solves\"}. " +
			"nan and ±inf, which JSON cannot hold, are written as null. Operators are written with writemm." + regularOnly,
		Examples: []Example{
			{`writejson([1, 2, 3], "/tmp/semiflow_writejson_example.json")`, ""},
		},
		Impl: writejsonImpl,
	},
}

// prefix puts the builtin's name before a value error's message.
func prefix(c *eval.Call, err error) error {
	var e *value.Error
	if errors.As(err, &e) {
		return &value.Error{Name: e.Name, Msg: c.Name + ": " + e.Msg, Cause: e.Cause}
	}
	return value.ValueErrorf("%s: %v", c.Name, err)
}

func denseOf(c *eval.Call, a *objects.Operator) (*value.Matrix, error) {
	r, k := a.Op.Dims()
	if err := memguard.DenseReal(r, k); err != nil {
		return nil, value.Errorf(value.ClassMemory, "%s: %v", c.Name, err)
	}
	if err := c.CheckSize(float64(r)*float64(k), c.Name+": the matrix"); err != nil {
		return nil, err
	}
	d, err := linop.ToDense(a.Op)
	if err != nil {
		return nil, value.ValueErrorf("%s: %v", c.Name, err)
	}
	out := value.NewMatrix(r, k)
	for i := 0; i < r; i++ {
		for j := 0; j < k; j++ {
			out.Data[i*k+j] = d.At(i, j)
		}
	}
	return out, nil
}

// complexDenseOf is the complex matrix B + iC of a complex operator.
func complexDenseOf(c *eval.Call, z *linop.Complex) (*value.CMatrix, error) {
	r, k := z.ComplexDims()
	if err := memguard.DenseComplex(r, k); err != nil {
		return nil, value.Errorf(value.ClassMemory, "%s: %v", c.Name, err)
	}
	if err := c.CheckSize(2*float64(r)*float64(k), c.Name+": the matrix"); err != nil {
		return nil, err
	}
	b, cm, err := z.DenseParts()
	if err != nil {
		return nil, value.ValueErrorf("%s: %v", c.Name, err)
	}
	out := value.NewCMatrix(r, k)
	for i := 0; i < r; i++ {
		for j := 0; j < k; j++ {
			out.Data[i*k+j] = complex(b.At(i, j), cm.At(i, j))
		}
	}
	return out, nil
}

func csrOf(c *eval.Call, a *objects.Operator) (*linop.CSR, error) {
	if d, ok := a.Op.(*linop.Dense); ok {
		return linop.CSRFromDense(d.Mat(), 0), nil
	}
	if q, err := linop.ToCSR(a.Op); err == nil {
		return q, nil
	}
	d, err := linop.ToDense(a.Op)
	if err != nil {
		return nil, value.ValueErrorf("%s: %v", c.Name, err)
	}
	return linop.CSRFromDense(d, 0), nil
}

func adjointImpl(c *eval.Call) (value.Value, error) {
	a, err := adjointOperand(c)
	if err != nil {
		return nil, err
	}
	r, k := a.Op.Dims()
	w := c.Args[1]
	if z, ok := a.Op.(*linop.Complex); ok {
		if w != value.None {
			return nil, value.TypeErrorf("adjoint: a weighted adjoint of a complex operator is not available; without weight adjoint(A) is the conjugate transpose")
		}
		// (B + iC)* = Bᵀ − iCᵀ.
		var re, im linop.Operator
		if z.Re != nil {
			re = &linop.Adjoint{A: z.Re}
		}
		if z.Im != nil {
			im = &linop.Scaled{Alpha: -1, A: &linop.Adjoint{A: z.Im}}
		}
		return &objects.Operator{Op: linop.NewComplex(re, im), Grid: a.Grid, Label: a.Label + "*"}, nil
	}
	if w == value.None {
		return &objects.Operator{Op: &linop.Adjoint{A: a.Op}, Grid: a.Grid, Label: a.Label + "*"}, nil
	}
	if r != k {
		return nil, value.ValueErrorf("adjoint: a weighted adjoint needs a square operator, not %d×%d", r, k)
	}
	var W linop.Weight
	switch t := w.(type) {
	case *value.Vec, *value.Range:
		re, _, err := numbers(c, "weight", t)
		if err != nil {
			return nil, err
		}
		if re == nil {
			return nil, value.TypeErrorf("adjoint: the weight must be real")
		}
		if len(re) != r {
			return nil, value.ValueErrorf("adjoint: the operator is %d×%d but the weight has %d entries", r, k, len(re))
		}
		dw, err := linop.NewDiagWeight(re)
		if err != nil {
			return nil, value.ValueErrorf("adjoint: the weight must be positive: %s", strings.TrimPrefix(err.Error(), "linop: "))
		}
		W = dw
	case *value.Matrix:
		if t.Rows != r || t.Cols != r {
			return nil, value.ValueErrorf("adjoint: the operator is %d×%d but the weight matrix is %d×%d", r, k, t.Rows, t.Cols)
		}
		for i := 0; i < r; i++ {
			for j := 0; j < i; j++ {
				if x, y := t.At(i, j), t.At(j, i); math.Abs(x-y) > 1e-12*math.Max(math.Abs(x), math.Abs(y)) {
					return nil, value.ValueErrorf("adjoint: the weight matrix is not symmetric: W[%d, %d] = %s but W[%d, %d] = %s", i, j, value.FormatNum(x), j, i, value.FormatNum(y))
				}
			}
		}
		sw, err := linop.NewSPDWeight(mat.NewSymDense(r, append([]float64(nil), t.Data...)))
		if err != nil {
			return nil, value.ValueErrorf("adjoint: the weight matrix is not positive definite (its Cholesky factorisation fails)")
		}
		W = sw
	default:
		return nil, value.TypeErrorf("adjoint: weight must be none, a positive vector or a symmetric positive definite matrix, not %s", value.TypeName(w))
	}
	return &objects.Operator{Op: &linop.Adjoint{A: a.Op, W: W}, Grid: a.Grid, Label: a.Label + "*"}, nil
}

// adjointOperand accepts any operator or matrix (rectangular too).
func adjointOperand(c *eval.Call) (*objects.Operator, error) {
	v, err := c.Arg(0)
	if err != nil {
		return nil, err
	}
	if m, ok := v.(*value.Matrix); ok {
		return objects.FromMatrix(m), nil
	}
	return argOperator(c, 0)
}

func chainImpl(c *eval.Call) (value.Value, error) {
	n, err := argInt(c, 0)
	if err != nil {
		return nil, err
	}
	if n < 1 {
		return nil, value.ValueErrorf("chain: n must be at least 1, not %d", n)
	}
	if err := c.CheckSize(float64(n), "chain: the states"); err != nil {
		return nil, err
	}
	l, ok := c.Args[1].(value.List)
	if !ok {
		if v, isVec := c.Args[1].(*value.Vec); isVec && v.Len() == 0 {
			l = value.List{}
		} else {
			return nil, value.TypeErrorf("chain: transitions must be a list of [from, to, rate] triples, not %s", value.TypeName(c.Args[1]))
		}
	}
	ts := make([]linop.Transition, len(l))
	for k, e := range l {
		re, cx, err := numbers(c, "transitions", e)
		if err != nil || cx != nil || len(re) != 3 {
			return nil, value.ValueErrorf("chain: transition %d is %s; each transition must be [from, to, rate]", k, e)
		}
		for _, s := range re[:2] {
			if s != math.Trunc(s) || math.Abs(s) > 1<<40 {
				return nil, value.ValueErrorf("chain: transition %d %s: states must be whole numbers", k, e)
			}
		}
		ts[k] = linop.Transition{From: int(re[0]), To: int(re[1]), Rate: re[2]}
	}
	// Q_ii = −Σ_j Q_ij must be a finite number.
	out := map[int]float64{}
	for k, t := range ts {
		if t.Rate >= 0 && !math.IsInf(t.Rate, 0) {
			out[t.From] += t.Rate
			if math.IsInf(out[t.From], 0) {
				return nil, value.ValueErrorf("chain: transition %d (%d → %d): the total rate out of state %d overflows double precision", k, t.From, t.To, t.From)
			}
		}
	}
	q, err := linop.RateMatrix(n, ts)
	if err != nil {
		return nil, value.ValueErrorf("chain: %s", strings.TrimPrefix(err.Error(), "linop: not the generator of a Markov chain: "))
	}
	return &objects.Operator{Op: q, Label: fmt.Sprintf("rate matrix of a %d-state chain", n)}, nil
}

func readmmImpl(c *eval.Call) (value.Value, error) {
	path, err := argString(c, 0)
	if err != nil {
		return nil, err
	}
	f, err := openRegular(c.Name, path, os.O_RDONLY)
	if err != nil {
		return nil, err
	}
	defer f.Close()
	m, err := mmio.Read(bufio.NewReader(f))
	if err != nil {
		var pe *mmio.ParseError
		if errors.As(err, &pe) {
			return nil, value.ValueErrorf("readmm: %s:%d: %s", path, pe.Line, pe.Msg)
		}
		return nil, value.ValueErrorf("readmm: %s: %v", path, err)
	}
	if err := c.CheckSize(float64(len(m.V)), "readmm: the matrix"); err != nil {
		return nil, err
	}
	if m.Rows == 0 || m.Cols == 0 {
		return nil, value.ValueErrorf("readmm: %s: the matrix is %d×%d; an operator needs at least one row and one column", path, m.Rows, m.Cols)
	}
	label := filepath.Base(path)
	if m.Format == mmio.Array {
		d, err := m.Dense()
		if err != nil {
			return nil, value.ValueErrorf("readmm: %s: %v", path, err)
		}
		return &objects.Operator{Op: linop.NewDense(d), Label: label}, nil
	}
	return &objects.Operator{Op: m.CSR(), Label: label}, nil
}

func ioMessage(err error) string {
	var pe *os.PathError
	if errors.As(err, &pe) {
		return pe.Path + ": " + pe.Err.Error()
	}
	return err.Error()
}

// regularOnly ends the documentation of every builtin that reads or
// writes a file (see openRegular).
const regularOnly = " Only a regular file is read or written: a directory, a device, a socket or a FIFO (named pipe) is refused with a “file refused” error, so a pipe with nobody at the other end cannot block the session."

// openRegular opens path for the builtin name with flag (os.O_RDONLY, or
// os.O_WRONLY|os.O_CREATE|os.O_TRUNC) and refuses anything but a regular
// file: a directory, a device (which may never end) or a FIFO or socket
// (whose open, read or write can block the session forever when nobody is
// at the other end). The check runs twice: on the path before opening, and
// on the opened file (Fstat) after an open with O_NONBLOCK, so that a FIFO
// put in place between the two cannot block either.
func openRegular(name, path string, flag int) (*os.File, error) {
	if path == "" {
		return nil, value.Errorf(value.ClassFile, "%s: the path is empty", name)
	}
	if st, err := os.Stat(path); err == nil {
		if err := regular(name, path, st); err != nil {
			return nil, err
		}
	} else if flag&os.O_CREATE == 0 || !errors.Is(err, os.ErrNotExist) {
		return nil, value.Errorf(value.ClassFile, "%s: %s", name, ioMessage(err))
	}
	f, err := os.OpenFile(path, flag|syscall.O_NONBLOCK, 0o666)
	if err != nil {
		if errors.Is(err, syscall.ENXIO) { // a FIFO with no reader, opened for writing
			return nil, value.Errorf(value.ClassFile, "%s: %s: is a FIFO (named pipe); only regular files are read and written", name, path)
		}
		return nil, value.Errorf(value.ClassFile, "%s: %s", name, ioMessage(err))
	}
	st, err := f.Stat()
	if err == nil {
		err = regular(name, path, st)
	}
	if err != nil {
		f.Close()
		if _, ok := err.(*value.Error); !ok {
			err = value.Errorf(value.ClassFile, "%s: %s", name, ioMessage(err))
		}
		return nil, err
	}
	return f, nil
}

// regular refuses a file that is not a regular one, naming what it is.
func regular(name, path string, st os.FileInfo) error {
	if st.Mode().IsRegular() {
		return nil
	}
	return value.Errorf(value.ClassFile, "%s: %s: is %s; only regular files are read and written", name, path, FileKind(st.Mode()))
}

// FileKind names what a file that is not a regular one is, for refusals:
// "a directory", "a FIFO (named pipe)", "a socket", "a device".
func FileKind(m os.FileMode) string {
	switch {
	case m.IsDir():
		return "a directory"
	case m&os.ModeNamedPipe != 0:
		return "a FIFO (named pipe)"
	case m&os.ModeSocket != 0:
		return "a socket"
	case m&os.ModeDevice != 0:
		return "a device"
	}
	return "not a regular file"
}

func writeFile(c *eval.Call, path string, write func(w *bufio.Writer) error) error {
	f, err := openRegular(c.Name, path, os.O_WRONLY|os.O_CREATE|os.O_TRUNC)
	if err != nil {
		return err
	}
	w := bufio.NewWriter(f)
	if err := write(w); err != nil {
		f.Close()
		return err
	}
	if err := w.Flush(); err != nil {
		f.Close()
		return value.Errorf(value.ClassFile, "%s: %s", c.Name, ioMessage(err))
	}
	if err := f.Close(); err != nil {
		return value.Errorf(value.ClassFile, "%s: %s", c.Name, ioMessage(err))
	}
	return nil
}

func writemmImpl(c *eval.Call) (value.Value, error) {
	a, err := adjointOperand(c)
	if err != nil {
		return nil, err
	}
	path, err := argString(c, 1)
	if err != nil {
		return nil, err
	}
	comment := " written by semiflow: " + a.Label
	var d *mat.Dense
	var sp *linop.CSR
	if dd, ok := a.Op.(*linop.Dense); ok {
		d = dd.Mat()
	} else if s, err := linop.ToCSR(a.Op); err == nil {
		sp = s
	} else if errors.Is(err, memguard.ErrTooLarge) {
		// A sparse form too large for memory: a dense one is larger still.
		return nil, value.Errorf(value.ClassMemory, "writemm: %v", err)
	} else if d, err = linop.ToDense(a.Op); err != nil {
		return nil, value.ValueErrorf("writemm: %v", err)
	}
	// The Matrix Market format has no NaN or infinity.
	if sp != nil {
		for i := 0; i < sp.Rows; i++ {
			for p := sp.RowPtr[i]; p < sp.RowPtr[i+1]; p++ {
				if v := sp.Val[p]; math.IsNaN(v) || math.IsInf(v, 0) {
					return nil, value.ValueErrorf("writemm: entry (%d, %d) is %s; Matrix Market files hold finite numbers only", i, sp.ColIdx[p], value.FormatNum(v))
				}
			}
		}
	} else {
		r, k := d.Dims()
		for i := 0; i < r; i++ {
			for j := 0; j < k; j++ {
				if v := d.At(i, j); math.IsNaN(v) || math.IsInf(v, 0) {
					return nil, value.ValueErrorf("writemm: entry (%d, %d) is %s; Matrix Market files hold finite numbers only", i, j, value.FormatNum(v))
				}
			}
		}
	}
	err = writeFile(c, path, func(w *bufio.Writer) error {
		var err error
		if sp != nil {
			err = mmio.WriteCoordinate(w, sp, mmio.Real, mmio.General, comment)
		} else {
			err = mmio.WriteArray(w, d, mmio.Real, mmio.General, comment)
		}
		if err != nil {
			return value.ValueErrorf("writemm: %v", err)
		}
		return nil
	})
	return value.None, err
}

func fmtFloat(x float64) string { return strconv.FormatFloat(x, 'g', -1, 64) }

func writecsvImpl(c *eval.Call) (value.Value, error) {
	v, err := c.Arg(0)
	if err != nil {
		return nil, err
	}
	path, err := argString(c, 1)
	if err != nil {
		return nil, err
	}
	var lines func(w *bufio.Writer)
	if s, ok := v.(*objects.SteadyState); ok { // its table: the Newton history
		v = s.Analysis
	}
	switch t := v.(type) {
	case *objects.Solution:
		if t.Complex {
			return nil, value.TypeErrorf("writecsv: complex solutions are not written; write re(sol[k]) and im(sol[k])")
		}
		lines = func(w *bufio.Writer) {
			w.WriteString("t")
			if len(t.S.Values) > 0 {
				for j := range t.S.Values[0] {
					fmt.Fprintf(w, ",u%d", j)
				}
			}
			w.WriteString("\n")
			for i, tt := range t.S.Times {
				w.WriteString(fmtFloat(tt))
				for _, x := range t.S.Values[i] {
					w.WriteString("," + fmtFloat(x))
				}
				w.WriteString("\n")
			}
		}
	case *value.Matrix:
		lines = func(w *bufio.Writer) {
			for i := 0; i < t.Rows; i++ {
				for j := 0; j < t.Cols; j++ {
					if j > 0 {
						w.WriteString(",")
					}
					w.WriteString(fmtFloat(t.At(i, j)))
				}
				w.WriteString("\n")
			}
		}
	case *value.CMatrix:
		return nil, value.TypeErrorf("writecsv: complex matrices are not written; write re(M) and im(M)")
	case *value.Vec, *value.Range:
		re, cx, err := numbers(c, "x", t)
		if err != nil {
			return nil, err
		}
		if cx != nil {
			return nil, value.TypeErrorf("writecsv: complex vectors are not written; write re(v) and im(v)")
		}
		lines = func(w *bufio.Writer) {
			for _, x := range re {
				w.WriteString(fmtFloat(x) + "\n")
			}
		}
	case *objects.Analysis:
		lines = func(w *bufio.Writer) {
			w.WriteString(csvRow(t.Columns) + "\n")
			for _, row := range t.Rows {
				cells := make([]string, len(row))
				for j, x := range row {
					switch y := x.(type) {
					case value.Num:
						cells[j] = fmtFloat(float64(y))
					case value.Complex:
						cells[j] = fmtFloat(real(complex128(y))) + signed(imag(complex128(y))) + "i"
					default:
						cells[j] = x.String()
					}
				}
				w.WriteString(csvRow(cells) + "\n")
			}
		}
	default:
		return nil, value.TypeErrorf("writecsv: x must be a vector, matrix, solution or analysis table, not %s", value.TypeName(v))
	}
	return value.None, writeFile(c, path, func(w *bufio.Writer) error { lines(w); return nil })
}

// csvRow joins cells with commas, quoting those that hold a comma, a quote
// or a line break (RFC 4180).
func csvRow(cells []string) string {
	out := make([]string, len(cells))
	for i, c := range cells {
		if strings.ContainsAny(c, ",\"\n\r") {
			c = `"` + strings.ReplaceAll(c, `"`, `""`) + `"`
		}
		out[i] = c
	}
	return strings.Join(out, ",")
}

// signed writes x with its sign, for the imaginary part of a complex entry.
func signed(x float64) string {
	if x < 0 || math.Signbit(x) {
		return fmtFloat(x)
	}
	return "+" + fmtFloat(x)
}

// jsonNum is a float that JSON-encodes nan and ±inf as null.
type jsonNum float64

func (x jsonNum) MarshalJSON() ([]byte, error) {
	f := float64(x)
	if math.IsNaN(f) || math.IsInf(f, 0) {
		return []byte("null"), nil
	}
	return []byte(fmtFloat(f)), nil
}

func jsonNums(x []float64) []jsonNum {
	out := make([]jsonNum, len(x))
	for i, v := range x {
		out[i] = jsonNum(v)
	}
	return out
}

func toJSON(v value.Value, depth int) (any, error) {
	if depth > 64 {
		return nil, value.ValueErrorf("writejson: lists nested more than 64 deep")
	}
	if s, ok := v.(*objects.SteadyState); ok { // its record, with the state
		r := s.Record()
		r["state"] = jsonNums(s.Res.U)
		return r, nil
	}
	switch t := v.(type) {
	case value.Num:
		return jsonNum(t), nil
	case value.Complex:
		return map[string]jsonNum{"re": jsonNum(real(t)), "im": jsonNum(imag(t))}, nil
	case value.Str:
		return string(t), nil
	case value.Bool:
		return bool(t), nil
	case value.NoneType:
		return nil, nil
	case *value.Range:
		return jsonNums(t.Vec().R), nil
	case *value.Vec:
		if !t.IsComplex() {
			return jsonNums(t.R), nil
		}
		out := make([]any, len(t.C))
		for i, z := range t.C {
			out[i], _ = toJSON(value.Complex(z), depth+1)
		}
		return out, nil
	case *value.Matrix:
		rows := make([][]jsonNum, t.Rows)
		for i := range rows {
			rows[i] = jsonNums(t.Data[i*t.Cols : (i+1)*t.Cols])
		}
		return rows, nil
	case *value.CMatrix:
		rows := make([][]any, t.Rows)
		for i := range rows {
			rows[i] = make([]any, t.Cols)
			for j := range rows[i] {
				rows[i][j], _ = toJSON(value.Complex(t.At(i, j)), depth+1)
			}
		}
		return rows, nil
	case value.List:
		out := make([]any, len(t))
		for i, e := range t {
			x, err := toJSON(e, depth+1)
			if err != nil {
				return nil, err
			}
			out[i] = x
		}
		return out, nil
	case *objects.Grid:
		m := map[string]any{"grid": strings.TrimPrefix(t.String(), "grid: ")}
		if t.Dim() == 1 {
			m["x"] = jsonNums(t.X1())
		} else {
			for d, x := range t.CoordsAll() {
				m[[]string{"x", "y", "z"}[d]] = jsonNums(x)
			}
		}
		return m, nil
	case *objects.Solution:
		vals := make([]any, len(t.S.Values))
		for i := range t.S.Values {
			vals[i], _ = toJSON(t.Index(i), depth+1)
		}
		return map[string]any{
			"method": t.S.Method, "reason": t.S.Reason, "tol": jsonNum(t.S.Tol),
			"times": jsonNums(t.S.Times), "values": vals, "errest": jsonNums(t.S.ErrEst),
			"matvecs": t.S.MatVecs, "solves": t.S.Solves,
		}, nil
	case *objects.Analysis:
		return t.Record(), nil
	case *objects.Operator:
		return nil, value.TypeErrorf("writejson: operators are written with writemm(A, path)")
	}
	return nil, value.TypeErrorf("writejson: a %s cannot be written as JSON", value.TypeName(v))
}

func writejsonImpl(c *eval.Call) (value.Value, error) {
	v, err := c.Arg(0)
	if err != nil {
		return nil, err
	}
	path, err := argString(c, 1)
	if err != nil {
		return nil, err
	}
	x, err := toJSON(v, 0)
	if err != nil {
		return nil, err
	}
	b, err := json.MarshalIndent(x, "", " ")
	if err != nil {
		return nil, value.ValueErrorf("writejson: %v", err)
	}
	return value.None, writeFile(c, path, func(w *bufio.Writer) error {
		w.Write(b)
		w.WriteString("\n")
		return nil
	})
}

// superscript holds the exponents of derivative labels (index k = 2..4).
var superscript = [...]string{"", "", "²", "³", "⁴"}

// beamArg is argument i as the second condition of a fourth derivative at
// each end: one name for both, or a list [left, right].
func beamArg(c *eval.Call, i int) ([2]grid.Support, error) {
	var out [2]grid.Support
	v, err := c.Arg(i)
	if err != nil {
		return out, err
	}
	name := paramName(c, i)
	one := func(e value.Value, where string) (grid.Support, error) {
		s, ok := e.(value.Str)
		if !ok {
			return 0, value.TypeErrorf("%s: %s must be \"supported\" or \"clamped\", or a list [left, right] of them, not %s", c.Name, where, value.TypeName(e))
		}
		switch s {
		case "supported":
			return grid.Supported, nil
		case "clamped":
			return grid.Clamped, nil
		}
		return 0, value.ValueErrorf("%s: unknown %s %q; valid values are \"supported\" (u'' = 0) and \"clamped\" (u' = 0)", c.Name, where, syntax.Shorten(string(s), syntax.QuoteWidth))
	}
	if l, ok := v.(value.List); ok {
		if len(l) != 2 {
			return out, value.ValueErrorf("%s: %s as a list names the left and the right end: two entries, not %d", c.Name, name, len(l))
		}
		for side := range out {
			if out[side], err = one(l[side], fmt.Sprintf("%s[%d] (%s end)", name, side, sideName[side])); err != nil {
				return out, err
			}
		}
		return out, nil
	}
	s, err := one(v, name)
	return [2]grid.Support{s, s}, err
}
