package expo

import (
	"context"
	"math"

	"semiflow/numerics/linop"
	"semiflow/numerics/memguard"
	"semiflow/numerics/solve"
)

// resolventRun computes e^{tA}u0 as the limit of the implicit Euler
// products R_n = (I − tA/n)^{-n}u0 = ((n/t)(n/t − A)⁻¹)^n u0 for
// n = n0, 2n0, …, 2^{L−1}n0, one factorisation per n, and extrapolates:
// R_n = e^{tA}u0 + Σ_j c_j n^{-j} (the expansion of (1 − x/n)^{-n} in 1/n),
// so the Richardson table R_{l,k} = (2^k R_{l,k−1} − R_{l−1,k−1})/(2^k − 1)
// removes one power per column. The error estimate is
// max(‖R_{l,l} − R_{l,l−1}‖_∞, ‖R_{l,l} − R_{l−1,l−1}‖_∞) plus rounding u·n·‖R‖; levels are added until it
// is below Tol·‖u0‖_∞ or ResolventLevels (default 8) are used.
func resolventRun(ctx context.Context, A linop.Operator, u0 []float64, times []float64, opts Options, vals [][]float64, errs []float64, w *work) error {
	n0 := opts.ResolventSteps
	if n0 <= 0 {
		n0 = 16
	}
	L := opts.ResolventLevels
	if L <= 0 {
		L = 8
	}
	n := len(u0)
	// The complex iterate (two reals), two rows of the extrapolation
	// table (L+1 each) and the results, through the memory guard.
	if err := memguard.Vectors(2+2*(L+1)+len(times), n, memguard.RealBytes, "resolvent-power work vectors and results"); err != nil {
		return err
	}
	total := 0
	for l := 0; l < L; l++ {
		total += n0 << l
	}
	total *= len(times)
	goal := opts.Tol * normInf(u0)
	done := 0
	x := make([]complex128, n)
	for ti, t := range times {
		if t == 0 {
			vals[ti] = append([]float64(nil), u0...)
			continue
		}
		table := make([][][]float64, L)
		for l := 0; l < L; l++ {
			steps := n0 << l
			z := float64(steps) / t
			f, err := solve.NewShiftedContext(ctx, A, complex(z, 0), solve.Options{})
			w.factors++
			if err != nil {
				return err
			}
			for i, v := range u0 {
				x[i] = complex(v, 0)
			}
			for s := 0; s < steps; s++ {
				if err := ctx.Err(); err != nil {
					return err
				}
				if err := f.Solve(x, x); err != nil {
					return err
				}
				for i := range x {
					x[i] *= complex(z, 0)
				}
				w.solves++
				done++
				if opts.Progress != nil {
					opts.Progress(done, total)
				}
			}
			row := make([][]float64, l+1)
			row[0] = make([]float64, n)
			for i, v := range x {
				row[0][i] = real(v)
			}
			for k := 1; k <= l; k++ {
				p := math.Ldexp(1, k)
				row[k] = make([]float64, n)
				for i := range row[k] {
					row[k][i] = (p*row[k-1][i] - table[l-1][k-1][i]) / (p - 1)
				}
			}
			table[l] = row
			est := math.Inf(1)
			if l > 0 {
				est = 0
				prev := table[l-1][l-1]
				for i := range row[l] {
					est = math.Max(est, math.Max(math.Abs(row[l][i]-row[l-1][i]), math.Abs(row[l][i]-prev[i])))
				}
				est += unitRoundoff * float64(steps) * normInf(row[l])
			}
			vals[ti], errs[ti] = row[l], est
			if est <= goal {
				break
			}
		}
	}
	return nil
}
