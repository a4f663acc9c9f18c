package mmio

import (
	"bytes"
	"encoding/json"
	"errors"
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"gonum.org/v1/gonum/mat"
	"semiflow/numerics/linop"
)

type refCase struct {
	Rows, Cols int
	Entries    [][]float64
}

// Files written by Debian's scipy.io.mmwrite (testdata/mm/make_mm.py), read
// and compared with the dense entries the same script stored in JSON; then
// written back by this package and read again.
func TestScipyFiles(t *testing.T) {
	dir := filepath.Join("..", "..", "testdata", "mm")
	raw, err := os.ReadFile(filepath.Join(dir, "reference.json"))
	if err != nil {
		t.Fatal(err)
	}
	var ref map[string]refCase
	if err := json.Unmarshal(raw, &ref); err != nil {
		t.Fatal(err)
	}
	want := map[string]Header{
		"general":         {Coordinate, Real, General},
		"symmetric":       {Coordinate, Real, Symmetric},
		"skew":            {Coordinate, Real, Skew},
		"integer":         {Coordinate, Integer, General},
		"array":           {Array, Real, General},
		"array_symmetric": {Array, Real, Symmetric},
		"pattern":         {Coordinate, Pattern, General},
	}
	if len(ref) != len(want) {
		t.Fatalf("reference.json has %d cases, want %d", len(ref), len(want))
	}
	for name, rc := range ref {
		f, err := os.Open(filepath.Join(dir, name+".mtx"))
		if err != nil {
			t.Fatal(err)
		}
		m, err := Read(f)
		f.Close()
		if err != nil {
			t.Fatalf("%s: %v", name, err)
		}
		if m.Header != want[name] {
			t.Errorf("%s: header %+v, want %+v", name, m.Header, want[name])
		}
		d, err := m.Dense()
		if err != nil {
			t.Fatal(err)
		}
		compareDense(t, name, d, rc)
		if name == "general" && (len(m.Comments) == 0 || !strings.Contains(m.Comments[0], "scipy")) {
			t.Errorf("comments not kept: %q", m.Comments)
		}
		// Write back in the same header and read again: exact round trip.
		var buf bytes.Buffer
		if m.Format == Coordinate {
			err = WriteCoordinate(&buf, m.CSR(), m.Field, m.Symmetry, "round trip")
		} else {
			err = WriteArray(&buf, d, m.Field, m.Symmetry)
		}
		if err != nil {
			t.Fatalf("%s: write: %v", name, err)
		}
		m2, err := Read(&buf)
		if err != nil {
			t.Fatalf("%s: reread: %v", name, err)
		}
		d2, _ := m2.Dense()
		if !mat.Equal(d, d2) || m2.Header != m.Header {
			t.Errorf("%s: round trip changed the matrix or header", name)
		}
	}
}

func compareDense(t *testing.T, name string, d *mat.Dense, rc refCase) {
	t.Helper()
	r, c := d.Dims()
	if r != rc.Rows || c != rc.Cols {
		t.Fatalf("%s: %d×%d, want %d×%d", name, r, c, rc.Rows, rc.Cols)
	}
	for i := 0; i < r; i++ {
		for j := 0; j < c; j++ {
			// scipy writes 16 significant digits, so allow 1e-15 relative.
			if got, w := d.At(i, j), rc.Entries[i][j]; math.Abs(got-w) > 1e-15*math.Abs(w) {
				t.Errorf("%s: (%d, %d) = %.17g, scipy %.17g", name, i, j, got, w)
			}
		}
	}
}

// Writing refuses headers the matrix does not satisfy, and skew-symmetric
// output holds the strict lower triangle only (NIST IR 5935, §3).
func TestWriteRefusals(t *testing.T) {
	a := linop.NewCSRFromTriplets(2, 2, []int{0, 1}, []int{1, 0}, []float64{1, 2})
	var buf bytes.Buffer
	if err := WriteCoordinate(&buf, a, Real, Symmetric); !errors.Is(err, ErrWrite) {
		t.Errorf("asymmetric as symmetric: %v", err)
	}
	b := linop.NewCSRFromTriplets(2, 2, []int{0}, []int{0}, []float64{1.5})
	if err := WriteCoordinate(&buf, b, Integer, General); !errors.Is(err, ErrWrite) {
		t.Errorf("1.5 as integer: %v", err)
	}
	sk := linop.NewCSRFromTriplets(2, 2, []int{0, 1}, []int{1, 0}, []float64{3, -3})
	buf.Reset()
	if err := WriteCoordinate(&buf, sk, Real, Skew); err != nil {
		t.Fatal(err)
	}
	if !strings.Contains(buf.String(), "2 2 1\n2 1 -3\n") {
		t.Errorf("skew output %q", buf.String())
	}
}

func TestMalformed(t *testing.T) {
	for _, c := range []struct {
		text string
		line int
		msg  string
	}{
		{"", 1, "empty file"},
		{"%%MatrixMarket matrix coordinate real\n", 1, "banner"},
		{"%%MatrixMarket matrix coordinate complex general\n1 1 0\n", 1, "complex"},
		{"%%MatrixMarket matrix coordinate real general\n% c\n2 2\n", 3, "size line"},
		{"%%MatrixMarket matrix coordinate real general\n2 2 2\n1 1 1.0\n3 1 2.0\n", 4, "outside"},
		{"%%MatrixMarket matrix coordinate real general\n2 2 2\n1 1 1.0\n", 3, "end of file after 1 of 2"},
		{"%%MatrixMarket matrix coordinate real general\n2 2 1\n1 1 x\n", 3, "not a real"},
		{"%%MatrixMarket matrix coordinate integer general\n2 2 1\n1 1 1.5\n", 3, "not an integer"},
		{"%%MatrixMarket matrix coordinate real symmetric\n2 2 1\n1 2 1.0\n", 3, "above the diagonal"},
		{"%%MatrixMarket matrix coordinate real skew-symmetric\n2 2 1\n1 1 1.0\n", 3, "on or above"},
		{"%%MatrixMarket matrix coordinate real symmetric\n2 3 0\n", 2, "not square"},
		{"%%MatrixMarket matrix array real general\n2 2\n1\n2\n3\n", 5, "before entry (2, 2)"},
		{"%%MatrixMarket matrix array real general\n1 1\n1\n2\n", 4, "after the last entry"},
		{"%%MatrixMarket matrix coordinate real general\n1 1 1\n1 1 1 7\n", 3, "should have 3 fields"},
		{"%%MatrixMarket matrix coordinate real general\n1 1 1\n1 1 NaN\n", 3, "not a real"},
	} {
		m, err := Read(strings.NewReader(c.text))
		var pe *ParseError
		if m != nil || !errors.As(err, &pe) || !errors.Is(err, ErrFormat) {
			t.Errorf("%q: got %v, %v; want a ParseError and no matrix", c.text, m, err)
			continue
		}
		if pe.Line != c.line || !strings.Contains(pe.Msg, c.msg) {
			t.Errorf("%q: error %q at line %d, want line %d containing %q", c.text, pe.Msg, pe.Line, c.line, c.msg)
		}
	}
}

func TestRoundTripLarge(t *testing.T) {
	// A 2-D operator with values that need all 17 digits.
	n := 300
	var is, js []int
	var vs []float64
	for i := 0; i < n; i++ {
		is, js, vs = append(is, i), append(js, i), append(vs, -4/3.0*float64(i+1))
		if i+1 < n {
			is, js, vs = append(is, i, i+1), append(js, i+1, i), append(vs, math.Pi, math.Pi)
		}
	}
	a := linop.NewCSRFromTriplets(n, n, is, js, vs)
	for _, sym := range []string{General, Symmetric} {
		var buf bytes.Buffer
		if err := WriteCoordinate(&buf, a, Real, sym); err != nil {
			t.Fatal(err)
		}
		m, err := Read(&buf)
		if err != nil {
			t.Fatal(err)
		}
		b := m.CSR()
		for i := 0; i < n; i++ {
			for p := a.RowPtr[i]; p < a.RowPtr[i+1]; p++ {
				if b.At(i, a.ColIdx[p]) != a.Val[p] {
					t.Fatalf("%s: entry (%d,%d) changed", sym, i, a.ColIdx[p])
				}
			}
		}
		if b.NNZ() != a.NNZ() {
			t.Errorf("%s: %d entries, want %d", sym, b.NNZ(), a.NNZ())
		}
	}
}
