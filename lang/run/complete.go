package run

import (
	"fmt"
	"sort"
	"strings"
	"unicode"

	"semiflow/lang/eval"
	"semiflow/lang/syntax"
	"semiflow/lang/value"
)

func isNameRune(r rune) bool { return r == '_' || unicode.IsLetter(r) || unicode.IsDigit(r) }

// clampCursor converts a code-point cursor into an index into runes.
func clampCursor(runes []rune, cursor int) int {
	if cursor < 0 {
		return 0
	}
	if cursor > len(runes) {
		return len(runes)
	}
	return cursor
}

// Complete returns the completions of the name that ends at cursor (a
// code-point offset): builtins, session variables, and the parameter names
// (as "name=") of the call around the cursor. start and end delimit, in
// code points, the text the match replaces.
func (s *Session) Complete(src string, cursor int) (matches []string, start, end int) {
	runes := []rune(src)
	cursor = clampCursor(runes, cursor)
	start = cursor
	for start > 0 && isNameRune(runes[start-1]) {
		start--
	}
	end = cursor
	for end < len(runes) && isNameRune(runes[end]) {
		end++
	}
	prefix := string(runes[start:cursor])
	if prefix != "" && unicode.IsDigit([]rune(prefix)[0]) {
		return nil, cursor, cursor
	}
	seen := map[string]bool{}
	add := func(m string) {
		if strings.HasPrefix(m, prefix) && !seen[m] {
			seen[m] = true
			matches = append(matches, m)
		}
	}
	if fields, ok := s.fieldsBefore(runes[:start]); ok {
		// After r. only the named parts of r (those written as names).
		for _, f := range fields {
			if isName(f) {
				add(f)
			}
		}
		return matches, start, end
	}
	var params []string
	if fn := s.enclosingCall(runes[:start]); fn != nil {
		for _, p := range fn.Params() {
			if !p.Variadic {
				params = append(params, p.Name+"=")
			}
		}
	}
	for _, p := range params {
		add(p)
	}
	var rest []string
	rest = append(rest, s.Names()...)
	rest = append(rest, s.table.Names()...)
	for k := range syntax.Keywords {
		rest = append(rest, k)
	}
	sort.Strings(rest)
	for _, n := range rest {
		add(n)
	}
	return matches, start, end
}

// enclosingCall finds the function whose argument list is open at the end
// of before (the text up to the name being completed).
func (s *Session) enclosingCall(before []rune) value.Callable {
	inString := false
	// Track brackets left to right to find the innermost open '('.
	type open struct {
		pos int
		ch  rune
	}
	var stack []open
	for i, r := range before {
		switch {
		case inString:
			if r == '\\' {
				continue
			}
			if r == '"' && (i == 0 || before[i-1] != '\\') {
				inString = false
			}
		case r == '"':
			inString = true
		case r == '(' || r == '[' || r == '{':
			stack = append(stack, open{i, r})
		case r == ')' || r == ']' || r == '}':
			if len(stack) > 0 {
				stack = stack[:len(stack)-1]
			}
		}
	}
	if len(stack) == 0 || stack[len(stack)-1].ch != '(' {
		return nil
	}
	i := stack[len(stack)-1].pos
	j := i
	for j > 0 && isNameRune(before[j-1]) {
		j--
	}
	name := string(before[j:i])
	if name == "" {
		return nil
	}
	if v, ok := s.Lookup(name); ok {
		if c, ok := v.(value.Callable); ok {
			return c
		}
		return nil
	}
	if v, ok := s.table.Lookup(name); ok {
		if c, ok := v.(value.Callable); ok {
			return c
		}
	}
	return nil
}

// Inspect describes the name at or just before cursor: the help text of a
// builtin, or a variable's type and value (with detail > 0 the full value;
// otherwise it is abbreviated). found is false when there is no such name.
func (s *Session) Inspect(src string, cursor, detail int) (data map[string]any, found bool) {
	runes := []rune(src)
	cursor = clampCursor(runes, cursor)
	start, end := cursor, cursor
	for start > 0 && isNameRune(runes[start-1]) {
		start--
	}
	for end < len(runes) && isNameRune(runes[end]) {
		end++
	}
	if start == end && start > 0 && runes[start-1] == '(' {
		// f(| : inspect the function being called.
		end = start - 1
		start = end
		for start > 0 && isNameRune(runes[start-1]) {
			start--
		}
	}
	name := string(runes[start:end])
	if name == "" {
		return nil, false
	}
	if fields, ok := s.fieldsBefore(runes[:start]); ok {
		// r.name: the part of r, shown like a variable.
		h, _ := s.partOwner(runes[:start])
		for _, f := range fields {
			if f == name {
				v, _ := h.Field(name)
				return map[string]any{"text/plain": fmt.Sprintf("%s: %s, a part of a %s\n%s\n", name, value.TypeName(v), h.Type(), v.String())}, true
			}
		}
		return nil, false
	}
	if v, ok := s.Lookup(name); ok {
		var text string
		switch f := v.(type) {
		case *eval.Closure:
			text = fmt.Sprintf("%s: user function\n%s\n", eval.SignatureText(name, f.Params()), f.String())
		default:
			shown := v.String()
			if detail == 0 && len(shown) > 400 {
				shown = shown[:400] + " ..."
			}
			text = fmt.Sprintf("%s: %s\n%s\n", name, value.TypeName(v), shown)
		}
		return map[string]any{"text/plain": text}, true
	}
	if b := s.table.Get(name); b != nil {
		text := b.Help()
		if detail == 0 {
			text = b.Header() + "\n\n" + b.Doc + "\n"
		}
		return map[string]any{"text/plain": text}, true
	}
	if _, kw := syntax.Keywords[name]; kw {
		return map[string]any{"text/plain": keywordHelp[name]}, true
	}
	return nil, false
}

var keywordHelp = map[string]string{
	"and": "a and b: true when both are true; b is evaluated only when a is true.\n",
	"or":  "a or b: true when either is true; b is evaluated only when a is false.\n",
	"not": "not a: the negation of a boolean.\n",
	"by":  "lo .. hi by step: the range lo, lo+step, ..., up to hi (both ends included).\n",
}

// IsComplete reports whether src is ready to run: "incomplete" (with the
// indent "  ") while a bracket or a string is open, "invalid" when it has
// another syntax error, "complete" otherwise.
func (s *Session) IsComplete(src string) (status, indent string) {
	f := syntax.NewFile("cell", src)
	var errs syntax.ErrorList
	sc := syntax.NewScanner(f, &errs)
	var opens []syntax.Token
	for {
		it := sc.Next()
		if it.Tok == syntax.EOF {
			break
		}
		switch it.Tok {
		case syntax.LPAREN, syntax.LBRACK, syntax.LBRACE:
			opens = append(opens, it.Tok)
		case syntax.RPAREN, syntax.RBRACK, syntax.RBRACE:
			want := map[syntax.Token]syntax.Token{syntax.RPAREN: syntax.LPAREN, syntax.RBRACK: syntax.LBRACK, syntax.RBRACE: syntax.LBRACE}[it.Tok]
			if len(opens) == 0 || opens[len(opens)-1] != want {
				return "invalid", ""
			}
			opens = opens[:len(opens)-1]
		}
	}
	for _, e := range errs {
		// A string still open at the very end of the input.
		if strings.HasPrefix(e.Msg, "unterminated string") && int(e.End) == len(src) {
			return "incomplete", "  "
		}
	}
	if len(opens) > 0 {
		return "incomplete", "  "
	}
	if _, err := syntax.Parse("cell", src); err != nil {
		return "invalid", ""
	}
	return "complete", ""
}

// fieldsBefore reports the named parts of the session variable written
// just before a '.' that ends before (r. in r.pe), if it has any.
func (s *Session) fieldsBefore(before []rune) ([]string, bool) {
	h, ok := s.partOwner(before)
	if !ok {
		return nil, false
	}
	return h.FieldNames(), true
}

// partOwner returns the session variable with named parts written just
// before a '.' that ends before.
func (s *Session) partOwner(before []rune) (value.HasFields, bool) {
	n := len(before)
	if n < 2 || before[n-1] != '.' || before[n-2] == '.' {
		return nil, false
	}
	i := n - 1
	for i > 0 && isNameRune(before[i-1]) {
		i--
	}
	if i == n-1 {
		return nil, false
	}
	v, ok := s.Lookup(string(before[i : n-1]))
	if !ok {
		return nil, false
	}
	h, ok := v.(value.HasFields)
	return h, ok
}

// isName reports whether f can be written after a dot (r.f), not only as
// r["f"].
func isName(f string) bool {
	for i, r := range f {
		if !isNameRune(r) || i == 0 && unicode.IsDigit(r) {
			return false
		}
	}
	return f != "" && syntax.Keywords[f] == 0
}
