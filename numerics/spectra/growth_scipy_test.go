package spectra

import (
	"encoding/json"
	"math"
	"os"
	"path/filepath"
	"testing"

	"gonum.org/v1/gonum/mat"
)

// Transient growth of a seeded random non-normal 30×30 matrix against
// Debian scipy (testdata/spectra/make_growth.py): ‖e^{tA}‖₂ from
// scipy.linalg.expm and numpy's 2-norm, ω(A) from eigvalsh, α(A) from eigvals.
func TestGrowthAgainstScipy(t *testing.T) {
	b, err := os.ReadFile(filepath.Join("..", "..", "testdata", "spectra", "growth.json"))
	if err != nil {
		t.Fatal(err)
	}
	var d struct {
		N         int         `json:"n"`
		A         [][]float64 `json:"a"`
		Times     []float64   `json:"times"`
		Norms     []float64   `json:"norms"`
		Numerical float64     `json:"numerical_abscissa"`
		Spectral  float64     `json:"spectral_abscissa"`
	}
	if err := json.Unmarshal(b, &d); err != nil {
		t.Fatal(err)
	}
	m := mat.NewDense(d.N, d.N, nil)
	for i, r := range d.A {
		m.SetRow(i, r)
	}
	g, err := GrowthCurve(bg, denseOp{m}, d.Times, &GrowthOptions{NoKreiss: false})
	if err != nil {
		t.Fatal(err)
	}
	for k := range d.Times {
		if relDiff(g.Norm[k], d.Norms[k]) > 1e-11 {
			t.Errorf("‖e^{%gA}‖ = %.15g, scipy %.15g", d.Times[k], g.Norm[k], d.Norms[k])
		}
	}
	if relDiff(g.InitialSlope, d.Numerical) > 1e-13 || relDiff(g.Abscissa, d.Spectral) > 1e-12 {
		t.Errorf("ω = %.15g (scipy %.15g), α = %.15g (scipy %.15g)", g.InitialSlope, d.Numerical, g.Abscissa, d.Spectral)
	}
	// α(A) > 0: no Kreiss bound (K = ∞), and the growth is unbounded.
	if !math.IsInf(g.Kreiss.K, 1) || !math.IsInf(g.Upper, 1) {
		t.Errorf("unstable A: K = %g, upper = %g", g.Kreiss.K, g.Upper)
	}
}
