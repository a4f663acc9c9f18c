package value

import (
	"fmt"
	"math"
	"strings"
)

// Vec is a vector of real numbers (R) or of complex numbers (C). Exactly
// one of R and C is non-nil; the empty vector has R = []float64{}.
type Vec struct {
	R []float64
	C []complex128
}

// RealVec wraps x (not copied) as a real vector.
func RealVec(x []float64) *Vec {
	if x == nil {
		x = []float64{}
	}
	return &Vec{R: x}
}

// ComplexVec wraps z (not copied) as a complex vector.
func ComplexVec(z []complex128) *Vec {
	if z == nil {
		return &Vec{R: []float64{}}
	}
	return &Vec{C: z}
}

func (v *Vec) Type() string { return "vector" }

// IsComplex reports whether v holds complex entries.
func (v *Vec) IsComplex() bool { return v.C != nil }

// Len is the number of entries.
func (v *Vec) Len() int {
	if v.C != nil {
		return len(v.C)
	}
	return len(v.R)
}

// Index returns entry i as a Num or Complex.
func (v *Vec) Index(i int) Value {
	if v.C != nil {
		return Complex(v.C[i])
	}
	return Num(v.R[i])
}

// Select returns the vector of the selected entries.
func (v *Vec) Select(idx []int) Value {
	if v.C != nil {
		out := make([]complex128, len(idx))
		for k, i := range idx {
			out[k] = v.C[i]
		}
		return ComplexVec(out)
	}
	out := make([]float64, len(idx))
	for k, i := range idx {
		out[k] = v.R[i]
	}
	return RealVec(out)
}

// Complex128 returns the entries as complex numbers (a copy for real v).
func (v *Vec) Complex128() []complex128 {
	if v.C != nil {
		return v.C
	}
	out := make([]complex128, len(v.R))
	for i, x := range v.R {
		out[i] = complex(x, 0)
	}
	return out
}

func (v *Vec) String() string {
	if v.C != nil {
		return formatSeq(len(v.C), func(i int) string { return FormatComplex(v.C[i]) })
	}
	return formatSeq(len(v.R), func(i int) string { return FormatNum(v.R[i]) })
}

// Range is the arithmetic progression Lo, Lo+Step, ..., N entries, written
// lo .. hi by step (both ends included). It behaves as a real vector.
type Range struct {
	Lo, Hi, Step float64
	N            int
}

// RangeLen is the number of entries of lo .. hi by step: the largest n with
// lo + (n-1)·step not beyond hi, allowing a relative slack of 1e-10 steps
// for rounding (so 0 .. 1 by 0.1 has 11 entries). It is 0 for an empty
// range and may be huge; callers check it against their size limit.
func RangeLen(lo, hi, step float64) float64 {
	q := (hi - lo) / step
	if q < -1e-10 || math.IsNaN(q) {
		return 0
	}
	return math.Floor(q+1e-10) + 1
}

func (r *Range) Type() string { return "range" }

// Len is the number of entries.
func (r *Range) Len() int { return r.N }

// At returns entry k as a float64. The last entry is Hi itself when it lies
// within rounding of Hi.
func (r *Range) At(k int) float64 {
	x := r.Lo + float64(k)*r.Step
	if k == r.N-1 && math.Abs(x-r.Hi) <= 1e-10*math.Abs(r.Step) {
		x = r.Hi
	}
	return x
}

// Index returns entry i as a Num.
func (r *Range) Index(i int) Value { return Num(r.At(i)) }

// Select returns the vector of the selected entries.
func (r *Range) Select(idx []int) Value {
	out := make([]float64, len(idx))
	for k, i := range idx {
		out[k] = r.At(i)
	}
	return RealVec(out)
}

// Vec returns the entries as a real vector.
func (r *Range) Vec() *Vec {
	out := make([]float64, r.N)
	for k := range out {
		out[k] = r.At(k)
	}
	return RealVec(out)
}

func (r *Range) String() string {
	return formatSeq(r.N, func(i int) string { return FormatNum(r.At(i)) })
}

// Matrix is a real rows×cols matrix stored row-major.
type Matrix struct {
	Rows, Cols int
	Data       []float64 // len Rows*Cols, entry (i, j) at i*Cols+j
}

// NewMatrix returns a zero rows×cols matrix.
func NewMatrix(rows, cols int) *Matrix {
	return &Matrix{Rows: rows, Cols: cols, Data: make([]float64, rows*cols)}
}

func (m *Matrix) Type() string { return "matrix" }

// At returns entry (i, j).
func (m *Matrix) At(i, j int) float64 { return m.Data[i*m.Cols+j] }

// Dims returns the number of rows and columns.
func (m *Matrix) Dims() (int, int) { return m.Rows, m.Cols }

// Index2 returns a number (two scalar indices), a vector (one scalar index)
// or a sub-matrix.
func (m *Matrix) Index2(ri, ci []int, scalarRow, scalarCol bool) Value {
	switch {
	case scalarRow && scalarCol:
		return Num(m.At(ri[0], ci[0]))
	case scalarRow || scalarCol:
		out := make([]float64, 0, len(ri)*len(ci))
		for _, i := range ri {
			for _, j := range ci {
				out = append(out, m.At(i, j))
			}
		}
		return RealVec(out)
	}
	out := NewMatrix(len(ri), len(ci))
	for a, i := range ri {
		for b, j := range ci {
			out.Data[a*out.Cols+b] = m.At(i, j)
		}
	}
	return out
}

// Len is the number of rows; Index(i) is row i as a vector.
func (m *Matrix) Len() int { return m.Rows }

// Index returns row i as a vector.
func (m *Matrix) Index(i int) Value {
	return RealVec(append([]float64(nil), m.Data[i*m.Cols:(i+1)*m.Cols]...))
}

// String shows the matrix in literal syntax with right-aligned columns:
//
//	{1,  2 |
//	 3, 40}
//
// Matrices with more than MaxShown rows or columns show the first and last
// few, with ... between them.
func (m *Matrix) String() string {
	return formatGrid(m.Rows, m.Cols, func(i, j int) string { return FormatNum(m.At(i, j)) })
}

// formatGrid lays out a rows×cols matrix in literal syntax, cell(i, j)
// giving the text of entry (i, j); see Matrix.String.
func formatGrid(rows, cols int, cell func(i, j int) string) string {
	if rows == 0 || cols == 0 {
		return fmt.Sprintf("{} (%d×%d)", rows, cols)
	}
	ri := shownIndices(rows)
	ci := shownIndices(cols)
	cells := make([][]string, len(ri))
	width := make([]int, len(ci))
	for a, i := range ri {
		cells[a] = make([]string, len(ci))
		for b, j := range ci {
			s := "..."
			if i >= 0 && j >= 0 {
				s = cell(i, j)
			} else if i < 0 && j >= 0 {
				s = ":"
			}
			cells[a][b] = s
			if len(s) > width[b] {
				width[b] = len(s)
			}
		}
	}
	var sb strings.Builder
	sb.WriteByte('{')
	for a := range ri {
		if a > 0 {
			sb.WriteString(" |\n ")
		}
		for b := range ci {
			if b > 0 {
				sb.WriteString(", ")
			}
			sb.WriteString(strings.Repeat(" ", width[b]-len(cells[a][b])))
			sb.WriteString(cells[a][b])
		}
	}
	sb.WriteByte('}')
	if len(ri) < rows || len(ci) < cols {
		fmt.Fprintf(&sb, " (%d×%d)", rows, cols)
	}
	return sb.String()
}

// shownIndices lists the indices displayed out of n, with -1 for an elision.
func shownIndices(n int) []int {
	var out []int
	if n <= MaxShown {
		for i := 0; i < n; i++ {
			out = append(out, i)
		}
		return out
	}
	for i := 0; i < headShown; i++ {
		out = append(out, i)
	}
	out = append(out, -1)
	for i := n - tailShown; i < n; i++ {
		out = append(out, i)
	}
	return out
}

// Collect turns a list of values into the value a vector literal gives: a
// real vector when every element is a Num, a complex vector when every
// element is a Num or a Complex (with at least one Complex), and the list
// itself otherwise.
func Collect(l List) Value {
	real, cplx := true, true
	for _, v := range l {
		switch v.(type) {
		case Num:
		case Complex:
			real = false
		default:
			real, cplx = false, false
		}
	}
	switch {
	case real:
		out := make([]float64, len(l))
		for i, v := range l {
			out[i] = float64(v.(Num))
		}
		return RealVec(out)
	case cplx:
		out := make([]complex128, len(l))
		for i, v := range l {
			if n, ok := v.(Num); ok {
				out[i] = complex(float64(n), 0)
			} else {
				out[i] = complex128(v.(Complex))
			}
		}
		return ComplexVec(out)
	}
	return l
}

// MaxListDepth bounds how deeply list literals may nest lists, so that
// displaying, exporting and comparing a list (all recursive) stay shallow.
const MaxListDepth = 64

// ListShape returns the nesting depth of l (1 for a list holding no lists)
// and its size as a tree: its entries plus, recursively, those of the
// lists it holds, a list held in several places counted in each (what a
// display, an export or a comparison walks). A list shared by several
// entries is measured once, so the cost is the number of distinct lists,
// even for [x, x] nested fifty times (2⁵⁰ entries as a tree). Below
// maxDepth levels the walk stops, reporting a depth above maxDepth.
func ListShape(l List, maxDepth int) (depth int, size float64) {
	type key struct {
		p *Value
		n int
	}
	type shape struct {
		depth int
		size  float64
	}
	memo := map[key]shape{}
	var walk func(l List, level int) shape
	walk = func(l List, level int) shape {
		if len(l) == 0 {
			return shape{1, 0}
		}
		k := key{&l[0], len(l)}
		if s, ok := memo[k]; ok {
			return s
		}
		s := shape{1, float64(len(l))}
		for _, v := range l {
			sub, ok := v.(List)
			if !ok {
				continue
			}
			if level >= maxDepth {
				s.depth = maxDepth + 1
				break
			}
			c := walk(sub, level+1)
			s.depth = max(s.depth, c.depth+1)
			s.size += c.size
		}
		memo[k] = s
		return s
	}
	s := walk(l, 1)
	return s.depth, s.size
}
