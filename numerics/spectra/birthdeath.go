package spectra

import (
	"context"
	"fmt"
	"math"
	"sort"

	"gonum.org/v1/gonum/lapack/gonum"
	"gonum.org/v1/gonum/mat"

	"semiflow/numerics/linop"
	"semiflow/numerics/roundoff"
)

// BirthDeathChain is an irreducible birth–death chain on the states
// 0..n−1: Up[k] = q_{k,k+1} > 0 and Down[k] = q_{k+1,k} > 0 for
// k = 0..n−2. The diagonal of its rate matrix is minus the row's rates, so
// that every row sums to zero exactly.
//
// Its eigenvalues are computed to high relative accuracy: each to a few
// units of roundoff relative to its own size, however small it is next to
// ‖Q‖ (a route through the rates alone, with no subtraction; see
// Eigenvalues). A backward-stable symmetric eigensolver on
// S = D^{1/2}QD^{-1/2} gets them only to n·u·‖S‖ absolutely, which is
// most of the digits of a gap of 10⁻⁷‖Q‖.
type BirthDeathChain struct {
	Up, Down []float64
}

// States returns the number of states n.
func (c *BirthDeathChain) States() int { return len(c.Up) + 1 }

// BirthDeathOf returns the chain whose rate matrix is a, when a is one of
// an irreducible birth–death chain (linop.CheckGenerator passes, a is
// tridiagonal, every neighbouring rate is positive; order at least 2), and
// false otherwise or when a has no sparse form.
func BirthDeathOf(a linop.Operator) (*BirthDeathChain, bool) {
	q, err := linop.ToCSR(a)
	if err != nil || q.Rows != q.Cols || q.Rows < 2 || linop.CheckGenerator(q) != nil {
		return nil, false
	}
	n := q.Rows
	c := &BirthDeathChain{Up: make([]float64, n-1), Down: make([]float64, n-1)}
	for i := 0; i < n; i++ {
		for p := q.RowPtr[i]; p < q.RowPtr[i+1]; p++ {
			switch j, v := q.ColIdx[p], q.Val[p]; {
			case j == i:
			case j == i+1:
				c.Up[i] += v
			case j == i-1:
				c.Down[j] += v
			case v != 0:
				return nil, false
			}
		}
	}
	return c, c.irreducible()
}

// birthDeathOfDense is BirthDeathOf for a dense rate matrix m that already
// passed linop.CheckGenerator.
func birthDeathOfDense(m *mat.Dense) (*BirthDeathChain, bool) {
	n, _ := m.Dims()
	if n < 2 || !isBirthDeath(m) {
		return nil, false
	}
	c := &BirthDeathChain{Up: make([]float64, n-1), Down: make([]float64, n-1)}
	for k := 0; k+1 < n; k++ {
		c.Up[k], c.Down[k] = m.At(k, k+1), m.At(k+1, k)
	}
	return c, c.irreducible()
}

func (c *BirthDeathChain) irreducible() bool {
	for k := range c.Up {
		if !(c.Up[k] > 0 && c.Down[k] > 0) || math.IsInf(c.Up[k], 0) || math.IsInf(c.Down[k], 0) {
			return false
		}
	}
	return true
}

// bidiagonal returns the (n−1)×(n−1) upper bidiagonal R (diagonal d,
// superdiagonal e) whose singular values σ_k give the non-zero
// eigenvalues −σ_k² of Q.
//
// The Dirichlet form of the chain, Σ_k π_k q_{k,k+1}(f_k − f_{k+1})², is
// −xᵀSx for x = D^{1/2}f, S = D^{1/2}QD^{-1/2}, D = diag(π); so −S = GᵀG
// with G the (n−1)×n bidiagonal whose row k holds −√q_{k,k+1} in column k
// and √q_{k+1,k} in column k+1 (detailed balance π_k q_{k,k+1} =
// π_{k+1} q_{k+1,k} removes π from the entries). Givens rotations from the
// left bring Gᵀ (n×(n−1), lower bidiagonal) to upper bidiagonal form; each
// new entry is a product or quotient of earlier ones and a hypot (the
// signs of G do not affect its singular values), so no step subtracts.
// Every entry of R carries at most 4 roundings relative to itself.
func (c *BirthDeathChain) bidiagonal() (d, e []float64) {
	m := len(c.Up)
	d, e = make([]float64, m), make([]float64, max(m-1, 0))
	cur := math.Sqrt(c.Up[0])
	for j := 0; j < m; j++ {
		b := math.Sqrt(c.Down[j]) // Gᵀ(j+1, j)
		r := math.Hypot(cur, b)
		d[j] = r
		if j+1 < m {
			a := math.Sqrt(c.Up[j+1]) // Gᵀ(j+1, j+1)
			e[j] = (b / r) * a
			cur = (cur / r) * a
		}
	}
	return d, e
}

// RelativeError returns the relative error bound of every eigenvalue from
// Eigenvalues and Nearest, for n states: 24·n·u. The entries of R have at most 4
// roundings each, and a bidiagonal matrix whose 2m − 1 entries change by
// relative factors within 1 ± η has singular values within (1 ± η)^{2m−1}
// of its own (Demmel & Kahan, SIAM J. Sci. Stat. Comput. 11, 1990, Thm 2);
// the differential qd algorithm is relatively stable in the same sense
// (Fernando & Parlett, Numer. Math. 67, 1994), which we allow as much
// again; the square λ = −σ² doubles the relative error. The measured
// errors against mpmath references at 50 and 200 digits are 100 to 1000
// times below it (testdata/spectra).
func (c *BirthDeathChain) RelativeError() float64 {
	return 24 * float64(c.States()) * roundoff.Unit
}

// Eigenvalues returns the eigenvalues of the chain's rate matrix in
// decreasing order, 0 first (exactly: Q1 = 0), then −σ_k² for the
// singular values σ_k of bidiagonal() in increasing order, by the
// differential qd algorithm with shifts (LAPACK Dlasq1 via gonum), each to
// RelativeError relative to itself. Dlasq1 cannot be interrupted; its cost
// is about 30(n−1)² flops (3.1 CPU s at n = 10⁴ on the development
// machine, O(n) memory), so it runs abandonably: on cancellation the call
// returns ctx.Err() at once and Dlasq1 finishes in the background.
func (c *BirthDeathChain) Eigenvalues(ctx context.Context) ([]float64, error) {
	n := c.States()
	d, e := c.bidiagonal()
	m := len(d)
	// Dlasq1 cannot be interrupted: run it abandonably (6 vectors of m).
	info, err := abandonable(ctx, int64(48*m), fmt.Sprintf("eigenvalues of the %d-state birth–death chain", n), func() (int, error) {
		return (gonum.Implementation{}).Dlasq1(m, d, e, make([]float64, 4*m)), nil
	})
	if err != nil {
		return nil, err
	}
	if info != 0 {
		return nil, numErr("the differential qd algorithm did not converge for the %d-state birth–death chain (Dlasq1 info %d)", n, info)
	}
	out := make([]float64, n)
	for k := 0; k < m; k++ {
		s := d[m-1-k] // increasing σ
		out[k+1] = -s * s
		if math.IsInf(out[k+1], 0) {
			return nil, numErr("an eigenvalue of the %d-state birth–death chain overflows (σ = %g)", n, s)
		}
		if !(out[k+1] < -0x1p-1022) {
			// σ² below the normal range: an eigenvalue that would read as
			// 0 (or lose its relative accuracy) is refused, never shown.
			return nil, numErr("an eigenvalue of the %d-state birth–death chain is below %g in size (σ = %g) and underflows", n, 0x1p-1022, s)
		}
	}
	return out, nil
}

// gkCount returns the number of singular values of the upper bidiagonal
// (d, e) below x > 0: the Sturm count of the Golub–Kahan form, the
// 2m×2m symmetric tridiagonal with zero diagonal and off-diagonals
// d_0, e_0, d_1, …, d_{m−1}, whose eigenvalues are ±σ_k, minus m. On a
// zero diagonal the count computed in floating point is exact for a matrix
// whose off-diagonals differ by relative factors of a few u (Demmel &
// Kahan 1990, §6), so bisection on it finds σ_k to high relative accuracy.
func gkCount(d, e []float64, x float64) int {
	m := len(d)
	neg := 0
	q := -x
	if q < 0 {
		neg++
	}
	for i := 1; i < 2*m; i++ {
		var b float64
		if i%2 == 1 {
			b = d[i/2]
		} else {
			b = e[i/2-1]
		}
		if q == 0 {
			q = -math.SmallestNonzeroFloat64 // LAPACK's practice for a zero pivot (Dstebz): perturb it
		}
		q = -x - (b/q)*b
		if q < 0 {
			neg++
		}
	}
	return neg - m
}

// sigmaByIndex returns the eigenvalues of Q with indices idx in the
// decreasing order of Eigenvalues (index 0 is the stationary 0; index k ≥ 1
// is −σ_k² for the k-th smallest singular value σ_k of the bidiagonal
// (d, e)), by bisection on the Golub–Kahan form, each σ_k to relative 4u;
// it checks ctx between eigenvalues, so it stops within one bisection
// (about 65 counts of 2n steps). Cost O(len(idx)·n): the route for a few
// eigenvalues of a large chain.
func sigmaByIndex(ctx context.Context, d, e []float64, idx []int) ([]float64, error) {
	// An upper bound on σ_max: the largest row sum of |R|.
	hi := 0.0
	for j := range d {
		s := d[j]
		if j < len(e) {
			s += e[j]
		}
		hi = math.Max(hi, s)
	}
	hi *= 2
	floor := 0x1p-511 // σ below it makes λ = −σ² subnormal: refused
	out := make([]float64, len(idx))
	for r, k := range idx {
		if k == 0 {
			continue
		}
		if err := ctx.Err(); err != nil {
			return nil, err
		}
		// σ_k is the least x with count(x) ≥ k: keep count(lo) < k ≤
		// count(up), halving the ratio up/lo (geometric means) until
		// the two are adjacent within relative 4u.
		lo, up := floor, hi
		if gkCount(d, e, lo) >= k {
			return nil, numErr("eigenvalue %d of the birth–death chain is below %g in size and underflows", k, 0x1p-1022)
		}
		for up-lo > 4*roundoff.Unit*up {
			mid := math.Sqrt(lo) * math.Sqrt(up)
			if up < 2*lo {
				mid = lo + (up-lo)/2
			}
			if !(mid > lo && mid < up) {
				break
			}
			if gkCount(d, e, mid) >= k {
				up = mid
			} else {
				lo = mid
			}
		}
		s := lo + (up-lo)/2
		out[r] = -s * s
	}
	return out, nil
}

// Nearest returns min(k, n) eigenvalues of the chain: the k largest
// (rightmost) when near is false, else the k nearest sigma, in decreasing
// order, each to c.RelativeError() relative to itself, and the method.
// A few eigenvalues (k ≤ n/8, n > 64) come by bisection, about 130·n
// operations each (interruptible between eigenvalues; 0.013 s for the gap
// of 10⁴ states); more, up to BirthDeathAllMax states, from all of them
// by dqds (about 30n² operations); beyond that by bisection again.
func (c *BirthDeathChain) Nearest(ctx context.Context, k int, near bool, sigma float64) ([]float64, string, error) {
	n := c.States()
	k = min(k, n)
	if n <= BirthDeathAllMax && (n <= 64 || 8*k > n) {
		all, err := c.Eigenvalues(ctx)
		if err != nil {
			return nil, "", err
		}
		return pickNearest(all, k, near, sigma), dqdsMethod, nil
	}
	d, e := c.bidiagonal()
	if !near || sigma >= 0 {
		idx := make([]int, k)
		for i := range idx {
			idx[i] = i
		}
		v, err := sigmaByIndex(ctx, d, e, idx)
		return v, bisectMethod, err
	}
	// The eigenvalues 0 = λ_0 > λ_1 > … nearest σ < 0 are a run of
	// consecutive indices around σ: λ_{p−1} ≥ σ > λ_p with
	// p = 1 + #{σ_k < √−σ}; widen the run one eigenvalue at a time.
	cache := map[int]float64{}
	get := func(i int) (float64, error) {
		if v, ok := cache[i]; ok {
			return v, nil
		}
		v, err := sigmaByIndex(ctx, d, e, []int{i})
		if err != nil {
			return 0, err
		}
		cache[i] = v[0]
		return v[0], nil
	}
	p := 1 + gkCount(d, e, math.Sqrt(-sigma))
	lo, hi := p-1, p
	var out []int
	for len(out) < k {
		take := lo
		switch {
		case lo < 0:
			take = hi
		case hi < n:
			a, err := get(lo)
			if err != nil {
				return nil, "", err
			}
			b, err := get(hi)
			if err != nil {
				return nil, "", err
			}
			if math.Abs(b-sigma) < math.Abs(a-sigma) {
				take = hi
			}
		}
		out = append(out, take)
		if take == lo {
			lo--
		} else {
			hi++
		}
	}
	sort.Ints(out)
	vals := make([]float64, len(out))
	for r, i := range out {
		v, err := get(i)
		if err != nil {
			return nil, "", err
		}
		vals[r] = v
	}
	return vals, bisectMethod, nil
}

// BirthDeathAllMax is the largest number of states for which Nearest
// computes all eigenvalues by dqds when many are asked: 3.1 CPU s at the
// limit on the development machine (0.38 s at 3000 states).
const BirthDeathAllMax = 10000

const (
	dqdsMethod   = "singular values of the Cholesky-like bidiagonal factor of −D^{1/2}QD^{-1/2} (formed from √rates by Givens rotations, no subtractions), by the differential qd algorithm with shifts (Fernando & Parlett 1994)"
	bisectMethod = "singular values of the Cholesky-like bidiagonal factor of −D^{1/2}QD^{-1/2} (formed from √rates by Givens rotations, no subtractions), by bisection on the zero-diagonal Golub–Kahan form"
)

// pickNearest keeps k of the decreasing values all: the first k, or the k
// nearest sigma; in decreasing order.
func pickNearest(all []float64, k int, near bool, sigma float64) []float64 {
	if !near {
		return append([]float64(nil), all[:k]...)
	}
	idx := make([]int, len(all))
	for i := range idx {
		idx[i] = i
	}
	sort.SliceStable(idx, func(a, b int) bool { return math.Abs(all[idx[a]]-sigma) < math.Abs(all[idx[b]]-sigma) })
	idx = idx[:k]
	sort.Ints(idx)
	out := make([]float64, k)
	for r, i := range idx {
		out[r] = all[i]
	}
	return out
}

// BirthDeathSpectrum returns k eigenvalues of the chain as a Spectrum (the
// k rightmost, or the k nearest sigma when near), each with its relative
// error bound in Accuracy and Residual holding |λ|·RelativeError (an
// absolute error bound, in the column the sparse methods fill with their
// residuals). Abscissa is 0, the stationary eigenvalue.
func (c *BirthDeathChain) Spectrum(ctx context.Context, k int, near bool, sigma float64) (*Spectrum, error) {
	vals, how, err := c.Nearest(ctx, k, near, sigma)
	if err != nil {
		return nil, err
	}
	rel := c.RelativeError()
	sp := &Spectrum{Abscissa: 0, Values: make([]complex128, len(vals)), Residual: make([]float64, len(vals))}
	for i, v := range vals {
		sp.Values[i] = complex(v, 0)
		sp.Residual[i] = math.Abs(v) * rel
	}
	sp.Method = "the rate matrix of a birth–death chain: eigenvalue 0 and −σ² for the " + how + "; the diagonal is taken as minus each state's rates (rows summing to 0 exactly)"
	sp.Accuracy = fmt.Sprintf("relative accuracy: every eigenvalue to %.2g = 24·n·u relative to its own size, however small next to ‖Q‖ (the column shows |λ|·%.2g, an absolute error bound); exact for rates perturbed by a few units of roundoff", rel, rel)
	return sp, nil
}
