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

// ExcerptWidth is the most code points of a source line that Excerpt
// shows; a longer line is cut to a window around the position.
const ExcerptWidth = 120

// Excerpt returns two lines that show the span [pos, end): the source line
// containing pos and a line with a run of ^ under the span (clipped to that
// line; at least one caret). Tabs in the source are kept in the caret line
// so the carets stay aligned. A line longer than ExcerptWidth code points is
// shown as a window of that width around pos, with "…" where it was cut, so
// an error in a megabyte-long line prints a few hundred bytes; the caret
// stays under the right character (the column in the message is the true
// one).
func (f *File) Excerpt(pos, end Pos) []string {
	p := f.Position(pos)
	line := f.Line(p.Line)
	lineStart := f.lines[p.Line-1]
	// The window [from, to) in code points and in bytes.
	total := utf8.RuneCountInString(line)
	col := min(p.Column-1, total)
	from, to := 0, total
	if total > ExcerptWidth {
		from = min(max(col-ExcerptWidth/2, 0), total-ExcerptWidth)
		to = from + ExcerptWidth
	}
	bFrom, bTo := runeOffset(line, 0, 0, from), len(line)
	if to < total {
		bTo = runeOffset(line, bFrom, from, to)
	}
	var shown, b strings.Builder
	if from > 0 {
		shown.WriteString("…")
		b.WriteByte(' ')
	}
	shown.WriteString(line[bFrom:bTo])
	if to < total {
		shown.WriteString("…")
	}
	n := from
	for _, r := range line[bFrom:] {
		n++
		if n > col {
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
		e := min(int(end), lineStart+bTo)
		if e > p.Offset {
			width = utf8.RuneCountInString(f.Src[p.Offset:e])
		}
	}
	if width < 1 {
		width = 1
	}
	b.WriteString(strings.Repeat("^", width))
	return []string{shown.String(), b.String()}
}

// runeOffset returns the byte offset in s of code point number k, walking
// from byte offset b, which is code point number j (j ≤ k).
func runeOffset(s string, b, j, k int) int {
	for ; j < k && b < len(s); j++ {
		_, w := utf8.DecodeRuneInString(s[b:])
		b += w
	}
	return b
}

// QuoteWidth is the most code points of user text (a name, a number, an
// expression) that a message quotes whole; see Shorten.
const QuoteWidth = 60

// MessageWidth is the most code points of a message that an error shows;
// see ClipMessage.
const MessageWidth = 2000

// ClipMessage cuts msg to MessageWidth code points, saying so, as the last
// guard against a message that quotes a long input in full.
func ClipMessage(msg string) string {
	if len(msg) <= MessageWidth || utf8.RuneCountInString(msg) <= MessageWidth {
		return msg
	}
	cut := runeOffset(msg, 0, 0, MessageWidth)
	return msg[:cut] + fmt.Sprintf("… (message cut at %d of %d characters)", MessageWidth, utf8.RuneCountInString(msg))
}

// Shorten returns s when it has at most n code points, and otherwise its
// first and last n/2 code points around "…" and the full length, so that
// messages quoting user text (a name, a number, an expression) stay short.
func Shorten(s string, n int) string {
	if len(s) <= n {
		return s
	}
	total := utf8.RuneCountInString(s)
	if total <= n {
		return s
	}
	head := runeOffset(s, 0, 0, n/2)
	tail := runeOffset(s, head, n/2, total-n/2)
	return fmt.Sprintf("%s…%s (%d characters)", s[:head], s[tail:], total)
}
