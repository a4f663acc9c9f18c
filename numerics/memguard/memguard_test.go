package memguard

import (
	"errors"
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
