package plot

import (
	"math"
	"strconv"
	"strings"
	"unicode"
	"unicode/utf8"
)

// FontFamily is the font-family list written on every SVG figure: the Go
// font first (the face of our PNG figures, where a reader has it), then
// humanist and grotesque faces common on the three desktop systems, and the
// generic family last, so that a renderer lacking all named fonts still has
// a sans-serif face of similar metrics.
const FontFamily = "Go, Noto Sans, Segoe UI, Liberation Sans, Arial, DejaVu Sans, sans-serif"

const minus = "\u2212"

// escape returns s with the five XML special characters replaced by entities.
// Control characters other than tab and newline, which XML 1.0 forbids, are
// dropped, as are invalid UTF-8 bytes.
func escape(s string) string {
	var b strings.Builder
	for i, w := 0, 0; i < len(s); i += w {
		r, n := utf8.DecodeRuneInString(s[i:])
		w = n
		switch {
		case r == utf8.RuneError && n == 1:
			continue
		case r == '&':
			b.WriteString("&amp;")
		case r == '<':
			b.WriteString("&lt;")
		case r == '>':
			b.WriteString("&gt;")
		case r == '"':
			b.WriteString("&quot;")
		case r == '\'':
			b.WriteString("&apos;")
		case r == '\t' || r == '\n':
			b.WriteByte(' ')
		case r < 0x20 || r == 0xFFFE || r == 0xFFFF:
			continue
		default:
			b.WriteRune(r)
		}
	}
	return b.String()
}

// runeEm is a conservative advance width, in em, of r in the fonts of
// FontFamily. DejaVu Sans, the widest of them, sets digits at 0.636 em,
// lower-case letters at about 0.6 em and capitals up to 0.8 em; the estimate
// errs on the wide side so that labels placed from it never overlap. It
// bounds Go Regular, the font of our PNG figures, for every ASCII character
// (measured).
func runeEm(r rune) float64 {
	switch {
	case strings.ContainsRune(" .,:;'|!il()[]", r):
		return 0.36
	case r == '@': // 1.02 em in Go Regular
		return 1.05
	case strings.ContainsRune("mwMW%", r):
		return 0.95
	case r >= 'A' && r <= 'Z':
		return 0.76
	case r < 0x80:
		return 0.66
	case r >= 0x4E00 && r <= 0x9FFF: // CJK ideographs
		return 1.0
	default:
		return 0.7
	}
}

// TextWidth returns the estimated width in px of s set at the given font size
// in px. It is an upper estimate for the fonts of FontFamily.
func TextWidth(s string, size float64) float64 {
	w := 0.0
	for _, r := range s {
		w += runeEm(r)
	}
	return w * size
}

// wrapText breaks s at spaces into at most maxLines lines, each estimated no
// wider than width at the given size. Text that does not fit is cut and ended
// with an ellipsis.
func wrapText(s string, width, size float64, maxLines int) []string {
	words := strings.Fields(s)
	if len(words) == 0 || maxLines < 1 {
		return nil
	}
	var lines []string
	cur := ""
	for _, w := range words {
		switch {
		case cur == "":
			cur = w
		case TextWidth(cur+" "+w, size) <= width:
			cur += " " + w
		default:
			lines = append(lines, cur)
			cur = w
		}
	}
	lines = append(lines, cur)
	if len(lines) > maxLines {
		last := strings.Join(lines[maxLines-1:], " ")
		lines = append(lines[:maxLines-1], last)
	}
	for i := range lines {
		lines[i] = shorten(lines[i], width, size)
	}
	return lines
}

// shorten returns s, or a prefix of s ended by an ellipsis, estimated no wider
// than width.
func shorten(s string, width, size float64) string {
	if TextWidth(s, size) <= width {
		return s
	}
	rs := []rune(s)
	for n := len(rs) - 1; n > 0; n-- {
		t := strings.TrimRight(string(rs[:n]), " ") + "…"
		if TextWidth(t, size) <= width {
			return t
		}
	}
	return "…"
}

// label is a formatted number: a mantissa, and an optional exponent drawn
// raised after it; or a text with subscripts (parts, from textLabel).
type label struct {
	mant, exp string
	parts     []textPart
}

// textPart is a piece of a text, lowered and smaller when sub is set.
type textPart struct {
	s   string
	sub bool
}

// subDrop is how far a subscript's baseline drops, in units of the text's
// size; subscripts are drawn at 70% of it.
const subDrop = 0.21

// textLabel is the label of a text in which "_x", "_min" or "_{…}" after a
// symbol (a letter starting a word of at most two letters, or any other
// non-space character such as ‖ or a bracket) is a subscript: σ_min, u_i(t),
// ‖·‖_W. A longer word before "_" keeps it (a name like decay_rate).
func textLabel(s string) label {
	if !strings.Contains(s, "_") {
		return label{mant: s}
	}
	rs := []rune(s)
	var parts []textPart
	var cur []rune
	flush := func(sub bool) {
		if len(cur) > 0 {
			parts = append(parts, textPart{string(cur), sub})
			cur = nil
		}
	}
	for i := 0; i < len(rs); i++ {
		if rs[i] != '_' || i == 0 || i+1 >= len(rs) || rs[i-1] == ' ' || !symbolBefore(rs, i) {
			cur = append(cur, rs[i])
			continue
		}
		j, k := i+1, i+1
		if rs[j] == '{' {
			for k = j + 1; k < len(rs) && rs[k] != '}'; k++ {
			}
			if k == len(rs) {
				cur = append(cur, rs[i])
				continue
			}
			j++ // body rs[j:k], then skip the brace
		} else {
			for k < len(rs) && (unicode.IsLetter(rs[k]) || unicode.IsDigit(rs[k])) {
				k++
			}
			if k == j {
				cur = append(cur, rs[i])
				continue
			}
		}
		flush(false)
		cur = rs[j:k]
		flush(true)
		if k < len(rs) && rs[k] == '}' {
			k++
		}
		i = k - 1
	}
	flush(false)
	return label{mant: s, parts: parts}
}

// symbolBefore reports whether the "_" at rs[i] follows a symbol: a
// non-letter, or a letter whose word so far has at most two letters.
func symbolBefore(rs []rune, i int) bool {
	n := 0
	for k := i - 1; k >= 0 && unicode.IsLetter(rs[k]); k-- {
		n++
	}
	return n <= 2
}

func (l label) width(size float64) float64 {
	if l.parts != nil {
		w := 0.0
		for _, p := range l.parts {
			if p.sub {
				w += TextWidth(p.s, 0.7*size)
			} else {
				w += TextWidth(p.s, size)
			}
		}
		return w
	}
	return TextWidth(l.mant, size) + TextWidth(l.exp, 0.7*size)
}

func (l label) String() string {
	if l.exp == "" {
		return l.mant
	}
	return l.mant + "^" + l.exp
}

// svg returns the label as escaped SVG text content.
func (l label) svg() string {
	if l.parts != nil {
		var b strings.Builder
		low := false
		for _, p := range l.parts {
			switch {
			case p.sub:
				b.WriteString(`<tspan dy="0.3em" font-size="70%">` + escape(p.s) + `</tspan>`)
			case low: // back up from a subscript: 0.3 × 70% of the size; a
				// leading space kept as a no-break space (a renderer may drop it)
				t := p.s
				if strings.HasPrefix(t, " ") {
					t = "\u00a0" + t[1:]
				}
				b.WriteString(`<tspan dy="-0.21em">` + escape(t) + `</tspan>`)
			default:
				b.WriteString(escape(p.s))
			}
			low = p.sub
		}
		return b.String()
	}
	if l.exp == "" {
		return escape(l.mant)
	}
	return escape(l.mant) + `<tspan dy="-0.45em" font-size="70%">` + escape(l.exp) + `</tspan>`
}

// fixed formats v with d decimals, U+2212 for a minus sign and −0 as 0.
func fixed(v float64, d int) string {
	s := strconv.FormatFloat(v, 'f', d, 64)
	if strings.HasPrefix(s, "-") {
		if strings.Trim(s[1:], "0.") == "" {
			return s[1:]
		}
		return minus + s[1:]
	}
	return s
}

func intExp(e int) string {
	if e < 0 {
		return minus + strconv.Itoa(-e)
	}
	return strconv.Itoa(e)
}

// linearLabels formats ticks spaced by step by the rules in the package
// documentation.
func linearLabels(ticks []float64, step float64) []label {
	maxAbs := 0.0
	for _, t := range ticks {
		maxAbs = math.Max(maxAbs, math.Abs(t))
	}
	stepExp := int(math.Floor(math.Log10(step) + 1e-9))
	out := make([]label, len(ticks))
	if maxAbs >= 1e5 || maxAbs < 1e-3 {
		for i, t := range ticks {
			if math.Abs(t) < step*1e-6 {
				out[i] = label{mant: "0"}
				continue
			}
			e := int(math.Floor(math.Log10(math.Abs(t)) + 1e-12))
			m := t / math.Pow(10, float64(e))
			if math.Abs(m) >= 9.9999999 { // rounding carried into the next decade
				e++
				m /= 10
			}
			d := max(0, e-stepExp)
			out[i] = label{mant: fixed(m, d) + "×10", exp: intExp(e)}
		}
		return out
	}
	d := max(0, -stepExp)
	for i, t := range ticks {
		out[i] = label{mant: fixed(t, d)}
	}
	return out
}

// powerOfTen reports whether v is 10^e for an integer e, and returns e.
func powerOfTen(v float64) (int, bool) {
	if v <= 0 {
		return 0, false
	}
	e := math.Round(math.Log10(v))
	return int(e), math.Abs(v/math.Pow(10, e)-1) < 1e-9
}

// logLabels formats major ticks of a logarithmic axis: all decades as 10ᵉ, or,
// when some ticks are not decades, each tick by the linear rules with a step of
// its own order of magnitude.
func logLabels(ticks []float64) []label {
	out := make([]label, len(ticks))
	allDecades := true
	for _, t := range ticks {
		if _, ok := powerOfTen(t); !ok {
			allDecades = false
		}
	}
	for i, t := range ticks {
		if allDecades {
			e, _ := powerOfTen(t)
			out[i] = label{mant: "10", exp: intExp(e)}
			continue
		}
		step := math.Pow(10, math.Floor(math.Log10(t)+1e-9))
		out[i] = linearLabels([]float64{t}, step)[0]
	}
	return out
}

// FormatValue formats v for legends and annotations with four significant
// digits and trailing zeros removed: as a decimal when 10⁻² ≤ |v| < 10⁴ (%.4g),
// otherwise as mantissa and exponent written "1e−3" or "1.5e6" (U+2212 minus,
// no plus sign, no leading zeros). A negative value takes U+2212, −0 is 0, and
// infinities are ∞.
func FormatValue(v float64) string {
	switch {
	case math.IsNaN(v):
		return "NaN"
	case math.IsInf(v, 1):
		return "∞"
	case math.IsInf(v, -1):
		return minus + "∞"
	case v == 0:
		return "0"
	}
	var s string
	if a := math.Abs(v); a >= 1e-2 && a < 1e4 {
		s = strconv.FormatFloat(v, 'g', 4, 64)
	} else {
		s = strconv.FormatFloat(v, 'e', 3, 64)
	}
	mant, exp, hasExp := strings.Cut(s, "e")
	if hasExp && strings.Contains(mant, ".") {
		mant = strings.TrimRight(strings.TrimRight(mant, "0"), ".")
	}
	if strings.HasPrefix(mant, "-") {
		mant = minus + mant[1:]
	}
	if !hasExp {
		return mant
	}
	e, _ := strconv.Atoi(exp)
	return mant + "e" + intExp(e)
}

// FormatLevels formats a set of values shown together (contour levels in
// one legend) in one style: all by FormatValue when every nonzero |v| lies
// in [10⁻², 10⁴), otherwise all as mantissa and exponent ("1e−1", "1e−3",
// "2.5e−2"), so that a legend never mixes 0.1 with 1e−3.
func FormatLevels(vs []float64) []string {
	out := make([]string, len(vs))
	sci := false
	for _, v := range vs {
		if a := math.Abs(v); finite(v) && v != 0 && (a < 1e-2 || a >= 1e4) {
			sci = true
		}
	}
	for i, v := range vs {
		out[i] = FormatValue(v)
		if sci && finite(v) && v != 0 && !strings.Contains(out[i], "e") {
			s := strconv.FormatFloat(v, 'e', 3, 64)
			mant, exp, _ := strings.Cut(s, "e")
			mant = strings.TrimRight(strings.TrimRight(mant, "0"), ".")
			if strings.HasPrefix(mant, "-") {
				mant = minus + mant[1:]
			}
			e, _ := strconv.Atoi(exp)
			out[i] = mant + "e" + intExp(e)
		}
	}
	return out
}
