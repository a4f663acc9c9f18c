package expo

import (
	"context"
	"fmt"
	"math"
	"sort"
	"strings"
	"time"

	"gonum.org/v1/gonum/mat"

	"semiflow/numerics/linop"
	"semiflow/numerics/memguard"
)

// Piecewise interpolation of a forcing function (Forcing.Func).
//
// Each stretch between stopping times (output times and Forcing.Breaks)
// starts as Forcing.Pieces pieces. On a piece [a, a+H] f is interpolated
// by a polynomial p of degree q at the q+1 Chebyshev points of the first
// kind, all inside the piece, so a jump at a breakpoint is never sampled
// from the wrong side. The interpolation error δ is measured at q+2 points
// between the nodes; over the piece it adds c·δ·H to the error estimate
// (c = 2; where f looks non-smooth c = 4 at a kink and c = 8 at a jump,
// whose interpolant overshoots by up to the Lebesgue constant, about 2.2
// for q = 6). Every error made on a piece, this one and the propagation's,
// is carried to later times multiplied by M ≥ sup_{s≤T}‖e^{sA}‖∞
// (growthBound: 1 for a diagonally dominant A). A piece is halved while
// its share exceeds tol·scale·max(H/T, 1/64)/(2M).
//
// Non-smooth f: for smooth f, halving a piece divides δ by about 2^{q+1};
// at a jump δ stays near half the jump, at a kink it halves. A piece whose
// δ fell by less than 8 on four successive halvings marks f as non-smooth
// there; the pieces around it keep halving until their share fits (a jump
// J resolved to width H costs about J·H), and the result names the place
// so that the user can give it as a breakpoint.

// forcePiece is a piece waiting to be integrated.
type forcePiece struct {
	a, b        float64
	depth       int
	parentDelta float64 // δ of the piece it was halved from (0 for none)
	slow        int     // successive halvings in which δ fell by less than 8
}

const (
	forceMaxDepth  = 60     // halvings of a piece
	forceMaxPieces = 100000 // pieces in one integration
	forceSlowRuns  = 4      // slow halvings that mark f as non-smooth
)

// chebFirstKind returns the Chebyshev points of the first kind on [0, 1]
// and q+2 check points: the midpoints between successive nodes and the
// midpoints between each end and its nearest node.
func chebFirstKind(q int) (nodes, checks []float64) {
	nodes = make([]float64, q+1)
	for i := range nodes {
		nodes[i] = (1 - math.Cos(math.Pi*float64(2*i+1)/float64(2*q+2))) / 2
	}
	checks = append(checks, nodes[0]/2)
	for i := 0; i < q; i++ {
		checks = append(checks, (nodes[i]+nodes[i+1])/2)
	}
	checks = append(checks, (1+nodes[q])/2)
	return nodes, checks
}

func forcedFunc(ctx context.Context, A linop.Operator, u0 []float64, f Forcing, times []float64, opts Options) (*Solution, error) {
	start := time.Now()
	out, guessed, err := forcedFuncOnce(ctx, A, u0, f, times, opts)
	if err != nil || out.TolMet || f.Scale > 0 || !guessed {
		return out, err
	}
	// The pieces were sized to a solution as large as f·H, which it is
	// not: once more, with the size it has.
	big := 0.0
	for _, v := range out.Values {
		big = math.Max(big, normInf(v))
	}
	if big == 0 {
		return out, nil
	}
	f.Scale = big
	second, _, err := forcedFuncOnce(ctx, A, u0, f, times, opts)
	if err != nil {
		return nil, err
	}
	second.MatVecs += out.MatVecs
	second.Solves += out.Solves
	second.Factors += out.Factors
	second.Reason += fmt.Sprintf("; run twice, the second time with pieces sized to the solution's largest ‖u‖∞ = %.3g (the forcing is much larger)", big)
	second.Elapsed = time.Since(start)
	return second, nil
}

// forcedFuncOnce is one integration of forcedFunc; guessed reports
// whether a piece's size of u was taken from ‖f‖∞·H above the ‖u‖∞ met.
func forcedFuncOnce(ctx context.Context, A linop.Operator, u0 []float64, f Forcing, times []float64, opts Options) (*Solution, bool, error) {
	start := time.Now()
	guessed := false
	n := len(u0)
	if opts.Tol <= 0 {
		opts.Tol = 1e-10
	}
	q := f.Degree
	if q <= 0 {
		q = 6
	}
	pieces := f.Pieces
	if pieces <= 0 {
		pieces = 1
	}
	tmax, stops, isBreak, err := stoppingTimes(times, f.Breaks)
	if err != nil {
		return nil, false, err
	}

	// The interpolant's coefficients, the samples, the augmented vector
	// and a copy of u per stopping time, through the memory guard.
	if err := memguard.Vectors(2*(q+1)+4+len(stops), n, memguard.RealBytes, "forcing interpolation work vectors and results"); err != nil {
		return nil, false, err
	}
	// Errors made on one piece grow by at most M on the later ones.
	M, growthNote, err := growthBound(ctx, A, tmax)
	if err != nil {
		return nil, false, err
	}
	out := &Solution{Times: append([]float64(nil), times...), Values: make([][]float64, len(times)), ErrEst: make([]float64, len(times)), Tol: opts.Tol}
	nodes, checks := chebFirstKind(q)
	// Vandermonde matrix in s = τ/H at the nodes, factored once.
	V := mat.NewDense(q+1, q+1, nil)
	for i, s := range nodes {
		p := 1.0
		for j := 0; j <= q; j++ {
			V.Set(i, j, p)
			p *= s
		}
	}
	var lu mat.LU
	lu.Factorize(V)
	o := opts
	o.Crosscheck = false
	o.Progress = nil

	u := append([]float64(nil), u0...)
	scale := normInf(u0)
	errAcc := 0.0
	at := map[float64][]float64{0: append([]float64(nil), u0...)}
	est := map[float64]float64{0: 0}
	fv := make([]float64, n)
	F := mat.NewDense(q+1, n, nil)
	val := make([]float64, n)
	var rough []forcePiece // accepted pieces where f looked non-smooth
	done, count := 0, 0
	t := 0.0
	for _, stop := range stops {
		if stop <= t {
			if _, ok := at[stop]; !ok {
				at[stop], est[stop] = append([]float64(nil), u...), M*errAcc
			}
			continue
		}
		// Pieces of [t, stop], integrated left to right (a stack with the
		// leftmost piece on top).
		var stack []forcePiece
		for k := pieces - 1; k >= 0; k-- {
			a := t + (stop-t)*float64(k)/float64(pieces)
			b := t + (stop-t)*float64(k+1)/float64(pieces)
			if k == pieces-1 {
				b = stop
			}
			stack = append(stack, forcePiece{a: a, b: b})
		}
		for len(stack) > 0 {
			if err := ctx.Err(); err != nil {
				return nil, false, err
			}
			pc := stack[len(stack)-1]
			stack = stack[:len(stack)-1]
			H := pc.b - pc.a
			for i, s := range nodes {
				f.Func(pc.a+s*H, fv)
				F.SetRow(i, fv)
			}
			var C mat.Dense // monomial coefficients in s, one row per power
			if err := lu.SolveTo(&C, false, F); err != nil {
				if _, ok := err.(mat.Condition); !ok {
					return nil, false, err
				}
			}
			delta, fmax := 0.0, 0.0
			for _, s := range checks {
				f.Func(pc.a+s*H, fv)
				for r := range val {
					val[r] = 0
				}
				p := 1.0
				for j := 0; j <= q; j++ {
					for r := 0; r < n; r++ {
						val[r] += C.At(j, r) * p
					}
					p *= s
				}
				delta = math.Max(delta, maxAbsDiff(val, fv))
				fmax = math.Max(fmax, normInf(fv))
			}
			if math.IsNaN(delta) || math.IsInf(delta, 0) {
				return nil, false, errorf("the forcing is not finite near t = %.6g", pc.a+H/2)
			}
			slow := 0
			if pc.parentDelta > 0 && delta > pc.parentDelta/8 {
				slow = pc.slow + 1
			}
			// The interpolant of a jump overshoots (δ stays near half the
			// jump as the piece halves): c = 8. At a kink δ halves with H
			// and the interpolant does not overshoot: c = 4.
			c := 2.0
			if slow > 0 || pc.slow > 0 {
				c = 4
				if pc.parentDelta > 0 && delta > 0.7*pc.parentDelta {
					c = 8
				}
			}
			share := c * delta * H
			sc := math.Max(scale, fmax*H)
			if f.Scale > 0 {
				sc = math.Max(scale, f.Scale)
			} else if fmax*H > scale {
				guessed = true
			}
			budget := 0.5 * opts.Tol * sc * math.Max(H/tmax, 1.0/64) / M
			if share > budget && pc.depth < forceMaxDepth && count+len(stack) < forceMaxPieces && delta > 4*unitRoundoff*fmax {
				m := pc.a + H/2
				stack = append(stack,
					forcePiece{a: m, b: pc.b, depth: pc.depth + 1, parentDelta: delta, slow: slow},
					forcePiece{a: pc.a, b: m, depth: pc.depth + 1, parentDelta: delta, slow: slow})
				continue
			}
			if slow >= forceSlowRuns {
				rough = append(rough, pc)
			}
			// f ≈ Σ_j c_j (τ/H)^j = Σ_j w_j (τ/H)^j/j! on the piece, in
			// the scaled basis: w_j = j!·c_j.
			w := make([][]float64, q+1)
			fact := 1.0
			for j := 0; j <= q; j++ {
				if j > 0 {
					fact *= float64(j)
				}
				w[j] = make([]float64, n)
				for r := 0; r < n; r++ {
					w[j][r] = fact * C.At(j, r)
				}
			}
			// Balance the augmented vector: y_0 = β ≈ the size of u (or of
			// the piece's contribution f·H when u is still 0) and W/β, so
			// that the propagation's tolerance, relative to ‖[u; y]‖, is
			// relative to u.
			beta := math.Max(normInf(u), fmax*H)
			if beta == 0 {
				beta = 1
			}
			for _, wj := range w {
				for r := range wj {
					wj[r] /= beta
				}
			}
			aug := &augmented{a: A, w: w, h: H}
			x0 := make([]float64, n+q+1)
			copy(x0, u)
			x0[n] = beta
			// The piece's share of the propagation budget, like its share
			// of the interpolation budget.
			o.Tol = math.Max(0.5*opts.Tol*math.Max(H/tmax, 1.0/64)/M, 1e-15)
			if f.Scale > 0 && beta > sc {
				// The augmented vector's norm is β; the tolerance refers to sc.
				o.Tol = math.Max(o.Tol*sc/beta, 1e-15)
			}
			s, err := Propagate(ctx, aug, x0, []float64{H}, o)
			if err != nil {
				return nil, false, err
			}
			copy(u, s.Values[0][:n])
			scale = math.Max(scale, normInf(u))
			errAcc += s.ErrEst[0] + share
			count++
			out.MatVecs += s.MatVecs
			out.Solves += s.Solves
			out.Factors += s.Factors
			out.Method = s.Method
			out.Reason = s.Reason
		}
		t = stop
		at[stop], est[stop] = append([]float64(nil), u...), M*errAcc
		done++
		if opts.Progress != nil {
			opts.Progress(done, len(stops))
		}
	}
	for i, tt := range times {
		out.Values[i] = append([]float64(nil), at[tt]...)
		out.ErrEst[i] = est[tt]
	}
	if out.Method == "" {
		out.Method, out.Reason = "none", "all output times are 0"
	} else {
		out.Reason = fmt.Sprintf("general forcing: degree-%d Chebyshev interpolation on %d pieces halved to fit the tolerance, each exact through the augmented operator; %s", q, count, out.Reason)
	}
	if growthNote != "" {
		out.Reason += "; errors carried with " + growthNote
	}
	if msg := roughReport(rough, isBreak); msg != "" {
		out.Reason += "; " + msg
	}
	out.Elapsed = time.Since(start)
	out.checkTolMaxU(scale)
	if opts.Crosscheck {
		fn := func(t float64, _, dst []float64) { f.Func(t, dst) }
		crossSemilinear(ctx, out, A, fn, u0, times, StepControl{Breaks: f.Breaks}, opts)
	}
	return out, guessed, nil
}

// roughReport names the places where the forcing looked non-smooth,
// merging neighbouring pieces, with the advice to give them as breakpoints.
func roughReport(rough []forcePiece, isBreak map[float64]bool) string {
	if len(rough) == 0 {
		return ""
	}
	sort.Slice(rough, func(i, j int) bool { return rough[i].a < rough[j].a })
	var spots [][2]float64
	for _, p := range rough {
		if k := len(spots) - 1; k >= 0 && p.a <= spots[k][1]+(p.b-p.a) {
			spots[k][1] = math.Max(spots[k][1], p.b)
			continue
		}
		spots = append(spots, [2]float64{p.a, p.b})
	}
	var at []string
	for i, s := range spots {
		if i == 3 {
			at = append(at, fmt.Sprintf("and %d more", len(spots)-3))
			break
		}
		at = append(at, fmt.Sprintf("%.9g", (s[0]+s[1])/2))
	}
	return fmt.Sprintf("the forcing jumps or has a kink near t ≈ %s (its interpolation error stopped falling as pieces shrank); pieces were shrunk around it, but give such times as breakpoints (switches) to integrate across them exactly", strings.Join(at, ", "))
}
