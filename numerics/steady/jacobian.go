package steady

import (
	"context"
	"fmt"
	"math"

	"gonum.org/v1/gonum/mat"

	"semiflow/numerics/linop"
	"semiflow/numerics/memguard"
)

// Term is the nonlinear part N of F(u) = A u + N(u) + f.
type Term struct {
	// Eval sets dst = N(u). Its error stops the solver and is returned
	// unchanged.
	Eval func(u, dst []float64) error
	// EvalComplex, if not nil, sets dst = N(z) for complex z (the analytic
	// extension of N, for complex-step derivatives) and reports whether it
	// could (false: N has no complex form, differences are used instead).
	EvalComplex func(z, dst []complex128) (bool, error)
	// Jacobian, if not nil, returns N'(u), checked against a directional
	// derivative of Eval; otherwise N'(u) is found by differences.
	Jacobian func(u []float64) (linop.Operator, error)
}

// Structure names how N'(u) is stored.
type Structure int

const (
	Diagonal Structure = iota // N acts entry by entry: one evaluation per Jacobian
	Pattern                   // N couples unknowns as A does: one evaluation per colour
	Full                      // dense: one evaluation per unknown
	Given                     // from Term.Jacobian
)

func (s Structure) String() string {
	switch s {
	case Diagonal:
		return "diagonal"
	case Pattern:
		return "sparse, A's pattern"
	case Full:
		return "dense"
	}
	return "given"
}

// Engine names how derivatives of N are taken.
type Engine int

const (
	ComplexStep Engine = iota // Im N(u + i h v)/h: exact to rounding for analytic N (Squire & Trapp, SIAM Rev. 1998)
	Differences               // forward differences, step √u·max(|u_j|, ‖u‖∞)
)

func (e Engine) String() string {
	if e == ComplexStep {
		return "complex step"
	}
	return "finite differences"
}

// CheckTol is the relative disagreement along a random direction v
// between N'(u)v and the directional derivative of N above which a
// Jacobian is rejected: ‖N'(u)v − D_vN(u)‖∞ > CheckTol·(‖|N'(u)||v|‖∞ +
// ‖D_vN(u)‖∞). With complex steps both sides are exact to rounding; with
// differences the forward differences carry about √u of relative error and
// the central directional derivative u^(2/3).
func CheckTol(e Engine) float64 {
	if e == ComplexStep {
		return 1e-8
	}
	return 1e-5
}

// Jacobian is N'(u) at one state and how it was found.
type Jacobian struct {
	Op        linop.Operator // *linop.Diag, *linop.CSR or *linop.Dense (or the given operator)
	Structure Structure
	Engine    Engine
	// Mismatch is the relative disagreement found by the check along a
	// random direction (see CheckTol); NaN when not checked.
	Mismatch float64
	Evals    int // evaluations of N spent
}

// Describe says in words how the Jacobian was found.
func (j *Jacobian) Describe() string {
	how := fmt.Sprintf("%s by %s", j.Structure, j.Engine)
	if j.Structure == Given {
		how = "given"
	}
	if !math.IsNaN(j.Mismatch) {
		how += fmt.Sprintf(", checked along a random direction (relative disagreement %.1e)", j.Mismatch)
	}
	return how
}

// differ finds N'(u): the engine and structure are decided at the first
// state (Decide) and reused at later ones (At).
type differ struct {
	ctx     context.Context
	n       int
	term    Term
	a       linop.Operator
	engine  Engine
	kind    Structure
	pattern *linop.CSR // A's pattern with the diagonal, for Pattern
	colours [][]int    // columns of each colour
	evals   int
}

func newDiffer(ctx context.Context, a linop.Operator, term Term) *differ {
	n, _ := a.Dims()
	return &differ{ctx: ctx, n: n, term: term, a: a, kind: -1}
}

func (d *differ) eval(u, dst []float64) error {
	if err := d.ctx.Err(); err != nil {
		return err
	}
	d.evals++
	if err := d.term.Eval(u, dst); err != nil {
		return err
	}
	if k := firstNonFinite(dst); k >= 0 {
		return &NonFiniteError{What: "the nonlinear term", Index: k, Value: dst[k]}
	}
	return nil
}

// imag sets dst = Im N(u + i v) (v holds the steps, each tiny) and reports
// false when N has no complex form or its value is not finite.
func (d *differ) imag(u, v, dst []float64) (bool, error) {
	if d.term.EvalComplex == nil {
		return false, nil
	}
	if err := d.ctx.Err(); err != nil {
		return false, err
	}
	z := make([]complex128, d.n)
	for i := range z {
		z[i] = complex(u[i], v[i])
	}
	w := make([]complex128, d.n)
	d.evals++
	ok, err := d.term.EvalComplex(z, w)
	if err != nil || !ok {
		return false, err
	}
	for i, x := range w {
		dst[i] = imag(x)
		if math.IsNaN(real(x)) || math.IsInf(real(x), 0) || math.IsNaN(imag(x)) || math.IsInf(imag(x), 0) {
			return false, nil
		}
	}
	return true, nil
}

// csStep is the complex step: tiny enough that h² terms vanish beside
// rounding for any reasonably scaled N.
const csStep = 1e-20

// fdStep returns the forward-difference step for entry j.
func fdStep(u []float64, j int, scale float64) float64 {
	return math.Sqrt(0x1p-52) * math.Max(math.Abs(u[j]), scale)
}

func normInf(v []float64) float64 {
	m := 0.0
	for _, x := range v {
		m = math.Max(m, math.Abs(x))
	}
	return m
}

func firstNonFinite(v []float64) int {
	for i, x := range v {
		if math.IsNaN(x) || math.IsInf(x, 0) {
			return i
		}
	}
	return -1
}

// directional returns D_vN(u) by the engine: Im N(u + i h v)/h, or the
// central difference (N(u + δv) − N(u − δv))/(2δ) with δ = u^(1/3)·scale.
func (d *differ) directional(e Engine, u, v []float64) ([]float64, bool, error) {
	n := d.n
	out := make([]float64, n)
	if e == ComplexStep {
		hv := make([]float64, n)
		for i := range hv {
			hv[i] = csStep * v[i]
		}
		ok, err := d.imag(u, hv, out)
		if err != nil || !ok {
			return nil, false, err
		}
		for i := range out {
			out[i] /= csStep
		}
		return out, true, nil
	}
	delta := math.Cbrt(0x1p-52) * scaleOf(u)
	up, um := make([]float64, n), make([]float64, n)
	for i := range up {
		up[i] = u[i] + delta*v[i]
		um[i] = u[i] - delta*v[i]
	}
	fp, fm := make([]float64, n), make([]float64, n)
	if err := d.eval(up, fp); err != nil {
		return nil, false, err
	}
	if err := d.eval(um, fm); err != nil {
		return nil, false, err
	}
	for i := range out {
		out[i] = (fp[i] - fm[i]) / (2 * delta)
	}
	return out, true, nil
}

func scaleOf(u []float64) float64 {
	if s := normInf(u); s > 0 {
		return s
	}
	return 1
}

// probe returns the reproducible random direction of the checks.
func probe(n int) []float64 {
	v := make([]float64, n)
	seed := uint64(0x9e3779b97f4a7c15)
	for i := range v {
		seed ^= seed << 13
		seed ^= seed >> 7
		seed ^= seed << 17
		v[i] = 2*(float64(seed>>11)/float64(1<<53)) - 1
	}
	return v
}

// mismatch returns ‖Jv − ref‖∞ / (‖|J||v|‖∞ + ‖ref‖∞), 0 when both vanish.
func mismatch(j linop.Operator, v, ref []float64) float64 {
	n := len(v)
	jv := make([]float64, n)
	j.Apply(jv, v)
	av := make([]float64, n)
	for i := range av {
		av[i] = math.Abs(v[i])
	}
	abs := absApply(j, av)
	diff := 0.0
	for i := range jv {
		diff = math.Max(diff, math.Abs(jv[i]-ref[i]))
	}
	scale := normInf(abs) + normInf(ref)
	if diff == 0 {
		return 0
	}
	return diff / scale
}

// absApply returns |J| x for x ≥ 0 for the stored forms, and |J x| as a
// stand-in for others.
func absApply(j linop.Operator, x []float64) []float64 {
	n, _ := j.Dims()
	out := make([]float64, n)
	switch t := j.(type) {
	case *linop.Diag:
		for i := range out {
			out[i] = math.Abs(t.D[i]) * x[i]
		}
	case *linop.CSR:
		for i := 0; i < t.Rows; i++ {
			for p := t.RowPtr[i]; p < t.RowPtr[i+1]; p++ {
				out[i] += math.Abs(t.Val[p]) * x[t.ColIdx[p]]
			}
		}
	case *linop.Dense:
		m := t.Mat()
		for i := 0; i < n; i++ {
			for k := 0; k < n; k++ {
				out[i] += math.Abs(m.At(i, k)) * x[k]
			}
		}
	default:
		j.Apply(out, x)
		for i := range out {
			out[i] = math.Abs(out[i])
		}
	}
	return out
}

// Decide chooses the engine and the structure at u and returns N'(u):
// the complex step when N has a complex form that agrees with central
// differences along a random direction v, differences otherwise; then the
// first of diagonal, A's pattern (column colouring) and dense whose
// product with v agrees with the directional derivative. A given Jacobian
// is only checked; a disagreement is an error.
func (d *differ) Decide(u []float64) (*Jacobian, error) {
	n := d.n
	v := probe(n)
	f0 := make([]float64, n)
	if err := d.eval(u, f0); err != nil {
		return nil, err
	}
	fd, _, err := d.directional(Differences, u, v)
	if err != nil {
		return nil, err
	}
	d.engine = Differences
	ref := fd
	if cs, ok, err := d.directional(ComplexStep, u, v); err != nil {
		return nil, err
	} else if ok {
		// Central differences: truncation ~δ²|N'''|, rounding ~u‖N‖/δ.
		delta := math.Cbrt(0x1p-52) * scaleOf(u)
		diff := 0.0
		for i := range cs {
			diff = math.Max(diff, math.Abs(cs[i]-fd[i]))
		}
		if diff <= 1e-6*(normInf(cs)+normInf(fd))+64*0x1p-52*normInf(f0)/delta {
			d.engine, ref = ComplexStep, cs
		}
	}
	tol := CheckTol(d.engine)
	if d.term.Jacobian != nil {
		j, err := d.given(u)
		if err != nil {
			return nil, err
		}
		m := mismatch(j, v, ref)
		if !(m <= tol) {
			return nil, &JacobianError{Mismatch: m, Tol: tol, Engine: d.engine}
		}
		d.kind = Given
		return &Jacobian{Op: j, Structure: Given, Engine: d.engine, Mismatch: m, Evals: d.evals}, nil
	}
	var last float64
	for _, k := range []Structure{Diagonal, Pattern, Full} {
		if k == Pattern && !d.setPattern() {
			continue
		}
		d.kind = k
		j, err := d.at(u)
		if err != nil {
			return nil, err
		}
		last = mismatch(j, v, ref)
		if last <= tol {
			return &Jacobian{Op: j, Structure: k, Engine: d.engine, Mismatch: last, Evals: d.evals}, nil
		}
	}
	return nil, &JacobianError{Mismatch: last, Tol: tol, Engine: d.engine, Differences: true}
}

// At returns N'(u) with the engine and structure of the last Decide.
func (d *differ) At(u []float64) (*Jacobian, error) {
	if d.kind < 0 {
		return d.Decide(u)
	}
	if d.kind == Given {
		j, err := d.given(u)
		if err != nil {
			return nil, err
		}
		return &Jacobian{Op: j, Structure: Given, Engine: d.engine, Mismatch: math.NaN()}, nil
	}
	j, err := d.at(u)
	if err != nil {
		return nil, err
	}
	return &Jacobian{Op: j, Structure: d.kind, Engine: d.engine, Mismatch: math.NaN()}, nil
}

func (d *differ) given(u []float64) (linop.Operator, error) {
	j, err := d.term.Jacobian(append([]float64(nil), u...))
	if err != nil {
		return nil, err
	}
	if r, c := j.Dims(); r != d.n || c != d.n {
		return nil, fmt.Errorf("%w: the Jacobian is %d×%d; the operator has order %d", ErrShape, r, c, d.n)
	}
	return j, nil
}

// setPattern colours the columns of A's pattern (with the diagonal) so
// that no two columns of one colour share a row (greedy distance-2
// colouring; Curtis, Powell & Reid, IMA J. Appl. Math. 1974). It reports
// false when A has no sparse form or needs more than n/2 colours.
func (d *differ) setPattern() bool {
	if d.pattern != nil {
		return true
	}
	if _, ok := d.a.(*linop.Dense); ok {
		return false
	}
	csr, err := linop.ToCSR(d.a)
	if err != nil {
		return false
	}
	n := d.n
	// Pattern with the diagonal, values 1.
	p := linop.AddCSR(1, patternOf(csr), 1, linop.Identity(n))
	for k := range p.Val {
		p.Val[k] = 1
	}
	pt := p.Transpose() // row j of pt: the rows where column j has entries
	colour := make([]int, n)
	for j := range colour {
		colour[j] = -1
	}
	forbidden := make([]int, 0, 16)
	mark := map[int]bool{}
	ncol := 0
	for j := 0; j < n; j++ {
		forbidden = forbidden[:0]
		for q := pt.RowPtr[j]; q < pt.RowPtr[j+1]; q++ {
			i := pt.ColIdx[q]
			for r := p.RowPtr[i]; r < p.RowPtr[i+1]; r++ {
				if c := colour[p.ColIdx[r]]; c >= 0 && !mark[c] {
					mark[c] = true
					forbidden = append(forbidden, c)
				}
			}
		}
		c := 0
		for mark[c] {
			c++
		}
		for _, f := range forbidden {
			delete(mark, f)
		}
		colour[j] = c
		if c+1 > ncol {
			ncol = c + 1
		}
		if ncol > n/2 {
			return false
		}
	}
	d.colours = make([][]int, ncol)
	for j, c := range colour {
		d.colours[c] = append(d.colours[c], j)
	}
	d.pattern = p
	return true
}

func patternOf(a *linop.CSR) *linop.CSR {
	b := a.Clone()
	for k := range b.Val {
		b.Val[k] = 1
	}
	return b
}

// at computes N'(u) in the current structure.
func (d *differ) at(u []float64) (linop.Operator, error) {
	n := d.n
	var f0 []float64
	if d.engine == Differences {
		f0 = make([]float64, n)
		if err := d.eval(u, f0); err != nil {
			return nil, err
		}
	}
	switch d.kind {
	case Diagonal:
		col, err := d.group(u, f0, nil)
		if err != nil {
			return nil, err
		}
		return &linop.Diag{D: col}, nil
	case Pattern:
		p := d.pattern
		pt := p.Transpose()
		vals := make([]float64, len(p.Val))
		// owner[i] of the current colour: the one column of the colour
		// with an entry in row i.
		for _, cols := range d.colours {
			col, err := d.group(u, f0, cols)
			if err != nil {
				return nil, err
			}
			for _, j := range cols {
				for q := pt.RowPtr[j]; q < pt.RowPtr[j+1]; q++ {
					i := pt.ColIdx[q]
					for r := p.RowPtr[i]; r < p.RowPtr[i+1]; r++ {
						if p.ColIdx[r] == j {
							vals[r] = col[i]
						}
					}
				}
			}
		}
		out := &linop.CSR{Rows: n, Cols: n, RowPtr: p.RowPtr, ColIdx: p.ColIdx, Val: vals}
		return out, nil
	case Full:
		if err := memguard.DenseReal(n, n); err != nil {
			return nil, err
		}
		m := mat.NewDense(n, n, nil)
		for j := 0; j < n; j++ {
			col, err := d.group(u, f0, []int{j})
			if err != nil {
				return nil, err
			}
			for i := 0; i < n; i++ {
				m.Set(i, j, col[i])
			}
		}
		return linop.NewDense(m), nil
	}
	panic("steady: no structure chosen")
}

// group returns the derivative of N along Σ_{j∈cols} e_j scaled back per
// column (f0 = N(u) for differences): entry i is ∂N_i/∂u_j for the column j of the group that row i
// meets (cols nil: every column, the diagonal case).
func (d *differ) group(u, f0 []float64, cols []int) ([]float64, error) {
	n := d.n
	all := cols == nil
	if d.engine == ComplexStep {
		v := make([]float64, n)
		if all {
			for i := range v {
				v[i] = csStep
			}
		} else {
			for _, j := range cols {
				v[j] = csStep
			}
		}
		out := make([]float64, n)
		ok, err := d.imag(u, v, out)
		if err != nil {
			return nil, err
		}
		if !ok {
			return nil, fmt.Errorf("steady: the nonlinear term stopped accepting complex arguments")
		}
		for i := range out {
			out[i] /= csStep
		}
		return out, nil
	}
	scale := scaleOf(u)
	h := make([]float64, n) // step per entry of u, 0 outside the group
	if all {
		for j := range h {
			h[j] = fdStep(u, j, scale)
		}
	} else {
		for _, j := range cols {
			h[j] = fdStep(u, j, scale)
		}
	}
	up := make([]float64, n)
	for j := range up {
		up[j] = u[j] + h[j]
		h[j] = up[j] - u[j] // the step actually taken
	}
	f1 := make([]float64, n)
	if err := d.eval(up, f1); err != nil {
		return nil, err
	}
	out := make([]float64, n)
	if all {
		for i := range out {
			out[i] = (f1[i] - f0[i]) / h[i]
		}
		return out, nil
	}
	// Row i meets one column of the group; find it through the pattern.
	p := d.pattern
	if d.kind == Full { // one column
		for i := range out {
			out[i] = (f1[i] - f0[i]) / h[cols[0]]
		}
		return out, nil
	}
	for i := 0; i < n; i++ {
		for r := p.RowPtr[i]; r < p.RowPtr[i+1]; r++ {
			if hj := h[p.ColIdx[r]]; hj != 0 {
				out[i] = (f1[i] - f0[i]) / hj
				break
			}
		}
	}
	return out, nil
}

// JacobianAt returns N'(u), found and checked as Solve finds it at a
// steady state (the first structure that passes the check along a random
// direction, or the given Jacobian checked).
func JacobianAt(ctx context.Context, a linop.Operator, term Term, u []float64) (*Jacobian, error) {
	n, c := a.Dims()
	if n != c || len(u) != n {
		return nil, fmt.Errorf("%w: operator %d×%d, state of %d entries", ErrShape, n, c, len(u))
	}
	return newDiffer(ctx, a, term).Decide(u)
}
