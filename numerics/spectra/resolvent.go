package spectra

import (
	"context"
	"fmt"
	"math"

	"semiflow/numerics/linop"
	"semiflow/numerics/memguard"
	"semiflow/numerics/solve"
)

// ResolventNorm returns ‖(zI − A)⁻¹‖₂ = 1/σ_min(zI − A), +Inf at an
// eigenvalue, to relative accuracy about 1e-10.
func (s *Schur) ResolventNorm(z complex128) float64 {
	return 1 / s.SigmaMin(z, 1e-10)
}

// ResolventProfile is ‖(zI − A)⁻¹‖₂ at a list of points.
type ResolventProfile struct {
	Z        []complex128
	Norm     []float64
	Max      float64    // largest Norm
	ArgMax   complex128 // where it is attained
	Method   string
	Accuracy string
}

// ResolventNorms evaluates ‖(zI − A)⁻¹‖₂ at every z, in parallel, by
// inverse Lanczos on the Schur form (see Schur.Pseudo). The progress
// callback counts points.
func (s *Schur) ResolventNorms(ctx context.Context, zs []complex128, opt *GridOptions) (*ResolventProfile, error) {
	o := opt.defaults()
	if opt == nil || opt.Tol == 0 {
		o.Tol = 1e-10
	}
	p := &ResolventProfile{Z: append([]complex128(nil), zs...), Norm: make([]float64, len(zs))}
	unconv := make([]int, o.Workers)
	err := parallelEach(ctx, o.Workers, len(zs), o.Progress, func(w int) func(int) {
		ts := newTriSigma(s.T, s.N, o.Tol, o.MaxIter)
		ts.done = ctx.Done()
		return func(k int) {
			r := ts.eval(zs[k], false, false)
			p.Norm[k] = 1 / r.sigma
			if !r.conv {
				unconv[w]++
			}
		}
	})
	if err != nil {
		return nil, err
	}
	nu := 0
	for _, u := range unconv {
		nu += u
	}
	p.Max = math.Inf(-1)
	for k, v := range p.Norm {
		if v > p.Max {
			p.Max, p.ArgMax = v, zs[k]
		}
	}
	p.Method = "‖(zI−A)⁻¹‖ = 1/σ_min(zI−T) on the complex Schur form, inverse Lanczos at each point"
	p.Accuracy = fmt.Sprintf("relative error ≲ %.0e per point (%d of %d unconverged)", o.Tol/2, nu, len(zs))
	return p, nil
}

// ResolventLine evaluates ‖(zI − A)⁻¹‖₂ along the vertical line Re z = c at
// n equally spaced points Im z ∈ [im0, im1]. It panics with ErrOption if
// n < 2 or im1 ≤ im0.
func (s *Schur) ResolventLine(ctx context.Context, c, im0, im1 float64, n int, opt *GridOptions) (*ResolventProfile, error) {
	if n < 2 || !(im1 > im0) {
		panic(ErrOption)
	}
	zs := make([]complex128, n)
	for k, y := range linspace(im0, im1, n) {
		zs[k] = complex(c, y)
	}
	p, err := s.ResolventNorms(ctx, zs, opt)
	if err == nil {
		p.Method = fmt.Sprintf("along Re z = %g: ", c) + p.Method
	}
	return p, err
}

// ResolventSolve sets x = (zI − A)⁻¹ b using the Schur form,
// x = Z (zI − T)⁻¹ Zᴴ b. It returns an error if z is an eigenvalue and
// panics with ErrShape on a length mismatch.
func (s *Schur) ResolventSolve(x, b []complex128, z complex128) error {
	return s.solveShifted(x, b, z)
}

// ResolventApply returns x = (zI − A)⁻¹ b for any square operator A, by a
// factorisation of zI − A chosen from A's structure (solve.NewShifted:
// banded, sparse or dense complex LU), with one step of iterative
// refinement and the relative residual ‖b − (zI − A)x‖/‖b‖ reported.
// It panics with ErrShape on a length mismatch.
func ResolventApply(a linop.Operator, z complex128, b []complex128) (x []complex128, relResidual float64, err error) {
	return ResolventApplyContext(context.Background(), a, z, b)
}

// resolventVectors is the number of complex vectors of order n that
// ResolventApply holds at once: the solution, the correction, the residual
// and, while a residual is formed, the real and imaginary parts of x and of
// A x (two complex vectors' worth) and the new residual.
const resolventVectors = 6

// ResolventApplyContext is ResolventApply returning ctx.Err() at once when
// ctx is cancelled. The work vectors, and the temporaries of A's products,
// are asked of the memory guard first. The factorisation checks ctx between
// its steps, but its orderings and solves do not, and on a busy machine a
// step can take longer than an interrupt may wait: the whole solve runs
// under abandonable, declared with its work vectors (the factors are asked
// of the guard where they are made), and stops at the factorisation's next
// check when abandoned.
func ResolventApplyContext(ctx context.Context, a linop.Operator, z complex128, b []complex128) (x []complex128, relResidual float64, err error) {
	n, c := a.Dims()
	if n != c || len(b) != n {
		panic(ErrShape)
	}
	need := float64(n) * (resolventVectors*memguard.ComplexBytes + float64(linop.Scratch(a))*memguard.RealBytes)
	what := fmt.Sprintf("resolvent solve work vectors (%d complex vectors of order %d)", resolventVectors, n)
	if err := memguard.Bytes(need, what); err != nil {
		return nil, 0, err
	}
	type solved struct {
		x   []complex128
		res float64
	}
	r, err := abandonable(ctx, int64(need), what, func() (solved, error) {
		x, res, err := resolventApply(ctx, a, z, b)
		return solved{x, res}, err
	})
	return r.x, r.res, err
}

func resolventApply(ctx context.Context, a linop.Operator, z complex128, b []complex128) (x []complex128, relResidual float64, err error) {
	n, _ := a.Dims()
	f, err := solve.NewShiftedContext(ctx, a, z, solve.Options{})
	if err != nil {
		return nil, 0, err
	}
	x = make([]complex128, n)
	if err := f.Solve(x, b); err != nil {
		return nil, 0, err
	}
	r := solve.Residual(a, z, x, b)
	d := make([]complex128, n)
	if err := f.Solve(d, r); err == nil {
		for i := range x {
			x[i] += d[i]
		}
		r = solve.Residual(a, z, x, b)
	}
	return x, cnorm(r) / math.Max(cnorm(b), 1e-300), nil
}
