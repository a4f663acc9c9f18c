package spectra

import (
	"encoding/json"
	"math"
	"math/rand/v2"
	"os"
	"path/filepath"
	"testing"

	"gonum.org/v1/gonum/mat"
)

// denseOp is a minimal test operator wrapping a gonum matrix, so the tests
// do not depend on other packages' constructors.
type denseOp struct{ m *mat.Dense }

func (d denseOp) Dims() (int, int) { return d.m.Dims() }
func (d denseOp) Apply(dst, x []float64) {
	mat.NewVecDense(len(dst), dst).MulVec(d.m, mat.NewVecDense(len(x), x))
}
func (d denseOp) ApplyT(dst, x []float64) {
	mat.NewVecDense(len(dst), dst).MulVec(d.m.T(), mat.NewVecDense(len(x), x))
}

func op(rows [][]float64) denseOp {
	n := len(rows)
	m := mat.NewDense(n, len(rows[0]), nil)
	for i, r := range rows {
		m.SetRow(i, r)
	}
	return denseOp{m}
}

// grcar is the Grcar matrix: −1 on the subdiagonal, +1 on the diagonal and
// the first three superdiagonals (Grcar, Sandia report SAND89-8691, 1989).
func grcar(n int) denseOp {
	m := mat.NewDense(n, n, nil)
	for i := 0; i < n; i++ {
		for j := max(i-1, 0); j <= min(i+3, n-1); j++ {
			if j == i-1 {
				m.Set(i, j, -1)
			} else {
				m.Set(i, j, 1)
			}
		}
	}
	return denseOp{m}
}

func randomNonNormal(rng *rand.Rand, n int, shift, scale float64) denseOp {
	m := mat.NewDense(n, n, nil)
	for i := 0; i < n; i++ {
		for j := 0; j < n; j++ {
			v := rng.NormFloat64() / math.Sqrt(float64(n))
			if j > i {
				v *= scale
			}
			if i == j {
				v += shift
			}
			m.Set(i, j, v)
		}
	}
	return denseOp{m}
}

type grcarCase struct {
	N     int         `json:"n"`
	EigRe []float64   `json:"eig_re"`
	EigIm []float64   `json:"eig_im"`
	Re    []float64   `json:"re"`
	Im    []float64   `json:"im"`
	Sigma [][]float64 `json:"sigma"`
}

func loadGrcar(t *testing.T) []grcarCase {
	t.Helper()
	b, err := os.ReadFile(filepath.Join("..", "..", "testdata", "spectra", "grcar.json"))
	if err != nil {
		t.Fatal(err)
	}
	var d struct {
		Cases []grcarCase `json:"cases"`
	}
	if err := json.Unmarshal(b, &d); err != nil {
		t.Fatal(err)
	}
	return d.Cases
}

func relDiff(a, b float64) float64 {
	return math.Abs(a-b) / math.Max(math.Abs(b), 1e-300)
}
