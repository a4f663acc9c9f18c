package builtin

import (
	"errors"
	"fmt"
	"math"
	"math/cmplx"

	"semiflow/lang/eval"
	"semiflow/lang/objects"
	"semiflow/lang/value"
	"semiflow/numerics/linop"
	"semiflow/numerics/pencil"
	"semiflow/numerics/roundoff"
	"semiflow/numerics/spectra"
)

// structureFamily: models written with a mass matrix, M u' = K u and
// M u″ + C u' + K u = 0, kept as the pencil they are.
var structureFamily = []*Builtin{
	{
		Name: "firstorder",
		Params: []value.Param{
			req("M", "the mass matrix: a square matrix or operator (sparse, banded, diagonal, grid operator), or a number c for c·I (numbers alone give one degree of freedom)"),
			req("K", "the right-hand side's matrix or operator, of M's order"),
		},
		Doc: "The generator A = M⁻¹K of M u' = K u, kept as the pair (M, K): A·x is a product with K and a solve with M, factored once by its structure (its diagonal, a band LU, a sparse LU, or a dense LU), so M⁻¹K is never formed; shifted solves (zI − A)⁻¹ = (zM − K)⁻¹M factor the pencil zM − K sparsely. " +
			"propagate, spectrum, growth, numrange, numabscissa and wellposed accept it like any operator. spectrum takes the symmetric definite route when M is symmetric positive definite and K symmetric (Cholesky M = LLᵀ, then the symmetric eigenvalues of L⁻¹KL⁻ᵀ: real, condition 1 in the M inner product); with count = k it gives the k eigenvalues nearest 0 unless near= says otherwise. " +
			`weight = "energy" measures in the inner product of M, ‖u‖² = uᵀMu, and energy(A, u) gives ½uᵀMu. A singular M is an error.`,
		Examples: []Example{
			{"A = firstorder({2, 1 | 1, 2}, {-2, 1 | 1, -2}); spectrum(A)[0, 1]", "-0.3333333333+0i"},
			{"A = firstorder({2, 1 | 1, 2}, {-2, 1 | 1, -2}); A * [1, 1]", "[-0.3333333333, -0.3333333333]"},
		},
		Impl: firstorderImpl,
	},
	{
		Name: "secondorder",
		Params: []value.Param{
			req("M", "the mass matrix: a square matrix or operator, or a number c for c·I"),
			req("C", "the damping matrix or operator, or 0 for none"),
			req("K", "the stiffness matrix or operator"),
		},
		Doc: "The generator G = [0 I; −M⁻¹K −M⁻¹C] of the first-order form x' = Gx of M u″ + C u' + K u = 0, with the state x = [u; u'] of length 2n (stack(u0, v0) builds it, split(x, [n, n]) takes it apart). " +
			"G is kept as the triple (M, C, K): G·x is a product with K and C and a solve with M, factored once by its structure (diagonal, band LU, sparse LU, dense LU), and shifted solves (zI − G)⁻¹ factor the quadratic pencil z²M + zC + K sparsely: for (zI − G)[x; y] = [a; b], (z²M + zC + K) x = M b + (zM + C) a and y = zx − a. M⁻¹K is never formed; a sparse form exists only for a diagonal (lumped) M. " +
			"propagate chooses shift-and-invert Krylov for stiff structures (t‖G‖₁ > 1000) and dense scaling and squaring at order ≤ 400. " +
			"spectrum solves the quadratic eigenproblem (λ²M + λC + K) x = 0: with M symmetric positive definite and K, C symmetric after the Cholesky scaling M = LLᵀ — without damping by the symmetric eigenvalues ω² of L⁻¹KL⁻ᵀ (λ = ±iω, each ω to n·u·‖L⁻¹KL⁻ᵀ‖_F/(2ω), a rigid-body mode ω = 0 flagged as a Jordan block), with damping by the QR algorithm on the companion form [0 I; −L⁻¹KL⁻ᵀ −L⁻¹CL⁻ᵀ]; with count = k the k eigenvalues nearest 0 (the lowest modes) unless near= says otherwise, above order 1500 by shift-and-invert Krylov–Schur with the pencil; r.modes lists the mode shapes (the displacement half of each eigenvector, unit length, largest entry positive; real for undamped and proportionally damped systems). " +
			`weight = "energy" (growth, numrange, numabscissa, wellposed) measures in the energy inner product E(x) = ½(vᵀMv + uᵀKu), which needs M and K symmetric positive definite: with C positive semidefinite, G is dissipative in it (dE/dt = −vᵀCv), so wellposed reports ‖e^{tG}‖_E ≤ 1; energy(G, x) evaluates E. Rayleigh damping C = αM + βK gives mode k the damping ratio ζ_k = α/(2ω_k) + βω_k/2. A singular M is an error.`,
		Examples: []Example{
			{"G = secondorder(1, 0, {2, -1 | -1, 2}); im(spectrum(G).values)", "[1.732050808, 1, -1, -1.732050808]"},
			{"G = secondorder({2, 0 | 0, 1}, 0.1, {3, -1 | -1, 1}); G * [1, 0, 0, 1]", "[0, 1, -1.5, 0.9]"},
		},
		Impl: secondorderImpl,
	},
	{
		Name: "energy",
		Params: []value.Param{
			req("A", "a system from secondorder or firstorder"),
			req("x", "a state vector (for secondorder [u; u'], of length 2n) or a solution from propagate"),
		},
		Doc: "The energy of a state: E(x) = ½(vᵀMv + uᵀKu) for x = [u; v] and a system from secondorder (kinetic plus strain energy), ½uᵀMu for one from firstorder. " +
			"For a solution, the vector of energies at its output times. One product with K and one with M per state; no factorisation.",
		Examples: []Example{
			{"energy(secondorder(2, 0, 3), [1, 1])", "2.5"},
		},
		Impl: energyImpl,
	},
}

// pencilOperator is the interface the two systems share.
type pencilOperator interface {
	linop.Operator
	Energy(x []float64) float64
	EnergyWeight() (linop.Weight, error)
}

// structArgs reads the matrices of a system; a number c stands for c·I
// (and 0 for C for none), the order coming from the other arguments.
func structArgs(c *eval.Call, idx []int, zeroNone []bool) ([]linop.Operator, int, error) {
	vals := make([]value.Value, len(idx))
	n := -1
	var first string
	for k, i := range idx {
		v, err := c.Arg(i)
		if err != nil {
			return nil, 0, err
		}
		if q, ok := v.(*objects.Quantity); ok {
			v = q.X
		}
		vals[k] = v
		if _, ok := v.(value.Num); ok {
			continue
		}
		op, err := objects.AsOperator(v)
		if err != nil {
			var ve *value.Error
			if errors.As(err, &ve) {
				return nil, 0, value.Errorf(ve.Name, "%s: %s %s", c.Name, paramName(c, i), ve.Msg)
			}
			return nil, 0, err
		}
		if op.IsComplex() {
			return nil, 0, value.TypeErrorf("%s: %s is complex; the mass, damping and stiffness of a system must be real", c.Name, paramName(c, i))
		}
		if len(op.Lift) > 0 {
			return nil, 0, value.ValueErrorf("%s: %s carries boundary data (non-zero values at a grid's ends); a system here needs homogeneous ends", c.Name, paramName(c, i))
		}
		r, cc := op.Dims()
		if r != cc {
			return nil, 0, value.ValueErrorf("%s: %s must be square, not %d×%d", c.Name, paramName(c, i), r, cc)
		}
		if r == 0 {
			return nil, 0, value.ValueErrorf("%s: %s is empty (0×0)", c.Name, paramName(c, i))
		}
		if n >= 0 && r != n {
			return nil, 0, value.ValueErrorf("%s: %s is %d×%d but %s is %d×%d; the matrices of one system share their order", c.Name, paramName(c, i), r, r, first, n, n)
		}
		if n < 0 {
			n, first = r, paramName(c, i)
		}
		vals[k] = op
	}
	if n < 0 {
		n = 1 // numbers alone: one degree of freedom
	}
	out := make([]linop.Operator, len(idx))
	for k, v := range vals {
		switch t := v.(type) {
		case value.Num:
			x := float64(t)
			if math.IsNaN(x) || math.IsInf(x, 0) {
				return nil, 0, value.ValueErrorf("%s: %s = %s is not finite", c.Name, paramName(c, idx[k]), t)
			}
			if x == 0 && zeroNone[k] {
				continue
			}
			out[k] = linop.ScaledIdentity(n, x)
		case *objects.Operator:
			out[k] = t.Op
		}
	}
	return out, n, nil
}

// structErr turns a failure to set up a system into a language error.
func structErr(c *eval.Call, err error) error {
	if errors.Is(err, pencil.ErrSingularMass) {
		what := "M u″ = −C u' − K u does not determine u″"
		if c.Name == "firstorder" {
			what = "M u' = K u does not determine u'"
		}
		return value.ValueErrorf("%s: the mass matrix M is singular to working precision%s: %s", c.Name, trimmed(err, pencil.ErrSingularMass), what)
	}
	return stabNumErr(c, err)
}

// trimmed returns what err says beyond its sentinel, as " (…)" or "".
func trimmed(err, sentinel error) string {
	s, p := err.Error(), sentinel.Error()
	if len(s) > len(p) && s[:len(p)] == p {
		return s[len(p):]
	}
	return ""
}

func firstorderImpl(c *eval.Call) (value.Value, error) {
	ops, _, err := structArgs(c, []int{0, 1}, []bool{false, false})
	if err != nil {
		return nil, err
	}
	var a *pencil.Mass
	if err := stabGuardRaw(c, func() (e error) { a, e = pencil.NewMass(c.Ctx, ops[0], ops[1]); return }); err != nil {
		return nil, structErr(c, err)
	}
	return &objects.Operator{Op: a, Label: "M⁻¹K"}, nil
}

func secondorderImpl(c *eval.Call) (value.Value, error) {
	ops, _, err := structArgs(c, []int{0, 1, 2}, []bool{false, true, false})
	if err != nil {
		return nil, err
	}
	var g *pencil.Second
	if err := stabGuardRaw(c, func() (e error) { g, e = pencil.NewSecond(c.Ctx, ops[0], ops[1], ops[2]); return }); err != nil {
		return nil, structErr(c, err)
	}
	label := "second-order system"
	if ops[1] == nil {
		label = "undamped second-order system"
	}
	return &objects.Operator{Op: g, Label: label}, nil
}

// systemArg is argument i as a system from firstorder or secondorder.
func systemArg(c *eval.Call, i int) (*objects.Operator, pencilOperator, error) {
	v, err := c.Arg(i)
	if err != nil {
		return nil, nil, err
	}
	op, ok := v.(*objects.Operator)
	if ok {
		if p, ok := op.Op.(pencilOperator); ok {
			return op, p, nil
		}
		return nil, nil, value.ValueErrorf("%s: %s must be a system from secondorder or firstorder, not the operator %s", c.Name, paramName(c, i), op.Label)
	}
	return nil, nil, value.TypeErrorf("%s: %s must be a system from secondorder or firstorder, not %s", c.Name, paramName(c, i), value.TypeName(v))
}

func energyImpl(c *eval.Call) (value.Value, error) {
	_, p, err := systemArg(c, 0)
	if err != nil {
		return nil, err
	}
	n, _ := p.Dims()
	v, err := c.Arg(1)
	if err != nil {
		return nil, err
	}
	one := func(x []float64) (float64, error) {
		if len(x) != n {
			return 0, value.ValueErrorf("energy: the state has %d entries but the system has order %d", len(x), n)
		}
		for k, t := range x {
			if math.IsNaN(t) || math.IsInf(t, 0) {
				return 0, value.ValueErrorf("energy: x[%d] = %s is not finite", k, value.FormatNum(t))
			}
		}
		return p.Energy(x), nil
	}
	if s, ok := v.(*objects.Solution); ok {
		out := make([]float64, len(s.S.Values))
		for k, x := range s.S.Values {
			if out[k], err = one(x); err != nil {
				return nil, err
			}
		}
		if len(out) == 1 {
			return value.Num(out[0]), nil
		}
		return value.RealVec(out), nil
	}
	re, cx, err := numbers(c, "x", v)
	if err != nil {
		return nil, err
	}
	if cx != nil {
		return nil, value.TypeErrorf("energy: x must be real, not complex")
	}
	e, err := one(re)
	if err != nil {
		return nil, err
	}
	return value.Num(e), nil
}

// energyWeight is weight = "energy" for the operator op, or an error
// saying which operators have one.
func energyWeight(c *eval.Call, op *objects.Operator) (spectra.Weight, string, error) {
	p, ok := op.Op.(pencilOperator)
	if !ok {
		return nil, "", value.ValueErrorf(`%s: weight = "energy" needs a system from secondorder or firstorder, not the operator %s`, c.Name, op.Label)
	}
	var w linop.Weight
	if err := stabGuardRaw(c, func() (e error) { w, e = p.EnergyWeight(); return }); err != nil {
		if errors.Is(err, pencil.ErrNotDefinite) {
			return nil, "", value.ValueErrorf(`%s: weight = "energy" needs M and K symmetric positive definite: %s`, c.Name, trimmed(err, pencil.ErrNotDefinite)[2:])
		}
		return nil, "", stabNumErr(c, err)
	}
	if _, ok := p.(*pencil.Second); ok {
		return w, "energy inner product E = ½(vᵀMv + uᵀKu), ‖x‖_E² = 2E", nil
	}
	return w, "inner product of the mass matrix, ‖u‖² = uᵀMu", nil
}

// pencilSpectrum is spectrum for a system from firstorder or secondorder:
// the dense pencil routes up to DenseLimit, shift-and-invert Krylov–Schur
// with the pencil's factorisation above; count = k selects the k nearest
// near (0 when not given). ok is false for other operators.
func pencilSpectrum(c *eval.Call, op *objects.Operator, n, k int, near float64, nearSet bool) (value.Value, bool, error) {
	var dense func() (*spectra.Spectrum, error)
	switch t := op.Op.(type) {
	case *pencil.Mass:
		dense = func() (*spectra.Spectrum, error) { return t.Spectrum(c.Ctx) }
	case *pencil.Second:
		dense = func() (*spectra.Spectrum, error) { return t.Spectrum(c.Ctx) }
	default:
		return nil, false, nil
	}
	what := fmt.Sprintf("all %d eigenvalues", n)
	if k > 0 {
		what = fmt.Sprintf("the %d eigenvalues nearest %s", k, value.FormatNum(near))
		if !nearSet {
			what = fmt.Sprintf("the %d eigenvalues nearest 0 (the lowest modes)", k)
		}
	}
	if n <= DenseLimit {
		var s *spectra.Spectrum
		if err := stabGuard(c, func() (e error) { s, e = dense(); return }); err != nil {
			return nil, true, err
		}
		full := s
		if k > 0 {
			s = stabSelectEigen(s, k, true, near)
		}
		r := objects.SpectrumReport(op.Label, n, s, what)
		addModes(r, op.Op, full, s.Values)
		return r, true, nil
	}
	if k == 0 {
		return nil, true, stabNeedDense(c, n, "give count = k for the k eigenvalues nearest 0 (or near=) by shift-and-invert Krylov–Schur with the pencil")
	}
	if 2*k+12 >= n {
		return nil, true, value.ValueErrorf("spectrum: count = %d is too many for the Krylov method on order %d", k, n)
	}
	o := &spectra.EigsOptions{Count: k, ShiftInvert: true, Shift: near, Progress: stabProgress(c)}
	var s *spectra.Spectrum
	if err := stabGuard(c, func() (e error) { s, e = spectra.Rightmost(c.Ctx, op.Op, o); return }); err != nil {
		return nil, true, err
	}
	full := &spectra.Spectrum{Values: append([]complex128(nil), s.Values...), Right: s.Right}
	sortRightmost(s)
	r := objects.SpectrumReport(op.Label, n, s, what)
	addModes(r, op.Op, full, s.Values)
	r.Notes = append(r.Notes, "shifted solves factor the pencil (zM − K, or z²M + zC + K) sparsely; M⁻¹K is never formed")
	return r, true, nil
}

// addModes names the mode shapes of the eigenvalues shown as r.modes: for
// each, the eigenvector of full (matched by value) or, for a second-order
// system, its displacement half, scaled to unit length with its largest
// entry real and positive; real vectors when every entry is real.
func addModes(r *objects.Analysis, op linop.Operator, full *spectra.Spectrum, shown []complex128) {
	if full.Right == nil {
		return
	}
	rows, cols := full.Right.Dims()
	n := rows
	if _, ok := op.(*pencil.Second); ok {
		n = rows / 2
	}
	used := make([]bool, cols)
	modes := make(value.List, 0, len(shown))
	for _, lam := range shown {
		col := -1
		for j := 0; j < cols && j < len(full.Values); j++ {
			if !used[j] && full.Values[j] == lam {
				col = j
				break
			}
		}
		if col < 0 {
			return // not matched: leave the modes out rather than guess
		}
		used[col] = true
		z := make([]complex128, n)
		var s float64
		var big complex128
		for i := range z {
			z[i] = full.Right.At(i, col)
			s = math.Hypot(s, cmplx.Abs(z[i]))
			if cmplx.Abs(z[i]) > cmplx.Abs(big) {
				big = z[i]
			}
		}
		if s > 0 {
			f := complex(s, 0) * big / complex(cmplx.Abs(big), 0)
			for i := range z {
				z[i] /= f
			}
		}
		// Real when every imaginary part is within rounding of the unit
		// vector (8·n·u): a proportionally damped system's modes are real,
		// its computed ones real up to such dust.
		isReal := true
		for _, v := range z {
			if math.Abs(imag(v)) > 8*float64(n)*roundoff.Unit {
				isReal = false
				break
			}
		}
		if isReal {
			x := make([]float64, n)
			for i, v := range z {
				x[i] = real(v)
			}
			modes = append(modes, value.RealVec(x))
		} else {
			modes = append(modes, value.ComplexVec(z))
		}
	}
	r.Named = append(r.Named, objects.Named{Name: "modes", X: modes})
}
