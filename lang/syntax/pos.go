// Package syntax holds the scanner, parser and syntax tree of the Semiflow
// language. It knows nothing of evaluation.
//
// Positions are plain byte offsets (Pos) into one source text; a File maps
// them to 1-based line and column numbers, columns counted in Unicode code
// points.
package syntax

import (
	"fmt"
	"sort"
	"strings"
	"unicode/utf8"
)

// Pos is a byte offset into a File's source. NoPos (-1) is no position.
type Pos int

// NoPos is the zero position: none known.
const NoPos Pos = -1

// IsValid reports whether p is a known position.
func (p Pos) IsValid() bool { return p >= 0 }

// File is one named source text with its line table.
type File struct {
	Name  string
	Src   string
	lines []int // byte offset of the start of each line
}

// NewFile returns a File for src, named name (for example "cell" or a path).
func NewFile(name, src string) *File {
	f := &File{Name: name, Src: src, lines: []int{0}}
	for i := 0; i < len(src); i++ {
		if src[i] == '\n' {
			f.lines = append(f.lines, i+1)
		}
	}
	return f
}

// Position is a resolved position: file name, byte offset, 1-based line, and
// 1-based column in code points.
type Position struct {
	Filename string
	Offset   int
	Line     int
	Column   int
}

// String formats p as name:line:col.
func (p Position) String() string {
	return fmt.Sprintf("%s:%d:%d", p.Filename, p.Line, p.Column)
}

// Position resolves p. Offsets outside the source are clamped to it.
func (f *File) Position(p Pos) Position {
	off := int(p)
	if off < 0 {
		off = 0
	}
	if off > len(f.Src) {
		off = len(f.Src)
	}
	i := sort.Search(len(f.lines), func(i int) bool { return f.lines[i] > off }) - 1
	col := utf8.RuneCountInString(f.Src[f.lines[i]:off]) + 1
	return Position{Filename: f.Name, Offset: off, Line: i + 1, Column: col}
}

// LineCount is the number of lines in the file (at least 1).
func (f *File) LineCount() int { return len(f.lines) }

// Line returns the text of the 1-based line n without its newline.
func (f *File) Line(n int) string {
	if n < 1 || n > len(f.lines) {
		return ""
	}
	start := f.lines[n-1]
	end := len(f.Src)
	if n < len(f.lines) {
		end = f.lines[n] - 1
	}
	return strings.TrimSuffix(f.Src[start:end], "\r")
}

// Excerpt returns two lines that show the span [pos, end): the source line
// containing pos and a line with a run of ^ under the span (clipped to that
// line; at least one caret). Tabs in the source are kept in the caret line
// so the carets stay aligned.
func (f *File) Excerpt(pos, end Pos) []string {
	p := f.Position(pos)
	line := f.Line(p.Line)
	var b strings.Builder
	n := 0
	for _, r := range line {
		n++
		if n >= p.Column {
			break
		}
		if r == '\t' {
			b.WriteByte('\t')
		} else {
			b.WriteByte(' ')
		}
	}
	width := 1
	if end > pos {
		e := int(end)
		lineEnd := f.lines[p.Line-1] + len(line)
		if e > lineEnd {
			e = lineEnd
		}
		if e > p.Offset {
			width = utf8.RuneCountInString(f.Src[p.Offset:e])
		}
	}
	if width < 1 {
		width = 1
	}
	b.WriteString(strings.Repeat("^", width))
	return []string{line, b.String()}
}
