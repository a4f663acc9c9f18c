package spectra

import (
	"context"
	"errors"
	"math"
	"math/rand/v2"
	"testing"
	"time"
)

// Interrupts: each long computation is cancelled 100 ms after it starts and
// must return context.Canceled within 0.5 s of the cancellation. Every
// problem here takes at least 5 s uncancelled on the 2-core development
// machine (the times are in the comments; BenchmarkKreiss200 and
// BenchmarkGrowthDefault120 measure two of them), so a return within the
// limit can only come from the cancellation.

// TestAbandonable checks the bookkeeping of an abandoned call: it is counted
// with its bytes while it runs, its result is dropped, and the count returns
// to zero when it ends. A panic in a call that is still awaited reaches the
// caller.
func TestAbandonable(t *testing.T) {
	// It runs before the tests below that abandon calls; wait for any
	// abandoned elsewhere to end.
	for deadline := time.Now().Add(2 * time.Minute); ; time.Sleep(10 * time.Millisecond) {
		if n, _ := Abandoned(); n == 0 {
			break
		}
		if time.Now().After(deadline) {
			t.Fatal("earlier abandoned calls still running after 2 minutes")
		}
	}
	release := make(chan struct{})
	ctx, cancel := context.WithCancel(context.Background())
	cancel()
	if _, err := abandonable(ctx, 1, "x", func() (int, error) { return 1, nil }); !errors.Is(err, context.Canceled) {
		t.Fatalf("already cancelled: got %v", err)
	}
	ctx, cancel = context.WithCancel(context.Background())
	go func() { time.Sleep(20 * time.Millisecond); cancel() }()
	v, err := abandonable(ctx, 1<<20, "slow", func() (int, error) { <-release; return 7, nil })
	if v != 0 || !errors.Is(err, context.Canceled) {
		t.Fatalf("got %d, %v; want 0, context.Canceled", v, err)
	}
	if n, b := Abandoned(); n != 1 || b != 1<<20 {
		t.Fatalf("Abandoned() = %d, %d; want 1, %d", n, b, 1<<20)
	}
	close(release)
	deadline := time.Now().Add(5 * time.Second)
	for n, _ := Abandoned(); n != 0; n, _ = Abandoned() {
		if time.Now().After(deadline) {
			t.Fatalf("abandoned call still counted after it ended")
		}
		time.Sleep(time.Millisecond)
	}
	if _, b := Abandoned(); b != 0 {
		t.Fatalf("abandoned bytes %d after the call ended", b)
	}
	v, err = abandonable(context.Background(), 1, "quick", func() (int, error) { return 7, nil })
	if v != 7 || err != nil {
		t.Fatalf("uncancelled: got %d, %v", v, err)
	}
	defer func() {
		if r := recover(); r != ErrOption {
			t.Fatalf("panic %v, want ErrOption", r)
		}
	}()
	abandonable(context.Background(), 1, "misuse", func() (int, error) { panic(ErrOption) })
}

const interruptLatency = 500 * time.Millisecond

// interruptAfter runs f with a context cancelled after 100 ms and checks that
// f returns context.Canceled within interruptLatency of the cancellation.
func interruptAfter(t *testing.T, f func(ctx context.Context) error) {
	t.Helper()
	ctx, cancel := context.WithCancel(context.Background())
	defer cancel()
	var cancelled time.Time
	timer := time.AfterFunc(100*time.Millisecond, func() {
		cancelled = time.Now()
		cancel()
	})
	defer timer.Stop()
	err := f(ctx)
	back := time.Now()
	if !errors.Is(err, context.Canceled) {
		t.Fatalf("got error %v, want context.Canceled", err)
	}
	if cancelled.IsZero() {
		t.Fatal("returned context.Canceled before the cancellation")
	}
	lat := back.Sub(cancelled)
	t.Logf("returned %v after the cancellation", lat)
	if lat > interruptLatency {
		t.Errorf("returned %v after the cancellation, more than %v", lat, interruptLatency)
	}
}

// shiftedGrcar is G − 2I, G the n×n Grcar matrix: strongly non-normal with
// α < 0 (its Kreiss constant for n = 200 is about 1.7e12).
func shiftedGrcar(n int) denseOp {
	a := grcar(n)
	for i := 0; i < n; i++ {
		a.m.Set(i, i, a.m.At(i, i)-2)
	}
	return a
}

func TestInterruptKreiss200(t *testing.T) {
	// 8.8 s uncancelled (BenchmarkKreiss200): cancelled in the Schur form,
	// then with the Schur form ready, in the search itself.
	a := shiftedGrcar(200)
	interruptAfter(t, func(ctx context.Context) error {
		_, err := Kreiss(ctx, a)
		return err
	})
	m, err := toDense(a)
	if err != nil {
		t.Fatal(err)
	}
	sh, err := newShape(bg, m)
	if err != nil {
		t.Fatal(err)
	}
	interruptAfter(t, func(ctx context.Context) error {
		_, err := sh.kreiss(ctx)
		return err
	})
}

func TestInterruptDenseSpectrum800(t *testing.T) {
	// The QR algorithm with both eigenvector sets at order 800 (gonum's
	// Eigen, which cannot be interrupted) took 8 s to 30 s on the
	// development machine; the abandoned call finishes in the background.
	a := randomNonNormal(rand.New(rand.NewPCG(1, 2)), 800, -1, 3)
	interruptAfter(t, func(ctx context.Context) error {
		_, err := DenseSpectrumContext(ctx, a)
		return err
	})
}

func TestInterruptSchur600(t *testing.T) {
	// Dhseqr at order 600: 5 s to 10 s.
	a := randomNonNormal(rand.New(rand.NewPCG(3, 4)), 600, -1, 3)
	interruptAfter(t, func(ctx context.Context) error {
		_, err := NewSchurContext(ctx, a)
		return err
	})
}

func TestInterruptGrowth(t *testing.T) {
	// 101 dense exponentials and SVDs of order 300 with α_ε and Kreiss
	// bounds: well over 5 s.
	a := shiftedGrcar(300)
	interruptAfter(t, func(ctx context.Context) error {
		_, err := GrowthCurve(ctx, a, linspace(0, 10, 101), &GrowthOptions{Eps: []float64{1e-3}})
		return err
	})
	// Cancelled in the bounds, after the curve: the curve of order 60 takes
	// a few ms, α_ε for ε = 1e-3 of the convection–diffusion matrix of
	// order 120 (below) about 30 s.
	c, _, _, _ := convDiff1D(120, 0.01, 1)
	interruptAfter(t, func(ctx context.Context) error {
		_, err := GrowthCurve(ctx, c, []float64{0, 1}, &GrowthOptions{Eps: []float64{1e-3}, NoKreiss: true})
		return err
	})
}

func TestInterruptPseudo(t *testing.T) {
	// The Schur form and 100×100 σ_min of the 400×400 Grcar matrix
	// (BenchmarkPseudoGrid400): over 5 s.
	interruptAfter(t, func(ctx context.Context) error {
		_, err := Pseudo(ctx, grcar(400), benchRegion, nil)
		return err
	})
	s, err := NewSchur(grcar(400))
	if err != nil {
		t.Fatal(err)
	}
	interruptAfter(t, func(ctx context.Context) error {
		_, err := s.Pseudo(ctx, benchRegion, &GridOptions{Workers: 1})
		return err
	})
	// The α_ε search alone, ε = 1e-3 on the convection–diffusion matrix of
	// order 120: about 30 s of two cores.
	c, _, _, _ := convDiff1D(120, 0.01, 1)
	interruptAfter(t, func(ctx context.Context) error {
		_, err := PseudoAbscissa(ctx, c, 1e-3)
		return err
	})
}

// TestBudgetSkipsAndKeeps checks the work budget of the growth bounds. For a
// normal matrix α_ε(A) = α(A) + ε exactly (σ_ε is the union of the ε-discs
// about the eigenvalues; Trefethen & Embree 2005, §2), which the budgeted
// search must still reach; the α_ε search at ε = 1e-3 of the
// convection–diffusion matrix needs about 7.7e9 units, so a budget of 3e8
// must skip it and name it, while ε = 0.1 (2.2e8 units) is computed and
// agrees with the unbudgeted value.
func TestBudgetSkipsAndKeeps(t *testing.T) {
	t.Run("normal", func(t *testing.T) {
		a := op([][]float64{{-1, 0, 0}, {0, -2, 1}, {0, -1, -2}}) // eigenvalues −1, −2 ± i
		g, err := GrowthCurve(bg, a, []float64{0, 1}, &GrowthOptions{Eps: []float64{0.25}, Budget: 1e7})
		if err != nil {
			t.Fatal(err)
		}
		if len(g.Skipped) != 0 || len(g.EpsBounds) != 1 || g.Kreiss == nil {
			t.Fatalf("skipped %v, bounds %v, Kreiss %v", g.Skipped, g.EpsBounds, g.Kreiss)
		}
		if d := math.Abs(g.EpsBounds[0].Alpha - (-0.75)); d > 1e-10 {
			t.Errorf("α_ε = %.15g, want −0.75 (α + ε)", g.EpsBounds[0].Alpha)
		}
	})
	t.Run("kreiss-known-too-costly", func(t *testing.T) {
		// 28 values of x times at least one sample each, every sample at
		// least one Lanczos step of 200² units: more than 1e6 before any
		// work is done, so nothing is spent.
		g, err := GrowthCurve(bg, shiftedGrcar(200), []float64{0, 1}, &GrowthOptions{Budget: 1e6})
		if err != nil {
			t.Fatal(err)
		}
		if g.Kreiss != nil || len(g.Skipped) != 1 || g.Skipped[0] != "Kreiss constant" || g.SkippedWork != 0 {
			t.Fatalf("Kreiss %v, skipped %q after %g units; want skipped at once", g.Kreiss, g.Skipped, g.SkippedWork)
		}
		if !g.KreissAtLeast || !(g.KreissNeeds > 1e6) {
			t.Errorf("KreissNeeds %g (at least: %v), want a lower bound above the budget", g.KreissNeeds, g.KreissAtLeast)
		}
	})
	t.Run("convection-diffusion", func(t *testing.T) {
		c, _, _, _ := convDiff1D(120, 0.01, 1)
		g, err := GrowthCurve(bg, c, []float64{0, 1}, &GrowthOptions{Eps: []float64{1e-1, 1e-3}, NoKreiss: true, Budget: 3e8})
		if err != nil {
			t.Fatal(err)
		}
		if len(g.Skipped) != 1 || g.Skipped[0] != "α_ε for ε = 0.001" {
			t.Fatalf("skipped %q, want the level 0.001", g.Skipped)
		}
		if len(g.EpsBounds) != 1 || g.EpsBounds[0].Eps != 0.1 {
			t.Fatalf("bounds %v, want ε = 0.1 only", g.EpsBounds)
		}
		if !(g.SkippedWork >= 3e8) {
			t.Errorf("skipped work %g, want at least the budget", g.SkippedWork)
		}
		// A smaller level after one that ran out is not tried: ε = 0.01
		// (1.2e9 units) runs out, and 0.001 costs nothing more.
		h, err := GrowthCurve(bg, c, []float64{0}, &GrowthOptions{Eps: []float64{1e-2, 1e-3}, NoKreiss: true, Budget: 3e8})
		if err != nil {
			t.Fatal(err)
		}
		if len(h.Skipped) != 2 || !(h.SkippedWork >= 3e8 && h.SkippedWork < 4e8) {
			t.Errorf("skipped %q after %g units; want both levels after one budget", h.Skipped, h.SkippedWork)
		}
		full, err := PseudoAbscissa(bg, c, 0.1)
		if err != nil {
			t.Fatal(err)
		}
		if g.EpsBounds[0].Alpha != full.Alpha {
			t.Errorf("budgeted α_ε = %.17g, unbudgeted %.17g", g.EpsBounds[0].Alpha, full.Alpha)
		}
	})
}
