package syntax

import (
	"fmt"
	"strings"
	"unicode"
	"unicode/utf8"
)

// A Scanner splits a source text into tokens. Newlines inside (), [] or {}
// are skipped, so an expression continues across lines while a bracket is
// open; elsewhere a newline is a NEWLINE token. Comments run from # to the
// end of the line.
type Scanner struct {
	file  *File
	src   string
	off   int
	depth int // open brackets
	errs  *ErrorList
}

// Item is one scanned token: its kind, its span [Pos, End) and its text.
// For STRING, Lit is the decoded value; for the others the source text.
type Item struct {
	Tok      Token
	Pos, End Pos
	Lit      string
}

// NewScanner returns a scanner over f that appends its errors to errs.
func NewScanner(f *File, errs *ErrorList) *Scanner {
	return &Scanner{file: f, src: f.Src, errs: errs}
}

// Depth is the number of brackets open at the current point.
func (s *Scanner) Depth() int { return s.depth }

func (s *Scanner) errorf(pos, end Pos, format string, args ...any) {
	s.errs.Add(s.file, pos, end, fmt.Sprintf(format, args...))
}

func isIdentStart(r rune) bool {
	return r == '_' || r < utf8.RuneSelf && ('a' <= r && r <= 'z' || 'A' <= r && r <= 'Z') ||
		r >= utf8.RuneSelf && unicode.IsLetter(r)
}

func isIdentPart(r rune) bool {
	return isIdentStart(r) || '0' <= r && r <= '9' || r >= utf8.RuneSelf && unicode.IsDigit(r)
}

func isDigit(c byte) bool { return '0' <= c && c <= '9' }

func (s *Scanner) peekRune(off int) (rune, int) {
	if off >= len(s.src) {
		return -1, 0
	}
	return utf8.DecodeRuneInString(s.src[off:])
}

// Next returns the next token. At the end of input it returns EOF forever.
func (s *Scanner) Next() Item {
	for {
		// Skip blanks, comments and (inside brackets) newlines.
		for s.off < len(s.src) {
			c := s.src[s.off]
			if c == ' ' || c == '\t' || c == '\r' {
				s.off++
			} else if c == '#' {
				for s.off < len(s.src) && s.src[s.off] != '\n' {
					s.off++
				}
			} else if c == '\n' && s.depth > 0 {
				s.off++
			} else {
				break
			}
		}
		start := s.off
		if s.off >= len(s.src) {
			return Item{Tok: EOF, Pos: Pos(start), End: Pos(start)}
		}
		c := s.src[s.off]
		if c == '\n' {
			s.off++
			return Item{Tok: NEWLINE, Pos: Pos(start), End: Pos(s.off), Lit: "\n"}
		}
		if isDigit(c) {
			return s.number()
		}
		if c == '"' {
			return s.string()
		}
		r, w := s.peekRune(s.off)
		if isIdentStart(r) {
			s.off += w
			for {
				r, w := s.peekRune(s.off)
				if !isIdentPart(r) {
					break
				}
				s.off += w
			}
			lit := s.src[start:s.off]
			if k, ok := Keywords[lit]; ok {
				return Item{Tok: k, Pos: Pos(start), End: Pos(s.off), Lit: lit}
			}
			return Item{Tok: IDENT, Pos: Pos(start), End: Pos(s.off), Lit: lit}
		}
		if it, ok := s.operator(); ok {
			return it
		}
		// Illegal character: report it and skip.
		s.off += w
		if r == utf8.RuneError && w == 1 {
			s.errorf(Pos(start), Pos(s.off), "invalid UTF-8 byte 0x%02x", c)
		} else if r < ' ' || r == 0x7f {
			s.errorf(Pos(start), Pos(s.off), "unexpected control character U+%04X", r)
		} else {
			s.errorf(Pos(start), Pos(s.off), "unexpected character %q (U+%04X)", r, r)
		}
	}
}

func (s *Scanner) operator() (Item, bool) {
	start := s.off
	two := ""
	if s.off+1 < len(s.src) {
		two = s.src[s.off : s.off+2]
	}
	tok := ILLEGAL
	n := 2
	switch two {
	case "==":
		tok = EQL
	case "!=":
		tok = NEQ
	case "<=":
		tok = LEQ
	case ">=":
		tok = GEQ
	case "..":
		tok = DOTDOT
	case "->":
		tok = ARROW
	case ".*", "./", ".^":
		s.off += 2
		s.errorf(Pos(start), Pos(s.off), "%s is not an operator: arithmetic on vectors is already element-wise; for the element-wise product of matrices use hadamard(a, b)", two)
		return Item{Tok: MUL, Pos: Pos(start), End: Pos(s.off), Lit: two}, true
	}
	if tok == ILLEGAL && strings.HasPrefix(s.src[s.off:], "↦") {
		tok, n = ARROW, len("↦")
	}
	if tok == ILLEGAL {
		n = 1
		switch s.src[s.off] {
		case '+':
			tok = ADD
		case '-':
			tok = SUB
		case '*':
			tok = MUL
		case '/':
			tok = QUO
		case '%':
			tok = REM
		case '^':
			tok = POW
		case '.':
			tok = DOT
		case '<':
			tok = LSS
		case '>':
			tok = GTR
		case '=':
			tok = ASSIGN
		case ',':
			tok = COMMA
		case '|':
			tok = BAR
		case ';':
			tok = SEMI
		case '(':
			tok = LPAREN
		case ')':
			tok = RPAREN
		case '[':
			tok = LBRACK
		case ']':
			tok = RBRACK
		case '{':
			tok = LBRACE
		case '}':
			tok = RBRACE
		case '!':
			s.off++
			s.errorf(Pos(start), Pos(s.off), "unexpected '!': logical negation is written 'not'")
			return Item{Tok: NOT, Pos: Pos(start), End: Pos(s.off), Lit: "!"}, true
		case '&', '?', ':':
			c := s.src[s.off]
			s.off++
			hint := map[byte]string{'&': "logical conjunction is written 'and'",
				'?': "there is no conditional operator; use when(cond, a, b)",
				':': "there is no conditional operator; use when(cond, a, b)"}[c]
			s.errorf(Pos(start), Pos(s.off), "unexpected %q: %s", c, hint)
			continue2 := Item{Tok: ILLEGAL, Pos: Pos(start), End: Pos(s.off), Lit: string(c)}
			return continue2, true
		default:
			return Item{}, false
		}
	}
	s.off += n
	switch tok {
	case LPAREN, LBRACK, LBRACE:
		s.depth++
	case RPAREN, RBRACK, RBRACE:
		if s.depth > 0 {
			s.depth--
		}
	}
	return Item{Tok: tok, Pos: Pos(start), End: Pos(s.off), Lit: s.src[start:s.off]}, true
}

// number scans digits [. digits] [(e|E) [+-] digits] [i].
func (s *Scanner) number() Item {
	start := s.off
	for s.off < len(s.src) && isDigit(s.src[s.off]) {
		s.off++
	}
	if s.off+1 < len(s.src) && s.src[s.off] == '.' && isDigit(s.src[s.off+1]) {
		s.off++
		for s.off < len(s.src) && isDigit(s.src[s.off]) {
			s.off++
		}
	}
	if s.off < len(s.src) && s.src[s.off] == '.' && (s.off+1 >= len(s.src) || s.src[s.off+1] != '.' && !isDigit(s.src[s.off+1])) {
		// 1. is not a number here (and a number has no named parts).
		s.errorf(Pos(start), Pos(s.off+1), "number %s. needs a digit after the point: write %s.0 or %s", Shorten(s.src[start:s.off], QuoteWidth), Shorten(s.src[start:s.off], QuoteWidth), Shorten(s.src[start:s.off], QuoteWidth))
		s.off++
	}
	if s.off < len(s.src) && (s.src[s.off] == 'e' || s.src[s.off] == 'E') {
		j := s.off + 1
		if j < len(s.src) && (s.src[j] == '+' || s.src[j] == '-') {
			j++
		}
		if j < len(s.src) && isDigit(s.src[j]) {
			for j < len(s.src) && isDigit(s.src[j]) {
				j++
			}
			s.off = j
		}
	}
	tok := NUMBER
	if s.off < len(s.src) && s.src[s.off] == 'i' {
		r, _ := s.peekRune(s.off + 1)
		if !isIdentPart(r) {
			s.off++
			tok = IMAG
		}
	}
	lit := s.src[start:s.off]
	if r, _ := s.peekRune(s.off); isIdentPart(r) {
		// 2x, 3in, 1e: a number glued to a name.
		end := s.off
		for {
			r, w := s.peekRune(end)
			if !isIdentPart(r) {
				break
			}
			end += w
		}
		s.errorf(Pos(start), Pos(end), "number %s is followed by %q; write %s*%s for a product (an imaginary number is written like 3i)",
			Shorten(lit, QuoteWidth), Shorten(s.src[s.off:end], QuoteWidth), Shorten(lit, QuoteWidth), Shorten(s.src[s.off:end], QuoteWidth))
		s.off = end
	}
	return Item{Tok: tok, Pos: Pos(start), End: Pos(s.off), Lit: lit}
}

// string scans a double-quoted string with escapes \n \t \" \\.
func (s *Scanner) string() Item {
	start := s.off
	s.off++ // opening quote
	var b strings.Builder
	for {
		if s.off >= len(s.src) || s.src[s.off] == '\n' {
			s.errorf(Pos(start), Pos(s.off), "unterminated string: add a closing \"")
			return Item{Tok: STRING, Pos: Pos(start), End: Pos(s.off), Lit: b.String()}
		}
		c := s.src[s.off]
		if c == '"' {
			s.off++
			return Item{Tok: STRING, Pos: Pos(start), End: Pos(s.off), Lit: b.String()}
		}
		if c == '\\' {
			if s.off+1 >= len(s.src) {
				s.off++
				continue
			}
			e := s.src[s.off+1]
			switch e {
			case 'n':
				b.WriteByte('\n')
			case 't':
				b.WriteByte('\t')
			case '"':
				b.WriteByte('"')
			case '\\':
				b.WriteByte('\\')
			default:
				r, w := s.peekRune(s.off + 1)
				s.errorf(Pos(s.off), Pos(s.off+1+w), "unknown escape \\%c in string: the escapes are \\n \\t \\\" \\\\", r)
				s.off += 1 + w
				continue
			}
			s.off += 2
			continue
		}
		r, w := s.peekRune(s.off)
		if r == utf8.RuneError && w == 1 {
			s.errorf(Pos(s.off), Pos(s.off+1), "invalid UTF-8 byte 0x%02x in string", c)
		} else {
			b.WriteRune(r)
		}
		s.off += w
	}
}
