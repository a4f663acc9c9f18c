package spectra

import (
	"errors"
	"fmt"

	"semiflow/numerics/linop"
)

// ErrShape is the panic value for operands whose dimensions do not agree.
// It is linop.ErrShape, so callers can test for either.
var ErrShape = linop.ErrShape

// ErrOption is the panic value for invalid options (an empty grid, a
// non-positive level, a reversed interval).
var ErrOption = errors.New("spectra: invalid option")

// ErrNumerical wraps every numerical failure returned by this package.
var ErrNumerical = errors.New("spectra: numerical failure")

func numErr(format string, args ...any) error {
	return fmt.Errorf("%w: %s", ErrNumerical, fmt.Sprintf(format, args...))
}

// ErrComplex wraps the refusals of a routine that has no complex form yet
// when given a complex operator (linop.Complex).
var ErrComplex = errors.New("spectra: not available for a complex operator")
