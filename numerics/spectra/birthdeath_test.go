package spectra

import (
	"context"
	"encoding/json"
	"math"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"testing"

	"semiflow/numerics/linop"
	"semiflow/numerics/roundoff"
)

// bdRelRef holds the relative-accuracy references of make_birthdeath.py.
type bdRelRef struct {
	Wide struct {
		Birth   []float64 `json:"birth"`
		Death   []float64 `json:"death"`
		NonZero []string  `json:"nonzero_eigenvalues"`
	} `json:"wide"`
	Gaps []struct {
		Lam, Mu   float64
		K         int
		Rightmost []string `json:"rightmost"`
	} `json:"mm1k_gaps"`
}

func readJSON(t *testing.T, v any) {
	t.Helper()
	b, err := os.ReadFile(filepath.Join("..", "..", "testdata", "spectra", "birthdeath.json"))
	if err != nil {
		t.Fatal(err)
	}
	if err := json.Unmarshal(b, v); err != nil {
		t.Fatal(err)
	}
}

func parseNum(t *testing.T, s string) float64 {
	t.Helper()
	x, err := strconv.ParseFloat(s, 64)
	if err != nil {
		t.Fatal(err)
	}
	return x
}

// The 60-state chain with rates from 1e-8 to 1e8 (make_birthdeath.py,
// wide(): mpmath at 200 digits): every non-zero eigenvalue, from 1e8 down
// to 4e-72, within the stated relative bound 24·n·u, by dqds and by
// bisection. A backward-stable solver gets only those above n·u·‖Q‖ ≈ 1e-6.
func TestBirthDeathRelativeWide(t *testing.T) {
	var r bdRelRef
	readJSON(t, &r)
	c := &BirthDeathChain{Up: r.Wide.Birth, Down: r.Wide.Death}
	n := c.States()
	all, err := c.Eigenvalues(bg)
	if err != nil {
		t.Fatal(err)
	}
	d, e := c.bidiagonal()
	idx := make([]int, n)
	for i := range idx {
		idx[i] = i
	}
	bis, err := sigmaByIndex(bg, d, e, idx)
	if err != nil {
		t.Fatal(err)
	}
	if all[0] != 0 || bis[0] != 0 {
		t.Errorf("stationary eigenvalue %g, %g; want exactly 0", all[0], bis[0])
	}
	rel := c.RelativeError()
	worst := [2]float64{}
	for k, s := range r.Wide.NonZero {
		want := parseNum(t, s)
		for m, got := range []float64{all[k+1], bis[k+1]} {
			err := math.Abs(got-want) / math.Abs(want)
			worst[m] = math.Max(worst[m], err)
			if !(err <= rel) {
				t.Errorf("%s: eigenvalue %d = %.17g, mpmath %.17g: relative error %.2g > %.2g", []string{"dqds", "bisection"}[m], k+1, got, want, err, rel)
			}
		}
	}
	t.Logf("largest relative error: dqds %.2g (%.2g n·u), bisection %.2g (%.2g n·u); bound %.2g", worst[0], worst[0]/(float64(n)*roundoff.Unit), worst[1], worst[1]/(float64(n)*roundoff.Unit), rel)
}

// M/M/1/K queues up to 10⁴ states (make_birthdeath.py, mm1k_gaps(): the
// closed form at 50 digits): 0 and the two rightmost non-zero eigenvalues
// by Nearest, both as the rightmost and as the ones nearest a shift
// between them, within the stated relative bound; above
// 64 states and for so few eigenvalues this is the bisection route.
func TestBirthDeathRelativeMM1K(t *testing.T) {
	var r bdRelRef
	readJSON(t, &r)
	for _, g := range r.Gaps {
		t.Run(strconv.Itoa(g.K+1), func(t *testing.T) {
			c := &BirthDeathChain{Up: make([]float64, g.K), Down: make([]float64, g.K)}
			for k := range c.Up {
				c.Up[k], c.Down[k] = g.Lam, g.Mu
			}
			w1, w2 := parseNum(t, g.Rightmost[0]), parseNum(t, g.Rightmost[1])
			rel := c.RelativeError()
			for _, near := range []bool{false, true} {
				// Rightmost: 0, λ_1, λ_2. Nearest the midpoint of λ_1 and
				// λ_2: those two (0 and λ_3 are further away).
				k, sigma, want := 3, 0.0, []float64{0, w1, w2}
				if near {
					k, sigma, want = 2, (w1+w2)/2, want[1:]
				}
				v, how, err := c.Nearest(bg, k, near, sigma)
				if err != nil {
					t.Fatal(err)
				}
				if len(v) != len(want) {
					t.Fatalf("near=%v: %d values, want %d", near, len(v), len(want))
				}
				for i := range want {
					e := 0.0
					if want[i] != 0 {
						e = math.Abs(v[i]-want[i]) / math.Abs(want[i])
					} else if v[i] != 0 {
						e = math.Inf(1)
					}
					if !(e <= rel) {
						t.Errorf("near=%v: eigenvalue %d = %.17g, closed form %.17g: relative error %.2g > %.2g (%s)", near, i, v[i], want[i], e, rel, how)
					}
					if want[i] == w1 {
						t.Logf("near=%v: gap relative error %.2g, bound %.2g", near, e, rel)
					}
				}
			}
		})
	}
}

// The bisection route stops on a cancelled context; dqds returns at once.
func TestBirthDeathCancelled(t *testing.T) {
	ctx, cancel := context.WithCancel(context.Background())
	cancel()
	c := &BirthDeathChain{Up: make([]float64, 20000), Down: make([]float64, 20000)}
	for k := range c.Up {
		c.Up[k], c.Down[k] = 1, 2
	}
	if _, _, err := c.Nearest(ctx, 2, false, 0); err != context.Canceled {
		t.Errorf("bisection: %v, want context.Canceled", err)
	}
	small := &BirthDeathChain{Up: c.Up[:100], Down: c.Down[:100]}
	if _, err := small.Eigenvalues(ctx); err != context.Canceled {
		t.Errorf("dqds: %v, want context.Canceled", err)
	}
}

func tr(from, to int, rate float64) linop.Transition {
	return linop.Transition{From: from, To: to, Rate: rate}
}

// BirthDeathOf recognises the rate matrix of an irreducible birth–death
// chain and nothing else.
func TestBirthDeathOf(t *testing.T) {
	q, err := linop.RateMatrix(3, []linop.Transition{tr(0, 1, 2), tr(1, 0, 1), tr(1, 2, 3), tr(2, 1, 4)})
	if err != nil {
		t.Fatal(err)
	}
	c, ok := BirthDeathOf(q)
	if !ok || c.Up[0] != 2 || c.Up[1] != 3 || c.Down[0] != 1 || c.Down[1] != 4 {
		t.Errorf("birth–death 3 states: %v %+v", ok, c)
	}
	for name, ts := range map[string][]linop.Transition{
		"reducible": {tr(0, 1, 2), tr(1, 2, 3), tr(2, 1, 4)},
		"jump by 2": {tr(0, 1, 2), tr(1, 0, 1), tr(1, 2, 3), tr(2, 1, 4), tr(0, 2, 1)},
	} {
		q, _ := linop.RateMatrix(3, ts)
		if _, ok := BirthDeathOf(q); ok {
			t.Errorf("%s: recognised as an irreducible birth–death chain", name)
		}
	}
	sparse := func(rows [][]float64) *linop.CSR { return linop.CSRFromDense(op(rows).m, 0) }
	if c, ok := BirthDeathOf(sparse([][]float64{{-1, 1}, {2, -2}})); !ok || c.Up[0] != 1 || c.Down[0] != 2 {
		t.Errorf("two states: %v %+v", ok, c)
	}
	if _, ok := BirthDeathOf(sparse([][]float64{{-1, 1, 0}, {0, -1, 1}, {1, 0, -1}})); ok {
		t.Error("a cycle accepted as birth–death")
	}
	if _, ok := BirthDeathOf(sparse([][]float64{{-1, 1}, {0, 0}})); ok {
		t.Error("an absorbing chain accepted")
	}
	if _, ok := BirthDeathOf(sparse([][]float64{{-1, 1}, {2, -3}})); ok {
		t.Error("rows not summing to 0 accepted")
	}
	if _, ok := BirthDeathOf(op([][]float64{{-1, 1}, {2, -2}})); ok {
		t.Error("an operator without a sparse form accepted (BirthDeathOf reads the sparse form only)")
	}
}

// All eigenvalues (dqds) and the gap (bisection) of queues of 3000 and
// 10⁴ states.
func BenchmarkBirthDeath(b *testing.B) {
	for _, n := range []int{3000, 10000} {
		c := &BirthDeathChain{Up: make([]float64, n-1), Down: make([]float64, n-1)}
		for k := range c.Up {
			c.Up[k], c.Down[k] = 0.999, 1
		}
		b.Run(strconv.Itoa(n), func(b *testing.B) {
			c0 := cpuSeconds()
			for b.Loop() {
				if _, err := c.Eigenvalues(bg); err != nil {
					b.Fatal(err)
				}
			}
			b.ReportMetric((cpuSeconds()-c0)/float64(b.N), "cpu-s/op")
		})
		b.Run(strconv.Itoa(n)+"/gap", func(b *testing.B) {
			c0 := cpuSeconds()
			for b.Loop() {
				if _, _, err := c.Nearest(bg, 2, false, 0); err != nil {
					b.Fatal(err)
				}
			}
			b.ReportMetric((cpuSeconds()-c0)/float64(b.N), "cpu-s/op")
		})
	}
}

// generator() on birth–death chains: α(A) = 0 exactly (the stationary
// eigenvalue; closed form), on the sparse route for 2000 states and on
// the dense one for the strongly graded 500-state chain of
// make_birthdeath.py, where the non-symmetric QR algorithm misses the gap
// by 12%.
func TestGeneratorBirthDeathAbscissa(t *testing.T) {
	n := 2000
	ts := make([]linop.Transition, 0, 2*n)
	for k := 0; k+1 < n; k++ {
		ts = append(ts, tr(k, k+1, 0.999), tr(k+1, k, 1))
	}
	q, err := linop.RateMatrix(n, ts)
	if err != nil {
		t.Fatal(err)
	}
	rep, err := Generator(bg, q, nil)
	if err != nil {
		t.Fatal(err)
	}
	if rep.SpectralAbscissa != 0 || rep.AbscissaSign != 0 || !strings.Contains(rep.Verdict, "stationary eigenvalue of a birth–death chain") {
		t.Errorf("sparse: α = %g (sign %d), verdict %q", rep.SpectralAbscissa, rep.AbscissaSign, rep.Verdict)
	}
	var g birthDeathRef
	readJSON(t, &g)
	dense, err := Generator(bg, denseOp{birthDeath(g.Graded.Birth, g.Graded.Death)}, nil)
	if err != nil {
		t.Fatal(err)
	}
	if dense.SpectralAbscissa != 0 || dense.AbscissaSign != 0 {
		t.Errorf("dense graded: α = %g (sign %d)", dense.SpectralAbscissa, dense.AbscissaSign)
	}
}

// An eigenvalue below the normal range is refused, not shown as 0: rates
// 1e-200 make σ ≈ 1e-100 and λ ≈ 1e-200 (fine), rates 1e-310 are
// subnormal and give λ below 2⁻¹⁰²², refused by both routes.
func TestBirthDeathUnderflow(t *testing.T) {
	ok := &BirthDeathChain{Up: []float64{1e-200, 1e-200}, Down: []float64{1e-200, 1e-200}}
	if v, err := ok.Eigenvalues(bg); err != nil || !(v[1] < 0) || relDiff(v[2], -3e-200) > 1e-14 {
		t.Errorf("rates 1e-200: %v, %v (want 0, −1e-200, −3e-200)", v, err)
	}
	tiny := &BirthDeathChain{Up: []float64{1e-310, 1e-310}, Down: []float64{1e-310, 1e-310}}
	if v, err := tiny.Eigenvalues(bg); err == nil {
		t.Errorf("rates 1e-310: %v accepted", v)
	}
	d, e := tiny.bidiagonal()
	if v, err := sigmaByIndex(bg, d, e, []int{1}); err == nil {
		t.Errorf("rates 1e-310, bisection: %v accepted", v)
	}
}
