package run

import (
	"context"
	"errors"
	"testing"
	"time"
)

// TestInterruptAnalysesKeepsSession interrupts long analysis cells 100 ms
// after they start. Each must end with Interrupted within 0.5 s of the
// interrupt (every one takes at least 5 s uncancelled on the 2-core
// development machine), the next cell must run at once, and the session's
// variables must be intact; the interrupted assignment changes nothing.
func TestInterruptAnalysesKeepsSession(t *testing.T) {
	s := NewSession()
	mustExec(t, s, "g = interval(0, 1, 202)\nA = dense(0.005*laplacian(g) - deriv(g))\nh = interval(0, 1, 802)\nB = dense(0.01*laplacian(h) - deriv(h))\nx = 41")
	mustExec(t, s, "sol = propagate(A, ones(200), 50)")
	mustExec(t, s, "L = laplacian(interval(0, 1, 302))\nK = kronsum(L, L) + 0.1*kronsum(deriv(interval(0, 1, 302)), L)\nu = ones(90000)")
	for _, cell := range []string{
		"y = kreiss(A)",   // Kreiss search, order 200
		"y = spectrum(B)", // dense QR with eigenvectors, order 800
		`y = growth(B, bounds="all", samples="all")`, // 101 exponentials and SVDs of order 800
		`y = pseudospectrum(A, abscissae="exact")`,   // grid, then the α_ε searches
		`y = growth(A, t=[0, 1], bounds="all")`,      // the α_ε and Kreiss bounds
		"y = semigroup(B, 1)",                        // dense exponential, order 800
		"y = psabscissa(A, 0.01)",                    // α_ε search, order 200
		"y = resolventline(B, 0.1)",                  // Schur form, then σ_min along a line
		"y = wellposed(B)",                           // Hille–Yosida samples, order 800
		"y = numrange(B)",                            // boundary of the numerical range, order 800
		"y = abscissa(B)",                            // dense eigenvalues with conditions, order 800
		`y = propagate(B, ones(800), 1, method="dense")`,
		"y = resolvent(K, 1, data=u)",                                      // a sparse LU of order 90000
		"y = steadystate(K, 0, nonlinear=v -> 0.1*exp(v))",                 // Newton steps, each a sparse LU of order 90000
		"y = steadystate(B, ones(800), nonlinear=v -> 0.1*mean(v) - v^3)",  // a dense Jacobian: 800 evaluations of N, dense LU
		"y = propagate(t -> (1 + 0.5*sin(t))*A, ones(200), 50, tol=1e-12)", // Magnus steps, each two dense exponentials of order 200
		"y = crossing(sol, v -> v[3], -100, samples=20000)",                // 20000 restarts of order 200, no crossing
	} {
		t.Run(cell, func(t *testing.T) {
			interruptCell(t, s, cell)
			if got := mustExec(t, s, "x + 1")["text/plain"]; got != "42" {
				t.Errorf("x + 1 gave %v after the interrupt", got)
			}
			if got := mustExec(t, s, "A[0, 0]")["text/plain"]; got == nil {
				t.Error("A lost after the interrupt")
			}
		})
	}
}

// interruptCell runs cell in s and cancels it 100 ms after it starts. The
// cell must end with "interrupted" within 0.5 s of the cancellation, the
// next cell must answer within 0.5 s, and an interrupted assignment to y
// must change nothing.
func interruptCell(t *testing.T, s *Session, cell string) {
	t.Helper()
	ctx, cancel := context.WithCancel(context.Background())
	defer cancel()
	done := make(chan error, 1)
	go func() {
		_, _, err := s.Execute(ctx, cell, nil)
		done <- err
	}()
	time.Sleep(100 * time.Millisecond)
	start := time.Now()
	cancel()
	select {
	case err := <-done:
		var tr tracer
		if !errors.As(err, &tr) || tr.ErrorName() != "interrupted" {
			t.Fatalf("err = %v, want interrupted", err)
		}
		lat := time.Since(start)
		t.Logf("interrupted %v after the cancellation", lat)
		if lat > 500*time.Millisecond {
			t.Errorf("stopped %v after the interrupt, more than 0.5 s", lat)
		}
	case <-time.After(30 * time.Second):
		t.Fatal("not stopped 30 s after the interrupt")
	}
	start = time.Now()
	data := mustExec(t, s, "1 + 1")
	if d := time.Since(start); d > 500*time.Millisecond {
		t.Errorf("the next cell took %v", d)
	}
	if got := data["text/plain"]; got != "2" {
		t.Errorf("1 + 1 gave %v", got)
	}
	if _, ok := s.Lookup("y"); ok {
		t.Error("the interrupted assignment took effect")
	}
}
