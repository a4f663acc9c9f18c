package linop

import (
	"errors"
	"fmt"
	"math"

	"gonum.org/v1/gonum/mat"

	"semiflow/numerics/memguard"
	"semiflow/numerics/roundoff"
)

// ErrGenerator is matched (errors.Is) by every rate-matrix validation error.
var ErrGenerator = errors.New("linop: not the generator of a Markov chain")

// Transition is a jump of a continuous-time Markov chain from state From to
// state To (0-based) at the given rate.
type Transition struct {
	From, To int
	Rate     float64
}

// RateMatrix returns the generator Q of the chain on n states with the given
// transitions: Q_ij = Σ rates i→j for i ≠ j and Q_ii = −Σ_{j≠i} Q_ij, so
// that every row sums to zero. Distributions evolve by p' = p Q, i.e. by
// the operator Qᵀ on column vectors (Adjoint{A: Q}); expected values of a
// function f of the state by u' = Q u. RateMatrix returns an error wrapping
// ErrGenerator, naming the offending transition, for a state outside
// [0, n), a transition from a state to itself, or a rate that is negative,
// infinite or NaN.
func RateMatrix(n int, ts []Transition) (*CSR, error) {
	if n < 1 {
		return nil, fmt.Errorf("%w: %d states", ErrGenerator, n)
	}
	is := make([]int, 0, 2*len(ts))
	js := make([]int, 0, 2*len(ts))
	vs := make([]float64, 0, 2*len(ts))
	for k, t := range ts {
		switch {
		case t.From < 0 || t.From >= n || t.To < 0 || t.To >= n:
			return nil, fmt.Errorf("%w: transition %d (%d → %d) names a state outside 0..%d", ErrGenerator, k, t.From, t.To, n-1)
		case t.From == t.To:
			return nil, fmt.Errorf("%w: transition %d goes from state %d to itself", ErrGenerator, k, t.From)
		case !(t.Rate >= 0) || math.IsInf(t.Rate, 0):
			return nil, fmt.Errorf("%w: transition %d (%d → %d) has rate %g; rates must be finite and non-negative", ErrGenerator, k, t.From, t.To, t.Rate)
		}
		is, js, vs = append(is, t.From, t.From), append(js, t.To, t.From), append(vs, t.Rate, -t.Rate)
	}
	for i := 0; i < n; i++ { // every state has a (possibly zero) diagonal entry
		is, js, vs = append(is, i), append(js, i), append(vs, 0)
	}
	return NewCSRFromTriplets(n, n, is, js, vs), nil
}

// CheckGenerator reports whether q is the generator of a continuous-time
// Markov chain: square, entries finite, off-diagonal entries non-negative,
// and each row sum zero within rounding, |Σ_j q_ij| ≤ n·u·Σ_j |q_ij|
// (roundoff.Threshold: n the order, u = 2⁻⁵³; a sum of n terms rounds by
// at most that much, so a diagonal computed as minus the sum of its row
// always passes). The error wraps ErrGenerator and names the first
// offending row and entry.
func CheckGenerator(q *CSR) error {
	if q.Rows != q.Cols {
		return fmt.Errorf("%w: %d×%d matrix is not square", ErrGenerator, q.Rows, q.Cols)
	}
	for i := 0; i < q.Rows; i++ {
		var sum, abs float64
		for p := q.RowPtr[i]; p < q.RowPtr[i+1]; p++ {
			j, v := q.ColIdx[p], q.Val[p]
			if math.IsNaN(v) || math.IsInf(v, 0) {
				return fmt.Errorf("%w: entry (%d, %d) is %g", ErrGenerator, i, j, v)
			}
			if j != i && v < 0 {
				return fmt.Errorf("%w: negative rate %g from state %d to state %d (off-diagonal entry (%d, %d))", ErrGenerator, v, i, j, i, j)
			}
			sum += v
			abs += math.Abs(v)
		}
		if tol := roundoff.Threshold(q.Rows, abs); roundoff.Sign(sum, tol) != 0 {
			return fmt.Errorf("%w: row %d sums to %g, not 0 within rounding (|sum| ≤ n·u·Σ|q_ij| = %.2g)", ErrGenerator, i, sum, tol)
		}
	}
	return nil
}

// Stationary returns the probability vector π with π Q = 0 and Σ π_i = 1
// of an irreducible chain with generator Q (checked by CheckGenerator),
// by the Grassmann–Taksar–Heyman elimination (Operations Research 33,
// 1985): states n−1, …, 1 are censored in turn (the rate i → j of the
// chain watched only on {0..k−1} is q_ij + q_ik·q_kj/s_k, s_k =
// Σ_{j<k} q_kj), then π is rebuilt from π_k s_k = Σ_{i<k} π_i q_ik. It uses
// no subtraction, so every entry of π has a small relative error
// (O'Cinneide, Numer. Math. 65, 1993) however widely the entries range;
// the diagonal of Q is not read, and entries below the smallest double
// underflow to 0. It returns an error wrapping ErrGenerator when some
// s_k = 0 (the chain is not irreducible: several closed classes, or
// transient states), or the memory guard's error for the dense copy.
func Stationary(q *CSR) ([]float64, error) {
	if err := CheckGenerator(q); err != nil {
		return nil, err
	}
	n := q.Rows
	if err := memguard.DenseReal(n, n); err != nil {
		return nil, err
	}
	a := mat.NewDense(n, n, nil)
	for i := 0; i < n; i++ {
		for p := q.RowPtr[i]; p < q.RowPtr[i+1]; p++ {
			if j := q.ColIdx[p]; j != i {
				a.Set(i, j, a.At(i, j)+q.Val[p])
			}
		}
	}
	s := make([]float64, n)
	for k := n - 1; k >= 1; k-- {
		row := a.RawRowView(k)[:k]
		for _, v := range row {
			s[k] += v
		}
		if !(s[k] > 0) {
			return nil, fmt.Errorf("%w: the chain is not irreducible: state %d cannot reach any of the states 0..%d once the states above it are removed, so there is no unique positive stationary distribution", ErrGenerator, k, k-1)
		}
		for j := range row {
			row[j] /= s[k]
		}
		for i := 0; i < k; i++ {
			aik := a.At(i, k)
			if aik == 0 {
				continue
			}
			ri := a.RawRowView(i)
			for j := 0; j < k; j++ {
				if j != i {
					ri[j] += aik * row[j]
				}
			}
		}
	}
	pi := make([]float64, n)
	pi[0] = 1
	for k := 1; k < n; k++ {
		v := 0.0
		for i := 0; i < k; i++ {
			v += pi[i] * a.At(i, k)
		}
		pi[k] = v / s[k]
		if pi[k] > 1e100 { // keep the prefix representable
			for i := 0; i <= k; i++ {
				pi[i] /= 1e100
			}
		}
	}
	sum := 0.0
	for _, v := range pi {
		sum += v
	}
	for i := range pi {
		pi[i] /= sum
	}
	return pi, nil
}
