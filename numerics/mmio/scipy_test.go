package mmio

import (
	"encoding/json"
	"os"
	"os/exec"
	"path/filepath"
	"testing"

	"gonum.org/v1/gonum/mat"
	"semiflow/numerics/linop"
)

// Files written by this package are read by Debian's scipy.io.mmread, which
// prints their dense entries as JSON; they must equal ours exactly. The test
// is skipped when /usr/bin/python3 has no scipy.
func TestScipyReadsOurFiles(t *testing.T) {
	py := "/usr/bin/python3"
	if err := exec.Command(py, "-c", "import scipy.io").Run(); err != nil {
		t.Skip("no scipy in /usr/bin/python3")
	}
	dir := t.TempDir()
	sym := linop.NewCSRFromTriplets(3, 3, []int{0, 1, 2, 2, 0}, []int{0, 2, 1, 0, 2}, []float64{1.25, -1e-300, -1e-300, 7, 7})
	skew := linop.NewCSRFromTriplets(3, 3, []int{1, 0, 2, 0}, []int{0, 1, 0, 2}, []float64{0.1, -0.1, 1 / 3.0, -1 / 3.0})
	gen := linop.NewCSRFromTriplets(2, 4, []int{0, 1, 1}, []int{3, 0, 2}, []float64{5, -12, 40})
	dense := mat.NewDense(2, 3, []float64{1, 2.5, -3e10, 4, 5, 6})
	files := map[string]func(f *os.File) error{
		"sym":   func(f *os.File) error { return WriteCoordinate(f, sym, Real, Symmetric) },
		"skew":  func(f *os.File) error { return WriteCoordinate(f, skew, Real, Skew) },
		"int":   func(f *os.File) error { return WriteCoordinate(f, gen, Integer, General, "two\nlines") },
		"dense": func(f *os.File) error { return WriteArray(f, dense, Real, General) },
	}
	want := map[string]mat.Matrix{}
	for name, write := range files {
		f, err := os.Create(filepath.Join(dir, name+".mtx"))
		if err != nil {
			t.Fatal(err)
		}
		if err := write(f); err != nil {
			t.Fatal(err)
		}
		f.Close()
	}
	for name, a := range map[string]*linop.CSR{"sym": sym, "skew": skew, "int": gen} {
		d, _ := a.ToDense()
		want[name] = d
	}
	want["dense"] = dense
	script := `import json, sys, scipy.io, numpy as np
out = {}
for name in sys.argv[2:]:
    a = scipy.io.mmread(sys.argv[1] + "/" + name + ".mtx")
    out[name] = np.asarray(a.todense() if hasattr(a, "todense") else a, dtype=float).tolist()
print(json.dumps(out))`
	cmd := exec.Command(py, "-c", script, dir, "sym", "skew", "int", "dense")
	out, err := cmd.Output()
	if err != nil {
		t.Fatalf("scipy: %v", err)
	}
	var got map[string][][]float64
	if err := json.Unmarshal(out, &got); err != nil {
		t.Fatal(err)
	}
	for name, w := range want {
		r, c := w.Dims()
		g := got[name]
		if len(g) != r {
			t.Fatalf("%s: scipy read %d rows, want %d", name, len(g), r)
		}
		for i := 0; i < r; i++ {
			for j := 0; j < c; j++ {
				if g[i][j] != w.At(i, j) {
					t.Errorf("%s: scipy reads (%d,%d) = %.17g, wrote %.17g", name, i, j, g[i][j], w.At(i, j))
				}
			}
		}
	}
}
