// Package value defines the values of the Semiflow language and the small
// optional interfaces through which a value type gains behaviour (indexing,
// operators, calls, rich display). A new type — a grid, an operator, a
// solution — implements Value and whichever interfaces it needs; the
// evaluator does not change.
//
// Values are immutable: operations return new values and never modify their
// operands, so a value may be shared by several variables.
package value

import (
	"semiflow/lang/syntax"
)

// Value is a language value.
type Value interface {
	// Type is the name typeof reports: "number", "vector", ...
	Type() string
	// String is the plain-text display (see Format for the rules).
	String() string
}

// Indexable is a value with elements 0 .. Len()-1.
type Indexable interface {
	Value
	Len() int
	// Index returns element i, 0 <= i < Len().
	Index(i int) Value
}

// Sliceable is an Indexable that can build a value of its own kind from a
// selection of its elements (each 0 <= idx[k] < Len()).
type Sliceable interface {
	Indexable
	Select(idx []int) Value
}

// Indexable2 is a value indexed by two integers, like a matrix.
type Indexable2 interface {
	Value
	Dims() (rows, cols int)
	// Index2 selects rows ri and columns ci; scalarRow (scalarCol) is true
	// when the row (column) index was a single integer rather than a range.
	Index2(ri, ci []int, scalarRow, scalarCol bool) Value
}

// HasBinary is implemented by values that define binary operators with
// other values. Binary returns (nil, nil) when it does not handle the
// combination; right is true when the receiver is the right operand.
type HasBinary interface {
	Value
	Binary(op syntax.Token, y Value, right bool) (Value, error)
}

// HasUnary is implemented by values that define unary - or +.
type HasUnary interface {
	Value
	Unary(op syntax.Token) (Value, error)
}

// Displayer is implemented by values with a rich display: the returned
// bundle (MIME type → data, e.g. "text/html", "image/svg+xml") is merged
// with the "text/plain" form given by String.
type Displayer interface {
	Value
	MIME() map[string]any
}

// Recorder is implemented by results that carry a record of how they were
// computed (method, tolerance, error estimate, work). The record goes into
// the display metadata, so a saved notebook keeps it beside the output.
type Recorder interface {
	Value
	Record() map[string]any
}

// Warner is implemented by results that can fall short of what was asked
// (a tolerance not met). The session emits each warning on the cell's
// standard error as "warning: …" when a statement produces or assigns
// such a value, so it is seen even when the value is not displayed.
// Warnings returns only what it has not returned before, so a value
// assigned and then shown warns once.
type Warner interface {
	Value
	Warnings() []string
}

// Param is one parameter of a function signature.
type Param struct {
	Name     string
	Default  Value // nil when the argument is required
	Variadic bool  // collects the remaining positional arguments
	Lazy     bool  // evaluated only when the callee forces it (see Thunk)
	Doc      string
}

// Callable is a function value: a builtin or a user function.
type Callable interface {
	Value
	Name() string
	Params() []Param
}

// Thunk is an unevaluated argument passed for a Lazy parameter.
type Thunk interface {
	Value
	Force() (Value, error)
}

// Force evaluates v if it is a Thunk and returns it unchanged otherwise.
func Force(v Value) (Value, error) {
	if t, ok := v.(Thunk); ok {
		return t.Force()
	}
	return v, nil
}

// Num is a real number. Integers are Nums with integral values.
type Num float64

// Complex is a complex number.
type Complex complex128

// Str is a string.
type Str string

// Bool is true or false.
type Bool bool

// NoneType is the type of None, the value of statements with nothing to show.
type NoneType struct{}

// None is the only NoneType value.
var None Value = NoneType{}

// List is a general list of values, [1, "a"].
type List []Value

func (Num) Type() string      { return "number" }
func (Complex) Type() string  { return "complex" }
func (Str) Type() string      { return "string" }
func (Bool) Type() string     { return "bool" }
func (NoneType) Type() string { return "none" }
func (List) Type() string     { return "list" }

func (x Num) String() string     { return FormatNum(float64(x)) }
func (x Complex) String() string { return FormatComplex(complex128(x)) }
func (x Str) String() string     { return Quote(string(x)) }
func (x Bool) String() string {
	if x {
		return "true"
	}
	return "false"
}
func (NoneType) String() string { return "none" }
func (l List) String() string   { return formatList(l) }

func (l List) Len() int          { return len(l) }
func (l List) Index(i int) Value { return l[i] }

// Select returns the list of the selected elements.
func (l List) Select(idx []int) Value {
	out := make(List, len(idx))
	for k, i := range idx {
		out[k] = l[i]
	}
	return out
}

func (s Str) Len() int          { return len([]rune(string(s))) }
func (s Str) Index(i int) Value { return Str([]rune(string(s))[i]) }

// Select returns the string of the selected characters.
func (s Str) Select(idx []int) Value {
	r := []rune(string(s))
	out := make([]rune, len(idx))
	for k, i := range idx {
		out[k] = r[i]
	}
	return Str(out)
}

// IsNumeric reports whether v is a Num or a Complex.
func IsNumeric(v Value) bool {
	switch v.(type) {
	case Num, Complex:
		return true
	}
	return false
}

// TypeName describes v's type for messages, with its length or shape.
func TypeName(v Value) string {
	switch x := v.(type) {
	case *Vec:
		if x.IsComplex() {
			return "complex vector"
		}
		return "vector"
	case *Matrix:
		return "matrix"
	case *CMatrix:
		return "complex matrix"
	}
	return v.Type()
}

// HasFields is implemented by values with named parts — the numbers of a
// report, the columns of a table — read as r.name or r["name"].
type HasFields interface {
	Value
	// Field returns the part called name.
	Field(name string) (Value, bool)
	// FieldNames lists the names Field knows, in the order they are shown.
	FieldNames() []string
}
