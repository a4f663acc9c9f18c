package value

import (
	"fmt"
	"math"
	"strconv"
	"strings"
)

// Display rules (stable, for golden tests):
//
//   - A number is shown with up to 10 significant digits (%.10g), integers
//     without a decimal point, exponents without padding or plus sign:
//     64, 0.1, 1.5e-7, 1e20, -0 is 0, and inf, -inf, nan.
//   - A complex number is re±imi with the same rule for both parts:
//     2+3i, 0-1i, 1.5+nani.
//   - A string is shown quoted with escapes ("a\n"); print writes it raw.
//   - Vectors, ranges and lists are [a, b, c]. With more than MaxShown
//     entries only the first headShown and last tailShown are shown, then
//     the count: [1, 2, 3, 4, 5, 6, ..., 98, 99, 100] (100 entries).
//   - A list's text, nested lists included, stops after MaxListText
//     characters; the entries after that show as "…".
//   - A matrix is shown in literal syntax, rows on their own lines with
//     right-aligned columns; see Matrix.String.
const (
	MaxShown  = 12
	headShown = 6
	tailShown = 3
)

// FormatNum formats x by the display rules.
func FormatNum(x float64) string {
	switch {
	case math.IsNaN(x):
		return "nan"
	case math.IsInf(x, 1):
		return "inf"
	case math.IsInf(x, -1):
		return "-inf"
	case x == 0:
		return "0"
	}
	s := strconv.FormatFloat(x, 'g', 10, 64)
	if i := strings.IndexByte(s, 'e'); i >= 0 {
		mant, exp := s[:i], s[i+1:]
		sign := ""
		if exp[0] == '-' {
			sign = "-"
		}
		exp = strings.TrimLeft(exp[1:], "0")
		s = mant + "e" + sign + exp
	}
	return s
}

// FormatComplex formats z by the display rules.
func FormatComplex(z complex128) string {
	re, im := real(z), imag(z)
	sign := "+"
	if im < 0 || math.IsInf(im, -1) {
		sign = "-"
		im = -im
	}
	return FormatNum(re) + sign + FormatNum(im) + "i"
}

// Quote returns s in string-literal syntax.
func Quote(s string) string {
	var b strings.Builder
	b.WriteByte('"')
	for _, r := range s {
		switch r {
		case '"':
			b.WriteString(`\"`)
		case '\\':
			b.WriteString(`\\`)
		case '\n':
			b.WriteString(`\n`)
		case '\t':
			b.WriteString(`\t`)
		default:
			b.WriteRune(r)
		}
	}
	b.WriteByte('"')
	return b.String()
}

// MaxListText bounds the text of a list's display, nested lists included:
// once it is spent, the remaining entries show as "…". A list of lists
// can hold millions of entries as a tree (see ListShape) although each
// level shows at most MaxShown.
const MaxListText = 10000

// formatList formats l by the display rules within MaxListText.
func formatList(l List) string {
	budget := MaxListText
	return formatListWithin(l, &budget)
}

func formatListWithin(l List, budget *int) string {
	return formatSeq(len(l), func(i int) string {
		if *budget <= 0 {
			return "…"
		}
		var s string
		if sub, ok := l[i].(List); ok {
			s = formatListWithin(sub, budget)
		} else {
			s = l[i].String()
		}
		*budget -= len(s)
		return s
	})
}

func formatSeq(n int, elem func(i int) string) string {
	var b strings.Builder
	b.WriteByte('[')
	for _, i := range shownIndices(n) {
		if b.Len() > 1 {
			b.WriteString(", ")
		}
		if i < 0 {
			b.WriteString("...")
			continue
		}
		b.WriteString(elem(i))
	}
	b.WriteByte(']')
	if n > MaxShown {
		fmt.Fprintf(&b, " (%d entries)", n)
	}
	return b.String()
}
