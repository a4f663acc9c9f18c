package builtin

import (
	"math"

	"semiflow/lang/value"
)

// constFamily holds the named constants. The imaginary unit is not a name:
// it is the suffix of an imaginary literal, 1i.
var constFamily = []*Builtin{
	{
		Name:     "pi",
		Const:    value.Num(math.Pi),
		Doc:      "The circle constant π = 3.14159265358979…, the ratio of a circle's circumference to its diameter (float64 nearest).",
		Examples: []Example{{"cos(pi)", "-1"}, {"2 * pi", "6.283185307"}},
	},
	{
		Name:     "e",
		Const:    value.Num(math.E),
		Doc:      "Euler's number e = exp(1) = 2.71828182845904…, the base of the natural logarithm (float64 nearest).",
		Examples: []Example{{"log(e)", "1"}},
	},
	{
		Name:     "inf",
		Const:    value.Num(math.Inf(1)),
		Doc:      "Positive infinity of IEEE 754 arithmetic; -inf is its negative. Arithmetic overflow also gives inf, while division by zero is an error.",
		Examples: []Example{{"-inf < -1e308", "true"}, {"1e308 * 10", "inf"}},
	},
	{
		Name:     "nan",
		Const:    value.Num(math.NaN()),
		Doc:      "The IEEE 754 not-a-number. It propagates through arithmetic and compares unequal to everything, itself included.",
		Examples: []Example{{"nan == nan", "false"}, {"nan + 1", "nan"}},
	},
	{
		Name:     "true",
		Const:    value.Bool(true),
		Doc:      "The boolean true. Conditions (choose, and, or, not) need true or false; numbers are not conditions.",
		Examples: []Example{{"true and not false", "true"}},
	},
	{
		Name:     "false",
		Const:    value.Bool(false),
		Doc:      "The boolean false, the negation of true.",
		Examples: []Example{{"false or 1 < 2", "true"}},
	},
}
