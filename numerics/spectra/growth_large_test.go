package spectra

import (
	"testing"

	"gonum.org/v1/gonum/mat"
)

// The power-iteration estimate against the exact dense curve (SVD of
// e^{tA}) on a non-normal convection–diffusion matrix: never above the
// exact value, and close to it.
func TestGrowthEstimateAgainstDense(t *testing.T) {
	csr, _, _, _ := convDiff1D(60, 0.02, 1)
	d, err := csr.ToDense()
	if err != nil {
		t.Fatal(err)
	}
	times := []float64{0, 0.05, 0.2, 0.5, 1}
	exact, err := GrowthCurve(bg, denseOp{mat.DenseCopyOf(d)}, times, &GrowthOptions{NoKreiss: true})
	if err != nil {
		t.Fatal(err)
	}
	est, err := GrowthEstimate(bg, csr, times, 40, 1e-10, nil)
	if err != nil {
		t.Fatal(err)
	}
	for k := range times {
		if est.Norm[k] > exact.Norm[k]*(1+1e-8) || est.Norm[k] < exact.Norm[k]*(1-1e-4) {
			t.Errorf("t=%g: estimate %.10g, exact %.10g", times[k], est.Norm[k], exact.Norm[k])
		}
	}
}
