package eval

import (
	"fmt"
	"strings"

	"semiflow/lang/syntax"
)

// Error is a runtime error with the span where it happened and, when it
// happened inside user functions, the chain of calls that led there.
type Error struct {
	Name     string // the class: value.ClassType, value.ClassValue, ...
	Msg      string
	File     *syntax.File
	Pos, End syntax.Pos
	Stack    []Frame // innermost call first
}

// Frame is the call site of one active user-function call.
type Frame struct {
	Func     string
	File     *syntax.File
	Pos, End syntax.Pos
	Repeat   int // further identical calls directly above this one
}

// Error formats e as file:line:col: message.
func (e *Error) Error() string {
	if e.File == nil {
		return syntax.ClipMessage(e.Msg)
	}
	return fmt.Sprintf("%s: %s", e.File.Position(e.Pos), syntax.ClipMessage(e.Msg))
}

// ErrorName is the error's class.
func (e *Error) ErrorName() string { return e.Name }

// Traceback is Lines(syntax.Plain).
func (e *Error) Traceback() []string { return e.Lines(syntax.Plain) }

// Lines is the error's report in style st: the position and message, the
// numbered source line with the carets under the offending span and the
// class after them, then each active user-function call's site, innermost
// first (syntax.File.Report and CallSite).
func (e *Error) Lines(st syntax.Style) []string {
	if e.File == nil {
		return []string{e.Error()}
	}
	lines := e.File.Report(st, e.Name, e.Pos, e.End, e.Msg)
	for _, f := range e.Stack {
		if f.File != nil {
			lines = append(lines, f.File.CallSite(st, f.Func, f.Pos, f.End, f.Repeat)...)
		}
	}
	return lines
}

// suggest returns the name among candidates nearest to name by edit
// distance, if it is close: at most 1 edit for names of up to 3 letters, 2
// up to 6 letters, 3 beyond, and fewer edits than the name has letters.
func suggest(name string, candidates []string) string {
	if len(name) > 4*syntax.QuoteWidth {
		return "" // no known name is that long; spare the edit distances
	}
	n := len([]rune(name))
	limit := 3
	if n <= 3 {
		limit = 1
	} else if n <= 6 {
		limit = 2
	}
	if limit >= n {
		limit = n - 1
	}
	best, bestD := "", limit+1
	for _, c := range candidates {
		if c == name || abs(len([]rune(c))-n) > bestD {
			continue
		}
		d := editDistance(strings.ToLower(name), strings.ToLower(c))
		if d < bestD || d == bestD && c < best {
			best, bestD = c, d
		}
	}
	return best
}

func abs(k int) int {
	if k < 0 {
		return -k
	}
	return k
}

// editDistance is the Levenshtein distance between a and b in code points.
func editDistance(a, b string) int {
	ra, rb := []rune(a), []rune(b)
	prev := make([]int, len(rb)+1)
	cur := make([]int, len(rb)+1)
	for j := range prev {
		prev[j] = j
	}
	for i := 1; i <= len(ra); i++ {
		cur[0] = i
		for j := 1; j <= len(rb); j++ {
			c := prev[j-1]
			if ra[i-1] != rb[j-1] {
				c++
			}
			cur[j] = min(c, prev[j]+1, cur[j-1]+1)
		}
		prev, cur = cur, prev
	}
	return prev[len(rb)]
}
