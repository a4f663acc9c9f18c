package linop

import (
	"errors"
	"math"
	"strings"
	"testing"
)

// Closed form: the two-state chain with rates a (0 → 1) and b (1 → 0) has
// generator [[−a, a], [b, −b]] and stationary distribution (b, a)/(a+b).
func TestTwoStateChain(t *testing.T) {
	a, b := 0.7, 2.5
	q, err := RateMatrix(2, []Transition{{0, 1, a}, {1, 0, b}})
	if err != nil {
		t.Fatal(err)
	}
	want := [][]float64{{-a, a}, {b, -b}}
	for i := range want {
		for j := range want[i] {
			if q.At(i, j) != want[i][j] {
				t.Errorf("Q[%d,%d] = %g, want %g", i, j, q.At(i, j), want[i][j])
			}
		}
	}
	pi, err := Stationary(q)
	if err != nil {
		t.Fatal(err)
	}
	if math.Abs(pi[0]-b/(a+b)) > 1e-15 || math.Abs(pi[1]-a/(a+b)) > 1e-15 {
		t.Errorf("π = %v, want (%g, %g)", pi, b/(a+b), a/(a+b))
	}
}

// Closed form: the M/M/1 queue truncated at K customers (arrival λ, service
// μ) has stationary distribution π_k ∝ ρ^k, ρ = λ/μ.
func TestBirthDeathStationary(t *testing.T) {
	lam, mu, k := 1.0, 1.6, 12
	var ts []Transition
	for i := 0; i < k; i++ {
		ts = append(ts, Transition{i, i + 1, lam}, Transition{i + 1, i, mu})
	}
	q, err := RateMatrix(k+1, ts)
	if err != nil {
		t.Fatal(err)
	}
	pi, err := Stationary(q)
	if err != nil {
		t.Fatal(err)
	}
	rho := lam / mu
	norm := (1 - math.Pow(rho, float64(k+1))) / (1 - rho)
	for i, p := range pi {
		if want := math.Pow(rho, float64(i)) / norm; math.Abs(p-want) > 1e-14 {
			t.Errorf("π_%d = %g, want %g", i, p, want)
		}
	}
}

func TestGeneratorValidation(t *testing.T) {
	for _, c := range []struct {
		ts   []Transition
		want string
	}{
		{[]Transition{{0, 1, 1}, {1, 2, -0.5}}, "transition 1 (1 → 2) has rate -0.5"},
		{[]Transition{{0, 3, 1}}, "transition 0 (0 → 3) names a state outside"},
		{[]Transition{{1, 1, 1}}, "from state 1 to itself"},
		{[]Transition{{0, 1, math.NaN()}}, "has rate NaN"},
	} {
		_, err := RateMatrix(3, c.ts)
		if !errors.Is(err, ErrGenerator) || !strings.Contains(err.Error(), c.want) {
			t.Errorf("error %v, want one containing %q", err, c.want)
		}
	}
	bad := NewCSRFromTriplets(3, 3, []int{0, 0, 1, 1, 2}, []int{0, 1, 1, 2, 0}, []float64{-1, 1, -2, 1.5, 0})
	if err := CheckGenerator(bad); err == nil || !strings.Contains(err.Error(), "row 1 sums to -0.5") {
		t.Errorf("row-sum error: %v", err)
	}
	neg := NewCSRFromTriplets(2, 2, []int{0, 0, 1, 1}, []int{0, 1, 0, 1}, []float64{1, -1, 0, 0})
	if err := CheckGenerator(neg); err == nil || !strings.Contains(err.Error(), "from state 0 to state 1") {
		t.Errorf("negative-rate error: %v", err)
	}
	// Two closed classes {0,1} and {2,3}: no unique stationary distribution.
	q, _ := RateMatrix(4, []Transition{{0, 1, 1}, {1, 0, 1}, {2, 3, 1}, {3, 2, 1}})
	if _, err := Stationary(q); !errors.Is(err, ErrGenerator) {
		t.Errorf("reducible chain: %v", err)
	}
}

// Rows whose sum is zero only up to the rounding of decimal rates are
// rate-matrix rows (0.1 + 0.2 − 0.3 = 5.6e-17 in binary64, within
// n·u·Σ|q_ij| = 3·2⁻⁵³·0.6 = 2.0e-16; Higham 2002, eq. 4.4), at every
// scale: the same row times 1e-9 (rates per nanosecond in seconds) also
// passes, which an absolute tolerance would get wrong in one direction or
// the other. A residue of 1e-12 relative to the row is not rounding.
func TestGeneratorRowRounding(t *testing.T) {
	for _, scale := range []float64{1, 1e-9, 1e9} {
		q := NewCSRFromTriplets(3, 3, []int{0, 0, 0, 1, 1, 2, 2}, []int{0, 1, 2, 1, 0, 2, 0},
			[]float64{-0.3 * scale, 0.1 * scale, 0.2 * scale, -scale, scale, -scale, scale})
		if err := CheckGenerator(q); err != nil {
			t.Errorf("scale %g: %v", scale, err)
		}
		off := NewCSRFromTriplets(3, 3, []int{0, 0, 0, 1, 1, 2, 2}, []int{0, 1, 2, 1, 0, 2, 0},
			[]float64{-0.3 * scale * (1 + 1e-12), 0.1 * scale, 0.2 * scale, -scale, scale, -scale, scale})
		if err := CheckGenerator(off); err == nil || !strings.Contains(err.Error(), "row 0 sums to") || !strings.Contains(err.Error(), "within rounding") {
			t.Errorf("scale %g: residue 1e-12 accepted or badly reported: %v", scale, err)
		}
	}
}
