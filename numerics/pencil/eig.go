package pencil

import (
	"context"
	"errors"
	"fmt"
	"math"
	"math/cmplx"
	"sort"

	"gonum.org/v1/gonum/mat"

	"semiflow/numerics/abandon"
	"semiflow/numerics/linop"
	"semiflow/numerics/roundoff"
	"semiflow/numerics/spectra"
)

// reduced holds the Cholesky reduction of a symmetric definite problem:
// M = LLᵀ and, for each symmetric X given, L⁻¹XL⁻ᵀ.
type reduced struct {
	l    mat.TriDense
	mats []*mat.SymDense
}

// reduce factors M = LLᵀ and forms L⁻¹XL⁻ᵀ for each X (nil X gives nil).
// It returns (nil, reason, nil) when M is not symmetric positive definite
// or an X is not symmetric, so the caller takes the general route; memory
// refusals come back as errors.
func reduce(m linop.Operator, xs ...linop.Operator) (*reduced, string, error) {
	ms, err := symmetricDense(m, "M")
	if err != nil {
		if errors.Is(err, ErrNotDefinite) {
			return nil, err.Error(), nil
		}
		return nil, "", err
	}
	var ch mat.Cholesky
	if !ch.Factorize(ms) {
		return nil, "M is symmetric but not positive definite", nil
	}
	r := &reduced{}
	ch.LTo(&r.l)
	for k, x := range xs {
		if x == nil {
			r.mats = append(r.mats, nil)
			continue
		}
		xd, err := symmetricDense(x, []string{"K", "C"}[min(k, 1)])
		if err != nil {
			if errors.Is(err, ErrNotDefinite) {
				return nil, err.Error(), nil
			}
			return nil, "", err
		}
		var y, z mat.Dense
		if err := y.Solve(&r.l, xd); err != nil && !isCondition(err) { // L⁻¹X
			return nil, "", err
		}
		if err := z.Solve(&r.l, y.T()); err != nil && !isCondition(err) { // L⁻¹XᵀL⁻ᵀ
			return nil, "", err
		}
		n, _ := z.Dims()
		s := mat.NewSymDense(n, nil)
		for i := 0; i < n; i++ {
			for j := i; j < n; j++ {
				s.SetSym(i, j, (z.At(i, j)+z.At(j, i))/2)
			}
		}
		r.mats = append(r.mats, s)
	}
	return r, "", nil
}

// reduceContext is reduce run so that an interrupt returns at once (the
// dense Cholesky factorisation and triangular solves cannot be
// interrupted; they finish in the background, their memory counted).
func reduceContext(ctx context.Context, m linop.Operator, xs ...linop.Operator) (*reduced, string, error) {
	n := square(m)
	type out struct {
		r   *reduced
		why string
	}
	o, err := abandon.Run(ctx, abandon.DenseBytes(n, 2+2*len(xs)), fmt.Sprintf("Cholesky reduction of order %d", n), func() (out, error) {
		r, why, err := reduce(m, xs...)
		return out{r, why}, err
	})
	return o.r, o.why, err
}

func isCondition(err error) bool {
	var c mat.Condition
	return errors.As(err, &c)
}

// symEigen returns the eigenvalues of s in increasing order and the unit
// eigenvectors in the columns of a matrix, abandonable.
func symEigen(ctx context.Context, s *mat.SymDense) ([]float64, *mat.Dense, error) {
	n := s.SymmetricDim()
	type pair struct {
		vals []float64
		vecs *mat.Dense
	}
	p, err := abandon.Run(ctx, abandon.DenseBytes(n, 4), fmt.Sprintf("symmetric eigenvalues of order %d", n), func() (pair, error) {
		var e mat.EigenSym
		if !e.Factorize(s, true) {
			return pair{}, fmt.Errorf("pencil: symmetric QR algorithm did not converge at order %d", n)
		}
		var v mat.Dense
		e.VectorsTo(&v)
		return pair{e.Values(nil), &v}, nil
	})
	return p.vals, p.vecs, err
}

// backTransform returns L⁻ᵀ y for each column y of v (the eigenvectors of
// the pencil from those of L⁻¹XL⁻ᵀ).
func backTransform(l *mat.TriDense, v *mat.Dense) *mat.Dense {
	var x mat.Dense
	if err := x.Solve(l.T(), v); err != nil && !isCondition(err) {
		return nil
	}
	return &x
}

// Spectrum returns every eigenvalue of A = M⁻¹K, those of the pencil
// K x = λ M x. When M is symmetric positive definite and K symmetric, by
// the Cholesky reduction M = LLᵀ and a symmetric eigensolver on L⁻¹KL⁻ᵀ:
// real eigenvalues, each within n·u·‖L⁻¹KL⁻ᵀ‖_F of the reduced matrix's
// (the reduction adds about u·‖K‖‖M⁻¹‖). Otherwise by the QR algorithm on
// M⁻¹K formed densely by solves with M (the method line says why).
func (a *Mass) Spectrum(ctx context.Context) (*spectra.Spectrum, error) {
	r, why, err := reduceContext(ctx, a.M, a.K)
	if err != nil {
		return nil, err
	}
	if r != nil {
		mu, y, err := symEigen(ctx, r.mats[0])
		if err != nil {
			return nil, err
		}
		tau := roundoff.Threshold(a.n, mat.Norm(r.mats[0], 2))
		vals := make([]complex128, len(mu))
		for i, v := range mu {
			vals[len(mu)-1-i] = complex(v, 0)
		}
		sp := symSpectrum(vals, tau)
		if x := backTransform(&r.l, y); x != nil {
			n := a.n
			sp.Right = mat.NewCDense(n, n, nil)
			for k := 0; k < n; k++ {
				col := mat.Col(nil, n-1-k, x)
				unit(col)
				for i, v := range col {
					sp.Right.Set(i, k, complex(v, 0))
				}
			}
		}
		sp.Method = "symmetric definite pencil K x = λ M x: Cholesky M = LLᵀ, then the symmetric QR algorithm on L⁻¹KL⁻ᵀ"
		sp.Accuracy = fmt.Sprintf("each λ within n·u·‖L⁻¹KL⁻ᵀ‖_F = %.1e of the reduced matrix's (real eigenvalues, condition 1 in the M inner product); the reduction adds about u·‖K‖·‖M⁻¹‖ = %.1e", tau, reductionError(a.K, &r.l))
		return sp, nil
	}
	d, err := a.denseForm()
	if err != nil {
		return nil, err
	}
	sp, err := spectra.DenseSpectrumContext(ctx, linop.NewDense(d))
	if err != nil {
		return nil, err
	}
	sp.Method = fmt.Sprintf("M⁻¹K formed by solves with M (%s; the symmetric definite route needs M symmetric positive definite and K symmetric: %s), then %s", a.mf.method, why, sp.Method)
	return sp, nil
}

// symSpectrum fills a Spectrum for eigenvalues (in decreasing real part) of
// an operator normal in its natural inner product, each with error tau.
func symSpectrum(vals []complex128, tau float64) *spectra.Spectrum {
	sp := &spectra.Spectrum{Values: vals, Rounding: tau, Abscissa: math.Inf(-1)}
	sp.Cond = make([]float64, len(vals))
	sp.IllCond = make([]bool, len(vals))
	for k, v := range vals {
		sp.Cond[k] = 1
		sp.Abscissa = math.Max(sp.Abscissa, real(v))
	}
	return sp
}

// reductionError estimates u·‖K‖₂·‖M⁻¹‖₂ = u·‖K‖₂·‖L⁻¹‖₂² from Frobenius
// norms (an overestimate by at most √n each).
func reductionError(k linop.Operator, l *mat.TriDense) float64 {
	kd, err := linop.ToDense(k)
	if err != nil {
		return math.NaN()
	}
	var li mat.TriDense
	if err := li.InverseTri(l); err != nil && !isCondition(err) {
		return math.Inf(1)
	}
	nl := mat.Norm(&li, 2)
	return roundoff.Unit * mat.Norm(kd, 2) * nl * nl
}

// denseForm returns M⁻¹K as a dense matrix, by solves with M's factors.
func (a *Mass) denseForm() (*mat.Dense, error) {
	return solveColumns(a.mf, a.K)
}

func solveColumns(mf *massFactor, x linop.Operator) (*mat.Dense, error) {
	d, err := linop.ToDense(x)
	if err != nil {
		return nil, err
	}
	n, _ := d.Dims()
	col := make([]float64, n)
	for j := 0; j < n; j++ {
		mat.Col(col, j, d)
		mf.solve(col, col, false)
		d.SetCol(j, col)
	}
	return d, nil
}

// Spectrum returns the 2n eigenvalues of G, those of the quadratic
// eigenproblem (λ²M + λC + K) x = 0. With M symmetric positive definite
// and K, C symmetric, after the Cholesky scaling M = LLᵀ: without damping
// by a symmetric eigensolver on L⁻¹KL⁻ᵀ (λ = ±i√μ for its eigenvalues
// μ > 0, ±√(−μ) for μ < 0, a double 0 flagged defective for μ = 0 within
// rounding: a rigid-body mode), with damping by the QR algorithm on the
// companion form [0 I; −L⁻¹KL⁻ᵀ −L⁻¹CL⁻ᵀ]. Otherwise by the QR algorithm on
// [0 I; −M⁻¹K −M⁻¹C] formed by solves with M.
func (s *Second) Spectrum(ctx context.Context) (*spectra.Spectrum, error) {
	r, why, err := reduceContext(ctx, s.M, s.K, s.C)
	if err != nil {
		return nil, err
	}
	n := s.n
	if r != nil && s.C == nil {
		mu, y, err := symEigen(ctx, r.mats[0])
		if err != nil {
			return nil, err
		}
		phi := backTransform(&r.l, y)
		tau := roundoff.Threshold(n, mat.Norm(r.mats[0], 2))
		var vals []complex128
		var rigid []bool
		var shapes [][]float64
		for i := len(mu) - 1; i >= 0; i-- { // decreasing μ
			v := mu[i]
			var col []float64
			if phi != nil {
				col = mat.Col(nil, i, phi)
			}
			shapes = append(shapes, col, col)
			switch roundoff.Sign(v, tau) {
			case 1:
				w := math.Sqrt(v)
				vals = append(vals, complex(0, w), complex(0, -w))
				rigid = append(rigid, false, false)
			case -1:
				w := math.Sqrt(-v)
				vals = append(vals, complex(w, 0), complex(-w, 0))
				rigid = append(rigid, false, false)
			default:
				vals = append(vals, 0, 0)
				rigid = append(rigid, true, true)
			}
		}
		sp := symSpectrum(vals, tau)
		if phi != nil {
			// The state eigenvector of λ is [φ; λφ], scaled to unit length.
			sp.Right = mat.NewCDense(2*n, 2*n, nil)
			for k, lam := range vals {
				z := make([]complex128, 2*n)
				for i, v := range shapes[k] {
					z[i] = complex(v, 0)
					z[n+i] = lam * complex(v, 0)
				}
				cunit(z)
				for i, v := range z {
					sp.Right.Set(i, k, v)
				}
			}
		}
		sp.IllCond = rigid
		for k, b := range rigid {
			if b {
				sp.Cond[k] = math.Inf(1)
			}
		}
		order(sp)
		sp.Method = "undamped second-order system M u'' + K u = 0: Cholesky M = LLᵀ, then the symmetric QR algorithm on L⁻¹KL⁻ᵀ, whose eigenvalues μ = ω² give λ = ±iω"
		sp.Accuracy = fmt.Sprintf("each ω² within n·u·‖L⁻¹KL⁻ᵀ‖_F = %.1e of the reduced matrix's, so ω within that divided by 2ω (condition 1 in the energy inner product); the reduction adds about u·‖K‖·‖M⁻¹‖ = %.1e to ω²", tau, reductionError(s.K, &r.l))
		if countTrue(rigid) > 0 {
			sp.Accuracy += fmt.Sprintf("; %d eigenvalue(s) 0 within rounding (ω² ≤ %.1e): rigid-body modes, each a 2×2 Jordan block (u = a + bt grows linearly)", countTrue(rigid), tau)
		}
		return sp, nil
	}
	var kd, cd mat.Matrix
	var route string
	if r != nil {
		kd = r.mats[0]
		if r.mats[1] != nil {
			cd = r.mats[1]
		}
		route = "quadratic eigenproblem (λ²M + λC + K) x = 0: Cholesky M = LLᵀ, then the companion form [0 I; −L⁻¹KL⁻ᵀ −L⁻¹CL⁻ᵀ] (similar to G)"
	} else {
		k, err := solveColumns(s.mf, s.K)
		if err != nil {
			return nil, err
		}
		kd = k
		if s.C != nil {
			c, err := solveColumns(s.mf, s.C)
			if err != nil {
				return nil, err
			}
			cd = c
		}
		route = fmt.Sprintf("quadratic eigenproblem (λ²M + λC + K) x = 0 in companion form [0 I; −M⁻¹K −M⁻¹C], formed by solves with M (%s; the Cholesky scaling needs M symmetric positive definite and K, C symmetric: %s)", s.mf.method, why)
	}
	g := mat.NewDense(2*n, 2*n, nil)
	for i := 0; i < n; i++ {
		g.Set(i, n+i, 1)
		for j := 0; j < n; j++ {
			g.Set(n+i, j, -kd.At(i, j))
			if cd != nil {
				g.Set(n+i, n+j, -cd.At(i, j))
			}
		}
	}
	sp, err := spectra.DenseSpectrumContext(ctx, linop.NewDense(g))
	if err != nil {
		return nil, err
	}
	sp.Method = route + ", by the " + sp.Method
	if r != nil && sp.Right != nil {
		// The state is blkdiag(L⁻ᵀ, L⁻ᵀ) times the scaled one.
		sp.Left = nil // left vectors of the scaled form only; not carried over
		var li mat.TriDense
		if err := li.InverseTri(&r.l); err == nil || isCondition(err) {
			for k := range sp.Values {
				z := make([]complex128, 2*n)
				for half := 0; half < 2; half++ {
					for i := 0; i < n; i++ {
						var acc complex128
						for j := i; j < n; j++ { // (L⁻ᵀ)_ij = (L⁻¹)_ji, upper triangular
							acc += complex(li.At(j, i), 0) * sp.Right.At(half*n+j, k)
						}
						z[half*n+i] = acc
					}
				}
				cunit(z)
				for i, v := range z {
					sp.Right.Set(i, k, v)
				}
			}
		} else {
			sp.Right = nil
		}
	}
	return sp, nil
}

// unit scales x to unit 2-norm with its largest entry positive.
func unit(x []float64) {
	var s, big float64
	for _, v := range x {
		s = math.Hypot(s, v)
		if math.Abs(v) > math.Abs(big) {
			big = v
		}
	}
	if s == 0 {
		return
	}
	if big < 0 {
		s = -s
	}
	for i := range x {
		x[i] /= s
	}
}

// cunit scales z to unit 2-norm with its largest entry real and positive.
func cunit(z []complex128) {
	var s float64
	var big complex128
	for _, v := range z {
		s = math.Hypot(s, cmplx.Abs(v))
		if cmplx.Abs(v) > cmplx.Abs(big) {
			big = v
		}
	}
	if s == 0 {
		return
	}
	f := complex(s, 0) * big / complex(cmplx.Abs(big), 0)
	for i := range z {
		z[i] /= f
	}
}

// order sorts by decreasing real part, then decreasing imaginary part,
// keeping the per-value columns with their values.
func order(sp *spectra.Spectrum) {
	idx := make([]int, len(sp.Values))
	for i := range idx {
		idx[i] = i
	}
	sort.SliceStable(idx, func(a, b int) bool {
		x, y := sp.Values[idx[a]], sp.Values[idx[b]]
		if real(x) != real(y) {
			return real(x) > real(y)
		}
		return imag(x) > imag(y)
	})
	v, c, ill := make([]complex128, len(idx)), make([]float64, len(idx)), make([]bool, len(idx))
	for k, i := range idx {
		v[k], c[k], ill[k] = sp.Values[i], sp.Cond[i], sp.IllCond[i]
	}
	sp.Values, sp.Cond, sp.IllCond = v, c, ill
	if sp.Right != nil {
		r, _ := sp.Right.Dims()
		right := mat.NewCDense(r, len(idx), nil)
		for k, i := range idx {
			for j := 0; j < r; j++ {
				right.Set(j, k, sp.Right.At(j, i))
			}
		}
		sp.Right = right
	}
}

func countTrue(b []bool) int {
	c := 0
	for _, v := range b {
		if v {
			c++
		}
	}
	return c
}
