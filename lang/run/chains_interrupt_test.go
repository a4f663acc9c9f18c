package run

import (
	"context"
	"errors"
	"testing"
	"time"
)

// TestInterruptChainAnalyses interrupts generator and markov cells 100 ms
// after they start: each must end with Interrupted within 0.5 s (the
// Hille–Yosida samples check the context between Lanczos steps, the
// mixing-time search between matrix products; the dense eigensolvers are
// abandoned), and the next cell must run at once. Uncancelled, each takes
// seconds on the 2-core development machine.
func TestInterruptChainAnalyses(t *testing.T) {
	s := NewSession()
	mustExec(t, s, "h = interval(0, 1, 602)\nB = dense(0.01*laplacian(h) - deriv(h))\n"+
		"n = 1000\ntr(k) = choose(k < n - 1, [k, k + 1, 0.9], [k - n + 2, k - n + 1, 1])\nQ = chain(n, map(tr, 0 .. 2*n - 3))")
	for _, cell := range []string{
		`y = generator(B, samples="all")`, // Hessenberg form, then 40 λ × 4 powers of Lanczos, order 600
		"y = markov(Q)",                   // one exponential and ~50 products of order 1000
	} {
		t.Run(cell, func(t *testing.T) {
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
					t.Fatalf("err = %v, want Interrupted", err)
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
			if got := mustExec(t, s, "1 + 1")["text/plain"]; got != "2" {
				t.Errorf("1 + 1 gave %v", got)
			}
			if d := time.Since(start); d > 500*time.Millisecond {
				t.Errorf("the next cell took %v", d)
			}
		})
	}
}
