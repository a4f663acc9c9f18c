package compare

import (
	"context"
	"encoding/binary"
	"fmt"
	"math"
	"math/cmplx"
	"os"
	"runtime/metrics"
	"strings"
	"sync"
	"testing"
	"time"

	"gonum.org/v1/gonum/floats"
	"gonum.org/v1/gonum/mat"

	"semiflow/numerics/expo"
	"semiflow/numerics/gemm"
	"semiflow/numerics/linop"
	"semiflow/numerics/memguard"
	"semiflow/numerics/mmio"
	"semiflow/numerics/solve"
	"semiflow/numerics/spectra"
)

// ExpvTol is the relative tolerance Semiflow is asked for in the e^{tA}v
// problems; scipy's expm_multiply works to its fixed tolerance 2⁻⁵³.
const ExpvTol = 1e-12

// PropagateTol is the tolerance of the propagate_* problems.
const PropagateTol = 1e-8

// advDiffOperator is AdvDiff, or the operator read from the Matrix Market
// file named by SEMIFLOW_COMPARE_MTX3D for the 3-D one when the comparison
// script wrote it.
func advDiffOperator(m, dim int) (*linop.CSR, []float64) {
	a, u0 := AdvDiff(m, dim)
	if path := os.Getenv("SEMIFLOW_COMPARE_MTX3D"); dim == 3 && path != "" {
		f, err := os.Open(path)
		if err != nil {
			panic(err)
		}
		defer f.Close()
		mm, err := mmio.Read(f)
		if err != nil {
			panic(err)
		}
		if b := mm.CSR(); b.Rows == a.Rows {
			return b, u0
		}
	}
	return a, u0
}

// A problem: setup builds the data (not timed); run solves it once and
// returns the number both sides report (a norm or an eigenvalue), the
// method used, and the vector to compare, if any.
type problem struct {
	name   string
	sparse int // order of a sparse or structured operator: no dense matrix of this order may appear
	setup  func() func(ctx context.Context) (check float64, method string, vec []float64, err error)
}

var (
	expvN     = []int{1e4, 1e5, 1e6}
	expvTimes = []float64{0.01, 1}
	side2D    = map[int]int{1e4: 100, 1e5: 316, 1e6: 1000}
)

// Sizes label: 1e4, 1e5, 1e6.
func label(n int) string { return fmt.Sprintf("1e%d", int(math.Round(math.Log10(float64(n))))) }

func problems() []problem {
	var ps []problem
	for _, n := range []int{200, 500} {
		ps = append(ps, problem{name: fmt.Sprintf("dense_exp_n%d", n), setup: func() func(context.Context) (float64, string, []float64, error) {
			a := DenseMatrix(n)
			return func(ctx context.Context) (float64, string, []float64, error) {
				var e mat.Dense
				info, err := expo.ExpContext(ctx, &e, a)
				return mat.Norm(&e, 1), fmt.Sprintf("pade%d-s%d", info.Degree, info.Squarings), nil, err
			}
		}})
	}
	for _, dim := range []int{1, 2} {
		for _, conv := range []bool{false, true} {
			op := "heat"
			if conv {
				op = "cd"
			}
			for _, n := range expvN {
				for _, t := range expvTimes {
					order := n
					if dim == 2 {
						order = side2D[n] * side2D[n]
					}
					ps = append(ps, problem{
						name:   fmt.Sprintf("expv_%s%dd_N%s_t%g", op, dim, label(n), t),
						sparse: order,
						setup: func() func(context.Context) (float64, string, []float64, error) {
							var a linop.Operator
							var u0 []float64
							if dim == 1 {
								a, u0 = Op1D(n, conv)
							} else {
								a, u0 = Op2D(side2D[n], conv)
							}
							return func(ctx context.Context) (float64, string, []float64, error) {
								s, err := expo.Propagate(ctx, a, u0, []float64{t}, expo.Options{Tol: ExpvTol})
								if err != nil {
									return 0, "", nil, err
								}
								return floats.Norm(s.Values[0], 2), s.Method, s.Values[0], nil
							}
						},
					})
				}
			}
		}
	}
	// Shifted solves: factor zI − A once and solve once, z = 1 + 1i.
	for _, c := range []struct {
		name string
		dim  int
		n    int
	}{{"shifted_heat2d_N1e4", 2, 1e4}, {"shifted_heat2d_N1e5", 2, 1e5}, {"shifted_heat1d_N1e6", 1, 1e6}} {
		ps = append(ps, problem{name: c.name, sparse: c.n, setup: func() func(context.Context) (float64, string, []float64, error) {
			var a linop.Operator
			var u0 []float64
			if c.dim == 1 {
				a, u0 = Op1D(c.n, false)
			} else {
				a, u0 = Op2D(side2D[c.n], false)
			}
			b := make([]complex128, len(u0))
			for i, v := range u0 {
				b[i] = complex(v, 0)
			}
			return func(ctx context.Context) (float64, string, []float64, error) {
				s, err := solve.NewShiftedContext(ctx, a, 1+1i, solve.Options{})
				if err != nil {
					return 0, "", nil, err
				}
				x := make([]complex128, len(b))
				if err := s.Solve(x, b); err != nil {
					return 0, "", nil, err
				}
				sum := 0.0
				for _, v := range x {
					sum += real(v)*real(v) + imag(v)*imag(v)
				}
				return math.Sqrt(sum), fmt.Sprintf("%T", s), nil, nil
			}
		}})
	}
	// Sparse factorisations of zI − A for the variable-coefficient
	// operators (no Kronecker structure): order, analyse, factor and solve
	// once, from nothing (the ordering cache is emptied first).
	for _, c := range []struct {
		name   string
		dim, m int
		z      complex128
	}{
		{"factor_advdiff2d_N1e4_real", 2, 100, 1000}, {"factor_advdiff2d_N1e4_complex", 2, 100, 1000 + 1000i},
		{"factor_advdiff2d_N1e5_real", 2, 316, 1000}, {"factor_advdiff2d_N1e5_complex", 2, 316, 1000 + 1000i},
		{"factor_advdiff2d_N1e6_real", 2, 1000, 1000},
		{"factor_varcoef3d_N1e5_real", 3, 46, 1000}, {"factor_varcoef3d_N1e5_complex", 3, 46, 1000 + 1000i},
	} {
		n := c.m * c.m
		if c.dim == 3 {
			n *= c.m
		}
		ps = append(ps, problem{name: c.name, sparse: n, setup: func() func(context.Context) (float64, string, []float64, error) {
			a, u0 := advDiffOperator(c.m, c.dim)
			b := make([]complex128, len(u0))
			for i, v := range u0 {
				b[i] = complex(v, 0)
			}
			return factorAndSolve(a, c.z, b)
		}})
	}
	// An unstructured operator (a Delaunay mesh of random points, no band
	// and no grid) from the Matrix Market file the comparison script writes
	// and names in SEMIFLOW_COMPARE_MTXU; without the file the case is not
	// listed.
	if path := os.Getenv("SEMIFLOW_COMPARE_MTXU"); path != "" {
		for _, c := range []struct {
			name string
			z    complex128
		}{{"factor_unstructured_N1e5_real", 1000}, {"factor_unstructured_N1e5_complex", 1000 + 1000i}} {
			ps = append(ps, problem{name: c.name, sparse: 1e5, setup: func() func(context.Context) (float64, string, []float64, error) {
				f, err := os.Open(path)
				if err != nil {
					panic(err)
				}
				defer f.Close()
				mm, err := mmio.Read(f)
				if err != nil {
					panic(err)
				}
				a := mm.CSR()
				b := make([]complex128, a.Rows)
				for i := range b {
					b[i] = complex(math.Sin(float64(i)), 0)
				}
				return factorAndSolve(a, c.z, b)
			}})
		}
	}
	// Propagation of the 2-D variable-coefficient operator (tolerance 1e-8).
	for _, c := range []struct {
		name string
		m    int
		t    float64
	}{{"propagate_advdiff2d_N1e5_t0.1", 316, 0.1}, {"propagate_advdiff2d_N1e5_t1", 316, 1}, {"propagate_advdiff2d_N1e6_t0.01", 1000, 0.01}} {
		ps = append(ps, problem{name: c.name, sparse: c.m * c.m, setup: func() func(context.Context) (float64, string, []float64, error) {
			a, u0 := advDiffOperator(c.m, 2)
			return func(ctx context.Context) (float64, string, []float64, error) {
				solve.ForgetAnalyses()
				s, err := expo.Propagate(ctx, a, u0, []float64{c.t}, expo.Options{Tol: PropagateTol})
				if err != nil {
					return 0, "", nil, err
				}
				return floats.Norm(s.Values[0], 2), s.Method, s.Values[0], nil
			}
		}})
	}
	// Pseudospectra of the Grcar matrix on a grid over [−1, 3] × [−3.5, 3.5].
	for _, c := range []struct{ n, grid int }{{100, 50}, {400, 100}} {
		ps = append(ps, problem{name: fmt.Sprintf("pseudo_grcar_n%d_g%d", c.n, c.grid), setup: func() func(context.Context) (float64, string, []float64, error) {
			a := linop.NewDense(Grcar(c.n))
			r := spectra.Region{Re0: -1, Re1: 3, Im0: -3.5, Im1: 3.5, NRe: c.grid, NIm: c.grid}
			return func(ctx context.Context) (float64, string, []float64, error) {
				p, err := spectra.Pseudo(ctx, a, r, &spectra.GridOptions{})
				if err != nil {
					return 0, "", nil, err
				}
				lo := math.Inf(1)
				for _, s := range p.Sigma {
					lo = math.Min(lo, s)
				}
				return lo, "schur+inverse-lanczos", p.Sigma, nil
			}
		}})
	}
	// Spectra: all eigenvalues of the dense 500×500 matrix (spectral
	// abscissa reported), and the 6 rightmost eigenvalues of the 2-D
	// conv-diff operator at N ≈ 1e5 by shift-and-invert about 0.
	ps = append(ps, problem{name: "spectrum_dense_n500", setup: func() func(context.Context) (float64, string, []float64, error) {
		a := linop.NewDense(DenseMatrix(500))
		return func(context.Context) (float64, string, []float64, error) {
			s, err := spectra.DenseSpectrum(a)
			if err != nil {
				return 0, "", nil, err
			}
			return maxRe(s.Values), "schur+eigenvectors", nil, nil
		}
	}})
	ps = append(ps, problem{name: "eigs_cd2d_N1e5", sparse: 316 * 316, setup: func() func(context.Context) (float64, string, []float64, error) {
		a, _ := Op2D(316, true)
		return func(ctx context.Context) (float64, string, []float64, error) {
			s, err := spectra.Rightmost(ctx, a, &spectra.EigsOptions{Count: 6, ShiftInvert: true})
			if err != nil {
				return 0, "", nil, err
			}
			return maxRe(s.Values), s.Method, nil, nil
		}
	}})
	return ps
}

func maxRe(v []complex128) float64 {
	m := math.Inf(-1)
	for _, z := range v {
		if !cmplx.IsNaN(z) {
			m = math.Max(m, real(z))
		}
	}
	return m
}

// BenchmarkCompare runs every problem of the scipy comparison. Besides the
// time it reports the checked number, the peak live heap (sampled), and
// fails if a dense matrix of a sparse operator's order was asked for. With
// SEMIFLOW_COMPARE_OUT set, the result vector (if any) of the last run is
// written there as little-endian float64 for the script to compare.
func BenchmarkCompare(b *testing.B) {
	for _, p := range problems() {
		b.Run(p.name, func(b *testing.B) {
			run := p.setup()
			memguard.ResetLargest()
			stop := sampleHeap()
			var check float64
			var method string
			var vec []float64
			b.ResetTimer()
			for i := 0; i < b.N; i++ {
				var err error
				check, method, vec, err = run(context.Background())
				if err != nil {
					b.Fatal(err)
				}
			}
			b.StopTimer()
			peak := stop()
			if p.sparse > 0 && memguard.LargestSide() >= p.sparse {
				b.Errorf("a dense matrix with %d rows was requested for an operator of order %d", memguard.LargestSide(), p.sparse)
			}
			b.ReportMetric(check, "check")
			b.ReportMetric(float64(peak)/(1<<20), "peak-heap-MiB")
			fmt.Printf("compare-info %s method=%s backend=%s\n", p.name, method, strings.ReplaceAll(gemm.Backend, " ", "-"))
			if out := os.Getenv("SEMIFLOW_COMPARE_OUT"); out != "" && vec != nil {
				buf := make([]byte, 8*len(vec))
				for i, v := range vec {
					binary.LittleEndian.PutUint64(buf[8*i:], math.Float64bits(v))
				}
				if err := os.WriteFile(out, buf, 0o644); err != nil {
					b.Fatal(err)
				}
			}
		})
	}
}

// sampleHeap samples the bytes of live heap objects every millisecond until
// the returned function is called, which returns the largest sample.
func sampleHeap() (stop func() uint64) {
	sample := []metrics.Sample{{Name: "/memory/classes/heap/objects:bytes"}}
	read := func() uint64 {
		metrics.Read(sample)
		return sample[0].Value.Uint64()
	}
	var mu sync.Mutex
	peak := read()
	done := make(chan struct{})
	finished := make(chan struct{})
	go func() {
		defer close(finished)
		tick := time.NewTicker(time.Millisecond)
		defer tick.Stop()
		for {
			select {
			case <-done:
				return
			case <-tick.C:
				v := read()
				mu.Lock()
				peak = max(peak, v)
				mu.Unlock()
			}
		}
	}()
	return func() uint64 {
		close(done)
		<-finished
		mu.Lock()
		defer mu.Unlock()
		return max(peak, read())
	}
}

// TestProblemsBuild checks that every problem builds and the small ones
// run, so the benchmark cannot rot between comparisons.
func TestProblemsBuild(t *testing.T) {
	for _, p := range problems() {
		if p.name == "dense_exp_n200" || p.name == "expv_heat1d_N1e4_t0.01" || p.name == "pseudo_grcar_n100_g50" {
			check, _, _, err := p.setup()(context.Background())
			if err != nil || !(check > 0) {
				t.Errorf("%s: check %v, error %v", p.name, check, err)
			}
		}
	}
}

// factorAndSolve is the timed part of a factor_* problem: zI − A factored
// from nothing (the ordering cache emptied first) and solved once for b;
// it reports ‖x‖₂ and the factorisation used.
func factorAndSolve(a linop.Operator, z complex128, b []complex128) func(ctx context.Context) (float64, string, []float64, error) {
	return func(ctx context.Context) (float64, string, []float64, error) {
		solve.ForgetAnalyses()
		s, err := solve.NewShiftedContext(ctx, a, z, solve.Options{})
		if err != nil {
			return 0, "", nil, err
		}
		x := make([]complex128, len(b))
		if err := s.Solve(x, b); err != nil {
			return 0, "", nil, err
		}
		sum := 0.0
		for _, v := range x {
			sum += real(v)*real(v) + imag(v)*imag(v)
		}
		method := fmt.Sprintf("%T", s)
		if sn, ok := s.(*solve.Supernodal); ok {
			l, u := sn.NNZ()
			method = fmt.Sprintf("supernodal LU (%s arithmetic; %s; nnz(L+U) = %.3g)", map[bool]string{true: "real", false: "complex"}[sn.Real()], sn.Ordering, float64(l+u))
		}
		return math.Sqrt(sum), method, nil, nil
	}
}
