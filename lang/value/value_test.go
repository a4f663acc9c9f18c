package value

import (
	"flag"
	"math"
	"testing"

	"semiflow/lang/syntax"
)

var _ = flag.Bool("update", false, "unused here; accepted for go test ./lang/... -update")

func TestFormatNum(t *testing.T) {
	tests := []struct {
		x    float64
		want string
	}{
		{64, "64"}, {-3, "-3"}, {0.1, "0.1"}, {1.0 / 3, "0.3333333333"},
		{1e20, "1e20"}, {1.5e-7, "1.5e-7"}, {-2.5e-300, "-2.5e-300"},
		{math.Copysign(0, -1), "0"}, {math.Inf(1), "inf"}, {math.Inf(-1), "-inf"},
		{math.NaN(), "nan"}, {123456789, "123456789"}, {12345678901, "1.23456789e10"},
		{math.MaxFloat64, "1.797693135e308"}, {5e-324, "4.940656458e-324"},
	}
	for _, tt := range tests {
		if got := FormatNum(tt.x); got != tt.want {
			t.Errorf("FormatNum(%v) = %q, want %q", tt.x, got, tt.want)
		}
	}
	if got := FormatComplex(complex(2, -3)); got != "2-3i" {
		t.Errorf("FormatComplex = %q", got)
	}
	if got := FormatComplex(complex(0, math.Inf(-1))); got != "0-infi" {
		t.Errorf("FormatComplex = %q", got)
	}
}

func TestRangeLen(t *testing.T) {
	tests := []struct {
		lo, hi, step, want float64
	}{
		{0, 1, 0.1, 11}, // 0.1 is inexact: the slack keeps the end point
		{0, 1, 0.25, 5}, {1, 5, 1, 5}, {5, 1, 1, 0}, {5, 1, -2, 3}, {0, 0, 1, 1},
		{0, 0.3, 0.1, 4}, {0, 1, 0.3, 4},
	}
	for _, tt := range tests {
		if got := RangeLen(tt.lo, tt.hi, tt.step); got != tt.want {
			t.Errorf("RangeLen(%v, %v, %v) = %v, want %v", tt.lo, tt.hi, tt.step, got, tt.want)
		}
	}
	r := &Range{Lo: 0, Hi: 0.3, Step: 0.1, N: 4}
	if r.At(3) != 0.3 {
		t.Errorf("last entry %v, want exactly 0.3", r.At(3))
	}
}

func TestArithmetic(t *testing.T) {
	v := RealVec([]float64{1, 2, 3})
	got, err := Binary(syntax.ADD, v, Num(1))
	if err != nil || got.String() != "[2, 3, 4]" {
		t.Errorf("v + 1 = %v, %v", got, err)
	}
	if v.String() != "[1, 2, 3]" {
		t.Error("an operation modified its operand")
	}
	// Exact small integer powers of complex numbers: i^2 = -1 exactly.
	got, _ = Binary(syntax.POW, Complex(1i), Num(2))
	if got != Complex(-1) {
		t.Errorf("i^2 = %v, want exactly -1", got)
	}
	// Floored remainder: the sign of the divisor.
	for _, c := range [][3]float64{{-7, 3, 2}, {7, -3, -2}, {7, 3, 1}, {-6, 3, 0}} {
		got, _ := Binary(syntax.REM, Num(c[0]), Num(c[1]))
		if got != Num(c[2]) {
			t.Errorf("%v %% %v = %v, want %v", c[0], c[1], got, c[2])
		}
	}
	// Matrix product against a hand computation.
	a := &Matrix{Rows: 2, Cols: 3, Data: []float64{1, 2, 3, 4, 5, 6}}
	b := &Matrix{Rows: 3, Cols: 1, Data: []float64{1, 0, -1}}
	got, _ = Binary(syntax.MUL, a, b)
	if m := got.(*Matrix); m.Rows != 2 || m.Data[0] != -2 || m.Data[1] != -2 {
		t.Errorf("product = %v", got)
	}
	if _, err := Binary(syntax.ADD, v, RealVec([]float64{1})); err == nil {
		t.Error("length mismatch accepted")
	}
}

// TestListShape: depth and tree size of nested lists, shared sublists
// measured once. By construction: [1, "a"] has depth 1 and 2 entries; the
// list x_k = [x_{k−1}, x_{k−1}, "a"], x_0 = ["a"], has depth k+1 and
// 4·2^k − 3 entries as a tree (s_k = 3 + 2 s_{k−1}, s_0 = 1); measuring
// x_60 (about 4.6e18 entries as a tree) takes 61 steps.
func TestListShape(t *testing.T) {
	if d, s := ListShape(List{Num(1), Str("a")}, MaxListDepth); d != 1 || s != 2 {
		t.Errorf("flat list: depth %d size %g, want 1 and 2", d, s)
	}
	x := List{Str("a")}
	for k := 1; k <= 60; k++ {
		x = List{x, x, Str("a")}
		if k == 20 {
			if d, s := ListShape(x, 100); d != 21 || s != 4*math.Exp2(20)-3 {
				t.Errorf("x_20: depth %d size %g, want 21 and 4·2^20 − 3", d, s)
			}
		}
	}
	if d, s := ListShape(x, 100); d != 61 || s != 4*math.Exp2(60)-3 {
		t.Errorf("x_60: depth %d size %g, want 61 and 4·2^60 − 3", d, s)
	}
	if d, _ := ListShape(x, 10); d <= 10 {
		t.Errorf("walk stopped at 10 levels: depth %d, want above 10", d)
	}
}
