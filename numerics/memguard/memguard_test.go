package memguard

import (
	"errors"
	"math"
	"strings"
	"testing"
)

func TestDenseMessage(t *testing.T) {
	old := SetLimit(12 << 30)
	defer SetLimit(old)
	// 200000² · 16 B = 6.4e11 B = 596.05 GiB (arithmetic).
	err := DenseComplex(200000, 200000)
	if err == nil {
		t.Fatal("no error for a 596 GiB request")
	}
	want := "dense 200000×200000 complex matrix needs 596 GiB; limit is 12 GiB"
	if err.Error() != want {
		t.Errorf("message %q, want %q", err.Error(), want)
	}
	if !errors.Is(err, ErrTooLarge) {
		t.Error("error does not match ErrTooLarge")
	}
	if err := DenseReal(1000, 1000); err != nil {
		t.Errorf("8 MB refused: %v", err)
	}
}

func TestOverflow(t *testing.T) {
	err := DenseComplex(1<<40, 1<<40)
	if err == nil || !strings.Contains(err.Error(), "needs") {
		t.Fatalf("overflowing request: %v", err)
	}
}

func TestMemTotal(t *testing.T) {
	tot, ok := MemTotal()
	if tot <= 0 {
		t.Fatalf("MemTotal %d", tot)
	}
	if ok && Limit() <= 0 {
		t.Fatal("limit not positive")
	}
}

func TestFormatBytes(t *testing.T) {
	for _, c := range []struct {
		n    float64
		want string
	}{{512, "512 B"}, {1536, "1.5 KiB"}, {12 << 30, "12 GiB"}} {
		if got := FormatBytes(c.n); got != c.want {
			t.Errorf("FormatBytes(%v) = %q, want %q", c.n, got, c.want)
		}
	}
}

func TestLargestSide(t *testing.T) {
	ResetLargest()
	_ = DenseReal(30, 7)
	_ = DenseComplex(5, 40)
	_ = DenseReal(1<<40, 1<<40) // refused, still recorded
	if got := LargestSide(); got != 1<<40 {
		t.Fatalf("LargestSide = %d, want %d", got, 1<<40)
	}
	ResetLargest()
	_ = DenseReal(3, 9)
	if got := LargestSide(); got != 9 {
		t.Fatalf("after reset LargestSide = %d, want 9", got)
	}
}

// TestWorkVectors: the helpers for work vectors and other sizes taken from
// an operator's order or from input. By arithmetic: 3 vectors of order
// 10¹⁰ × 8 B = 2.4e11 B ≈ 224 GiB; 10¹⁰ complex values = 1.6e11 B ≈ 149 GiB.
func TestWorkVectors(t *testing.T) {
	old := SetLimit(12 << 30)
	defer SetLimit(old)
	err := Vectors(3, 1e10, RealBytes, "Krylov basis")
	if want := "Krylov basis (3 vectors of order 10000000000) needs 224 GiB; limit is 12 GiB"; err == nil || err.Error() != want {
		t.Errorf("Vectors: %v, want %q", err, want)
	}
	if err := Complexes(1e10, "shifted solution"); !errors.Is(err, ErrTooLarge) || !strings.Contains(err.Error(), "needs 149 GiB") {
		t.Errorf("Complexes: %v, want 149 GiB refused", err)
	}
	if err := Floats(1e6, "work vector"); err != nil {
		t.Errorf("8 MB refused: %v", err)
	}
	if err := Vectors(1<<40, 1<<40, ComplexBytes, "overflowing"); !errors.Is(err, ErrTooLarge) {
		t.Errorf("an order whose product overflows int64: %v", err)
	}
	for _, need := range []float64{-1, math.NaN(), math.Inf(1)} {
		if err := Bytes(need, "odd"); !errors.Is(err, ErrTooLarge) {
			t.Errorf("Bytes(%v) = %v, want a refusal", need, err)
		}
	}
	if err := Bytes(12<<30, "exactly the limit"); err != nil {
		t.Errorf("the limit itself refused: %v", err)
	}
}
