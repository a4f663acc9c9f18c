package builtin_test

import (
	"context"
	"errors"
	"math"
	"strings"
	"testing"
	"time"

	"semiflow/lang/eval"
	"semiflow/lang/objects"
	"semiflow/lang/run"
	"semiflow/numerics/spectra"
)

// TestGrowthSamplesBudget: by default the curve of an order-200 operator
// is thinned to what the interactive budget fits, and the report says how
// many times it kept and how to ask for all. The Dirichlet Laplacian is
// symmetric, so ‖e^{tA}‖₂ = e^{tλ₁} with λ₁ = −(4/h²)sin²(πh/2),
// h = 1/201 (closed form), at every time kept, to the condition of the
// exponential.
func TestGrowthSamplesBudget(t *testing.T) {
	s := run.NewSession()
	src := "L = dense(laplacian(interval(0, 1, 202)))\ng = growth(L, bounds=\"none\")\ng"
	data, _, err := s.Execute(context.Background(), src, nil)
	if err != nil {
		t.Fatal(err)
	}
	text := data["text/plain"].(string)
	if !strings.Contains(text, "of the 101 times (every") || !strings.Contains(text, `samples="all" computes every time`) {
		t.Fatalf("no thinning note in\n%s", text)
	}
	gv, _ := s.Lookup("g")
	g := gv.(*objects.Analysis).Data.(*spectra.Growth)
	ts := g.T
	if len(ts) >= 101 || len(ts) < 3 || ts[0] != 0 || ts[len(ts)-1] != 10 {
		t.Fatalf("kept times %v", ts)
	}
	h := 1.0 / 201
	l1 := -4 / (h * h) * math.Pow(math.Sin(math.Pi*h/2), 2)
	// The relative condition of e^{tL} for symmetric L is about t‖L‖
	// (2.2e-10 relative at t = 10, 1.6e6 = t‖L‖₁): allow 10·u·t‖L‖₁.
	for k, nv := range g.Norm {
		if want := math.Exp(ts[k] * l1); math.Abs(nv-want) > (1e-15+10*0x1p-53*ts[k]*4/(h*h))*want {
			t.Errorf("t = %g: ‖e^{tL}‖ = %.17g, closed form %.17g", ts[k], nv, want)
		}
	}
	// samples="all" on three times: all computed, no note.
	data, _, err = s.Execute(context.Background(), `growth(L, t=[0, 0.5, 1], bounds="none", samples="all")`, nil)
	if err != nil {
		t.Fatal(err)
	}
	if text := data["text/plain"].(string); strings.Contains(text, "of the 3 times") {
		t.Errorf("samples=\"all\" thinned:\n%s", text)
	}
}

// TestGrowthSamplesRefused: at order 1000 even three values exceed ten
// budgets, so the default call refuses at once, naming the option; an
// unknown samples value names the choices.
func TestGrowthSamplesRefused(t *testing.T) {
	s := run.NewSession()
	if _, _, err := s.Execute(context.Background(), "L = dense(laplacian(interval(0, 1, 1002)))", nil); err != nil {
		t.Fatal(err)
	}
	start := time.Now()
	_, _, err := s.Execute(context.Background(), "growth(L)", nil)
	var ee *eval.Error
	if !errors.As(err, &ee) || !strings.Contains(ee.Msg, "even three of the 101 times") || !strings.Contains(ee.Msg, `samples="all"`) {
		t.Fatalf("got %v", err)
	}
	if el := time.Since(start); el > 5*time.Second {
		t.Errorf("refusal took %v", el) // generous: only the dense copy is made
	}
	for _, bad := range []string{`growth(L, samples="some")`, `growth(L, samples=3)`} {
		if _, _, err := s.Execute(context.Background(), bad, nil); err == nil || !strings.Contains(err.Error(), `"auto"`) {
			t.Errorf("%s: got %v", bad, err)
		}
	}
}

// TestSearchBudget: kreiss and psabscissa share the interactive budget
// between the Schur form and the search. At order 600 the predicted Schur
// form alone (ShapeWork) exceeds it: refused at once; on a small matrix
// search="full" and "auto" agree with the closed form (K = 1 for a normal
// matrix with α < 0, α_ε = α + ε); a bad value names the choices.
func TestSearchBudget(t *testing.T) {
	s := run.NewSession()
	if _, _, err := s.Execute(context.Background(), "g = interval(0, 1, 602)\nA = dense(0.01*laplacian(g) - deriv(g))", nil); err != nil {
		t.Fatal(err)
	}
	for _, src := range []string{"kreiss(A)", "psabscissa(A, 0.01)"} {
		start := time.Now()
		_, _, err := s.Execute(context.Background(), src, nil)
		var ee *eval.Error
		if !errors.As(err, &ee) || !strings.Contains(ee.Msg, "at least") || !strings.Contains(ee.Msg, `search="full"`) {
			t.Errorf("%s: got %v", src, err)
		}
		if el := time.Since(start); el > time.Second {
			t.Errorf("%s: refusal took %v", src, el)
		}
	}
	for _, src := range []string{`kreiss({-1, 0 | 0, -2}, search="full")[0] == 1`, `kreiss({-1, 0 | 0, -2})[0] == 1`,
		`abs(psabscissa({-1, 0 | 0, -2}, 0.25, search="full")[0] + 0.75) < 1e-10`} {
		data, _, err := s.Execute(context.Background(), src, nil)
		if err != nil || data["text/plain"] != "true" {
			t.Errorf("%s: %v, %v", src, data["text/plain"], err)
		}
	}
	for _, bad := range []string{`kreiss(A, search="all")`, `psabscissa(A, 0.1, search=1)`} {
		if _, _, err := s.Execute(context.Background(), bad, nil); err == nil || !strings.Contains(err.Error(), `"full"`) {
			t.Errorf("%s: got %v", bad, err)
		}
	}
}
