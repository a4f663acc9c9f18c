package builtin_test

import (
	"context"
	"errors"
	"math"
	"os"
	"strconv"
	"strings"
	"sync"
	"testing"
	"time"

	"semiflow/lang/eval"
	"semiflow/lang/objects"
	"semiflow/lang/run"
	"semiflow/lang/value"
)

const dataDir = "../../testdata/lang/data/"

// readRef reads rows t, u_0, ..., u_{n−1} written by a reference script.
func readRef(t *testing.T, name string) (times []float64, vals [][]float64) {
	t.Helper()
	b, err := os.ReadFile(dataDir + name)
	if err != nil {
		t.Fatal(err)
	}
	for _, line := range strings.Split(strings.TrimSpace(string(b)), "\n") {
		var row []float64
		for _, f := range strings.Split(line, ",") {
			x, err := strconv.ParseFloat(f, 64)
			if err != nil {
				t.Fatal(err)
			}
			row = append(row, x)
		}
		times = append(times, row[0])
		vals = append(vals, row[1:])
	}
	return times, vals
}

func exec(t *testing.T, s *run.Session, src string) {
	t.Helper()
	if _, _, err := s.Execute(context.Background(), src, nil); err != nil {
		t.Fatalf("%s: %v", src, err)
	}
}

func lookup[T value.Value](t *testing.T, s *run.Session, name string) T {
	t.Helper()
	v, ok := s.Lookup(name)
	if !ok {
		t.Fatalf("%s undefined", name)
	}
	x, ok := v.(T)
	if !ok {
		t.Fatalf("%s is a %s", name, v.Type())
	}
	return x
}

func maxDiff(a, b []float64) float64 {
	m := 0.0
	for i := range a {
		m = math.Max(m, math.Abs(a[i]-b[i]))
	}
	return m
}

// The advection–diffusion operator D2 + 5 D1 built in the language equals
// the matrix scipy builds independently, and every method reproduces
// scipy.linalg.expm(tA) u0 (testdata/lang/data/make_propagate_ref.py), with
// an error estimate that bounds the true error.
func TestPropagateAgainstScipy(t *testing.T) {
	s := run.NewSession()
	exec(t, s, `g = interval(0, 1, 41)
A = deriv(g, k=2) + 5 * deriv(g)
u0(x) = sin(pi * x) + x * (1 - x)
ref = readmm("`+dataDir+`advdiff41.mtx")
d = dense(A) - dense(ref)`)
	d := lookup[*value.Matrix](t, s, "d")
	if m := maxDiff(d.Data, make([]float64, len(d.Data))); m > 1e-10 {
		t.Fatalf("deriv(g, k=2) + 5 deriv(g) differs from scipy's matrix by %g", m)
	}
	times, want := readRef(t, "advdiff41_ref.csv")
	for _, m := range []string{"auto", "dense", "taylor", "krylov", "resolvent-powers"} {
		exec(t, s, `sol = propagate(A, u0, [0.01, 0.05, 0.2], method="`+m+`")`)
		sol := lookup[*objects.Solution](t, s, "sol")
		for i, tt := range times {
			if sol.S.Times[i] != tt {
				t.Fatalf("time %d: %g, want %g", i, sol.S.Times[i], tt)
			}
			e := maxDiff(sol.S.Values[i], want[i])
			if e > 1e-7 {
				t.Errorf("%s, t=%g: error %g against scipy", m, tt, e)
			}
			// scipy's own rounding is about 1e-15 relative; allow that.
			if e > sol.S.ErrEst[i]+1e-13 {
				t.Errorf("%s, t=%g: error %g exceeds the estimate %g", m, tt, e, sol.S.ErrEst[i])
			}
		}
	}
	// Crosscheck: a second method agrees.
	exec(t, s, `sol = propagate(A, u0, 0.05, method="taylor", crosscheck=true)`)
	sol := lookup[*objects.Solution](t, s, "sol")
	if sol.S.Cross == nil || sol.S.Cross.MaxDiff > 1e-7 {
		t.Errorf("cross-check %+v", sol.S.Cross)
	}
}

// A probability distribution of the chain read from chain3.mtx evolves by
// p' = Qᵀ p: compared with scipy.linalg.expm(t Qᵀ) p0.
func TestChainDistributionAgainstScipy(t *testing.T) {
	s := run.NewSession()
	exec(t, s, `Q = ratematrix(readmm("`+dataDir+`chain3.mtx"))
p = propagate(adjoint(Q), [1, 0, 0], [0.1, 1, 5])`)
	sol := lookup[*objects.Solution](t, s, "p")
	_, want := readRef(t, "chain3_ref.csv")
	for i := range want {
		if e := maxDiff(sol.S.Values[i], want[i]); e > 1e-8 {
			t.Errorf("t=%g: error %g against scipy", sol.S.Times[i], e)
		}
	}
}

// Closed form: with forcing f(t) = cos(t) and A = −1, u(0) = 0,
// u(t) = (sin t + cos t − e^{−t})/2; a nonlinear N(u, t) = cos(t) gives the
// same solution through ETDRK4.
func TestForcingAndNonlinearClosedForm(t *testing.T) {
	s := run.NewSession()
	exec(t, s, `f(t) = cos(t)
a = propagate({-1}, [0], [1, 3], forcing=f)
N(u, t) = cos(t) + 0 * u
b = propagate({-1}, [0], [1, 3], nonlinear=N)`)
	for _, name := range []string{"a", "b"} {
		sol := lookup[*objects.Solution](t, s, name)
		for i, tt := range sol.S.Times {
			want := (math.Sin(tt) + math.Cos(tt) - math.Exp(-tt)) / 2
			e := math.Abs(sol.S.Values[i][0] - want)
			if e > 1e-7 {
				t.Errorf("%s, t=%g: %g, want %g", name, tt, sol.S.Values[i][0], want)
			}
			if e > sol.S.ErrEst[i]+1e-14 {
				t.Errorf("%s, t=%g: error %g exceeds the estimate %g", name, tt, e, sol.S.ErrEst[i])
			}
		}
	}
}

// The cases: a nonlinear result says how many steps it took and
// whether tol was met; crosscheck=true runs a second method with forcing
// and nonlinear terms too; a jump of the forcing is reported when not
// given and gone when given. Closed form (variation of constants, by hand):
// u' = −u + [t < 1], u(0) = 0 has u(2.5) = (e − 1)e^{−2.5}.
func TestForcingSwitchesAndCrosscheck(t *testing.T) {
	s := run.NewSession()
	exec(t, s, `pulse(t) = when(t < 1, 1, 0)
q = propagate({-1, 0 | 0, -2}, [0, 0], 2.5, forcing=pulse)
p = propagate({-1, 0 | 0, -2}, [0, 0], 2.5, forcing=pulse, switches=1, crosscheck=true)
negsq(u) = -u^2
g = propagate({1}, [0.1], 4, nonlinear=negsq, crosscheck=true)`)
	want := (math.E - 1) * math.Exp(-2.5)
	q := lookup[*objects.Solution](t, s, "q")
	p := lookup[*objects.Solution](t, s, "p")
	for _, sol := range []*objects.Solution{p, q} {
		if e := math.Abs(sol.S.Values[0][0] - want); e > sol.S.ErrEst[0] || e > 1e-7 {
			t.Errorf("error %.3g, estimate %.3g", e, sol.S.ErrEst[0])
		}
	}
	if txt := q.String(); !strings.Contains(txt, "near t ≈ 1") || !strings.Contains(txt, "switches") {
		t.Errorf("the jump at t = 1 is not reported:\n%s", txt)
	}
	if txt := p.String(); strings.Contains(txt, "jumps") || strings.Contains(txt, "not asked") || !strings.Contains(txt, "imex-ars443") {
		t.Errorf("with switches and crosscheck:\n%s", txt)
	}
	g := lookup[*objects.Solution](t, s, "g")
	if txt := g.String(); !strings.Contains(txt, "accepted") || !strings.Contains(txt, "rejected") || !strings.Contains(txt, "imex-ars443") {
		t.Errorf("nonlinear result:\n%s", txt)
	}
	if !g.S.TolMet || g.S.Cross == nil || g.S.Cross.MaxDiff > g.S.MaxErrEst()+g.S.Cross.ErrEst {
		t.Errorf("nonlinear: met %v, cross %+v, estimate %.3g", g.S.TolMet, g.S.Cross, g.S.MaxErrEst())
	}
}

// recorder collects display events concurrently.
type recorder struct {
	mu    sync.Mutex
	shown []string
	texts []string
}

func (r *recorder) Stream(name, text string) {}
func (r *recorder) Display(data, _ map[string]any, id string, update bool) {
	r.mu.Lock()
	defer r.mu.Unlock()
	r.shown = append(r.shown, id)
	t, _ := data["text/plain"].(string)
	r.texts = append(r.texts, t)
}
func (r *recorder) Clear(bool)          {}
func (r *recorder) Page(map[string]any) {}

// A propagation far too long to finish (t‖A‖ ≈ 10⁹ Taylor products) shows
// its progress after a moment and stops promptly when the context is
// cancelled.
func TestPropagateInterruptAndProgress(t *testing.T) {
	s := run.NewSession()
	exec(t, s, `g = interval(0, 1, 20001)
A = laplacian(g)
u = tabulate(1, g)`)
	ctx, cancel := context.WithCancel(context.Background())
	defer cancel()
	rec := &recorder{}
	done := make(chan error, 1)
	go func() {
		_, _, err := s.Execute(ctx, `propagate(A, u, 1, method="taylor")`, rec)
		done <- err
	}()
	// Wait for the progress display (shown once the computation has run
	// for a moment), then interrupt.
	deadline := time.Now().Add(20 * time.Second)
	for {
		rec.mu.Lock()
		n := len(rec.shown)
		rec.mu.Unlock()
		if n > 0 {
			break
		}
		if time.Now().After(deadline) {
			t.Fatal("no progress display within 20 s")
		}
		select {
		case err := <-done:
			t.Fatalf("propagate ended before the interrupt: %v", err)
		case <-time.After(20 * time.Millisecond):
		}
	}
	cancel()
	stopped := time.Now()
	var err error
	select {
	case err = <-done:
	case <-time.After(5 * time.Second):
		t.Fatal("propagate did not stop within 5 s of the interrupt")
	}
	if el := time.Since(stopped); el > 2*time.Second {
		t.Errorf("stopped %v after the interrupt", el)
	}
	var ee *eval.Error
	if !errors.As(err, &ee) || ee.Name != "interrupted" {
		t.Errorf("error %v, want Interrupted", err)
	}
	rec.mu.Lock()
	defer rec.mu.Unlock()
	if !strings.HasPrefix(rec.shown[0], "progress-propagate") {
		t.Errorf("display ids %v, want progress-propagate-…", rec.shown)
	}
	// The progress display is replaced by a line saying the work was
	// interrupted, under the same display id.
	n := len(rec.texts)
	if last := rec.texts[n-1]; !strings.HasSuffix(last, "— interrupted") || rec.shown[n-1] != rec.shown[0] {
		t.Errorf("last progress update %q (id %s), want an interrupted note on %s", last, rec.shown[n-1], rec.shown[0])
	}
}

// Benchmarks of whole cells through the language (parsing, sampling,
// building the operator and propagating):
//
//	go test ./lang/builtin -run '^$' -bench 'Cell' -benchtime 20x
func benchCell(b *testing.B, setup, cell string) {
	s := run.NewSession()
	if _, _, err := s.Execute(context.Background(), setup, nil); err != nil {
		b.Fatal(err)
	}
	b.ResetTimer()
	for range b.N {
		if _, _, err := s.Execute(context.Background(), cell, nil); err != nil {
			b.Fatal(err)
		}
	}
}

// 2-D heat equation on a 200×200 tensor grid (40 000 unknowns), five output
// times, by e^{tX} ⊗ e^{tY}.
func BenchmarkCellHeat2DKronecker(b *testing.B) {
	benchCell(b, `T = tensorgrid(interval(0, 1, 202), interval(0, 1, 202))
bump(x, y) = exp(-50 * ((x - 0.3)^2 + (y - 0.6)^2))
L = laplacian(T)
w = tabulate(bump, T)`,
		`s = propagate(L, w, [0.001, 0.002, 0.005, 0.01, 0.02])`)
}

// 1-D advection–diffusion with 2 000 unknowns to t = 0.01 by Krylov.
func BenchmarkCellAdvDiffKrylov(b *testing.B) {
	benchCell(b, `g = interval(0, 1, 2002)
A = deriv(g, k=2) + 5 * deriv(g)
f(x) = sin(pi * x) + x * (1 - x)
u0 = tabulate(f, g)`,
		`s = propagate(A, u0, 0.01, method="krylov")`)
}

// Building operators: a variable-coefficient 2-D operator on 300×300.
func BenchmarkCellBuildOperator(b *testing.B) {
	benchCell(b, `T = tensorgrid(interval(0, 1, 302), interval(0, 1, 302))
c(x, y) = 1 + x * y`,
		`A = multiplier(T, c) * laplacian(T) + deriv(T, along="y")`)
}
