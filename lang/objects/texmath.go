package objects

import (
	"html"
	"regexp"
	"strings"
	"unicode"
	"unicode/utf8"
)

// Reports write their formulas in plain text with Unicode symbols and a
// little TeX: ‖e^{tA}‖₂, σ_min(zI − A) ≤ ε, sup_{Re z > 0}. A notebook
// typesets TeX between \( and \) in HTML output, and between $ and $ in
// Markdown output, with its own math renderer. MathHTML and MathMarkdown
// find the formulas in such a text and write them as TeX, leaving the prose
// as it is; text/plain keeps the Unicode form.
//
// A formula is a longest run of math tokens — single letters, Greek
// letters, numbers, the operators and brackets of formulas, sub- and
// superscripts, short mixed-case products such as zI or tA, and the names
// Re, Im, sup, inf, max, min, exp, log, det, diag — that holds at least one
// sign of mathematics (a Greek letter, ‖, a sub- or superscript, or a
// relation such as ≤ ∈ ⊆) and whose brackets balance. Any other word, a
// hyphenated word and the end of a sentence end a run.

// mathTok is one token of a text: its source text, its TeX, and its class.
type mathTok struct {
	src, tex string
	kind     byte // 'p' prose, 'b' breaker, 's' space, 'm' math, 'M' strong math, ',' comma
}

var texNames = map[string]string{
	"Re": `\operatorname{Re}`, "Im": `\operatorname{Im}`, "sup": `\sup`, "inf": `\inf`,
	"max": `\max`, "min": `\min`, "exp": `\exp`, "log": `\log`, "det": `\det`, "diag": `\operatorname{diag}`,
	"ln": `\ln`, "sin": `\sin`, "cos": `\cos`, "tan": `\tan`, "arg": `\arg`,
	"λmax": `\lambda_{\max}`, "λmin": `\lambda_{\min}`,
}

var texGreek = map[rune]string{
	'α': `\alpha`, 'β': `\beta`, 'γ': `\gamma`, 'δ': `\delta`, 'ε': `\varepsilon`, 'ζ': `\zeta`,
	'η': `\eta`, 'θ': `\theta`, 'κ': `\kappa`, 'λ': `\lambda`, 'μ': `\mu`, 'ν': `\nu`, 'ξ': `\xi`,
	'π': `\pi`, 'ρ': `\rho`, 'σ': `\sigma`, 'τ': `\tau`, 'φ': `\varphi`, 'χ': `\chi`, 'ψ': `\psi`,
	'ω': `\omega`, 'Γ': `\Gamma`, 'Δ': `\Delta`, 'Θ': `\Theta`, 'Λ': `\Lambda`,
	'Φ': `\Phi`, 'Ψ': `\Psi`, 'Ω': `\Omega`, 'Σ': `\sum`, 'Π': `\prod`,
}

// texStrong are symbols that make a run a formula; texWeak may stand in one.
var texStrong = map[rune]string{
	'‖': `\|`, '≤': `\le `, '≥': `\ge `, '∈': `\in `, '∉': `\notin `, '⊆': `\subseteq `, '⊂': `\subset `,
	'⊕': `\oplus `, '⊗': `\otimes `, '∞': `\infty `, '√': `\surd `, '∫': `\int `, '→': `\to `,
	'≈': `\approx `, '≲': `\lesssim `, '≠': `\ne `, '∑': `\sum `, '∂': `\partial `, '⊙': `\odot `,
}

var texWeak = map[rune]string{
	'+': "+", '−': "-", '=': "=", '<': "<", '>': ">", '(': "(", ')': ")", '[': "[", ']': "]",
	'{': `\{`, '}': `\}`, '|': `|`, ':': ":", '/': "/", '·': `\cdot `, '×': `\times `, '\'': "'", '!': "!",
	'*': "^{*}", '⟨': `\langle `, '⟩': `\rangle `,
}

var superscripts = map[rune]string{'⁰': "0", '¹': "1", '²': "2", '³': "3", '⁴': "4", '⁵': "5", '⁶': "6", '⁷': "7", '⁸': "8", '⁹': "9", '⁻': "-", 'ᵀ': "T", 'ᴴ': "H", '⁺': "+"}
var subscripts = map[rune]string{'₀': "0", '₁': "1", '₂': "2", '₃': "3", '₄': "4", '₅': "5", '₆': "6", '₇': "7", '₈': "8", '₉': "9"}

var numberRE = regexp.MustCompile(`^[0-9]+(\.[0-9]+)?(e[-+]?[0-9]+)?`)

// mathTokens splits s into tokens.
func mathTokens(s string) []mathTok {
	var out []mathTok
	rs := []rune(s)
	for i := 0; i < len(rs); {
		r := rs[i]
		switch {
		case r == ' ':
			out = append(out, mathTok{" ", " ", 's'})
			i++
		case r >= '0' && r <= '9':
			m := numberRE.FindString(string(rs[i:]))
			n := utf8.RuneCountInString(m)
			tex := m
			if strings.Contains(m, "e") {
				tex = `\text{` + m + `}`
			}
			out = append(out, mathTok{m, tex, 'm'})
			i += n
		case r == '_' || r == '^':
			// A group: _{…}, ^{…} (copied as TeX, braces balanced), or one
			// letter run, Greek letter or digit.
			j := i + 1
			var body string
			if j < len(rs) && rs[j] == '{' {
				depth := 0
				k := j
				for ; k < len(rs); k++ {
					if rs[k] == '{' {
						depth++
					} else if rs[k] == '}' {
						if depth--; depth == 0 {
							break
						}
					}
				}
				if k == len(rs) {
					out = append(out, mathTok{string(rs[i:]), "", 'b'})
					return out
				}
				inner := string(rs[j+1 : k])
				body = "{" + texOf(inner) + "}"
				j = k + 1
			} else {
				k := j
				for k < len(rs) && (isASCIILetter(rs[k]) || rs[k] >= '0' && rs[k] <= '9') {
					k++
				}
				if k == j && j < len(rs) && texGreek[rs[j]] != "" {
					k = j + 1
				}
				if k == j {
					out = append(out, mathTok{string(r), "", 'b'})
					i++
					continue
				}
				w := string(rs[j:k])
				switch {
				case texNames[w] != "":
					body = "{" + texNames[w] + "}"
				case utf8.RuneCountInString(w) > 1 && isWord(w) && (len(w) > 2 || strings.ToLower(w) != w):
					body = `{\mathrm{` + w + `}}` // a word (mix, TV); ij, nx stay indices
				default:
					body = "{" + texOf(w) + "}"
				}
				j = k
			}
			out = append(out, mathTok{string(rs[i:j]), string(r) + body, 'M'})
			i = j
		case superscripts[r] != "" || subscripts[r] != "":
			table, mark := superscripts, "^"
			if subscripts[r] != "" {
				table, mark = subscripts, "_"
			}
			j := i
			var b strings.Builder
			for j < len(rs) && table[rs[j]] != "" {
				b.WriteString(table[rs[j]])
				j++
			}
			out = append(out, mathTok{string(rs[i:j]), mark + "{" + b.String() + "}", 'M'})
			i = j
		case texGreek[r] != "":
			// λmax and λmin are one name.
			if j := i + 4; j <= len(rs) && texNames[string(rs[i:j])] != "" {
				out = append(out, mathTok{string(rs[i:j]), texNames[string(rs[i:j])], 'M'})
				i = j
				continue
			}
			out = append(out, mathTok{string(r), texGreek[r] + " ", 'M'})
			i++
		case isASCIILetter(r):
			j := i
			for j < len(rs) && isASCIILetter(rs[j]) {
				j++
			}
			w := string(rs[i:j])
			// A hyphenated word is prose (ε-pseudospectra, Lumer–Phillips).
			hyph := j < len(rs) && (rs[j] == '-' || rs[j] == '–') && j+1 < len(rs) && unicode.IsLetter(rs[j+1]) ||
				i > 0 && (rs[i-1] == '-' || rs[i-1] == '–')
			switch {
			case hyph:
				out = append(out, mathTok{w, "", 'p'})
			case texNames[w] != "":
				out = append(out, mathTok{w, texNames[w] + " ", 'm'})
			case len(w) == 1 || mathWord(w):
				out = append(out, mathTok{w, w, 'm'})
			default:
				out = append(out, mathTok{w, "", 'p'})
			}
			i = j
		case r == '∞' && i > 0 && rs[i-1] == '‖': // ‖u‖∞, the maximum norm
			out = append(out, mathTok{string(r), `_{\infty}`, 'M'})
			i++
		case texStrong[r] != "":
			out = append(out, mathTok{string(r), texStrong[r], 'M'})
			i++
		case r == '*' && i > 0 && (isASCIILetter(rs[i-1]) || rs[i-1] == ')'):
			out = append(out, mathTok{"*", "^{*}", 'M'})
			i++
		case r == ',':
			out = append(out, mathTok{",", ",", ','})
			i++
		case r == '.' && i+1 < len(rs) && rs[i+1] >= '0' && rs[i+1] <= '9':
			out = append(out, mathTok{".", ".", 'm'})
			i++
		case r == '-' && i+1 < len(rs) && (rs[i+1] >= '0' && rs[i+1] <= '9' || rs[i+1] == ' '):
			out = append(out, mathTok{"-", "-", 'm'})
			i++
		case texWeak[r] != "" && r != '*':
			out = append(out, mathTok{string(r), texWeak[r], 'm'})
			i++
		default:
			out = append(out, mathTok{string(r), "", 'b'})
			i++
		}
	}
	// A Greek letter joined to a hyphenated word is prose too (ε-pseudospectra).
	for k := range out {
		if out[k].kind == 'M' && k+1 < len(out) && out[k+1].src == "-" {
			out[k].kind, out[k+1].kind = 'p', 'p'
		}
	}
	return out
}

func isASCIILetter(r rune) bool { return r >= 'a' && r <= 'z' || r >= 'A' && r <= 'Z' }

func isWord(w string) bool {
	for _, r := range w {
		if !isASCIILetter(r) {
			return false
		}
	}
	return true
}

// mathWord reports whether a run of letters reads as a product of
// symbols (zI, tA, ZTZ, RAR) rather than a word: at most four letters with
// an upper-case letter after the first, or all upper case.
func mathWord(w string) bool {
	if len(w) > 4 {
		return false
	}
	for k, r := range w {
		if k > 0 && r >= 'A' && r <= 'Z' {
			return true
		}
	}
	return false
}

// texOf converts a whole string known to be a formula.
func texOf(s string) string {
	var b strings.Builder
	for _, t := range mathTokens(s) {
		if t.tex == "" {
			b.WriteString(t.src)
		} else {
			b.WriteString(t.tex)
		}
	}
	return b.String()
}

// mathSpans returns the text split into pieces, each prose (math false) or
// a formula with its TeX.
type mathPiece struct {
	text, tex string
	math      bool
}

func mathSpans(s string) []mathPiece {
	toks := mathTokens(s)
	var out []mathPiece
	prose := func(t string) {
		if n := len(out); n > 0 && !out[n-1].math {
			out[n-1].text += t
			return
		}
		out = append(out, mathPiece{text: t})
	}
	for i := 0; i < len(toks); {
		if toks[i].kind != 'm' && toks[i].kind != 'M' {
			prose(toks[i].src)
			i++
			continue
		}
		// The longest run of math tokens, spaces and commas inside brackets.
		j, depth, end := i, 0, i
		for j < len(toks) {
			k := toks[j].kind
			if toks[j].src == ":" && depth == 0 {
				break // "report: formula", not set-builder {z : …}
			}
			if k == 's' || k == 'm' || k == 'M' || k == ',' && depth > 0 {
				switch toks[j].src {
				case "(", "[", "{", "⟨":
					depth++
				case ")", "]", "}", "⟩":
					depth--
				}
				if k != 's' && k != ',' {
					end = j + 1
				}
				j++
				continue
			}
			break
		}
		if end == i { // a lone ":" between prose
			prose(toks[i].src)
			i++
			continue
		}
		run := toks[i:end]
		// Drop an unmatched bracket at either end, then trailing ":" "=".
		run = trimRun(run)
		strong := false
		for _, t := range run {
			strong = strong || t.kind == 'M'
		}
		if len(run) == 0 || !strong || !balanced(run) {
			for _, t := range toks[i:end] {
				prose(t.src)
			}
			i = end
			continue
		}
		// Tokens trimmed off the front are prose before the formula.
		start := i
		for &toks[start] != &run[0] {
			prose(toks[start].src)
			start++
		}
		var src, tex strings.Builder
		for _, t := range run {
			src.WriteString(t.src)
			if t.kind == 's' {
				tex.WriteString(" ")
			} else {
				tex.WriteString(t.tex)
			}
		}
		out = append(out, mathPiece{text: src.String(), tex: strings.TrimSpace(tex.String()), math: true})
		for k := start + len(run); k < end; k++ {
			prose(toks[k].src)
		}
		i = end
	}
	return out
}

// trimRun drops unmatched outer brackets and a trailing ":" or "=".
func trimRun(run []mathTok) []mathTok {
	opening := func(s string) bool { return s == "(" || s == "[" || s == "{" || s == "⟨" }
	closing := func(s string) bool { return s == ")" || s == "]" || s == "}" || s == "⟩" }
	for len(run) > 0 {
		first, last := run[0].src, run[len(run)-1].src
		switch {
		case run[0].kind == 's' || first == ":" || first == "=" || first == ",":
			run = run[1:]
		case run[len(run)-1].kind == 's' || last == ":" || last == "=" || last == ",":
			run = run[:len(run)-1]
		case balanced(run):
			return run
		case opening(first) || closing(first):
			run = run[1:]
		case opening(last) || closing(last):
			run = run[:len(run)-1]
		default:
			return run
		}
	}
	return run
}

func balanced(run []mathTok) bool {
	var stack []string
	pair := map[string]string{")": "(", "]": "[", "}": "{", "⟩": "⟨"}
	for _, t := range run {
		switch t.src {
		case "(", "[", "{", "⟨":
			stack = append(stack, t.src)
		case ")", "]", "}", "⟩":
			if len(stack) == 0 || stack[len(stack)-1] != pair[t.src] {
				return false
			}
			stack = stack[:len(stack)-1]
		}
	}
	return len(stack) == 0
}

// MathHTML returns s as HTML text with its formulas as TeX between \( and
// \), for the notebook's math renderer; the prose is escaped.
func MathHTML(s string) string {
	var b strings.Builder
	for _, p := range mathSpans(s) {
		if p.math {
			b.WriteString(`<span class="semiflow-math">\(` + html.EscapeString(p.tex) + `\)</span>`)
		} else {
			// A lone $ in prose kept from pairing with another into math.
			b.WriteString(strings.ReplaceAll(html.EscapeString(p.text), "$", "<span>$</span>"))
		}
	}
	return b.String()
}

// MathMarkdown returns s as Markdown with its formulas as TeX between $
// and $; the characters Markdown would read in the prose are escaped.
func MathMarkdown(s string) string {
	var b strings.Builder
	for _, p := range mathSpans(s) {
		if p.math {
			b.WriteString("$" + p.tex + "$")
			continue
		}
		for _, r := range p.text {
			// Not ( ) { }: the notebook looks for \( before Markdown runs.
			if strings.ContainsRune("\\`*_[]<>#|~$", r) {
				b.WriteByte('\\')
			}
			b.WriteRune(r)
		}
	}
	return b.String()
}

// headScript matches a sub- or superscript in a table heading: _x, ^x,
// _{…} or ^{…}.
var headScript = regexp.MustCompile(`([_^])(\{[^{}]*\}|[\p{L}\p{N}]+)`)

// HeadingHTML returns a table heading as HTML text: escaped, its sub- and
// superscripts as <sub> and <sup>, never typeset math. A typeset formula is
// a row of boxes laid out after the table, so in a notebook's fixed table
// layout a heading's column is sized without it and the formula is stacked
// box by box down a narrow column; plain text wraps at its spaces.
func HeadingHTML(s string) string {
	t := html.EscapeString(s)
	return headScript.ReplaceAllStringFunc(t, func(m string) string {
		body := strings.TrimSuffix(strings.TrimPrefix(m[1:], "{"), "}")
		if m[0] == '_' {
			return "<sub>" + body + "</sub>"
		}
		return "<sup>" + body + "</sup>"
	})
}
