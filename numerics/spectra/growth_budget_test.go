package spectra

import (
	"errors"
	"math"
	"strings"
	"testing"
	"time"
)

// growth2 is ‖e^{tA}‖₂ for A = [a b; 0 d] in closed form: e^{tA} =
// [e^{at}, b(e^{at} − e^{dt})/(a − d); 0, e^{dt}], and the largest singular
// value of an upper-triangular [p q; 0 r] is
// √((s + √(s² − 4p²r²))/2) with s = p² + q² + r².
func growth2(a, b, d, t float64) float64 {
	p, r := math.Exp(a*t), math.Exp(d*t)
	q := b * (p - r) / (a - d)
	s := p*p + q*q + r*r
	return math.Sqrt((s + math.Sqrt(s*s-4*p*p*r*r)) / 2)
}

// TestGrowthCurveBudget: under a curve budget that fits about a fifth of
// 101 times, the curve keeps every k-th time and the last, each value
// matching the closed form, and the peak, refined with what the budget
// leaves, lies within its stated bracket of the closed form's maximiser
// (t* = ln 2 for a = −1, d = −2, from d/dt of the (1,2) entry, which
// dominates the norm near its peak only approximately: the maximiser is
// taken from golden-section search on the closed form to 1e-12).
func TestGrowthCurveBudget(t *testing.T) {
	a, b, d := -1.0, 40.0, -2.0
	m := op([][]float64{{a, b}, {0, d}})
	times := linspace(0, 10, 101)
	// One value at order 2 is 8.5 to 19 units: 1000 fit about 25 times
	// with the peak vector and the least refinement.
	g, err := GrowthCurve(bg, m, times, &GrowthOptions{NoKreiss: true, CurveBudget: 1000})
	if err != nil {
		t.Fatal(err)
	}
	if g.Asked != 101 || g.Stride < 2 || len(g.T) >= 101 || len(g.T) < 3 {
		t.Fatalf("asked %d, stride %d, kept %d: want a thinned curve", g.Asked, g.Stride, len(g.T))
	}
	if g.T[0] != times[0] || g.T[len(g.T)-1] != times[100] {
		t.Errorf("kept times %v miss an end", g.T)
	}
	for k, tk := range g.T {
		if k > 0 && k < len(g.T)-1 && tk != times[k*g.Stride] {
			t.Errorf("time %d is %g, want every %d-th (%g)", k, tk, g.Stride, times[k*g.Stride])
		}
		want := growth2(a, b, d, tk)
		if e := math.Abs(g.Norm[k] - want); e > 1e-13*want {
			t.Errorf("t = %g: ‖e^{tA}‖ = %.17g, closed form %.17g", tk, g.Norm[k], want)
		}
	}
	ts, _ := goldenMax(func(t float64) float64 { return growth2(a, b, d, t) }, 0, 3, 1e-12, 200)
	if !(g.PeakTimeWidth > 0) || math.Abs(g.PeakTime-ts) > g.PeakTimeWidth+1e-7 {
		t.Errorf("peak at t = %.10g ± %.2g; closed form's maximiser %.10g", g.PeakTime, g.PeakTimeWidth, ts)
	}
	if want := growth2(a, b, d, ts); g.Peak > want*(1+1e-13) || g.Peak < want*(1-1e-6) {
		t.Errorf("peak %.17g, closed-form maximum %.17g", g.Peak, want)
	}
	if !(g.CurveNeeds > 1000) {
		t.Errorf("CurveNeeds = %g, want above the budget", g.CurveNeeds)
	}
	// Without a budget every time is computed.
	full, err := GrowthCurve(bg, m, times, &GrowthOptions{NoKreiss: true})
	if err != nil {
		t.Fatal(err)
	}
	if len(full.T) != 101 || full.Stride != 1 {
		t.Errorf("no budget: %d times, stride %d", len(full.T), full.Stride)
	}
}

// TestGrowthCurveRefuses: when even three times would need ten budgets
// (order 300, one value about 3e7 units), GrowthCurve returns a
// BudgetError at once, before any exponential.
func TestGrowthCurveRefuses(t *testing.T) {
	start := time.Now()
	_, err := GrowthCurve(bg, grcar(300), linspace(0, 10, 101), &GrowthOptions{NoKreiss: true, CurveBudget: 1e6})
	var be *BudgetError
	if !errors.As(err, &be) || !be.AtLeast || !errors.Is(err, ErrBudget) {
		t.Fatalf("got %v, want a BudgetError (at least)", err)
	}
	if be.Estimate < 3*GrowthEvalWork(300, 1) {
		t.Errorf("estimate %g below three values", be.Estimate)
	}
	if el := time.Since(start); el > 2*time.Second {
		t.Errorf("refusal took %v", el) // a generous bound: only the dense copy is made
	}
}

// TestGrowthShapeSkipped: when the Schur form alone exceeds the bounds'
// budget, α(A) and the bounds are left out and named, and ω(A) still comes
// from the symmetric part: for A = [−1 4; 0 −2], λmax([−1 2; 2 −2]) =
// (−3 + √17)/2 (closed form).
func TestGrowthShapeSkipped(t *testing.T) {
	m := op([][]float64{{-1, 4}, {0, -2}})
	g, err := GrowthCurve(bg, m, []float64{0, 1}, &GrowthOptions{Eps: []float64{0.1, 0.01}, Budget: 10})
	if err != nil {
		t.Fatal(err)
	}
	if !(g.ShapeNeeds > 30) || !math.IsNaN(g.Abscissa) || len(g.Skipped) != 3 || g.Kreiss != nil || len(g.EpsBounds) != 0 {
		t.Fatalf("shape needs %g, α = %g, skipped %q: want the shape and all bounds left out", g.ShapeNeeds, g.Abscissa, g.Skipped)
	}
	if want := (-3 + math.Sqrt(17)) / 2; math.Abs(g.InitialSlope-want) > 1e-15 {
		t.Errorf("ω = %.17g, want %.17g", g.InitialSlope, want)
	}
	// With room for the shape, α(A) = −1 and the bounds are there.
	g, err = GrowthCurve(bg, m, []float64{0, 1}, &GrowthOptions{Eps: []float64{0.1, 0.01}, Budget: 1e8})
	if err != nil {
		t.Fatal(err)
	}
	if g.ShapeNeeds != 0 || g.Abscissa != -1 || g.Kreiss == nil {
		t.Errorf("shape needs %g, α = %g, Kreiss %v", g.ShapeNeeds, g.Abscissa, g.Kreiss)
	}
}

// TestKreissWithin: a budget below the predicted Schur form refuses at
// once; a search that runs out reports its extrapolated cost; within the
// budget the result is the unbudgeted one. The shifted Grcar search of
// order 200 needs about 1.7e9 units (BenchmarkBudget*), above 3e8.
func TestKreissWithin(t *testing.T) {
	start := time.Now()
	_, err := KreissWithin(bg, grcar(300), 1e6)
	var be *BudgetError
	if !errors.As(err, &be) || !be.AtLeast || be.Estimate != ShapeWork(300) {
		t.Fatalf("tiny budget: got %v, want a BudgetError at least ShapeWork(300)", err)
	}
	if el := time.Since(start); el > time.Second {
		t.Errorf("refusal took %v", el)
	}
	_, err = KreissWithin(bg, shiftedGrcar(200), 3e8)
	if !errors.As(err, &be) || !(be.Estimate > 3e8) {
		t.Fatalf("search over budget: got %v, want a BudgetError above 3e8", err)
	}
	a := op([][]float64{{-0.01, 1}, {0, -1}})
	k1, err := KreissWithin(bg, a, InteractiveWork)
	if err != nil {
		t.Fatal(err)
	}
	k2, err := Kreiss(bg, a)
	if err != nil {
		t.Fatal(err)
	}
	if k1.K != k2.K || !(k1.Work > 0) {
		t.Errorf("within budget K = %.17g (work %g), unbudgeted %.17g", k1.K, k1.Work, k2.K)
	}
}

// TestPseudoAbscissaWithin: for a normal matrix α_ε = α + ε exactly
// (σ_ε is the union of ε-discs; Trefethen & Embree 2005, §2), within the
// budget; a budget below the Schur form refuses at once.
func TestPseudoAbscissaWithin(t *testing.T) {
	a := op([][]float64{{-1, 0, 0}, {0, -2, 1}, {0, -1, -2}}) // eigenvalues −1, −2 ± i
	r, err := PseudoAbscissaWithin(bg, a, 0.25, InteractiveWork)
	if err != nil {
		t.Fatal(err)
	}
	if d := math.Abs(r.Alpha - (-0.75)); d > 1e-10 {
		t.Errorf("α_ε = %.15g, want −0.75 (α + ε)", r.Alpha)
	}
	var be *BudgetError
	if _, err := PseudoAbscissaWithin(bg, grcar(300), 0.1, 1e6); !errors.As(err, &be) || !be.AtLeast {
		t.Errorf("tiny budget: got %v", err)
	}
}

// TestKreissWithinPartial: a budget that covers the scan but not the
// golden-section refinement returns the scan's best value, a lower bound
// of the full search's K (the order-60 shifted Grcar matrix: K ≈ 580 from
// about 1.1e8 units; 8e7 gave 557). Every budget gives either an error,
// a partial result no larger than the full one, or the full one itself.
func TestKreissWithinPartial(t *testing.T) {
	a := shiftedGrcar(60)
	full, err := KreissWithin(bg, a, 0)
	if err != nil {
		t.Fatal(err)
	}
	partials := 0
	for _, b := range []float64{7e7, 8e7, 9e7, 1e8} {
		r, err := KreissWithin(bg, a, b)
		var be *BudgetError
		switch {
		case errors.As(err, &be):
		case err != nil:
			t.Fatalf("budget %g: %v", b, err)
		case r.Partial:
			partials++
			if !(r.K <= full.K*(1+1e-9) && r.K >= 1) || !strings.Contains(r.Accuracy, "lower bound") {
				t.Errorf("budget %g: partial K = %.15g (%s), full %.15g", b, r.K, r.Accuracy, full.K)
			}
		case r.K != full.K:
			t.Errorf("budget %g: complete K = %.17g, full %.17g", b, r.K, full.K)
		}
	}
	if partials == 0 {
		t.Errorf("no budget in 7e7 … 1e8 stopped in the refinement")
	}
}
