package spectra

import (
	"errors"
	"fmt"
	"sync/atomic"
)

// ErrBudget is returned (wrapped) by a search that stopped because it used
// up its work budget; its result was not computed.
var ErrBudget = errors.New("spectra: work budget exhausted")

// The searches over the complex plane (Kreiss constant, α_ε) spend their
// time in inverse Lanczos steps on zI − T, each two triangular solves of
// order n, about n² complex multiply–adds. Their work is counted in these
// steps weighted by n², a measure independent of the machine and of the
// number of goroutines, so a budget stops the same computation at the same
// place on every run.

// InteractiveWork is the default work budget of the optional bounds of one
// report (the Kreiss constant and the α_ε searches together; a report with
// several bounds gives each a share), in units of n² complex multiply–adds:
// about 5 s of one core, 2.5 s of wall time on the 2-core development
// machine, whatever the order.
const InteractiveWork = 1.2e9

// WorkRate is the rate of the searches measured on the development machine,
// in work units per second of one core: the Kreiss constant of the 200×200
// shifted Grcar matrix (1.69e9 units in 6.2 s), α_ε for ε = 0.01 (1.2e9 in
// 4.7 s) and the Kreiss constant (2.3e9 in 10.9 s) of a convection–diffusion
// matrix of order 120 gave 2.1e8 to 2.7e8.
const WorkRate = 2.4e8

// WorkSeconds converts work units to seconds of wall time on the 2-core
// development machine (both cores busy), the figure reports quote.
func WorkSeconds(units float64) float64 { return units / (2 * WorkRate) }

// workBudget counts the work of one analysis against a limit (0: none).
type workBudget struct {
	limit int64
	used  atomic.Int64
}

func newBudget(limit float64) *workBudget {
	if !(limit > 0) {
		return nil
	}
	return &workBudget{limit: int64(min(limit, 9e18))}
}

// exhausted reports whether the budget (if any) is used up.
func (b *workBudget) exhausted() bool {
	return b != nil && b.used.Load() > b.limit
}

// counter returns the counter solvers add their work to, or nil.
func (b *workBudget) counter() *atomic.Int64 {
	if b == nil {
		return nil
	}
	return &b.used
}

// spent returns the work spent so far.
func (b *workBudget) spent() float64 {
	if b == nil {
		return 0
	}
	return float64(b.used.Load())
}

// BudgetError is the ErrBudget (errors.Is) of a search that can say what
// the whole computation would need: Estimate work units, extrapolated from
// the part done (0 when nothing was finished), or at least Estimate when
// AtLeast is set (the search was not started because it could not fit).
type BudgetError struct {
	Estimate float64
	AtLeast  bool
}

func (e *BudgetError) Error() string {
	if e.AtLeast {
		return fmt.Sprintf("%v: needs at least %.3g units", ErrBudget, e.Estimate)
	}
	return fmt.Sprintf("%v: needs about %.3g units", ErrBudget, e.Estimate)
}

// Is reports whether target is ErrBudget.
func (e *BudgetError) Is(target error) bool { return target == ErrBudget }
