package run

import "testing"

// TestInterruptForms interrupts cells built from sweep, anonymous
// functions, where and with 100 ms after they start: each must end with
// "interrupted" within 0.5 s (each takes far longer uncancelled) and leave
// the session as it was.
func TestInterruptForms(t *testing.T) {
	s := NewSession()
	mustExec(t, s, "g = interval(0, 1, 202)\nA = dense(0.005*laplacian(g) - deriv(g))\nv = zeros(10000)\nx = 41")
	for _, cell := range []string{
		"y = sweep(1 .. 100000, R -> spectrum(R*A).abscissa)",           // dense QR of order 200 per value
		"y = sweep(1 .. 5000000, k -> [k, k])",                          // five million cheap calls
		"y = map(k -> (v with [0] = k)[0] where (w = v), 1 .. 1000000)", // a copy of 10⁴ entries per call
	} {
		t.Run(cell, func(t *testing.T) {
			interruptCell(t, s, cell)
			if got := mustExec(t, s, "x + 1")["text/plain"]; got != "42" {
				t.Errorf("x + 1 gave %v after the interrupt", got)
			}
		})
	}
}
