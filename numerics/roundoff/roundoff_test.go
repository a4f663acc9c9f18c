package roundoff

import (
	"math"
	"testing"
)

// Unit is 2⁻⁵³: half the spacing of doubles at 1 (IEEE 754-2008, binary64),
// so 1 + u rounds to 1 (ties to even) and 1 + 2u does not.
func TestUnit(t *testing.T) {
	one := 1.0
	if one+Unit != 1 || one+2*Unit == 1 || Unit != math.Nextafter(1, 2)/2-0.5 {
		t.Errorf("u = %g is not the unit roundoff of binary64", Unit)
	}
}

// A sum of n terms computed left to right has error at most
// (n−1)·u·Σ|terms| to first order (Higham 2002, eq. 4.4): the rounding of
// 0.1 + 0.2 − 0.3 (≈ 5.6e-17) is inside the threshold for n = 3, Σ = 0.6,
// and a real residue of 1e-15 is outside it.
func TestThresholdSum(t *testing.T) {
	x, y, z := 0.1, 0.2, -0.3
	s := x + y + z
	tol := Threshold(3, math.Abs(x)+math.Abs(y)+math.Abs(z))
	if s == 0 || Sign(s, tol) != 0 {
		t.Errorf("0.1 + 0.2 − 0.3 = %g, threshold %g: sign %d", s, tol, Sign(s, tol))
	}
	if Sign(1e-15, tol) != 1 || Sign(-1e-15, tol) != -1 {
		t.Errorf("1e-15 against %g: signs %d, %d", tol, Sign(1e-15, tol), Sign(-1e-15, tol))
	}
	if Threshold(0, 1) != Unit || !math.IsNaN(Threshold(4, math.NaN())) || !math.IsNaN(Threshold(4, -1)) {
		t.Error("Threshold edge cases")
	}
	if Sign(math.NaN(), 1) != 1 {
		t.Error("NaN must not be called negative or zero")
	}
}
