package spectra

import (
	"context"
	"fmt"
	"math"
	"math/cmplx"
	"sort"
	"strings"

	"semiflow/numerics/linop"
	"semiflow/numerics/memguard"
)

// KronMaxOrder is the largest order of a Kronecker sum whose eigenvalues
// KronSpectrum enumerates (every sum of factor eigenvalues is scored once).
const KronMaxOrder = 1 << 24

// KronMaxFactor is the largest factor order KronSpectrum takes (each
// factor's spectrum is dense).
const KronMaxFactor = 1500

// KronSpectrum returns eigenvalues of the Kronecker sum
// A = F_1 ⊕ … ⊕ F_d from its factors: the eigenvalues of A are the sums
// λ_{i_1}(F_1) + … + λ_{i_d}(F_d), with the Kronecker products of the
// factors' right (left) eigenvectors as right (left) eigenvectors (Horn &
// Johnson, Topics in Matrix Analysis, 1991, Thm. 4.4.5). Each factor's
// spectrum is dense (DenseSpectrum). count > 0 keeps the count rightmost
// sums (nearest near when nearSet), 0 keeps all. The condition number of
// a sum is the product of the factors' (the eigenvector norms and yᴴx
// multiply), and its first-order error the sum of the factors' errors,
// Σ_j Cond_j·n_j·u·‖F_j‖_F. Sums that coincide form one multiple
// eigenvalue of A. No eigenvectors are returned. It fails when a factor
// is larger than KronMaxFactor or the order above KronMaxOrder.
func KronSpectrum(ctx context.Context, k *linop.KronSum, count int, nearSet bool, near float64) (*Spectrum, error) {
	factors := linop.KronFactors(k)
	N := 1.0
	orders := make([]string, len(factors))
	for i, f := range factors {
		n, _ := f.Dims()
		if n > KronMaxFactor {
			return nil, fmt.Errorf("%w: a factor of order %d is beyond %d for spectra from the factors", ErrNumerical, n, KronMaxFactor)
		}
		N *= float64(n)
		orders[i] = fmt.Sprint(n)
	}
	if N > KronMaxOrder {
		return nil, fmt.Errorf("%w: order %.0f is beyond %d for spectra from the factors", ErrNumerical, N, KronMaxOrder)
	}
	n := int(N)
	parts := make([]*Spectrum, len(factors))
	for i, f := range factors {
		if i > 0 && f == factors[i-1] {
			parts[i] = parts[i-1]
			continue
		}
		s, err := DenseSpectrumContext(ctx, f)
		if err != nil {
			return nil, err
		}
		parts[i] = s
	}
	keep := n
	if count > 0 && count < n {
		keep = count
	}
	// One score per sum (a float each), the kept values, conditions and
	// error bounds.
	if err := memguard.Bytes(8*N+float64(keep)*(16+8+8+1), fmt.Sprintf("eigenvalues of a Kronecker sum of order %d from its factors", n)); err != nil {
		return nil, err
	}
	sumAt := func(idx int) (lam complex128, cond, errb float64, ill bool) {
		cond = 1
		for d := len(parts) - 1; d >= 0; d-- {
			p := parts[d]
			m := len(p.Values)
			j := idx % m
			idx /= m
			lam += p.Values[j]
			cond *= p.Cond[j]
			errb += p.Cond[j] * p.Rounding
			ill = ill || p.IllCond[j]
		}
		return
	}
	order := make([]int32, n)
	score := make([]float64, n)
	for i := range order {
		if i%(1<<16) == 0 {
			if err := ctx.Err(); err != nil {
				return nil, err
			}
		}
		order[i] = int32(i)
		lam, _, _, _ := sumAt(i)
		if nearSet {
			score[i] = cmplx.Abs(lam - complex(near, 0))
		} else {
			score[i] = -real(lam)
		}
	}
	sort.SliceStable(order, func(a, b int) bool { return score[order[a]] < score[order[b]] })
	order = order[:keep]
	if !nearSet {
		// Rightmost first, ties by imaginary part as the dense method does.
		sort.SliceStable(order, func(a, b int) bool {
			la, _, _, _ := sumAt(int(order[a]))
			lb, _, _, _ := sumAt(int(order[b]))
			return rightOf(la, lb)
		})
	}
	sp := &Spectrum{Values: make([]complex128, keep), Cond: make([]float64, keep), IllCond: make([]bool, keep)}
	worst, maxCond := 0.0, 0.0
	for r, i := range order {
		lam, cond, errb, ill := sumAt(int(i))
		sp.Values[r], sp.Cond[r], sp.IllCond[r] = lam, cond, ill
		worst = math.Max(worst, errb)
		maxCond = math.Max(maxCond, cond)
	}
	sp.Abscissa = 0
	for _, p := range parts {
		sp.Abscissa += p.Abscissa
		sp.Rounding += p.Rounding
	}
	sp.Method = fmt.Sprintf("from the factors: the eigenvalues of a Kronecker sum F_1 ⊕ … ⊕ F_%d are the sums of the factors' eigenvalues (eigenvectors the Kronecker products); each factor (orders %s) by the QR algorithm on its dense matrix", len(factors), strings.Join(orders, ", "))
	sp.Accuracy = fmt.Sprintf("each λ = Σ_j λ(F_j) has error ≲ Σ_j Cond_j·n_j·u·‖F_j‖_F (first order, each factor backward stable), at most %.1e here; Cond is the product of the factors' condition numbers, largest %.3g; sums that coincide are one multiple eigenvalue", worst, maxCond)
	if c := countTrue(sp.IllCond); c > 0 {
		sp.Accuracy += fmt.Sprintf("; DEFECTIVE OR NEARLY: %d eigenvalue(s) come from factor eigenvalues with condition above 1/√u = %.2g, for which the first-order bound does not hold (see the factor's pseudospectra)", c, IllCondLimit)
	}
	return sp, nil
}
