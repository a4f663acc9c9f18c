package expo

import (
	"bytes"
	"context"
	"encoding/json"
	"errors"
	"fmt"
	"math"
	"math/cmplx"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"gonum.org/v1/gonum/mat"

	"semiflow/numerics/linop"
	"semiflow/numerics/mmio"
)

// tridiagToeplitz returns tridiag(p, q, r) of order n (sub-diagonal p,
// diagonal q, super-diagonal r).
func tridiagToeplitz(n int, p, q, r float64) *linop.CSR {
	var is, js []int
	var vs []float64
	for i := 0; i < n; i++ {
		is, js, vs = append(is, i), append(js, i), append(vs, q)
		if i > 0 && p != 0 {
			is, js, vs = append(is, i), append(js, i-1), append(vs, p)
		}
		if i > 0 && r != 0 {
			is, js, vs = append(is, i-1), append(js, i), append(vs, r)
		}
	}
	return linop.NewCSRFromTriplets(n, n, is, js, vs)
}

// toeplitzModes returns u0 = Σ_k a_k x_k and e^{tT}u0 for T = tridiag(p, q, r)
// of order n with pr > 0, from its closed-form eigenpairs (e.g. Smith,
// Numerical Solution of PDEs, 1985, §5): λ_k = q + 2√(pr) cos(kπh),
// x_k(j) = (p/r)^{j/2} sin(kπjh), h = 1/(n+1), j = 1…n; x_k is scaled so
// that its last component's envelope is 1.
func toeplitzModes(n int, p, q, r, t float64, modes []int, amps []float64) (u0, ut []float64) {
	h := 1 / float64(n+1)
	u0 = make([]float64, n)
	ut = make([]float64, n)
	for m, k := range modes {
		lam := q + 2*math.Sqrt(p*r)*math.Cos(float64(k)*math.Pi*h)
		g := math.Exp(t * lam)
		for j := 1; j <= n; j++ {
			x := math.Pow(p/r, float64(j-n)/2) * math.Sin(float64(k)*math.Pi*float64(j)*h)
			u0[j-1] += amps[m] * x
			ut[j-1] += amps[m] * g * x
		}
	}
	return u0, ut
}

// upwindFV returns the first-order upwind finite-volume operator for
// u_t + c u_x = ν u_xx on n cells of (0, 1), c > 0, with zero inflow and
// zero Dirichlet data: tridiag(d + c/h, −2d − c/h, d), d = ν/h², h = 1/(n+1),
// written to Matrix Market and read back as a user's file would be.
func upwindFV(t *testing.T, n int, c, nu float64) *linop.CSR {
	t.Helper()
	h := 1 / float64(n+1)
	d := nu / (h * h)
	a := tridiagToeplitz(n, d+c/h, -2*d-c/h, d)
	var buf bytes.Buffer
	if err := mmio.WriteCoordinate(&buf, a, "real", "general"); err != nil {
		t.Fatal(err)
	}
	m, err := mmio.Read(&buf)
	if err != nil {
		t.Fatal(err)
	}
	return m.CSR()
}

// dampedBlock returns the first-order form A = [[0, I], [−K, −C]] of
// q” + C q' + K q = 0 (mass M = I) with Rayleigh damping C = aI + bK, K =
// tridiag(−1, 2, −1)·κ0 (a string; power 2 gives K² for a simply supported
// beam), order 2n, and the closed-form solution at time t from q(0) = q0
// (mode amplitudes) and q'(0) = 0: each sine mode s_k with K s_k = κ_k s_k,
// κ_k = (4κ0 sin²(kπh/2))^power, solves the scalar damped oscillator
// q” + (a + bκ_k) q' + κ_k q = 0, q = A e^{r₊t} + B e^{r₋t} with
// r± = (−γ ± √(γ² − 4κ_k))/2, γ = a + bκ_k.
func dampedBlock(n int, kappa0 float64, power int, a, b float64) *linop.CSR {
	// K = κ0·tridiag(−1, 2, −1) or its square κ0²·(pentadiag(1, −4, 6, −4, 1)
	// with 5 in the two corners).
	band := []float64{-kappa0, 2 * kappa0, -kappa0}
	if power == 2 {
		k2 := kappa0 * kappa0
		band = []float64{k2, -4 * k2, 6 * k2, -4 * k2, k2}
	}
	w := len(band) / 2
	kAt := func(i, j int) float64 {
		if d := j - i; d >= -w && d <= w {
			v := band[d+w]
			if power == 2 && i == j && (i == 0 || i == n-1) {
				v = 5 * kappa0 * kappa0
			}
			return v
		}
		return 0
	}
	var is, js []int
	var vs []float64
	for i := 0; i < n; i++ {
		is, js, vs = append(is, i), append(js, n+i), append(vs, 1)
		for j := max(0, i-w); j <= min(n-1, i+w); j++ {
			k := kAt(i, j)
			c := b * k
			if i == j {
				c += a
			}
			is, js, vs = append(is, n+i, n+i), append(js, j, n+j), append(vs, -k, -c)
		}
	}
	return linop.NewCSRFromTriplets(2*n, 2*n, is, js, vs)
}

func dampedModes(n int, kappa0 float64, power int, a, b, t float64, modes []int, amps []float64) (u0, ut []float64) {
	h := 1 / float64(n+1)
	u0 = make([]float64, 2*n)
	ut = make([]float64, 2*n)
	for m, k := range modes {
		kap := math.Pow(4*kappa0*math.Pow(math.Sin(float64(k)*math.Pi*h/2), 2), float64(power))
		g := complex(a+b*kap, 0)
		disc := cmplx.Sqrt(g*g - complex(4*kap, 0))
		rp, rm := (-g+disc)/2, (-g-disc)/2
		q0, p0 := complex(amps[m], 0), complex(0, 0)
		A := (p0 - rm*q0) / (rp - rm)
		B := (rp*q0 - p0) / (rp - rm)
		ct := complex(t, 0)
		q := A*cmplx.Exp(rp*ct) + B*cmplx.Exp(rm*ct)
		dq := A*rp*cmplx.Exp(rp*ct) + B*rm*cmplx.Exp(rm*ct)
		for j := 0; j < n; j++ {
			s := math.Sin(float64(k) * math.Pi * float64(j+1) * h)
			u0[j] += amps[m] * s
			ut[j] += real(q) * s
			ut[n+j] += real(dq) * s
		}
	}
	return u0, ut
}

// contractCase is one problem with its reference solution at each time.
type contractCase struct {
	name    string
	source  string // where the reference comes from
	a       linop.Operator
	u0      []float64
	times   []float64
	want    [][]float64
	methods []string
	sharp   bool // also check est ≤ 1000·max(true, u·‖u0‖_∞)
	// loose names methods whose estimates are known to be looser here,
	// with the factor checked instead of 1000 (measured, see the case).
	loose map[string]float64
}

func stringCase(n, steps int, dt float64) contractCase {
	k0 := float64((n + 1) * (n + 1))
	c := contractCase{name: fmt.Sprintf("damped string n=%d", n), source: "closed form: Rayleigh-damped sine modes",
		a: dampedBlock(n, k0, 1, 0.1, 1e-4), sharp: true}
	for k := 1; k <= steps; k++ {
		tt := dt * float64(k)
		u0, ut := dampedModes(n, k0, 1, 0.1, 1e-4, tt, []int{1, 3}, []float64{1, 0.3})
		c.u0, c.times, c.want = u0, append(c.times, tt), append(c.want, ut)
	}
	return c
}

// TestEstimateContract checks the error-control contract on the problems
// of the practitioners' report: every estimate bounds the true error
// (true ≤ est), is sharp (est ≤ 1000·max(true, u·‖u(t)‖_∞)), and TolMet
// agrees with the estimates; a tolerance missed is stated in Shortfall.
func TestEstimateContract(t *testing.T) {
	var cases []contractCase
	{
		n := 300
		c := contractCase{name: "heat n=300", source: "closed form: sine modes of the second difference",
			a: heat1D(n), times: []float64{0.001, 0.01, 0.1}, sharp: true,
			// Krylov's estimate sums local errors that the heat flow
			// later damps: 4e4 times the true error at t = 0.1 (a few
			// long steps accept local estimates near their share of tol,
			// 7e-10, along high modes gone 5e-3 later). No norm bound sees
			// it: the best, ‖e^{sA}‖₂ ≈ e^{−π²s}, is 0.4 at s = 0.09.
			loose:   map[string]float64{MethodKrylov: 1e5},
			methods: []string{MethodAuto, MethodDense, MethodTaylor, MethodKrylov, MethodShiftInv, MethodContour, MethodResolvent}}
		for _, tt := range c.times {
			u0, ut := sineModes(n, tt, []int{1, 2, 7, 40}, []float64{1, -0.5, 0.2, 0.05})
			c.u0, c.want = u0, append(c.want, ut)
		}
		cases = append(cases, c)
	}
	{
		// Upwind finite volumes for u_t + u_x = 1e-3 u_xx through a
		// Matrix Market file: a non-normal tridiagonal Toeplitz matrix.
		n, cv, nu := 1000, 1.0, 1e-3
		h := 1 / float64(n+1)
		d := nu / (h * h)
		c := contractCase{name: "upwind advection-diffusion n=1000 (Matrix Market)", source: "closed form: tridiagonal Toeplitz eigenpairs",
			a: upwindFV(t, n, cv, nu), times: []float64{0.01, 0.1, 0.5}, sharp: true,
			// The solution decays by 1e-44 by t = 0.5; Taylor carries its
			// early errors undamped (safe for non-normal A): 2e6 times
			// max(true, u‖u0‖) there. The ∞-norm log-norm is 0 (rows sum
			// to 0) and the decay lives in the eigenvectors, whose basis
			// has condition number about 2^500: no bound below 1 exists.
			loose:   map[string]float64{MethodTaylor: 1e7},
			methods: []string{MethodAuto, MethodTaylor, MethodKrylov, MethodShiftInv}}
		for _, tt := range c.times {
			u0, ut := toeplitzModes(n, d+cv/h, -2*d-cv/h, d, tt, []int{1, 2, 5}, []float64{1, 0.5, 0.25})
			c.u0, c.want = u0, append(c.want, ut)
		}
		cases = append(cases, c)
	}
	{
		// Pure upwind advection, zero inflow: A = (c/h)(S − I) with S the
		// down-shift, so (e^{tA}e_1)_j = e^{−τ}τ^j/j!, τ = ct/h (Poisson).
		n := 1000
		h := 1 / float64(n+1)
		c := contractCase{name: "upwind advection n=1000 (Matrix Market)", source: "closed form: Poisson probabilities",
			a: upwindFV(t, n, 1, 0), times: []float64{0.05, 0.2, 0.5}, sharp: true,
			methods: []string{MethodAuto, MethodTaylor, MethodKrylov, MethodShiftInv}}
		c.u0 = make([]float64, n)
		c.u0[0] = 1
		for _, tt := range c.times {
			tau := tt / h
			w := make([]float64, n)
			for j := range w {
				lg, _ := math.Lgamma(float64(j + 1))
				w[j] = math.Exp(-tau + float64(j)*math.Log(tau) - lg)
			}
			c.want = append(c.want, w)
		}
		cases = append(cases, c)
	}
	{
		// The damped string in first-order form at 10 uniform times: the
		// dense method's first estimate (‖E‖^k growth) missed by orders.
		c := stringCase(150, 10, 0.2)
		c.methods = []string{MethodAuto, MethodDense, MethodKrylov, MethodShiftInv}
		// Shift-and-invert's step control keeps each local estimate
		// near its share of the tolerance: 2000 times the true error.
		// In the openblas build the products round differently and the
		// dense a-posteriori estimate kept at t = 1.8 (by auto and dense)
		// was measured 1076 times the true error; pure Go stays under 1000.
		c.loose = map[string]float64{MethodShiftInv: 1e4, MethodAuto: 2000, MethodDense: 2000}
		cases = append(cases, c)
	}
	{
		n := 100000
		c := contractCase{name: "heat n=1e5", source: "closed form: sine modes of the second difference",
			a: heat1D(n), times: []float64{0.001, 0.01}, sharp: true, methods: []string{MethodAuto}}
		for _, tt := range c.times {
			u0, ut := sineModes(n, tt, []int{3}, []float64{1})
			c.u0, c.want = u0, append(c.want, ut)
		}
		cases = append(cases, c)
	}
	for _, c := range cases {
		for _, m := range c.methods {
			t.Run(c.name+"/"+m, func(t *testing.T) {
				s, err := Propagate(context.Background(), c.a, c.u0, c.times, Options{Method: m, Tol: 1e-8})
				if err != nil {
					t.Fatal(err)
				}
				factor := 1000.0
				if f, ok := c.loose[m]; ok {
					factor = f
				}
				if !c.sharp {
					factor = math.Inf(1)
				}
				checkEstimateContract(t, s, c.u0, c.want, factor, c.source)
			})
		}
	}
}

// checkEstimateContract checks true ≤ est and est ≤ factor·max(true,
// u·‖u0‖_∞) at every time (no estimate can resolve less than the rounding
// of the data), and that TolMet and Shortfall agree with the estimates.
func checkEstimateContract(t *testing.T, s *Solution, u0 []float64, want [][]float64, factor float64, source string) {
	t.Helper()
	worst, worstEst := 0.0, 0.0
	for i := range s.Times {
		e := maxDiff(s.Values[i], want[i])
		worst, worstEst = math.Max(worst, e), math.Max(worstEst, s.ErrEst[i])
		if !(e <= s.ErrEst[i]) {
			t.Errorf("t=%g: true error %.3g exceeds the estimate %.3g (%s; reference: %s)", s.Times[i], e, s.ErrEst[i], s.Method, source)
		}
		floor := unitRoundoff * normInf(u0)
		if s.ErrEst[i] > factor*math.Max(e, floor) {
			t.Errorf("t=%g: estimate %.3g is more than %g × max(true %.3g, u‖u0‖ %.3g) (%s)", s.Times[i], s.ErrEst[i], factor, e, floor, s.Method)
		}
	}
	if met := s.MaxErrEst() <= s.Tol*normInf(u0); s.TolMet != met || s.TolMet != (s.Shortfall == "") {
		t.Errorf("TolMet %v but Shortfall %q", s.TolMet, s.Shortfall)
	}
	t.Logf("%s: true %.3g, estimate %.3g, met %v; %s", s.Method, worst, worstEst, s.TolMet, s.Escalation)
}

// The dense method's own estimate on the damped string at 10 uniform times
// once multiplied ‖E‖_∞ (≈ 300 for this block operator) per step and
// reported 1e244; with the powers ‖E^k‖_∞ it stays finite and bounds the
// true error. The escalation then brings it within 1000× (checked above).
func TestDenseEstimateNonNormalSteps(t *testing.T) {
	c := stringCase(150, 10, 0.2)
	s := propagate(t, c.a, c.u0, c.times, Options{Method: MethodDense, Tol: 1e-8, NoEscalate: true})
	checkEstimateContract(t, s, c.u0, c.want, math.Inf(1), c.source)
	if est := s.MaxErrEst(); !(est < 1e-3) {
		t.Errorf("estimate %.3g: the carried error still grows like ‖E‖^k", est)
	}
	if s.TolMet || s.Escalation != "" || !strings.Contains(s.Shortfall, "not met") {
		t.Errorf("without escalation: TolMet %v, escalation %q, shortfall %q", s.TolMet, s.Escalation, s.Shortfall)
	}
	// With escalation (the default) a second method confirms the values
	// and the cross-check reuses it.
	s = propagate(t, c.a, c.u0, c.times, Options{Method: MethodDense, Tol: 1e-8, Crosscheck: true})
	if !s.TolMet || !strings.Contains(s.Escalation, "krylov") {
		t.Errorf("escalated: TolMet %v, escalation %q", s.TolMet, s.Escalation)
	}
	if s.Cross == nil || s.Cross.Method != MethodKrylov || s.Cross.Skipped != "" || !(s.Cross.MaxDiff < 1e-8) {
		t.Errorf("cross-check %+v", s.Cross)
	}
}

// Shift-and-invert on a simply supported beam, K = κ0²·T² (T the second
// difference), in first-order form: the Gershgorin bound on the numerical
// abscissa is ≈ ‖K‖/2 and e^{ωΔ} overflowed, and a Ritz value of
// (I − γA)⁻¹ near 0 made e^{ΔH_m} overflow into "NaN entries". Now the run
// completes, every estimate bounds the true error (closed form: damped
// sine modes), and TolMet agrees with the estimates. The estimates stay
// loose (up to 1200× at t = 0.01): the Euclidean growth of this
// semigroup is large although its energy norm decays.
func TestShiftInvertDampedBeam(t *testing.T) {
	n := 300
	k0 := float64((n + 1) * (n + 1))
	a := dampedBlock(n, k0, 2, 0.5, 1e-6)
	times := []float64{0.001, 0.01, 0.1}
	var want [][]float64
	var u0 []float64
	for _, tt := range times {
		var ut []float64
		u0, ut = dampedModes(n, k0, 2, 0.5, 1e-6, tt, []int{1, 2}, []float64{1, 0.3})
		want = append(want, ut)
	}
	s, err := Propagate(context.Background(), a, u0, times, Options{Method: MethodShiftInv, Tol: 1e-8, NoEscalate: true})
	if err != nil {
		t.Fatal(err)
	}
	checkEstimateContract(t, s, u0, want, math.Inf(1), "closed form: Rayleigh-damped beam modes")
	// The growth charged is that of the basis size kept: charging the
	// last size tried once gave 8.5e40 here (true error 3.9e-8).
	if est := s.MaxErrEst(); !(est < 1e-3) {
		t.Errorf("largest estimate %.3g", est)
	}
}

// A tolerance below the unit roundoff cannot be met by any method: the
// result says so after escalating.
func TestToleranceShortfall(t *testing.T) {
	n := 50
	u0, want := sineModes(n, 0.01, []int{1, 4}, []float64{1, 0.5})
	s := propagate(t, heat1D(n), u0, []float64{0.01}, Options{Method: MethodDense, Tol: 1e-18})
	checkEstimateContract(t, s, u0, [][]float64{want}, math.Inf(1), "closed form: sine modes")
	if s.TolMet || !strings.Contains(s.Shortfall, "tolerance 1e-18 not met") || s.Escalation == "" {
		t.Errorf("TolMet %v, shortfall %q, escalation %q", s.TolMet, s.Shortfall, s.Escalation)
	}
	s = propagate(t, heat1D(n), u0, []float64{0.01}, Options{Method: MethodDense, Tol: 1e-8})
	if !s.TolMet || s.Shortfall != "" || s.Escalation != "" {
		t.Errorf("tol 1e-8: TolMet %v, shortfall %q, escalation %q", s.TolMet, s.Shortfall, s.Escalation)
	}
}

// BenchmarkPropagateDenseString is the dense path on the damped string of
// order 300 at 10 uniform times without escalation: one exponential by
// the first route and one by the second (for the a posteriori estimate),
// then the powers ‖E^k‖ when the carried estimate misses the tolerance.
func BenchmarkPropagateDenseString(b *testing.B) {
	c := stringCase(150, 10, 0.2)
	for b.Loop() {
		if _, err := Propagate(context.Background(), c.a, c.u0, c.times, Options{Method: MethodDense, Tol: 1e-8, NoEscalate: true}); err != nil {
			b.Fatal(err)
		}
	}
}

// TestUpwind2MatrixMarket reads the second-order upwind advection–diffusion
// operator of order 400 from testdata/expo/upwind2.mtx (written by
// scipy.io.mmwrite in testdata/expo/make_upwind_ref.py) and checks every
// method's estimate against that script's reference ("exact": the Taylor
// series in 80-bit long double; scipy's expm_multiply agrees to "spread").
// Its symmetric part is indefinite (Gershgorin bound on the numerical
// abscissa ≈ c/h = 401), where e^{ωΔ} once inflated the shift-and-invert
// estimate by orders of magnitude.
func TestUpwind2MatrixMarket(t *testing.T) {
	dir := filepath.Join("..", "..", "testdata", "expo")
	f, err := os.Open(filepath.Join(dir, "upwind2.mtx"))
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	m, err := mmio.Read(f)
	if err != nil {
		t.Fatal(err)
	}
	b, err := os.ReadFile(filepath.Join(dir, "upwind2_ref.json"))
	if err != nil {
		t.Fatal(err)
	}
	var ref struct {
		Times  []float64   `json:"times"`
		U0     []float64   `json:"u0"`
		Exact  [][]float64 `json:"exact"`
		Spread float64     `json:"spread"`
	}
	if err := json.Unmarshal(b, &ref); err != nil {
		t.Fatal(err)
	}
	if ref.Spread > 1e-13 {
		t.Fatalf("reference spread %.3g: the script's two values disagree", ref.Spread)
	}
	if g, _ := abscissaBound(m.CSR()); g < 100 {
		t.Errorf("Gershgorin bound on ω = %g, want ≈ c/h: the case this test is for", g)
	}
	for _, meth := range []string{MethodAuto, MethodDense, MethodTaylor, MethodKrylov, MethodShiftInv} {
		t.Run(meth, func(t *testing.T) {
			s := propagate(t, m.CSR(), ref.U0, ref.Times, Options{Method: meth, Tol: 1e-8})
			checkEstimateContract(t, s, ref.U0, ref.Exact, 1000, "long-double Taylor series, make_upwind_ref.py")
		})
	}
}

// crosscheck=true either runs a second method or says in words why it
// could not: here Taylor cannot take t‖A‖₁ = 1e300 (closed form of the
// diagonal: e^{−1} in the second component, 0 in the first).
func TestCrosscheckSaysWhyNot(t *testing.T) {
	a := linop.NewCSRFromTriplets(2, 2, []int{0, 1}, []int{0, 1}, []float64{-1e300, -1})
	s := propagate(t, a, []float64{1, 1}, []float64{1}, Options{Method: MethodDense, Tol: 1e-8, Crosscheck: true})
	if got := s.Values[0]; got[0] != 0 || math.Abs(got[1]-math.Exp(-1)) > 1e-15 {
		t.Errorf("values %v, want [0, e^{-1}]", got)
	}
	c := s.Cross
	if c == nil || c.Method != MethodTaylor || !strings.Contains(c.Skipped, "taylor") || !strings.Contains(c.Skipped, "too large") {
		t.Errorf("cross-check %+v: want the Taylor method named with the reason it could not run", c)
	}
}

// Exp of [[λ, 1], [0, −1]] with λ = −1e100 and −1e300 once returned "NaN
// entries": A⁶ overflowed, the scaling was chosen as 0, and the overflowed
// powers were scaled after it. Closed form (Higham, Functions of Matrices,
// 2008, eq. (10.42)): diag(e^λ, e^{−1}) and (e^{−1} − e^λ)/(−1 − λ) above.
func TestExpHugeNorm(t *testing.T) {
	for _, lam := range []float64{-1e100, -1e300} {
		var e mat.Dense
		if _, err := Exp(&e, mat.NewDense(2, 2, []float64{lam, 1, 0, -1})); err != nil {
			t.Fatalf("λ = %g: %v", lam, err)
		}
		want := []float64{0, math.Exp(-1) / (-1 - lam), 0, math.Exp(-1)}
		for k, w := range want {
			if g := e.RawMatrix().Data[k]; math.Abs(g-w) > 1e-15*math.Abs(w) {
				t.Errorf("λ = %g: entry %d = %g, want %g", lam, k, g, w)
			}
		}
	}
}

// An escalation's budget is counted in products: Krylov on the heat
// operator at t‖A‖₁ ≈ 1.6e7 needs thousands of them, so a budget of 50
// stops it at the same point however busy the machine is, with the
// budget named as the cause.
func TestWorkBudget(t *testing.T) {
	n := 2000
	u0, _ := sineModes(n, 0, []int{1, 3}, []float64{1, 0.5})
	_, err := run(context.Background(), MethodKrylov, heat1D(n), u0, []float64{1}, Options{Tol: 1e-10, workLimit: 50})
	if !errors.Is(err, errWorkBudget) {
		t.Fatalf("err = %v, want the work budget", err)
	}
	s, err := run(context.Background(), MethodKrylov, heat1D(n), u0, []float64{1e-4}, Options{Tol: 1e-10, workLimit: 1 << 30})
	if err != nil || s.MatVecs <= 50 {
		t.Fatalf("without a binding budget: %v, %d products", err, s.MatVecs)
	}
	if w := escalationWork(&Solution{MatVecs: 100, Solves: 3000}); w != 10*(100+10*3000) {
		t.Errorf("escalationWork = %d", w)
	}
}
