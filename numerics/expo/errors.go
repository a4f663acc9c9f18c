package expo

import (
	"errors"

	"semiflow/numerics/linop"
)

// ErrShape is the panic value for operands whose dimensions do not agree.
// It is linop.ErrShape, so callers can test for either.
var ErrShape = linop.ErrShape

// ErrNumerical wraps every numerical failure (singular factorisation,
// overflow, no convergence) returned by this package.
var ErrNumerical = errors.New("expo: numerical failure")

// ErrMethod is returned for an unknown method name or a method that cannot
// handle the given operator.
var ErrMethod = errors.New("expo: method not applicable")
