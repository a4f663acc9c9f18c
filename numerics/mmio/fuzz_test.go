package mmio

import (
	"bytes"
	"errors"
	"os"
	"path/filepath"
	"testing"

	"gonum.org/v1/gonum/mat"
)

// FuzzRead: Read never panics; it returns either a matrix whose entries lie
// inside its dimensions, or an error and no matrix; a matrix it accepts
// survives a write and read back unchanged.
func FuzzRead(f *testing.F) {
	files, _ := filepath.Glob(filepath.Join("..", "..", "testdata", "mm", "*.mtx"))
	for _, name := range files {
		if b, err := os.ReadFile(name); err == nil {
			f.Add(b)
		}
	}
	f.Add([]byte("%%MatrixMarket matrix coordinate real general\n2 2 1\n1 1 1\n"))
	f.Add([]byte("%%MatrixMarket matrix array integer skew-symmetric\n2 2\n3\n"))
	f.Fuzz(func(t *testing.T, data []byte) {
		m, err := Read(bytes.NewReader(data))
		if err != nil {
			if m != nil {
				t.Fatal("matrix returned with an error")
			}
			var pe *ParseError
			if errors.As(err, &pe) && pe.Line < 1 {
				t.Fatalf("line %d in %v", pe.Line, err)
			}
			return
		}
		if m.Rows > 256 || m.Cols > 256 {
			return
		}
		for k := range m.I {
			if m.I[k] < 0 || m.I[k] >= m.Rows || m.J[k] < 0 || m.J[k] >= m.Cols {
				t.Fatalf("entry %d at (%d, %d) outside %d×%d", k, m.I[k], m.J[k], m.Rows, m.Cols)
			}
		}
		d, err := m.Dense()
		if err != nil {
			t.Fatal(err)
		}
		var buf bytes.Buffer
		if m.Format == Array {
			err = WriteArray(&buf, d, m.Field, m.Symmetry)
		} else {
			err = WriteCoordinate(&buf, m.CSR(), m.Field, m.Symmetry)
		}
		if err != nil {
			// Duplicate entries can make an accepted file's sums differ
			// from what the header promises (a symmetry, or ones in a
			// pattern file); only that may fail.
			return
		}
		m2, err := Read(&buf)
		if err != nil {
			t.Fatalf("rereading our own output: %v\n%s", err, buf.String())
		}
		d2, _ := m2.Dense()
		if !mat.Equal(d, d2) {
			t.Fatal("round trip changed the matrix")
		}
	})
}
