package spectra

import (
	"context"
	"math"
	"math/cmplx"
	"sort"
	"testing"

	"semiflow/numerics/linop"
)

func tridiagK(n int, lo, mid, up float64) *linop.CSR {
	var is, js []int
	var vs []float64
	for i := 0; i < n; i++ {
		if i > 0 {
			is, js, vs = append(is, i), append(js, i-1), append(vs, lo)
		}
		is, js, vs = append(is, i), append(js, i), append(vs, mid)
		if i < n-1 {
			is, js, vs = append(is, i), append(js, i+1), append(vs, up)
		}
	}
	return linop.NewCSRFromTriplets(n, n, is, js, vs)
}

// Non-normal factors: the spectrum from the factors equals the dense
// spectrum of the assembled sum (an independent route), with the same
// condition numbers to first order.
func TestKronSpectrumMatchesDense(t *testing.T) {
	X, Y, Z := tridiagK(4, 0.3, -1, 2), tridiagK(5, -1, 0.5, 0.2), tridiagK(3, 1, -2, 1)
	A := linop.NewKronSum(X, linop.NewKronSum(Y, Z))
	want, err := DenseSpectrum(A)
	if err != nil {
		t.Fatal(err)
	}
	got, err := KronSpectrum(context.Background(), A, 0, false, 0)
	if err != nil {
		t.Fatal(err)
	}
	if len(got.Values) != 60 {
		t.Fatalf("%d values", len(got.Values))
	}
	// Tridiagonal with positive off-diagonal products: real spectra, so
	// the sorted real parts pair up.
	gr, wr := make([]float64, 60), make([]float64, 60)
	for i := range gr {
		gr[i], wr[i] = real(got.Values[i]), real(want.Values[i])
	}
	sort.Float64s(gr)
	sort.Float64s(wr)
	for i := range gr {
		if math.Abs(gr[i]-wr[i]) > 1e-12 {
			t.Fatalf("eigenvalue %d: %.15g from the factors, %.15g dense", i, gr[i], wr[i])
		}
	}
	if math.Abs(got.Abscissa-want.Abscissa) > 1e-12 {
		t.Errorf("abscissa %.15g, dense %.15g", got.Abscissa, want.Abscissa)
	}
	// The four nearest −1.
	near, err := KronSpectrum(context.Background(), A, 4, true, -1)
	if err != nil {
		t.Fatal(err)
	}
	d := make([]float64, 60)
	for i, v := range want.Values {
		d[i] = cmplx.Abs(v + 1)
	}
	sort.Float64s(d)
	for i, v := range near.Values {
		if math.Abs(cmplx.Abs(v+1)-d[i]) > 1e-12 {
			t.Errorf("nearest −1, %d: distance %.15g, dense %.15g", i, cmplx.Abs(v+1), d[i])
		}
	}
}

// Closed form: the 3-D Dirichlet heat operator on the unit cube with m
// unknowns per side (h = 1/(m+1)) has the eigenvalues
// −4/h² (sin²(aπh/2) + sin²(bπh/2) + sin²(cπh/2)), a, b, c = 1..m; the
// rightmost is a = b = c = 1 and the next three are (2, 1, 1) and its
// permutations, a triple eigenvalue.
func TestKronSpectrumHeatCube(t *testing.T) {
	const m = 30
	h := 1.0 / (m + 1)
	D := tridiagK(m, 1/(h*h), -2/(h*h), 1/(h*h))
	A := linop.NewKronSum(D, linop.NewKronSum(D, D))
	s, err := KronSpectrum(context.Background(), A, 4, false, 0)
	if err != nil {
		t.Fatal(err)
	}
	mu := func(a float64) float64 { v := math.Sin(a * math.Pi * h / 2); return -4 / (h * h) * v * v }
	want := []float64{3 * mu(1), mu(2) + 2*mu(1), mu(2) + 2*mu(1), mu(2) + 2*mu(1)}
	for i, w := range want {
		if math.Abs(real(s.Values[i])-w) > 1e-11*math.Abs(w) || imag(s.Values[i]) != 0 {
			t.Errorf("λ_%d = %v, closed form %.15g", i, s.Values[i], w)
		}
	}
}
