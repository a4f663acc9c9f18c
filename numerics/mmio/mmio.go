// Package mmio reads and writes matrices in the Matrix Market exchange
// format (Boisvert, Pozo & Remington, "The Matrix Market Exchange Formats:
// Initial Design", NIST IR 5935, 1996): coordinate and array formats, real,
// integer and pattern fields, general, symmetric and skew-symmetric
// storage. Complex and Hermitian files are recognised and refused.
//
// A malformed file yields a *ParseError with its line number, and nothing
// is returned alongside it.
package mmio

import (
	"bufio"
	"errors"
	"fmt"
	"io"
	"math"
	"strconv"
	"strings"

	"gonum.org/v1/gonum/mat"
	"semiflow/numerics/linop"
	"semiflow/numerics/memguard"
)

// Format values.
const (
	Coordinate = "coordinate"
	Array      = "array"
)

// Field values.
const (
	Real    = "real"
	Integer = "integer"
	Pattern = "pattern"
)

// Symmetry values.
const (
	General   = "general"
	Symmetric = "symmetric"
	Skew      = "skew-symmetric"
)

// Header is the banner of a file.
type Header struct {
	Format   string // Coordinate or Array
	Field    string // Real, Integer or Pattern
	Symmetry string // General, Symmetric or Skew
}

// Matrix is a matrix read from a file, as the full list of its entries
// (symmetric storage expanded): A[I[k], J[k]] = V[k], 0-based. Entries are
// in file order, with each mirrored entry right after its original.
type Matrix struct {
	Header
	Comments   []string // comment lines without the leading '%'
	Rows, Cols int
	I, J       []int
	V          []float64
}

// CSR returns the matrix in CSR form (duplicates summed).
func (m *Matrix) CSR() *linop.CSR { return linop.NewCSRFromTriplets(m.Rows, m.Cols, m.I, m.J, m.V) }

// Dense returns the matrix as a dense matrix, or an error from the memory
// guard.
func (m *Matrix) Dense() (*mat.Dense, error) {
	if err := memguard.DenseReal(m.Rows, m.Cols); err != nil {
		return nil, err
	}
	if m.Rows == 0 || m.Cols == 0 {
		return &mat.Dense{}, nil
	}
	d := mat.NewDense(m.Rows, m.Cols, nil)
	for k := range m.I {
		d.Set(m.I[k], m.J[k], d.At(m.I[k], m.J[k])+m.V[k])
	}
	return d, nil
}

// ParseError reports a malformed file.
type ParseError struct {
	Line int // 1-based line number
	Msg  string
}

func (e *ParseError) Error() string { return fmt.Sprintf("mmio: line %d: %s", e.Line, e.Msg) }

// ErrFormat is matched (errors.Is) by every ParseError.
var ErrFormat = errors.New("mmio: malformed Matrix Market file")

// Is reports whether target is ErrFormat.
func (e *ParseError) Is(target error) bool { return target == ErrFormat }

type lineReader struct {
	sc   *bufio.Scanner
	line int
}

// next returns the next line that is neither blank nor a comment.
func (r *lineReader) next(comments *[]string) (string, bool) {
	for r.sc.Scan() {
		r.line++
		t := strings.TrimSpace(r.sc.Text())
		if t == "" {
			continue
		}
		if strings.HasPrefix(t, "%") {
			if comments != nil {
				*comments = append(*comments, strings.TrimPrefix(t, "%"))
			}
			continue
		}
		return t, true
	}
	return "", false
}

// Read parses a Matrix Market file. On any error it returns a nil matrix:
// a *ParseError (matching ErrFormat) naming the line for malformed input,
// an error from the memory guard for an array too large for the machine,
// or the reader's error.
func Read(r io.Reader) (*Matrix, error) {
	sc := bufio.NewScanner(r)
	sc.Buffer(make([]byte, 64<<10), 16<<20)
	lr := &lineReader{sc: sc}
	fail := func(format string, args ...any) (*Matrix, error) {
		return nil, &ParseError{Line: lr.line, Msg: fmt.Sprintf(format, args...)}
	}
	if !sc.Scan() {
		if err := sc.Err(); err != nil {
			return nil, err
		}
		lr.line = 1
		return fail("empty file, expected the %%%%MatrixMarket banner")
	}
	lr.line = 1
	banner := strings.Fields(sc.Text())
	if len(banner) != 5 || !strings.EqualFold(banner[0], "%%MatrixMarket") {
		return fail("expected the banner %q", "%%MatrixMarket matrix FORMAT FIELD SYMMETRY")
	}
	if !strings.EqualFold(banner[1], "matrix") {
		return fail("object %q is not supported (only matrix)", banner[1])
	}
	h := Header{Format: strings.ToLower(banner[2]), Field: strings.ToLower(banner[3]), Symmetry: strings.ToLower(banner[4])}
	switch h.Format {
	case Coordinate, Array:
	default:
		return fail("unknown format %q (coordinate or array)", banner[2])
	}
	switch h.Field {
	case Real, Integer:
	case Pattern:
		if h.Format == Array {
			return fail("pattern field in array format")
		}
	case "complex":
		return fail("complex matrices are not supported")
	default:
		return fail("unknown field %q (real, integer or pattern)", banner[3])
	}
	switch h.Symmetry {
	case General, Symmetric, Skew:
	case "hermitian":
		return fail("hermitian matrices are not supported")
	default:
		return fail("unknown symmetry %q (general, symmetric or skew-symmetric)", banner[4])
	}
	m := &Matrix{Header: h}
	size, ok := lr.next(&m.Comments)
	if !ok {
		if err := sc.Err(); err != nil {
			return nil, err
		}
		return fail("missing size line")
	}
	sz := strings.Fields(size)
	want := 3
	if h.Format == Array {
		want = 2
	}
	if len(sz) != want {
		return fail("size line %q should have %d integers", size, want)
	}
	dims := make([]int, want)
	for k, s := range sz {
		v, err := strconv.Atoi(s)
		if err != nil || v < 0 {
			return fail("size %q is not a non-negative integer", s)
		}
		dims[k] = v
	}
	m.Rows, m.Cols = dims[0], dims[1]
	if h.Symmetry != General && m.Rows != m.Cols {
		return fail("%s matrix of size %d×%d is not square", h.Symmetry, m.Rows, m.Cols)
	}
	if err := checkDeclared(h, dims, lr.line); err != nil {
		return nil, err
	}
	parse := func(s string) (float64, error) {
		if h.Field == Integer {
			v, err := strconv.ParseInt(s, 10, 64)
			return float64(v), err
		}
		v, err := strconv.ParseFloat(s, 64)
		if err == nil && (math.IsNaN(v) || math.IsInf(v, 0)) {
			err = errors.New("not finite")
		}
		return v, err
	}
	push := func(i, j int, v float64) {
		m.I, m.J, m.V = append(m.I, i), append(m.J, j), append(m.V, v)
		if i != j {
			switch h.Symmetry {
			case Symmetric:
				m.I, m.J, m.V = append(m.I, j), append(m.J, i), append(m.V, v)
			case Skew:
				m.I, m.J, m.V = append(m.I, j), append(m.J, i), append(m.V, -v)
			}
		}
	}
	if h.Format == Coordinate {
		nnz := dims[2]
		nf := 3
		if h.Field == Pattern {
			nf = 2
		}
		for k := 0; k < nnz; k++ {
			line, ok := lr.next(nil)
			if !ok {
				if err := sc.Err(); err != nil {
					return nil, err
				}
				return fail("end of file after %d of %d entries", k, nnz)
			}
			f := strings.Fields(line)
			if len(f) != nf {
				return fail("entry %q should have %d fields", line, nf)
			}
			i, err1 := strconv.Atoi(f[0])
			j, err2 := strconv.Atoi(f[1])
			if err1 != nil || err2 != nil || i < 1 || i > m.Rows || j < 1 || j > m.Cols {
				return fail("index (%s, %s) outside 1..%d × 1..%d", f[0], f[1], m.Rows, m.Cols)
			}
			v := 1.0
			if h.Field != Pattern {
				var err error
				if v, err = parse(f[2]); err != nil {
					return fail("value %q is not %s %s", f[2], article(h.Field), h.Field)
				}
			}
			switch {
			case h.Symmetry == Symmetric && j > i:
				return fail("entry (%d, %d) above the diagonal of a symmetric matrix (only the lower triangle is stored)", i, j)
			case h.Symmetry == Skew && j >= i:
				return fail("entry (%d, %d) on or above the diagonal of a skew-symmetric matrix", i, j)
			}
			push(i-1, j-1, v)
		}
	} else {
		// Column-major; symmetric: lower triangle with diagonal; skew: strictly lower.
		for j := 0; j < m.Cols; j++ {
			i0 := 0
			switch h.Symmetry {
			case Symmetric:
				i0 = j
			case Skew:
				i0 = j + 1
			}
			for i := i0; i < m.Rows; i++ {
				line, ok := lr.next(nil)
				if !ok {
					if err := sc.Err(); err != nil {
						return nil, err
					}
					return fail("end of file before entry (%d, %d)", i+1, j+1)
				}
				f := strings.Fields(line)
				if len(f) != 1 {
					return fail("array entry %q should be one value", line)
				}
				v, err := parse(f[0])
				if err != nil {
					return fail("value %q is not %s %s", f[0], article(h.Field), h.Field)
				}
				if v != 0 || h.Symmetry == General {
					push(i, j, v)
				}
			}
		}
	}
	if line, ok := lr.next(nil); ok {
		return fail("unexpected data %q after the last entry", line)
	}
	if err := sc.Err(); err != nil {
		return nil, err
	}
	return m, nil
}

// Bytes per entry of what Read and then Matrix.CSR or Matrix.Dense build:
// the triplet (row, column, value) as read, and the CSR entry (column,
// value) or the dense entry.
const (
	tripletBytes = 24
	csrBytes     = 16
)

// checkDeclared asks the memory guard, before any entry is read, for what
// the size line on line declares: the triplets as read (twice the entries
// for symmetric storage) and the CSR form with its row pointers, or the
// dense matrix. A header declaring 10¹²×10¹² thus fails at once instead of
// when the row pointers are allocated. Entries are still stored as they
// arrive, so a header that declares more entries than the file holds costs
// only what the file holds.
func checkDeclared(h Header, dims []int, line int) error {
	r, c := float64(dims[0]), float64(dims[1])
	var need float64
	var what string
	if h.Format == Coordinate {
		entries := float64(dims[2])
		if h.Symmetry != General {
			entries *= 2
		}
		need = entries*(tripletBytes+csrBytes) + (r+1)*memguard.RealBytes
		noun := "entries"
		if dims[2] == 1 {
			noun = "entry"
		}
		what = fmt.Sprintf("the %d×%d coordinate matrix with %d %s declared on line %d", dims[0], dims[1], dims[2], noun, line)
	} else {
		need = r * c * (tripletBytes + memguard.RealBytes)
		what = fmt.Sprintf("the %d×%d array matrix declared on line %d", dims[0], dims[1], line)
	}
	return memguard.Bytes(need, what)
}

func article(field string) string {
	if field == Integer {
		return "an"
	}
	return "a"
}
