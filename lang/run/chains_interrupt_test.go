package run

import "testing"

// TestInterruptChainAnalyses interrupts generator and markov cells 100 ms
// after they start: each must end with Interrupted within 0.5 s (the
// Hille–Yosida samples check the context between Lanczos steps, the
// mixing-time search between matrix products; the dense eigensolvers are
// abandoned), and the next cell must run at once. Uncancelled, each takes
// seconds on the 2-core development machine.
func TestInterruptChainAnalyses(t *testing.T) {
	s := NewSession()
	mustExec(t, s, "h = interval(0, 1, 602)\nB = dense(0.01*laplacian(h) - deriv(h))\n"+
		"n = 1000\ntr(k) = when(k < n - 1, [k, k + 1, 0.9], [k - n + 2, k - n + 1, 1])\nQ = chain(n, map(tr, 0 .. 2*n - 3))")
	for _, cell := range []string{
		`y = wellposed(B, samples="all")`, // Hessenberg form, then 40 λ × 4 powers of Lanczos, order 600
		"y = markov(Q)",                   // one exponential and ~50 products of order 1000
	} {
		t.Run(cell, func(t *testing.T) {
			interruptCell(t, s, cell)
		})
	}
}
