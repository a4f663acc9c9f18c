package builtin_test

import (
	"os"
	"path/filepath"
	"strings"
	"testing"

	"semiflow/lang/eval"
	"semiflow/lang/run"
	"semiflow/lang/value"
	"semiflow/numerics/memguard"
)

// TestBlocksGuarded: a c·I block of order 10¹⁰ (next to a Kronecker sum of
// that order) is refused by the memory guard with its size, and the
// session keeps its state.
func TestBlocksGuarded(t *testing.T) {
	s := run.NewSession()
	exec(t, s, `L = laplacian(interval(0, 1, 100002))
A = kronsum(L, L)
x = 7`)
	_, _, err := s.Execute(t.Context(), "blocks([0, 1], [A, 0])", nil)
	if err == nil || !strings.Contains(err.Error(), "multiple of the identity") || !strings.Contains(err.Error(), "needs") {
		t.Errorf("blocks of order 2·10¹⁰: %v, want the memory guard's refusal", err)
	}
	if v, ok := s.Lookup("x"); !ok || v.(value.Num) != 7 {
		t.Errorf("session state after the refusal: x = %v", v)
	}
}

// TestBlocksStayStructured: a block operator of two Kronecker sums of
// order 10⁶ is applied block by block under a memory limit that refuses
// its sparse form (10⁷ entries, 160 MB): [A, I; 0, A][u, 2u] = [Au + 2u, 2Au].
func TestBlocksStayStructured(t *testing.T) {
	s := run.NewSession()
	exec(t, s, `L = laplacian(interval(0, 1, 1002))
A = kronsum(L, L)
u = ones(1000000)`)
	old := memguard.SetLimit(48 << 20)
	defer memguard.SetLimit(old)
	exec(t, s, `B = blocks([A, 1], [0, A])
w = B * stack(u, 2*u)
d = max(abs(split(w, B)[0] - (A*u + 2*u))) + max(abs(split(w, B)[1] - 2*(A*u)))`)
	if d := lookup[value.Num](t, s, "d"); d != 0 {
		t.Errorf("block product differs from the blocks' products by %g", float64(d))
	}
}

// TestReadCSVGuarded: readcsv asks the memory guard for the numbers it has
// read, row by row, so a file larger than the guard allows is refused with
// the size, and one beyond the entry limit with the limit.
func TestReadCSVGuarded(t *testing.T) {
	path := filepath.Join(t.TempDir(), "big.csv")
	var sb strings.Builder
	for i := 0; i < 2000; i++ {
		sb.WriteString("1.5,2.5\n")
	}
	if err := os.WriteFile(path, []byte(sb.String()), 0o600); err != nil {
		t.Fatal(err)
	}
	s := run.NewSession()
	old := memguard.SetLimit(16 << 10)
	defer memguard.SetLimit(old)
	_, _, err := s.Execute(t.Context(), `readcsv("`+path+`")`, nil)
	if err == nil || !strings.Contains(err.Error(), "numbers read from") || !strings.Contains(err.Error(), "limit is") {
		t.Errorf("readcsv of 4000 numbers under a 16 KiB guard: %v, want the guard's refusal", err)
	}
	memguard.SetLimit(old)
	s.SetLimits(eval.Limits{MaxDepth: 500, MaxElements: 1000})
	_, _, err = s.Execute(t.Context(), `readcsv("`+path+`")`, nil)
	if err == nil || !strings.Contains(err.Error(), "more than the limit of 1000") {
		t.Errorf("readcsv of 4000 numbers under an entry limit of 1000: %v", err)
	}
}
