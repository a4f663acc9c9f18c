package builtin_test

import (
	"strings"
	"testing"

	"semiflow/lang/run"
	"semiflow/lang/value"
	"semiflow/numerics/memguard"
)

// TestKroneckerSumOrder1e10: analyses of a Kronecker sum of order 10¹⁰
// once allocated 80 GB work vectors outside the memory guard and ended the
// process; now each is refused with an "over memory budget" error naming the vectors, and
// the session keeps its state.
func TestKroneckerSumOrder1e10(t *testing.T) {
	s := run.NewSession()
	exec(t, s, `L = laplacian(interval(0, 1, 100002))
A = kronsum(L, L)
x = 7`)
	for _, call := range []string{
		"spectrum(A, count=2)", "abscissa(A)", "numabscissa(A)",
		"pseudospectrum(A, re=[-3, 0], im=[-1, 1], levels=[0.5], n=3)", "growth(A, t=[0, 1])",
	} {
		t.Run(call[:strings.Index(call, "(")], func(t *testing.T) {
			_, _, err := s.Execute(t.Context(), call, nil)
			if err == nil || !strings.Contains(err.Error(), "of order 10000000000) needs") {
				t.Errorf("%s: %v, want the memory guard's refusal", call, err)
			}
		})
	}
	if v, ok := s.Lookup("x"); !ok || v.(value.Num) != 7 {
		t.Errorf("session state after the refusals: x = %v", v)
	}
}

// TestPropagateGuarded: propagate asks the memory guard for its work
// vectors; under a limit of 8 MiB an operator of order 10⁶ (8 MB a
// vector) is refused with the guard's message by every method.
func TestPropagateGuarded(t *testing.T) {
	s := run.NewSession()
	exec(t, s, `L = laplacian(interval(0, 1, 1002))
A = kronsum(L, L)
u = ones(1000000)`)
	old := memguard.SetLimit(8 << 20)
	defer memguard.SetLimit(old)
	for _, m := range []string{"auto", "kronecker", "krylov", "taylor"} {
		t.Run(m, func(t *testing.T) {
			_, _, err := s.Execute(t.Context(), `propagate(A, u, 0.001, method="`+m+`")`, nil)
			if err == nil || !strings.Contains(err.Error(), "of order 1000000) needs") {
				t.Errorf("method %s: %v, want the memory guard's refusal", m, err)
			}
		})
	}
}
