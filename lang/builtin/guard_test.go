package builtin_test

import (
	"errors"
	"path/filepath"
	"runtime"
	"slices"
	"strconv"
	"strings"
	"testing"

	"semiflow/lang/builtin"
	"semiflow/lang/eval"
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

// guardArgs gives, by parameter name, the argument TestEveryBuiltinOnHugeOperator
// passes for a required parameter after the first. A new builtin whose
// required parameter is not here fails the test until it is added.
var guardArgs = map[string]string{
	"B": "L", "u0": "[1, 2]", "t": "0.1", "z": "1", "eps": "0.1", "re": "-1",
	"b": "1", "n": "5", "v": "[1, 2]", "x": "1", "a": "1", "f": "same",
	"g": "interval(0, 1, 5)", "gy": "interval(0, 1, 5)", "transitions": "[[0, 1, 1]]",
	"sizes": "[1]", "path": "PATH", "guess": "[1, 2]", "K": "A", "C": "0", "level": "0.5",
}

// guardVariants are further calls, options included, that take other
// paths through a builtin on the huge operator.
var guardVariants = map[string][]string{
	"spectrum":       {"spectrum(A, count=2)", "spectrum(A, count=2, near=1)"},
	"pseudospectrum": {"pseudospectrum(A, re=[-3, 0], im=[-1, 1], levels=[0.5], n=3)"},
	"growth":         {"growth(A, t=[0, 1])", `growth(A, t=[0, 1], bounds="none")`},
	"wellposed":      {"wellposed(A, omega=0)"},
	"kronsum":        {"kronsum(A, A)"},
	"resolventline":  {"resolventline(A, -1, n=2)"},
	"numrange":       {"numrange(A, points=8)"},
	"steadystate":    {"steadystate(A, 0)", "steadystate(A, 0, nonlinear=same)"},
	"linearisation":  {"linearisation(A, state=0, nonlinear=same)"},
}

// guardAnalyses must fail on an operator of order 10¹⁰: their work vectors
// or dense forms cannot fit in any memory.
var guardAnalyses = []string{
	"abscissa", "dense", "growth", "kreiss", "markov", "numabscissa", "numrange",
	"psabscissa", "pseudospectrum", "ratematrix", "resolvent", "resolventline", "semigroup",
	"spectrum", "wellposed", "writemm",
}

// TestEveryBuiltinOnHugeOperator calls every builtin of the table whose
// first parameter is required with the Kronecker sum A of order 10¹⁰ (and
// the other required arguments from guardArgs), and the variants of
// guardVariants, and also with the sum A + A, whose products hold a
// temporary. None may end the process or fail with an internal fault or an
// unclassified error; a refusal by the memory guard ("… needs N; limit is
// M") must have the memory class, whichever builtin reports it; the
// analyses of guardAnalyses must fail, with the memory class or naming the
// dense methods' order limit. A refusal allocates far less than one vector
// of order 10¹⁰ (checked for the memory-class ones: < 1 GB). The session
// keeps its state throughout.
func TestEveryBuiltinOnHugeOperator(t *testing.T) {
	s := run.NewSession()
	exec(t, s, `L = laplacian(interval(0, 1, 100002))
A = kronsum(L, L)
same(w) = w
x = 7`)
	everyBuiltin(t, s, nil, 1e9)
	if v, ok := s.Lookup("x"); !ok || v.(value.Num) != 7 {
		t.Errorf("session state after the refusals: x = %v", v)
	}
}

// TestEveryBuiltinUnderLowLimit is the same round with an operator of order
// 10⁶ and a vector u of that order (8 MB) under a memory limit of 8 MiB,
// so that builtins taking a vector of the operator's order (propagate by
// every method, resolvent with data) are refused too, with the memory
// class, having allocated no more than the copies of their vector
// arguments (u and a forcing, or data as complex numbers: 16 MB).
func TestEveryBuiltinUnderLowLimit(t *testing.T) {
	s := run.NewSession()
	exec(t, s, `L = laplacian(interval(0, 1, 1002))
A = kronsum(L, L)
u = ones(1000000)
same(w) = w`)
	old := memguard.SetLimit(8 << 20)
	defer memguard.SetLimit(old)
	var extra []string
	for _, m := range []string{"auto", "kronecker", "krylov", "taylor", "contour", "resolvent-powers", "shift-invert", "dense"} {
		extra = append(extra, `propagate(A, u, 0.001, method="`+m+`")`)
	}
	extra = append(extra, "resolvent(A, 1, data=u)", `propagate(A, u, [0.001, 0.002], forcing=u)`,
		"propagate(t -> (1 + t)*A, u, 0.001)", "propagate([A, 2*A], u, [0.001, 0.002], switches=[0.0015])")
	everyBuiltin(t, s, append(extra, "propagate(A, u, 0.001)"), 16e6+1e6)
}

// everyBuiltin runs the round of TestEveryBuiltinOnHugeOperator in s (where
// A is defined), with the further calls extra; a memory-class refusal may
// allocate at most maxAlloc bytes.
func everyBuiltin(t *testing.T, s *run.Session, extra []string, maxAlloc uint64) {
	path := filepath.Join(t.TempDir(), "out")
	var calls []string
	for _, b := range builtin.Default().All() {
		if b.Impl == nil || len(b.Params) == 0 || b.Params[0].Default != nil || b.Params[0].Variadic {
			continue
		}
		args := []string{"A"}
		for _, p := range b.Params[1:] {
			if p.Default != nil || p.Variadic {
				continue
			}
			a, ok := guardArgs[p.Name]
			if !ok {
				t.Errorf("%s: add an argument for its parameter %q to guardArgs", b.Name, p.Name)
				continue
			}
			args = append(args, strings.ReplaceAll(a, "PATH", `"`+path+`"`))
		}
		calls = append(calls, b.Name+"("+strings.Join(args, ", ")+")")
		calls = append(calls, guardVariants[b.Name]...)
	}
	calls = append(calls, extra...)
	for _, call := range slices.Clone(calls) {
		if strings.HasPrefix(call, "kronsum(") {
			continue // a sum of A + A with itself may exceed the largest order
		}
		calls = append(calls, strings.Replace(call, "(A", "(A + A", 1))
	}
	for _, call := range calls {
		t.Run(call, func(t *testing.T) {
			var before, after runtime.MemStats
			runtime.ReadMemStats(&before)
			_, _, err := s.Execute(t.Context(), call, nil)
			runtime.ReadMemStats(&after)
			name := call[:strings.Index(call, "(")]
			var e *eval.Error
			if err != nil && !errors.As(err, &e) {
				t.Fatalf("%v: not a language error", err)
			}
			switch {
			case err == nil:
				if slices.Contains(guardAnalyses, name) || slices.Contains(extra, call) {
					t.Errorf("succeeded")
				}
			case e.Name == value.ClassInternal || e.Name == "Error":
				t.Errorf("%s: %v", e.Name, err)
			case strings.Contains(err.Error(), "; limit is ") && e.Name != value.ClassMemory:
				t.Errorf("the memory guard's refusal in class %q: %v", e.Name, err)
			case slices.Contains(extra, call) && e.Name != value.ClassMemory:
				t.Errorf("%s: %v, want the memory guard's refusal", e.Name, err)
			case slices.Contains(guardAnalyses, name) && e.Name != value.ClassMemory && !strings.Contains(err.Error(), strconv.Itoa(builtin.DenseLimit)):
				t.Errorf("%s: %v, want the memory guard's refusal or the dense methods' order limit (%d)", e.Name, err, builtin.DenseLimit)
			}
			if err != nil && e.Name == value.ClassMemory {
				if got := after.TotalAlloc - before.TotalAlloc; got > maxAlloc {
					t.Errorf("the refusal allocated %d bytes first, more than %d", got, maxAlloc)
				}
			}
		})
	}
}
