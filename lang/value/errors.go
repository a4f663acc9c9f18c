package value

import (
	"fmt"

	"semiflow/lang/syntax"
)

// Error classes: the few words that name what kind of trouble stopped a
// statement. They are shown to the user (after the carets of an error
// report, as the notebook's ename, in golden files) and documented in
// LANGUAGE.md under "Errors"; a new class goes there too.
const (
	ClassSyntax      = syntax.ErrorClass    // the cell does not parse
	ClassName        = "unknown name"       // no variable or builtin of that name
	ClassType        = "wrong type"         // an operand or argument of the wrong type
	ClassValue       = "bad value"          // the right type but an unusable value
	ClassIndex       = "bad index"          // out of range or not an integer
	ClassFile        = "file refused"       // a file that cannot be read or written
	ClassNumerical   = "numerical failure"  // a singular shift, no convergence
	ClassMemory      = "over memory budget" // the memory guard refused an allocation
	ClassWork        = "over work limit"    // the session's step budget is spent
	ClassDepth       = "too deep"           // calls or expressions nested too deeply
	ClassInterrupted = "interrupted"        // stopped by the user
	ClassInternal    = "internal fault"     // a bug in Semiflow: please report the input
	ClassOther       = "failure"            // an error that names no class
)

// Error is a runtime error raised by an operation or a builtin, before the
// evaluator attaches a position and a call stack. Name is its class, one of
// the Class constants; Cause, when set, is the error of the numerics it
// reports, so that errors.Is and errors.As still find a sentinel (the
// builtin table maps a memory-guard refusal to ClassMemory that way).
type Error struct {
	Name  string
	Msg   string
	Cause error
}

func (e *Error) Error() string { return e.Msg }

// Unwrap returns the cause.
func (e *Error) Unwrap() error { return e.Cause }

// Errorf returns an *Error of class name (one of the Class constants). The
// first argument that is an error, whatever verb formats it, becomes the
// Cause.
func Errorf(name, format string, args ...any) error {
	e := &Error{Name: name, Msg: fmt.Sprintf(format, args...)}
	for _, a := range args {
		if c, ok := a.(error); ok {
			e.Cause = c
			break
		}
	}
	return e
}

// TypeErrorf reports an operand or argument of the wrong type (ClassType).
func TypeErrorf(format string, args ...any) error { return Errorf(ClassType, format, args...) }

// ValueErrorf reports an argument of the right type but an unusable value:
// a domain error, a length mismatch, division by zero (ClassValue).
func ValueErrorf(format string, args ...any) error { return Errorf(ClassValue, format, args...) }

// IndexErrorf reports an index out of range or not an integer (ClassIndex).
func IndexErrorf(format string, args ...any) error { return Errorf(ClassIndex, format, args...) }
