package syntax

import (
	"fmt"
	"sort"
)

// MaxErrors is the number of errors after which the parser gives up.
const MaxErrors = 10

// Error is a syntax error spanning [Pos, End) in File.
type Error struct {
	File     *File
	Pos, End Pos
	Msg      string
}

// Error formats e as name:line:col: message.
func (e *Error) Error() string {
	return fmt.Sprintf("%s: %s", e.File.Position(e.Pos), ClipMessage(e.Msg))
}

// ErrorList is a list of syntax errors. After Sort it is ordered by position
// and holds at most one error per position.
type ErrorList []*Error

// Add appends an error.
func (l *ErrorList) Add(f *File, pos, end Pos, msg string) {
	if end < pos {
		end = pos
	}
	*l = append(*l, &Error{File: f, Pos: pos, End: end, Msg: msg})
}

// Sort orders the list by position and removes later errors at a position
// already reported, then keeps at most MaxErrors.
func (l *ErrorList) Sort() {
	list := *l
	sort.SliceStable(list, func(i, j int) bool { return list[i].Pos < list[j].Pos })
	out := list[:0]
	for i, e := range list {
		if i > 0 && e.Pos == out[len(out)-1].Pos {
			continue
		}
		out = append(out, e)
	}
	if len(out) > MaxErrors {
		out = out[:MaxErrors]
	}
	*l = out
}

// Err returns the list as an error, or nil if it is empty.
func (l ErrorList) Err() error {
	if len(l) == 0 {
		return nil
	}
	return l
}

// Error reports the first error and how many more there are.
func (l ErrorList) Error() string {
	switch len(l) {
	case 0:
		return "no errors"
	case 1:
		return l[0].Error()
	}
	return fmt.Sprintf("%s (and %d more errors)", l[0].Error(), len(l)-1)
}

// ErrorClass is the class of every syntax error.
const ErrorClass = "bad syntax"

// ErrorName is ErrorClass.
func (l ErrorList) ErrorName() string { return ErrorClass }

// Traceback is Lines(Plain).
func (l ErrorList) Traceback() []string { return l.Lines(Plain) }

// Lines reports every error as File.Report does: name:line:col: message,
// then the numbered source line and the carets under the offending token.
func (l ErrorList) Lines(st Style) []string {
	var lines []string
	for _, e := range l {
		lines = append(lines, e.File.Report(st, ErrorClass, e.Pos, e.End, e.Msg)...)
	}
	return lines
}
