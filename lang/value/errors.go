package value

import "fmt"

// Error is a runtime error raised by an operation or a builtin, before the
// evaluator attaches a position and a call stack. Name is the class shown to
// the user: "TypeError", "ValueError", "IndexError", "NameError", ...
type Error struct {
	Name string
	Msg  string
}

func (e *Error) Error() string { return e.Msg }

// Errorf returns an *Error of class name.
func Errorf(name, format string, args ...any) error {
	return &Error{Name: name, Msg: fmt.Sprintf(format, args...)}
}

// TypeErrorf reports an operand or argument of the wrong type.
func TypeErrorf(format string, args ...any) error { return Errorf("TypeError", format, args...) }

// ValueErrorf reports an argument of the right type but an unusable value:
// a domain error, a length mismatch, division by zero.
func ValueErrorf(format string, args ...any) error { return Errorf("ValueError", format, args...) }

// IndexErrorf reports an index out of range or not an integer.
func IndexErrorf(format string, args ...any) error { return Errorf("IndexError", format, args...) }
