package expo

import (
	"context"
	"math"
	"math/cmplx"
	"runtime"
	"sync"

	"semiflow/numerics/linop"
	"semiflow/numerics/memguard"
	"semiflow/numerics/solve"
)

// ETDRK4 for a large sparse symmetric L (spectrum in (−∞, σ]): every stage
// of a step is one φ-combination
//
//	e^{τL}v + Σ_j τ^{j+1}φ_{j+1}(τL) w_j,
//
// the first block of e^{τÂ}[v; e_0] for the augmented Â = [L, W; 0, J]
// (Al-Mohy & Higham 2011, Theorem 2.1), and e^{τÂ} is applied by the
// cotangent contour integral of Trefethen, Weideman & Schmelzer (BIT 2006)
// as in contourRun. Â is block triangular, so its resolvent needs one
// shifted solve with L per node: with M = z + τσ,
//
//	(z − τ(Â − σI))⁻¹[v; e_0] = [(M − τL)⁻¹(v + Σ_j w_j (τ/M)^{j+1}); …].
//
// The shifted factorisations are cached per step length (the controller
// quantises steps), so a step costs only banded or sparse solves; φ-functions
// of order 4n are never formed. The quadrature error, 10·ρ^{−N} of the data
// per combination (ρ = 3.89, a bound for normal L), and the rounding of the
// solves (10u·Σ_k|c_k|‖x_k‖/τ, as in contourRun) are added to the estimate.
//
// A tridiagonal L (a 1-D grid) takes a faster road: the factorisations
// without row interchanges (the contour shifts of a negative semidefinite
// L need none; any that would falls back to partial pivoting), and one
// forward and one backward sweep per node that form the right side and add
// into the sum as they go, four nodes side by side in AVX2 registers
// (etd_quad_amd64.s) or two in Go; the factorisations too are made four
// at a time there. On the Fisher–KPP benchmark at N = 1000 (tol 1e-8)
// this took the CPU time of an integration from 662 ms to about 95 ms
// (BenchmarkETDFisherKPP under a shared load; together with the cheaper
// local estimate in integrate); the two-node Go kernel takes about 280 ms.

// quadKernel says whether the contour path uses the four-node assembly
// kernel where the machine has it (tests turn it off to run the two-node
// kernel in Go).
var quadKernel = haveTriQuad

// etdSparseMin is the order from which a symmetric sparse L is stepped by
// contour combinations instead of dense φ-functions.
const etdSparseMin = 400

type etdSparseStepper struct {
	ctx             context.Context
	L               linop.Operator
	N               Nonlinear
	sigma           float64
	z, c            []complex128
	rate            float64
	cache           map[float64]*etdFactors
	keys            []float64
	limit           int          // step lengths whose factorisations are kept
	tri             [3][]float64 // sub-, main and superdiagonal when L is tridiagonal
	spare           [][]float64  // packed factorisations of evicted step lengths, for reuse
	quad            bool         // the four-node kernel (quadKernel when the stepper was made)
	pad             triPad       // the off-diagonals padded for its factorisation
	extra           float64      // quadrature and rounding errors committed so far
	solves, factors int
	scale           float64 // the largest ‖v‖ + Σ‖τw_j‖ met, for the quadrature term

	nu, na, nb, nc, a, b, cc, t1 []float64
	w                            [3][]float64
	work                         []etdNodeWork // one per worker
}

// etdNodeWork is one worker's buffers for its share of the nodes.
type etdNodeWork struct {
	rhs, x []complex128
	acc    []float64
	e      [4][]float64 // the two-node kernel's forward sweep (tridiagonal L)
	eq     []float64    // the four-node kernel's (8n)
	round  float64
	err    error
}

// etdFactors holds the factorisations of s_k − L for one step length:
// general shifted solvers, or, when L is tridiagonal and no node needs a
// row interchange, the split form the two-node kernel takes and, where the
// four-node kernel runs, the nodes packed four by four.
type etdFactors struct {
	fs    []solve.ShiftedSolver
	fast  []*triNoPivot
	quads [][]float64
}

// sparseETDApplies reports whether L takes the contour path.
func sparseETDApplies(L linop.Operator) bool {
	n, _ := L.Dims()
	if _, ok := L.(*linop.Diag); ok || n < etdSparseMin {
		return false
	}
	if _, ok := sparseForm(L); !ok {
		return false
	}
	return isSymmetric(L)
}

func newETDSparseStepper(ctx context.Context, L linop.Operator, N Nonlinear, tol float64) (*etdSparseStepper, error) {
	n, _ := L.Dims()
	s := &etdSparseStepper{ctx: ctx, L: L, N: N, cache: map[float64]*etdFactors{}, quad: quadKernel}
	if g, ok := gershgorinRight(L); ok && g > 0 {
		s.sigma = g
	}
	if sub, diag, sup, ok := tridiagOf(L); ok {
		s.tri = [3][]float64{sub, diag, sup}
		s.pad = padTri(sub, sup)
	}
	// Nodes for a quadrature error 10ρ^{−N} ≤ 1e-3·tol per combination.
	cs := contourShapes[ContourCotangent]
	s.rate = cs.rate
	nodes := int(math.Ceil(math.Log(1e4/tol)/math.Log(cs.rate))) + 1
	nodes += nodes % 2
	nodes = min(max(nodes, 12), 40)
	if s.tri[1] != nil && s.quad {
		// The four-node kernel solves four nodes for the price of one:
		// a whole number of fours (8 conjugate pairs) costs no more.
		nodes = (nodes + 7) / 8 * 8
	}
	s.z, s.c = ContourNodes(ContourCotangent, nodes)
	for _, v := range []*[]float64{&s.nu, &s.na, &s.nb, &s.nc, &s.a, &s.b, &s.cc, &s.t1, &s.w[0], &s.w[1], &s.w[2]} {
		*v = make([]float64, n)
	}
	// Keep at most etdCacheBytes of factorisations (3 complex vectors of
	// order n a node for a tridiagonal L, a guessed 64 for a sparse LU),
	// but at least the three step lengths one step needs (h, h/2, h/4);
	// the guard also counts the set being made (or kept for reuse) beside
	// them.
	per := 64 * memguard.ComplexBytes * n
	if s.tri[1] != nil {
		per = 3 * memguard.ComplexBytes * n // l, 1/d and q, split or packed
	}
	s.limit = min(max(etdCacheBytes/(per*len(s.z)+1), 3), 12)
	s.work = make([]etdNodeWork, min(runtime.GOMAXPROCS(0), len(s.z)))
	if err := memguard.Bytes(float64((s.limit+1)*len(s.z)*per+len(s.work)*n*(2*memguard.ComplexBytes+13*memguard.RealBytes)), "ETDRK4 contour factorisations and work vectors"); err != nil {
		return nil, err
	}
	for i := range s.work {
		s.work[i] = etdNodeWork{rhs: make([]complex128, n), x: make([]complex128, n), acc: make([]float64, n)}
		if s.tri[1] != nil {
			for j := range s.work[i].e {
				s.work[i].e[j] = make([]float64, n)
			}
			if s.quad {
				s.work[i].eq = make([]float64, 8*n)
			}
		}
	}
	return s, nil
}

func (s *etdSparseStepper) order() int        { return 4 }
func (s *etdSparseStepper) name() string      { return "ETDRK4" }
func (s *etdSparseStepper) extraErr() float64 { return s.extra }

// solvers returns the factorisations of s_k − L, s_k = z_k/τ + σ.
func (s *etdSparseStepper) solvers(tau float64) (*etdFactors, error) {
	if f, ok := s.cache[tau]; ok {
		return f, nil
	}
	f := &etdFactors{}
	if s.tri[1] != nil && s.quad {
		// Four nodes a recurrence, the fours shared among the workers;
		// the packed arrays of an evicted step length are reused.
		n := len(s.tri[1])
		f.quads = make([][]float64, (len(s.z)+3)/4)
		for q := range f.quads {
			if len(s.spare) > 0 {
				f.quads[q], s.spare = s.spare[len(s.spare)-1], s.spare[:len(s.spare)-1]
			} else {
				f.quads[q] = make([]float64, 24*n)
			}
		}
		oks, errs := make([]bool, len(f.quads)), make([]error, len(f.quads))
		var wg sync.WaitGroup
		for id := range s.work {
			wg.Add(1)
			go func(first int) {
				defer wg.Done()
				for q := first; q < len(f.quads); q += len(s.work) {
					sh := make([]complex128, 0, 4)
					for k := 4 * q; k < min(4*q+4, len(s.z)); k++ {
						sh = append(sh, s.z[k]/complex(tau, 0)+complex(s.sigma, 0))
					}
					oks[q], errs[q] = factorTriQuadAsm(f.quads[q], sh, s.tri[0], s.tri[1], s.tri[2], s.pad)
				}
			}(id)
		}
		wg.Wait()
		for q := range f.quads {
			if errs[q] != nil {
				return nil, errs[q]
			}
			if !oks[q] {
				s.spare = append(s.spare, f.quads...)
				f.quads = nil
				break
			}
		}
	} else if s.tri[1] != nil {
		// Each factorisation is one recurrence through complex
		// reciprocals: the nodes are shared among the workers.
		f.fast = make([]*triNoPivot, len(s.z))
		oks, errs := make([]bool, len(s.z)), make([]error, len(s.z))
		var wg sync.WaitGroup
		for id := range s.work {
			wg.Add(1)
			go func(first int) {
				defer wg.Done()
				for k := first; k < len(s.z); k += len(s.work) {
					sh := s.z[k]/complex(tau, 0) + complex(s.sigma, 0)
					f.fast[k], oks[k], errs[k] = factorTriNoPivot(sh, s.tri[0], s.tri[1], s.tri[2])
				}
			}(id)
		}
		wg.Wait()
		for k := range s.z {
			if errs[k] != nil {
				return nil, errs[k]
			}
			if !oks[k] {
				f.fast = nil
				break
			}
		}
	}
	if f.fast == nil && f.quads == nil {
		f.fs = make([]solve.ShiftedSolver, len(s.z))
		for k, z := range s.z {
			sh := z/complex(tau, 0) + complex(s.sigma, 0)
			var fk solve.ShiftedSolver
			var err error
			if s.tri[1] != nil {
				fk, err = factorTri(sh, s.tri[0], s.tri[1], s.tri[2])
			} else {
				fk, err = solve.NewShiftedContext(s.ctx, s.L, sh, solve.Options{})
			}
			if err != nil {
				return nil, err
			}
			f.fs[k] = fk
		}
	}
	s.factors += len(s.z)
	if len(s.keys) >= s.limit {
		s.spare = append(s.spare, s.cache[s.keys[0]].quads...)
		delete(s.cache, s.keys[0])
		s.keys = s.keys[1:]
	}
	s.cache[tau] = f
	s.keys = append(s.keys, tau)
	return f, nil
}

// combine sets dst = e^{τL}v + Σ_j τ^{j+1}φ_{j+1}(τL) w_j (dst may be v).
// The nodes are shared among the workers, each with its own buffers; the
// factorisations are only read.
func (s *etdSparseStepper) combine(dst []float64, tau float64, v []float64, w [][]float64) error {
	if len(w) > 3 {
		panic("expo: a contour φ-combination takes at most three w_j")
	}
	f, err := s.solvers(tau)
	if err != nil {
		return err
	}
	fs := f.fs
	size := normInf(v)
	tj := tau
	for _, wj := range w {
		size += tj * normInf(wj)
		tj *= tau
	}
	s.scale = math.Max(s.scale, size)
	s.solves += len(s.z)
	var wg sync.WaitGroup
	for id := range s.work {
		wg.Add(1)
		if f.fast != nil || f.quads != nil {
			go func(wk *etdNodeWork, first int) {
				defer wg.Done()
				s.fusedShare(wk, first, f, tau, v, w)
			}(&s.work[id], id)
			continue
		}
		go func(wk *etdNodeWork, first int) {
			defer wg.Done()
			for i := range wk.acc {
				wk.acc[i] = 0
			}
			wk.round, wk.err = 0, nil
			for k := first; k < len(s.z); k += len(s.work) {
				M := s.z[k] + complex(tau*s.sigma, 0)
				r := complex(tau, 0) / M
				for i, vi := range v {
					wk.rhs[i] = complex(vi, 0)
				}
				p := r
				for _, wj := range w {
					for i, x := range wj {
						wk.rhs[i] += complex(x, 0) * p
					}
					p *= r
				}
				if err := fs[k].Solve(wk.x, wk.rhs); err != nil {
					wk.err = err
					return
				}
				ck := 2 * s.c[k] / complex(tau, 0)
				cr, ci := real(ck), imag(ck)
				xm := 0.0
				for i, x := range wk.x {
					wk.acc[i] += cr*real(x) - ci*imag(x)
					if a := math.Abs(real(x)) + math.Abs(imag(x)); a > xm {
						xm = a
					}
				}
				wk.round += cmplx.Abs(ck) * xm
			}
		}(&s.work[id], id)
	}
	wg.Wait()
	g := math.Exp(tau * s.sigma)
	round := 0.0
	// The workers' sums, one vector at a time (dst may be v, which the
	// workers no longer read).
	a0 := s.work[0].acc[:len(dst)]
	for id := 1; id < len(s.work); id++ {
		for i, x := range s.work[id].acc[:len(dst)] {
			a0[i] += x
		}
	}
	for i, x := range a0 {
		dst[i] = g * x
	}
	for id := range s.work {
		if err := s.work[id].err; err != nil {
			return err
		}
		round += s.work[id].round
	}
	s.extra += 10*math.Pow(s.rate, -float64(len(s.z)*2))*g*size + 10*unitRoundoff*g*round
	return nil
}

// fusedShare is combine's work for one worker on the fused path: the
// fours of nodes first, first + workers, … with the four-node kernel, or
// else the pairs (an odd last node is paired with itself, weight zero).
func (s *etdSparseStepper) fusedShare(wk *etdNodeWork, first int, f *etdFactors, tau float64, v []float64, w [][]float64) {
	fast := f.fast
	for i := range wk.acc {
		wk.acc[i] = 0
	}
	wk.round, wk.err = 0, nil
	var ws [3][]float64
	for j := range ws {
		ws[j] = v
		if j < len(w) {
			ws[j] = w[j]
		}
	}
	coef := func(k int) (p [3]complex128, ck complex128) {
		r := complex(tau, 0) / (s.z[k] + complex(tau*s.sigma, 0))
		q := r
		for j := range w {
			p[j] = q
			q *= r
		}
		return p, 2 * s.c[k] / complex(tau, 0)
	}
	if f.quads != nil {
		for q := first; q < len(f.quads); q += len(s.work) {
			var p [4][3]complex128
			var c [4]complex128
			for l := 0; l < 4 && 4*q+l < len(s.z); l++ {
				p[l], c[l] = coef(4*q + l)
			}
			m := etdFusedQuad(wk.acc, wk.eq, f.quads[q], v, ws, p, c)
			for l := range m {
				wk.round += cmplx.Abs(c[l]) * m[l]
			}
		}
		return
	}
	for u := first; 2*u < len(s.z); u += len(s.work) {
		k0, k1 := 2*u, 2*u+1
		p0, c0 := coef(k0)
		var p1 [3]complex128
		var c1 complex128
		if k1 < len(s.z) {
			p1, c1 = coef(k1)
		} else {
			k1, p1 = k0, p0
		}
		m0, m1 := etdFusedPair(wk.acc, &wk.e, fast[k0], fast[k1], v, ws, p0, p1, c0, c1)
		wk.round += cmplx.Abs(c0)*m0 + cmplx.Abs(c1)*m1
	}
}

// diffStep sets dst = e^{hL}Δ + hφ1(hL)δ0 + hφ2(hL)(δ1 − δ0), Δ = c0 − f0,
// δ0 = N(t, c0) − N(t, f0), δ1 = N(t+h, c1) − N(t+h, f1): the
// exponential trapezoidal rule (second order) for the difference of two
// solutions, one combination.
func (s *etdSparseStepper) diffStep(dst []float64, t, h float64, c0, f0, c1, f1 []float64, seg segment) error {
	if err := s.ctx.Err(); err != nil {
		return err
	}
	d0, d1, x := s.w[0], s.w[1], s.t1
	s.N(seg.clamp(t), c0, s.na)
	s.N(seg.clamp(t), f0, s.nb)
	for i := range d0 {
		d0[i] = s.na[i] - s.nb[i]
		x[i] = c0[i] - f0[i]
	}
	s.N(seg.clamp(t+h), c1, s.na)
	s.N(seg.clamp(t+h), f1, s.nb)
	for i := range d1 {
		d1[i] = (s.na[i] - s.nb[i] - d0[i]) / h
	}
	return s.combine(dst, h, x, [][]float64{d0, d1})
}

// step is Cox & Matthews' ETDRK4 with each stage one combination.
func (s *etdSparseStepper) step(t, h float64, u []float64, seg segment) error {
	if err := s.ctx.Err(); err != nil {
		return err
	}
	N := func(t float64, u, dst []float64) { s.N(seg.clamp(t), u, dst) }
	h2 := h / 2
	N(t, u, s.nu)
	if err := s.combine(s.a, h2, u, [][]float64{s.nu}); err != nil {
		return err
	}
	N(t+h2, s.a, s.na)
	if err := s.combine(s.b, h2, u, [][]float64{s.na}); err != nil {
		return err
	}
	N(t+h2, s.b, s.nb)
	for i := range s.t1 {
		s.t1[i] = 2*s.nb[i] - s.nu[i]
	}
	if err := s.combine(s.cc, h2, s.a, [][]float64{s.t1}); err != nil {
		return err
	}
	N(t+h, s.cc, s.nc)
	// hφ1 Nu + hφ2(−3Nu + 2Na + 2Nb − Nc) + hφ3·4(Nu − Na − Nb + Nc)
	// = Σ_j h^{j+1}φ_{j+1} w_j.
	for i := range s.t1 {
		s.w[0][i] = s.nu[i]
		s.w[1][i] = (-3*s.nu[i] + 2*s.na[i] + 2*s.nb[i] - s.nc[i]) / h
		s.w[2][i] = 4 * (s.nu[i] - s.na[i] - s.nb[i] + s.nc[i]) / (h * h)
	}
	return s.combine(u, h, u, s.w[:])
}
