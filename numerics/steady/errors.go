package steady

import (
	"errors"
	"fmt"
)

// ErrShape is wrapped by errors about vectors or operators of the wrong
// size.
var ErrShape = errors.New("steady: dimension mismatch")

// NoConvergenceError: Newton's method used its steps without meeting the
// stopping test.
type NoConvergenceError struct {
	Steps    int
	Residual float64 // ‖F(u)‖∞ at the last iterate
	Update   float64 // ‖δ‖∞ of the last step
	Damped   int     // steps taken with damping < 1
}

func (e *NoConvergenceError) Error() string {
	s := fmt.Sprintf("no convergence after %d Newton steps: ‖F‖∞ = %.3g, last step ‖δ‖∞ = %.3g", e.Steps, e.Residual, e.Update)
	if e.Damped > 0 {
		s += fmt.Sprintf(" (%d steps damped)", e.Damped)
	}
	return s + "; try a guess closer to a steady state, or more steps"
}

// SingularError: the Jacobian A + N'(u) could not be factored.
type SingularError struct {
	Step     int     // the Newton step (1-based) whose Jacobian is singular
	Residual float64 // ‖F(u)‖∞ there
	Cause    error
}

func (e *SingularError) Error() string {
	return fmt.Sprintf("the Jacobian A + N'(u) is singular to working precision at Newton step %d (‖F‖∞ = %.3g there): the guess may sit at a turning point or a bifurcation, or the steady state is not isolated", e.Step, e.Residual)
}

func (e *SingularError) Unwrap() error { return e.Cause }

// LineSearchError: no damping of the Newton step reduced ‖F‖.
type LineSearchError struct {
	Step     int
	Residual float64
	Damping  float64 // the smallest damping tried
	Update   float64 // ‖δ‖∞ of the full step
}

func (e *LineSearchError) Error() string {
	return fmt.Sprintf("Newton step %d does not reduce ‖F‖ (‖F‖∞ = %.3g; full step ‖δ‖∞ = %.3g) even shortened to 1/%.0f of its length: ‖F‖ has a local minimum near here where A + N'(u) is close to singular; start from a guess closer to a steady state", e.Step, e.Residual, e.Update, 1/e.Damping)
}

// NonFiniteError: a value became NaN or infinite.
type NonFiniteError struct {
	What  string
	Where string // "at the guess", "at Newton step 3", or ""
	Index int
	Value float64
}

func (e *NonFiniteError) Error() string {
	s := fmt.Sprintf("%s is not finite: entry %d is %g", e.What, e.Index, e.Value)
	if e.Where != "" {
		s += " " + e.Where
	}
	return s
}

// locate sets where a non-finite value appeared.
func locate(err error, where string) error {
	if nf, ok := err.(*NonFiniteError); ok && nf.Where == "" {
		nf.Where = where
	}
	return err
}

// JacobianError: a Jacobian disagrees with the directional derivative of N.
type JacobianError struct {
	Mismatch    float64
	Tol         float64
	Engine      Engine
	Differences bool // true: found by differences in every structure
}

func (e *JacobianError) Error() string {
	if e.Differences {
		return fmt.Sprintf("no Jacobian of the nonlinear term by %s agrees with its derivative along a random direction (relative disagreement %.2g > %.0e even dense): is N differentiable here? give jacobian=", e.Engine, e.Mismatch, e.Tol)
	}
	return fmt.Sprintf("the given Jacobian disagrees with the derivative of the nonlinear term along a random direction (by %s): relative disagreement %.2g > %.0e", e.Engine, e.Mismatch, e.Tol)
}
