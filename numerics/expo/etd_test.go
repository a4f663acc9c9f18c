package expo

import (
	"context"
	"math"
	"math/cmplx"
	"testing"

	"gonum.org/v1/gonum/mat"

	"semiflow/numerics/linop"
	"semiflow/numerics/solve"
)

// etdLaplacian returns D·tridiag(1, −2, 1)/h² of order n (Dirichlet ends,
// h = 1/(n+1)) and its grid points x_j = j·h.
func etdLaplacian(n int, D float64) (*linop.CSR, []float64) {
	h := 1 / float64(n+1)
	c := D / (h * h)
	var is, js []int
	var vs []float64
	x := make([]float64, n)
	for i := 0; i < n; i++ {
		x[i] = float64(i+1) * h
		is, js, vs = append(is, i), append(js, i), append(vs, -2*c)
		if i > 0 {
			is, js, vs = append(is, i, i-1), append(js, i-1, i), append(vs, c, c)
		}
	}
	return linop.NewCSRFromTriplets(n, n, is, js, vs), x
}

// checkContract asserts the estimate contract of an adaptive result: true
// error ≤ estimate ≤ 1000·max(true error, u·scale) at each time (scale is
// the largest ‖u‖∞, which the tolerance is relative to), and the
// estimate within the tolerance when TolMet says so.
func checkContract(t *testing.T, label string, s *Solution, exact func(i int) []float64, scale float64) {
	t.Helper()
	for i := range s.Times {
		want := exact(i)
		e := maxAbsDiff(s.Values[i], want)
		floor := unitRoundoff * scale
		if e > math.Max(s.ErrEst[i], floor) {
			t.Errorf("%s t=%g: true error %.3g exceeds the estimate %.3g", label, s.Times[i], e, s.ErrEst[i])
		}
		if s.ErrEst[i] > 1000*math.Max(e, floor) {
			t.Errorf("%s t=%g: estimate %.3g is more than 1000 times the true error %.3g", label, s.Times[i], s.ErrEst[i], e)
		}
	}
	if s.TolMet != (s.MaxErrEst() <= s.Tol*scale) {
		t.Errorf("%s: TolMet = %v but the estimate is %.3g against tol·scale = %.3g", label, s.TolMet, s.MaxErrEst(), s.Tol*scale)
	}
	if !s.TolMet && s.Shortfall == "" {
		t.Errorf("%s: tolerance missed without a Shortfall", label)
	}
}

func TestIMEXTableau(t *testing.T) {
	// The order conditions of an IMEX Runge–Kutta pair up to order 3
	// (Ascher, Ruuth & Spiteri 1997, §2): with weights b = last row of A
	// (implicit) and b̂ = last row of E (explicit), Σb = 1, Σb c = 1/2,
	// Σb c² = 1/3 and Σ b_i X_ij c_j = 1/6 for every pairing of b, b̂
	// with X = A, E; rows sum to c.
	b, be := imexA[4], imexE[4]
	for i := 0; i < 5; i++ {
		sa, se := 0.0, 0.0
		for j := 0; j < 5; j++ {
			sa += imexA[i][j]
			se += imexE[i][j]
		}
		if math.Abs(sa-imexC[i]) > 1e-15 || math.Abs(se-imexC[i]) > 1e-15 {
			t.Errorf("row %d sums %v, %v, want c = %v", i, sa, se, imexC[i])
		}
	}
	for _, w := range [][5]float64{b, be} {
		s0, s1, s2 := 0.0, 0.0, 0.0
		for i := 0; i < 5; i++ {
			s0 += w[i]
			s1 += w[i] * imexC[i]
			s2 += w[i] * imexC[i] * imexC[i]
		}
		if math.Abs(s0-1) > 1e-15 || math.Abs(s1-0.5) > 1e-15 || math.Abs(s2-1./3) > 1e-15 {
			t.Errorf("weights %v: %v %v %v, want 1, 1/2, 1/3", w, s0, s1, s2)
		}
		for _, X := range [][5][5]float64{imexA, imexE} {
			s := 0.0
			for i := 0; i < 5; i++ {
				for j := 0; j < 5; j++ {
					s += w[i] * X[i][j] * imexC[j]
				}
			}
			if math.Abs(s-1./6) > 1e-15 {
				t.Errorf("Σ b X c = %v, want 1/6", s)
			}
		}
	}
}

// logistic: u_i' = r_i u_i (1 − u_i) written as L = diag(r), N(u) = −r u²,
// with the closed form u(t) = u0 e^{rt}/(1 − u0 + u0 e^{rt}).
func logisticProblem() (r, u0 []float64, N Nonlinear, exact func(tt float64) []float64) {
	r = []float64{1, 3, -2, 0.5}
	u0 = []float64{0.01, 0.2, 0.9, 0.5}
	N = func(_ float64, u, dst []float64) {
		for i, v := range u {
			dst[i] = -r[i] * v * v
		}
	}
	exact = func(tt float64) []float64 {
		w := make([]float64, len(r))
		for i := range r {
			e := math.Exp(r[i] * tt)
			w[i] = u0[i] * e / (1 - u0[i] + u0[i]*e)
		}
		return w
	}
	return
}

func TestETDRK4AdaptiveLogistic(t *testing.T) {
	r, u0, N, exact := logisticProblem()
	times := []float64{0.5, 3, 8}
	dense := mat.NewDense(len(r), len(r), nil)
	for i, v := range r {
		dense.Set(i, i, v)
	}
	for _, L := range []linop.Operator{&linop.Diag{D: r}, linop.NewDense(dense)} {
		for _, tol := range []float64{1e-6, 1e-8, 1e-10} {
			s, st, err := ETDRK4(context.Background(), L, N, u0, times, StepControl{}, Options{Tol: tol})
			if err != nil {
				t.Fatal(err)
			}
			scale := st.Scale
			if want := 1.0; scale < 0.99*want {
				t.Errorf("scale %v, want about max‖u‖ ≈ 1", scale)
			}
			checkContract(t, "logistic", s, func(i int) []float64 { return exact(times[i]) }, scale)
			if !s.TolMet {
				t.Errorf("%T tol %g: not met: %s", L, tol, s.Shortfall)
			}
			if st.Accepted == 0 || st.HMin <= 0 || st.HMax < st.HMin {
				t.Errorf("step statistics %+v", st)
			}
			t.Logf("%T tol %g: %d accepted, %d rejected, estimate %.3g", L, tol, st.Accepted, st.Rejected, s.MaxErrEst())
		}
	}
}

func TestETDRK4FixedStepsFlagged(t *testing.T) {
	// Forty fixed steps cannot reach 1e-12 on the logistic problem: the
	// result must say so.
	r, u0, N, exact := logisticProblem()
	times := []float64{8}
	s, st, err := ETDRK4(context.Background(), &linop.Diag{D: r}, N, u0, times, StepControl{Steps: 40}, Options{Tol: 1e-12})
	if err != nil {
		t.Fatal(err)
	}
	if st.Accepted != 40 || st.Rejected != 0 {
		t.Errorf("fixed steps: %+v", st)
	}
	if s.TolMet || s.Shortfall == "" {
		t.Errorf("40 steps for tol 1e-12: TolMet %v, estimate %.3g", s.TolMet, s.MaxErrEst())
	}
	checkContract(t, "fixed", s, func(int) []float64 { return exact(8) }, st.Scale)
}

// rdManufactured is u_t = D u_xx + u(1 − u) + s(x, t) on (0, 1) with
// Dirichlet ends, discretised by second differences, with s chosen so that
// U_j(t) = e^{−t} sin(πx_j) solves the discrete system exactly: sin(πx_j)
// is an eigenvector of the second difference with eigenvalue
// λ = −(4D/h²) sin²(πh/2) (closed form), so s = (−1 − λ)U − U(1 − U).
func rdManufactured(n int, D float64) (L *linop.CSR, u0 []float64, N Nonlinear, exact func(tt float64) []float64) {
	L, x := etdLaplacian(n, D)
	h := 1 / float64(n+1)
	lam := -4 * D / (h * h) * math.Pow(math.Sin(math.Pi*h/2), 2)
	exact = func(tt float64) []float64 {
		u := make([]float64, n)
		for j, xj := range x {
			u[j] = math.Exp(-tt) * math.Sin(math.Pi*xj)
		}
		return u
	}
	N = func(tt float64, u, dst []float64) {
		U := exact(tt)
		for j, v := range u {
			dst[j] = v*(1-v) + (-1-lam)*U[j] - U[j]*(1-U[j])
		}
	}
	return L, exact(0), N, exact
}

func TestETDRK4ManufacturedReactionDiffusion(t *testing.T) {
	L, u0, N, exact := rdManufactured(60, 0.1)
	times := []float64{0.25, 1, 2}
	for _, tol := range []float64{1e-6, 1e-9} {
		s, st, err := ETDRK4(context.Background(), L, N, u0, times, StepControl{}, Options{Tol: tol, Crosscheck: true})
		if err != nil {
			t.Fatal(err)
		}
		checkContract(t, "reaction-diffusion", s, func(i int) []float64 { return exact(times[i]) }, st.Scale)
		if !s.TolMet {
			t.Errorf("tol %g not met: %s", tol, s.Shortfall)
		}
		c := s.Cross
		if c == nil || c.Skipped != "" {
			t.Fatalf("cross-check not run: %+v", c)
		}
		// Both results are within their estimates of the exact solution,
		// so their difference is within the sum.
		if c.MaxDiff > s.MaxErrEst()+c.ErrEst {
			t.Errorf("cross-check difference %.3g exceeds the two estimates %.3g + %.3g", c.MaxDiff, s.MaxErrEst(), c.ErrEst)
		}
		t.Logf("tol %g: %d accepted, %d rejected, estimate %.3g, cross %s diff %.3g (its estimate %.3g)", tol, st.Accepted, st.Rejected, s.MaxErrEst(), c.Method, c.MaxDiff, c.ErrEst)
	}
}

func TestIMEXAlone(t *testing.T) {
	// The cross-check's integrator on its own against the closed forms:
	// order 3 (halving h divides the error by about 8) and the contract.
	r, u0, N, exact := logisticProblem()
	st, err := newIMEXStepper(context.Background(), &linop.Diag{D: r}, N)
	if err != nil {
		t.Fatal(err)
	}
	prev := 0.0
	for _, steps := range []int{40, 80, 160} {
		res, err := integrate(context.Background(), st, u0, []float64{4}, 1e-8, StepControl{Steps: steps}, nil)
		if err != nil {
			t.Fatal(err)
		}
		e := maxAbsDiff(res.vals[0], exact(4))
		if e > res.errs[0] {
			t.Errorf("IMEX steps %d: error %.3g above estimate %.3g", steps, e, res.errs[0])
		}
		if prev > 0 {
			if q := prev / e; q < 6 || q > 10 {
				t.Errorf("IMEX steps %d: error ratio %.3g, want ≈ 8", steps, q)
			}
		}
		prev = e
	}
	L, v0, M, ex := rdManufactured(40, 0.1)
	st2, err := newIMEXStepper(context.Background(), L, M)
	if err != nil {
		t.Fatal(err)
	}
	res, err := integrate(context.Background(), st2, v0, []float64{1}, 1e-8, StepControl{}, nil)
	if err != nil {
		t.Fatal(err)
	}
	if e := maxAbsDiff(res.vals[0], ex(1)); e > res.errs[0] || res.errs[0] > 1e-8 {
		t.Errorf("IMEX reaction-diffusion: error %.3g, estimate %.3g", e, res.errs[0])
	}
}

func TestETDRK4SparseContour(t *testing.T) {
	// The manufactured reaction–diffusion solution on a grid large enough
	// for the contour path (sparse symmetric L of order ≥ 400), against its
	// closed form, with the IMEX cross-check; with the four-node assembly
	// kernel (where the machine has it) and the two-node one in Go.
	L, u0, N, exact := rdManufactured(500, 0.1)
	if !sparseETDApplies(L) {
		t.Fatal("the contour path does not apply")
	}
	defer func(q bool) { quadKernel = q }(quadKernel)
	for _, quad := range []bool{true, false} {
		name := map[bool]string{true: "four-node", false: "two-node"}[quad]
		t.Run(name, func(t *testing.T) {
			if quad && !haveTriQuad {
				t.Skip("no AVX2 and FMA here")
			}
			quadKernel = quad
			times := []float64{0.25, 1}
			for _, tol := range []float64{1e-6, 1e-9} {
				s, st, err := ETDRK4(context.Background(), L, N, u0, times, StepControl{}, Options{Tol: tol, Crosscheck: true})
				if err != nil {
					t.Fatal(err)
				}
				checkContract(t, "sparse reaction-diffusion", s, func(i int) []float64 { return exact(times[i]) }, st.Scale)
				if !s.TolMet {
					t.Errorf("tol %g not met: %s", tol, s.Shortfall)
				}
				if c := s.Cross; c == nil || c.Skipped != "" || c.MaxDiff > s.MaxErrEst()+c.ErrEst {
					t.Errorf("cross-check %+v against estimate %.3g", c, s.MaxErrEst())
				}
				t.Logf("tol %g: %s; estimate %.3g", tol, s.Reason, s.MaxErrEst())
			}
		})
	}
}

func TestTridiagShiftedSolve(t *testing.T) {
	// Against the general complex band solver of numerics/solve, itself
	// tested against dense LU: the residual of (sI − T)x = b, for shifts
	// on and off the spectrum and a T whose small diagonal forces row
	// interchanges.
	noPivot, refused := 0, 0
	for _, tc := range []struct {
		name string
		T    linop.Operator
	}{
		{"laplacian", func() linop.Operator { L, _ := etdLaplacian(300, 0.01); return L }()},
		{"pivoting", func() linop.Operator {
			var is, js []int
			var vs []float64
			for i := 0; i < 50; i++ {
				is, js, vs = append(is, i), append(js, i), append(vs, 1e-3*float64(i%3))
				if i > 0 {
					is, js, vs = append(is, i, i-1), append(js, i-1, i), append(vs, 5+float64(i%4), -2)
				}
			}
			return linop.NewCSRFromTriplets(50, 50, is, js, vs)
		}()},
	} {
		sub, diag, sup, ok := tridiagOf(tc.T)
		if !ok {
			t.Fatalf("%s: not seen as tridiagonal", tc.name)
		}
		n := len(diag)
		for _, s := range []complex128{complex(3, 40), complex(-1e3, 5), complex(0.5, -0.01), 2} {
			f, err := factorTri(s, sub, diag, sup)
			if err != nil {
				t.Fatal(err)
			}
			b := make([]complex128, n)
			for i := range b {
				b[i] = complex(math.Sin(float64(i)), math.Cos(float64(3*i)))
			}
			x := make([]complex128, n)
			if err := f.Solve(x, b); err != nil {
				t.Fatal(err)
			}
			ref, err := solve.NewShiftedContext(context.Background(), tc.T, s, solve.Options{})
			if err != nil {
				t.Fatal(err)
			}
			y := make([]complex128, n)
			if err := ref.Solve(y, b); err != nil {
				t.Fatal(err)
			}
			dx, ny := 0.0, 0.0
			for i := range x {
				dx = math.Max(dx, cmplx.Abs(x[i]-y[i]))
				ny = math.Max(ny, cmplx.Abs(y[i]))
			}
			if dx > 1e-10*ny {
				t.Errorf("%s, s = %v: differs from the band solver by %.3g (‖x‖ %.3g)", tc.name, s, dx, ny)
			}
			// The factorisation without interchanges, where partial
			// pivoting would make none.
			g, ok, err := factorTriNoPivot(s, sub, diag, sup)
			if err != nil {
				t.Fatal(err)
			}
			if tc.name == "laplacian" && real(s) > 0 && !ok {
				t.Errorf("%s, s = %v: a shift right of the spectrum asked for interchanges", tc.name, s)
			}
			if !ok {
				refused++
				continue
			}
			noPivot++
			if err := g.Solve(x, b); err != nil {
				t.Fatal(err)
			}
			dx = 0
			for i := range x {
				dx = math.Max(dx, cmplx.Abs(x[i]-y[i]))
			}
			if dx > 1e-10*ny {
				t.Errorf("%s, s = %v: no-interchange solve differs from the band solver by %.3g (‖x‖ %.3g)", tc.name, s, dx, ny)
			}
		}
	}
	if noPivot == 0 || refused == 0 {
		t.Errorf("the no-interchange factorisation was taken %d times and refused %d times; want both", noPivot, refused)
	}
}

func TestETDDiffStep(t *testing.T) {
	// The difference propagator against what it stands for: two ETDRK4
	// steps of the same length from nearby starts on Fisher–KPP (order 400
	// on the contour path, 60 with dense φ-functions). Its defect is
	// O(h³‖Δ‖) (the exponential trapezoidal rule, second order): halving h
	// divides it by a factor approaching 8 (5.3, 6.2, 6.9 measured from
	// h = 0.1; common practice, no source).
	for _, n := range []int{400, 60} {
		L, u0, N := fisherKPP(n)
		var st oneStepper
		if n >= etdSparseMin {
			sp, err := newETDSparseStepper(context.Background(), L, N, 1e-12)
			if err != nil {
				t.Fatal(err)
			}
			st = sp
		} else {
			st = newETDStepper(L, N)
		}
		f0 := append([]float64(nil), u0...)
		c0 := make([]float64, n)
		for i := range c0 {
			c0[i] = f0[i] + 1e-5*math.Sin(3*math.Pi*float64(i+1)/float64(n+1))
		}
		seg := segment{lo: 0, hi: 1}
		prev := 0.0
		for _, h := range []float64{0.1, 0.05, 0.025, 0.0125} {
			c1, f1 := append([]float64(nil), c0...), append([]float64(nil), f0...)
			if err := st.step(0, h, c1, seg); err != nil {
				t.Fatal(err)
			}
			if err := st.step(0, h, f1, seg); err != nil {
				t.Fatal(err)
			}
			dst := make([]float64, n)
			if err := st.(diffPropagator).diffStep(dst, 0, h, c0, f0, c1, f1, seg); err != nil {
				t.Fatal(err)
			}
			d := 0.0
			for i := range dst {
				d = math.Max(d, math.Abs(c1[i]-f1[i]-dst[i]))
			}
			d /= maxAbsDiff(c0, f0)
			t.Logf("n = %d, h = %g: defect %.3g·‖Δ‖", n, h, d)
			if d > 0.1*h {
				t.Errorf("n = %d, h = %g: defect %.3g·‖Δ‖, want O(h³)", n, h, d)
			}
			if prev > 0 && (prev/d < 4.5 || prev/d > 12) {
				t.Errorf("n = %d, h = %g: defect ratio %.3g on halving h, want ≈ 8", n, h, prev/d)
			}
			prev = d
		}
	}
}

func TestETDFusedKernels(t *testing.T) {
	// One contour sum Σ_k Re c_k x_k, (s_k − T)x_k = v + Σ_j p_{k,j} w_j,
	// by the two-node kernel and (where the machine has it) the four-node
	// assembly kernel, against numerics/solve's band solver node by node.
	n := 300
	L, _ := etdLaplacian(n, 0.01)
	sub, diag, sup, _ := tridiagOf(L)
	shifts := []complex128{complex(-2e3, 900), complex(50, 4e3), complex(7e3, -2e3)}
	v := make([]float64, n)
	var w [3][]float64
	for j := range w {
		w[j] = make([]float64, n)
	}
	for i := range v {
		v[i] = math.Sin(float64(i) / 7)
		for j := range w {
			w[j][i] = math.Cos(float64((j+2)*i) / 11)
		}
	}
	var p [4][3]complex128
	var c [4]complex128
	fs := make([]*triNoPivot, len(shifts))
	want := make([]float64, n)
	wantM := make([]float64, len(shifts))
	for k, s := range shifts {
		p[k] = [3]complex128{complex(0.3, float64(k)), complex(-0.2, 0.1), complex(0.05*float64(k), -0.4)}
		c[k] = complex(1.5-float64(k), 0.25+float64(k))
		f, ok, err := factorTriNoPivot(s, sub, diag, sup)
		if err != nil || !ok {
			t.Fatalf("shift %v: ok %v, %v", s, ok, err)
		}
		fs[k] = f
		ref, err := solve.NewShiftedContext(context.Background(), L, s, solve.Options{})
		if err != nil {
			t.Fatal(err)
		}
		b, x := make([]complex128, n), make([]complex128, n)
		for i := range b {
			b[i] = complex(v[i], 0) + p[k][0]*complex(w[0][i], 0) + p[k][1]*complex(w[1][i], 0) + p[k][2]*complex(w[2][i], 0)
		}
		if err := ref.Solve(x, b); err != nil {
			t.Fatal(err)
		}
		for i, xi := range x {
			want[i] += real(c[k] * xi)
			wantM[k] = math.Max(wantM[k], math.Abs(real(xi))+math.Abs(imag(xi)))
		}
	}
	check := func(name string, got, m []float64) {
		t.Helper()
		d, s := 0.0, 0.0
		for i := range want {
			d, s = math.Max(d, math.Abs(got[i]-want[i])), math.Max(s, math.Abs(want[i]))
		}
		if !(d <= 1e-12*s) {
			t.Errorf("%s: differs from the band solver by %.3g (size %.3g)", name, d, s)
		}
		for k := range shifts {
			if !(math.Abs(m[k]-wantM[k]) <= 1e-12*wantM[k]) {
				t.Errorf("%s: lane %d max |x| %.6g, want %.6g", name, k, m[k], wantM[k])
			}
		}
	}
	var e [4][]float64
	for j := range e {
		e[j] = make([]float64, n)
	}
	acc := make([]float64, n)
	m0, m1 := etdFusedPair(acc, &e, fs[0], fs[1], v, w, p[0], p[1], c[0], c[1])
	m2, _ := etdFusedPair(acc, &e, fs[2], fs[2], v, w, p[2], p[2], c[2], 0)
	check("two-node kernel", acc, []float64{m0, m1, m2})
	if !haveTriQuad {
		t.Log("no AVX2 and FMA here: the four-node kernel is not tried")
		return
	}
	// The four factorisations made side by side, straight into the packed
	// layout, are those made one at a time.
	packed := packTriQuad(fs, n)
	direct := make([]float64, 24*n)
	for i := range direct {
		direct[i] = math.NaN()
	}
	if ok, err := factorTriQuad(direct, shifts, sub, diag, sup); !ok || err != nil {
		t.Fatalf("factorTriQuad: ok %v, %v", ok, err)
	}
	for i := range packed {
		if packed[i] != direct[i] {
			t.Fatalf("factorTriQuad differs from packTriQuad at %d: %g, %g", i, direct[i], packed[i])
		}
	}
	// The assembly recurrence (fused multiply–adds: equal to rounding),
	// with three lanes here, so the fourth must come out empty.
	asm := make([]float64, 24*n)
	for i := range asm {
		asm[i] = math.NaN()
	}
	if ok, err := factorTriQuadAsm(asm, shifts, sub, diag, sup, padTri(sub, sup)); !ok || err != nil {
		t.Fatalf("factorTriQuadAsm: ok %v, %v", ok, err)
	}
	for i := range packed {
		if d := math.Abs(asm[i] - packed[i]); !(d <= 1e-14*math.Abs(packed[i])) {
			t.Fatalf("factorTriQuadAsm differs from packTriQuad at %d: %g, %g", i, asm[i], packed[i])
		}
	}
	// Where partial pivoting would interchange rows both refuse, and a
	// singular shift is an error.
	psub, pdiag, psup := make([]float64, n-1), make([]float64, n), make([]float64, n-1)
	for i := range psub {
		psub[i], psup[i] = 5, -2
	}
	scratch := make([]float64, 24*n)
	if ok, err := factorTriQuadAsm(scratch, []complex128{1, 2}, psub, pdiag, psup, padTri(psub, psup)); ok || err != nil {
		t.Errorf("factorTriQuadAsm on a matrix needing interchanges: ok %v, %v", ok, err)
	}
	if _, err := factorTriQuadAsm(scratch, []complex128{complex(diag[0], 0)}, make([]float64, n-1), diag, make([]float64, n-1), padTri(make([]float64, n-1), make([]float64, n-1))); err == nil {
		t.Error("factorTriQuadAsm on a singular shift: no error")
	}
	acc = make([]float64, n)
	m := etdFusedQuad(acc, make([]float64, 8*n), asm, v, w, p, c)
	check("four-node kernel", acc, m[:])
	if m[3] != 0 {
		t.Errorf("four-node kernel: the empty lane has max |x| = %g", m[3])
	}
}
