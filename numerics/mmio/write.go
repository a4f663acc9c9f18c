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
)

// ErrWrite is matched (errors.Is) by a refusal to write a matrix in the
// requested header (an asymmetric matrix as symmetric, a non-integer value
// as integer, and the like).
var ErrWrite = errors.New("mmio: matrix does not fit the requested header")

// WriteCoordinate writes a in coordinate format with the given field (Real,
// Integer or Pattern) and symmetry (General, Symmetric or Skew; only the
// lower triangle is written for the latter two). Values are written with
// the shortest representation that reads back exactly. Each comment is
// written on its own line after the banner. It returns an error wrapping
// ErrWrite if a does not have the requested symmetry, integer values, or
// (for Pattern, which stores no values) values all 1.
func WriteCoordinate(w io.Writer, a *linop.CSR, field, symmetry string, comments ...string) error {
	if err := checkHeader(Coordinate, field, symmetry); err != nil {
		return err
	}
	if symmetry != General {
		if err := checkSymmetryCSR(a, symmetry); err != nil {
			return err
		}
	}
	type entry struct {
		i, j int
		v    float64
	}
	var es []entry
	for i := 0; i < a.Rows; i++ {
		for p := a.RowPtr[i]; p < a.RowPtr[i+1]; p++ {
			j, v := a.ColIdx[p], a.Val[p]
			if (symmetry == Symmetric && j > i) || (symmetry == Skew && j >= i) {
				continue
			}
			if field == Integer && v != math.Trunc(v) {
				return fmt.Errorf("%w: entry (%d, %d) = %g is not an integer", ErrWrite, i, j, v)
			}
			if field == Pattern && v != 1 {
				return fmt.Errorf("%w: entry (%d, %d) = %g is not 1; a pattern file holds no values, so it reads back as 1", ErrWrite, i, j, v)
			}
			es = append(es, entry{i, j, v})
		}
	}
	bw := bufio.NewWriter(w)
	header(bw, Coordinate, field, symmetry, comments)
	fmt.Fprintf(bw, "%d %d %d\n", a.Rows, a.Cols, len(es))
	for _, e := range es {
		if field == Pattern {
			fmt.Fprintf(bw, "%d %d\n", e.i+1, e.j+1)
		} else {
			fmt.Fprintf(bw, "%d %d %s\n", e.i+1, e.j+1, format(e.v, field))
		}
	}
	return bw.Flush()
}

// WriteArray writes m in array format (column-major) with the given field
// (Real or Integer) and symmetry (General, Symmetric or Skew; only the
// lower triangle, without the diagonal for Skew). It returns an error
// wrapping ErrWrite if m does not have the requested symmetry or integer
// values.
func WriteArray(w io.Writer, m mat.Matrix, field, symmetry string, comments ...string) error {
	if err := checkHeader(Array, field, symmetry); err != nil {
		return err
	}
	r, c := m.Dims()
	if symmetry != General {
		if err := checkSymmetry(r, c, m.At, symmetry); err != nil {
			return err
		}
	}
	bw := bufio.NewWriter(w)
	header(bw, Array, field, symmetry, comments)
	fmt.Fprintf(bw, "%d %d\n", r, c)
	for j := 0; j < c; j++ {
		i0 := 0
		switch symmetry {
		case Symmetric:
			i0 = j
		case Skew:
			i0 = j + 1
		}
		for i := i0; i < r; i++ {
			v := m.At(i, j)
			if field == Integer && v != math.Trunc(v) {
				return fmt.Errorf("%w: entry (%d, %d) = %g is not an integer", ErrWrite, i, j, v)
			}
			fmt.Fprintln(bw, format(v, field))
		}
	}
	return bw.Flush()
}

func checkHeader(format, field, symmetry string) error {
	switch field {
	case Real, Integer:
	case Pattern:
		if format == Array {
			return fmt.Errorf("%w: pattern field in array format", ErrWrite)
		}
	default:
		return fmt.Errorf("%w: unknown field %q", ErrWrite, field)
	}
	switch symmetry {
	case General, Symmetric, Skew:
	default:
		return fmt.Errorf("%w: unknown symmetry %q", ErrWrite, symmetry)
	}
	return nil
}

func checkSymmetry(r, c int, at func(i, j int) float64, symmetry string) error {
	if r != c {
		return fmt.Errorf("%w: %d×%d matrix is not square", ErrWrite, r, c)
	}
	for i := 0; i < r; i++ {
		for j := 0; j <= i; j++ {
			a, b := at(i, j), at(j, i)
			if symmetry == Symmetric && a != b {
				return fmt.Errorf("%w: entries (%d, %d) = %g and (%d, %d) = %g differ", ErrWrite, i, j, a, j, i, b)
			}
			if symmetry == Skew && a != -b {
				return fmt.Errorf("%w: entries (%d, %d) = %g and (%d, %d) = %g are not opposite", ErrWrite, i, j, a, j, i, b)
			}
		}
	}
	return nil
}

// checkSymmetryCSR compares a with its transpose row by row in O(nnz).
func checkSymmetryCSR(a *linop.CSR, symmetry string) error {
	if a.Rows != a.Cols {
		return fmt.Errorf("%w: %d×%d matrix is not square", ErrWrite, a.Rows, a.Cols)
	}
	t := a.Transpose()
	sign := 1.0
	if symmetry == Skew {
		sign = -1
	}
	for i := 0; i < a.Rows; i++ {
		p, pe := a.RowPtr[i], a.RowPtr[i+1]
		q, qe := t.RowPtr[i], t.RowPtr[i+1]
		for p < pe || q < qe {
			var j int
			var x, y float64
			switch {
			case q >= qe || (p < pe && a.ColIdx[p] < t.ColIdx[q]):
				j, x = a.ColIdx[p], a.Val[p]
				p++
			case p >= pe || t.ColIdx[q] < a.ColIdx[p]:
				j, y = t.ColIdx[q], t.Val[q]
				q++
			default:
				j, x, y = a.ColIdx[p], a.Val[p], t.Val[q]
				p++
				q++
			}
			if x != sign*y {
				return fmt.Errorf("%w: entries (%d, %d) = %g and (%d, %d) = %g do not match %s", ErrWrite, i, j, x, j, i, y, symmetry)
			}
		}
	}
	return nil
}

func header(w *bufio.Writer, format, field, symmetry string, comments []string) {
	fmt.Fprintf(w, "%%%%MatrixMarket matrix %s %s %s\n", format, field, symmetry)
	for _, c := range comments {
		for _, line := range strings.Split(c, "\n") {
			fmt.Fprintf(w, "%%%s\n", line)
		}
	}
}

func format(v float64, field string) string {
	if field == Integer {
		return strconv.FormatInt(int64(v), 10)
	}
	return strconv.FormatFloat(v, 'g', -1, 64)
}
