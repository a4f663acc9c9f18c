package builtin_test

import (
	"context"
	"errors"
	"math"
	"strings"
	"syscall"
	"testing"

	"semiflow/lang/eval"
	"semiflow/lang/run"
)

// The convection–diffusion operator 0.01 u” − u' (Dirichlet, second order)
// of order 120, whose growth bounds at default settings once ran for more
// than 12 minutes: its α_ε search at ε = 1e-3 needs about 7.7e9 work units
// and its Kreiss constant about 2.3e9, against a budget of 1.2e9 for all.
const budgetSetup = "g = interval(0, 1, 122)\nA = dense(0.01*laplacian(g) - deriv(g))"

func budgetSession(t *testing.T) *run.Session {
	t.Helper()
	s := run.NewSession()
	if _, _, err := s.Execute(context.Background(), budgetSetup, nil); err != nil {
		t.Fatal(err)
	}
	return s
}

func budgetText(t *testing.T, s *run.Session, src string) string {
	t.Helper()
	data, _, err := s.Execute(context.Background(), src, nil)
	if err != nil {
		t.Fatalf("%s: %v", src, err)
	}
	text, _ := data["text/plain"].(string)
	return text
}

// TestGrowthDefaultBudget: by default the bounds that need more than their
// share of the work budget are left out and named with the way to ask for
// them; ε = 0.1 (2.2e8 units) fits and is reported.
func TestGrowthDefaultBudget(t *testing.T) {
	s := budgetSession(t)
	text := budgetText(t, s, "growth(A, t=[0, 0.5, 1])")
	for _, want := range []string{
		"lower bound α_ε/ε, ε = 0.1",
		"their bounds are missing: α_ε for ε = 0.01, α_ε for ε = 0.001, Kreiss constant (roughly",
		`bounds="all" computes every bound`,
		`kreiss(A, search="full") the Kreiss constant alone`,
		`psabscissa(A, ε, search="full") one α_ε`,
	} {
		if !strings.Contains(text, want) {
			t.Errorf("growth report lacks %q:\n%s", want, text)
		}
	}
	// The ε = 0.1 bound is the one psabscissa computes without a budget.
	alpha := budgetText(t, s, "psabscissa(A, 0.1)[0]")
	if alpha == "" || !strings.Contains(text, "α_ε = "+alpha) {
		t.Errorf("growth report lacks α_0.1 = %s (psabscissa):\n%s", alpha, text)
	}
	// A small matrix gets every bound: the Kreiss constant of the normal
	// diag(−1, −2) is 1 (Kreiss matrix theorem: K = 1 for normal A, α < 0).
	small := budgetText(t, s, "growth({-1, 0 | 0, -2}, t=[0, 1])")
	if strings.Contains(small, "not computed") || !strings.Contains(small, "Kreiss") {
		t.Errorf("small growth report:\n%s", small)
	}
}

// TestPseudospectrumAbscissae: the α_ε boundary search runs within the
// budget by default; a level that would need more falls back to the
// rightmost grid point with a note; "grid" and "exact" choose.
func TestPseudospectrumAbscissae(t *testing.T) {
	s := budgetSession(t)
	text := budgetText(t, s, "pseudospectrum(A, n=5, levels=[0.1, 0.01, 0.001])")
	for _, want := range []string{
		"α_ε not computed by the boundary search for ε = 0.01, 0.001",
		`ask with abscissae="exact"`,
		budgetText(t, s, "psabscissa(A, 0.1)[0]"), // ε = 0.1 by the boundary search
	} {
		if !strings.Contains(text, want) {
			t.Errorf("pseudospectrum report lacks %q:\n%s", want, text)
		}
	}
	// For a normal matrix α_ε = α + ε (σ_ε is the union of ε-discs about
	// the eigenvalues): −1 + 0.5 by the boundary search, and on the grid
	// Re z ∈ {−3, −2.85, …, 0} the rightmost point with σ_min ≤ 0.5 is −0.6.
	if got := budgetText(t, s, `pseudospectrum({-1, 0 | 0, -2}, re=[-3, 0], im=[-1, 1], levels=[0.5], n=21)[0, 1]`); got != "-0.5" {
		t.Errorf("auto: α_0.5 = %s, want -0.5", got)
	}
	if got := budgetText(t, s, `pseudospectrum({-1, 0 | 0, -2}, re=[-3, 0], im=[-1, 1], levels=[0.5], n=21, abscissae="grid")[0, 1]`); got != "-0.6" {
		t.Errorf("grid: α_0.5 = %s, want -0.6", got)
	}
	_, _, err := s.Execute(context.Background(), `pseudospectrum(A, n=5, abscissae="fast")`, nil)
	var ee *eval.Error
	if !errors.As(err, &ee) || ee.Name != "bad value" || !strings.Contains(ee.Msg, `"auto", "exact" or "grid"`) {
		t.Errorf("bad abscissae: got %v", err)
	}
}

// Benchmarks of the default budgets on the order-120 convection–diffusion
// operator, through the language (the reports of 2026-12-02: growth with
// default bounds did not finish in 12 minutes, pseudospectrum on a 5×5
// grid took over 2 minutes). Run with
//
//	go test ./lang/builtin -run '^$' -bench Budget -benchtime 3x
//
// Besides the wall time they report the CPU seconds of the process per
// operation (cpu-s/op), which a busy machine does not inflate.
func BenchmarkBudgetGrowthDefault120(b *testing.B) {
	benchBudget(b, "x = growth(A)")
}

func BenchmarkBudgetPseudospectrum120Grid5(b *testing.B) {
	benchBudget(b, "x = pseudospectrum(A, n=5)")
}

func benchBudget(b *testing.B, src string) {
	s := run.NewSession()
	if _, _, err := s.Execute(context.Background(), budgetSetup, nil); err != nil {
		b.Fatal(err)
	}
	b.ResetTimer()
	c0 := cpuSeconds()
	for i := 0; i < b.N; i++ {
		if _, _, err := s.Execute(context.Background(), src, nil); err != nil {
			b.Fatal(err)
		}
	}
	b.ReportMetric((cpuSeconds()-c0)/float64(b.N), "cpu-s/op")
}

// cpuSeconds is the user and system CPU time of this process.
func cpuSeconds() float64 {
	var ru syscall.Rusage
	if err := syscall.Getrusage(syscall.RUSAGE_SELF, &ru); err != nil {
		return math.NaN()
	}
	return float64(ru.Utime.Nano()+ru.Stime.Nano()) / 1e9
}

// TestPseudospectrumDefaultGrid: without n, a dense operator whose 80 × 80
// grid would exceed the budget gets the largest square grid within it:
// 1.2e9 units / (12 steps × 200²) = 2500 points, 50 × 50.
func TestPseudospectrumDefaultGrid(t *testing.T) {
	s := run.NewSession()
	text := budgetText(t, s, "g = interval(0, 1, 202)\npseudospectrum(dense(0.01*laplacian(g) - deriv(g)), abscissae=\"grid\")")
	for _, want := range []string{"50 × 50 points", "a 50 × 50 grid, to fit the interactive work budget", "n=80 asks for it"} {
		if !strings.Contains(text, want) {
			t.Errorf("pseudospectrum report lacks %q:\n%s", want, text)
		}
	}
	// An explicit n is kept, with no note.
	text = budgetText(t, s, "pseudospectrum({-1, 0 | 0, -2}, levels=[0.5], n=7)")
	if !strings.Contains(text, "7 × 7 points") || strings.Contains(text, "interactive work budget") {
		t.Errorf("explicit n: %s", text)
	}
}
