package plot

import (
	"encoding/json"
	"errors"
	"fmt"
	"math"
	"math/rand/v2"
	"os"
	"path/filepath"
	"reflect"
	"strings"
	"testing"
)

func near(a, b, tol float64) bool { return math.Abs(a-b) <= tol*math.Max(1, math.Abs(b)) }

func TestNiceTicks(t *testing.T) {
	// Hand-checked: multiples of the smallest 1-2-5 step with (hi−lo)/step ≤ target.
	for _, c := range []struct {
		lo, hi float64
		n      int
		want   []float64
		step   float64
	}{
		{0, 1, 5, []float64{0, 0.2, 0.4, 0.6, 0.8, 1}, 0.2},
		{-3.7, 12.2, 5, []float64{0, 5, 10}, 5},
		{-1, 1, 4, []float64{-1, -0.5, 0, 0.5, 1}, 0.5},
		{0.13, 0.17, 4, []float64{0.13, 0.14, 0.15, 0.16, 0.17}, 0.01},
		{1e-6, 5e-6, 4, []float64{1e-6, 2e-6, 3e-6, 4e-6, 5e-6}, 1e-6},
		{-2e5, 7e5, 5, []float64{-2e5, 0, 2e5, 4e5, 6e5}, 2e5},
	} {
		got, step := NiceTicks(c.lo, c.hi, c.n)
		if !near(step, c.step, 1e-12) || len(got) != len(c.want) {
			t.Errorf("NiceTicks(%g, %g, %d) = %v step %g, want %v step %g", c.lo, c.hi, c.n, got, step, c.want, c.step)
			continue
		}
		for k := range got {
			if !near(got[k], c.want[k], 1e-12) {
				t.Errorf("NiceTicks(%g, %g, %d)[%d] = %g, want %g", c.lo, c.hi, c.n, k, got[k], c.want[k])
			}
		}
	}
	// The tick at zero is exactly zero, not a rounding residue such as 5.55e-17.
	got, _ := NiceTicks(-0.3, 0.3, 6)
	found := false
	for _, v := range got {
		if v == 0 && !math.Signbit(v) {
			found = true
		}
	}
	if !found {
		t.Errorf("NiceTicks(-0.3, 0.3) = %v lacks an exact +0", got)
	}
	if g, _ := NiceTicks(1, 1, 5); g != nil {
		t.Errorf("empty range gave %v", g)
	}
	if g, _ := NiceTicks(1e300, math.Nextafter(1e300, math.Inf(1)), 5); g != nil { // k·step no longer resolves the range
		t.Errorf("range below the precision gave %v", g)
	}
	if g, _ := NiceTicks(math.Inf(-1), 1, 5); g != nil {
		t.Errorf("infinite range gave %v", g)
	}
}

func TestLogTicks(t *testing.T) {
	major, minor := LogTicks(2e-4, 3, 10) // decades 1e-3 … 1
	want := []float64{1e-3, 1e-2, 1e-1, 1}
	if len(major) != len(want) {
		t.Fatalf("majors %v, want %v", major, want)
	}
	for k := range want {
		if !near(major[k], want[k], 1e-12) {
			t.Errorf("major[%d] = %g, want %g", k, major[k], want[k])
		}
	}
	// Minors j·10^k, j = 2…9, inside the range: 2e-4 … 9e-4 (8), then 8 per
	// decade for 1e-3, 1e-2, 1e-1 (24), then 2, 3 (2): 34.
	if len(minor) != 34 {
		t.Errorf("%d minors, want 34: %v", len(minor), minor)
	}
	// 21 decades with at most 5 majors: stride 5, majors 1, 1e5, …, 1e20.
	major, minor = LogTicks(1, 1e20, 5)
	if len(major) != 5 || !near(major[1], 1e5, 1e-12) || !near(major[4], 1e20, 1e-12) {
		t.Errorf("stride-5 majors %v", major)
	}
	if len(minor) != 16 {
		t.Errorf("stride-5 minors: %d, want the 16 skipped decades", len(minor))
	}
	// Less than a decade: 1-2-5 majors.
	major, _ = LogTicks(1.5, 30, 10)
	if want := []float64{2, 5, 10, 20}; !reflect.DeepEqual(roundAll(major), want) {
		t.Errorf("sub-decade majors %v, want %v", major, want)
	}
	// A narrow range falls back to linear ticks.
	major, _ = LogTicks(3.1, 3.9, 4)
	if len(major) < 2 || major[0] < 3.1 || major[len(major)-1] > 3.9 {
		t.Errorf("narrow range majors %v", major)
	}
	if m, _ := LogTicks(-1, 10, 5); m != nil {
		t.Errorf("non-positive range gave %v", m)
	}
}

func roundAll(v []float64) []float64 {
	out := make([]float64, len(v))
	for i, x := range v {
		out[i] = math.Round(x*1e9) / 1e9
	}
	return out
}

func TestLabels(t *testing.T) {
	str := func(ls []label) []string {
		var s []string
		for _, l := range ls {
			s = append(s, l.String())
		}
		return s
	}
	for _, c := range []struct {
		ticks []float64
		step  float64
		want  []string
	}{
		{[]float64{-1, -0.5, math.Copysign(0, -1), 0.5, 1}, 0.5, []string{"−1.0", "−0.5", "0.0", "0.5", "1.0"}},
		{[]float64{0, 50, 100}, 50, []string{"0", "50", "100"}},
		{[]float64{0, 2e5, 4e5}, 2e5, []string{"0", "2×10^5", "4×10^5"}},
		{[]float64{1e5, 1.5e5}, 5e4, []string{"1.0×10^5", "1.5×10^5"}},
		{[]float64{-4e-4, 0, 4e-4}, 4e-4, []string{"−4×10^−4", "0", "4×10^−4"}},
		{[]float64{0.001, 0.002}, 0.001, []string{"0.001", "0.002"}},
	} {
		if got := str(linearLabels(c.ticks, c.step)); !reflect.DeepEqual(got, c.want) {
			t.Errorf("linearLabels(%v) = %q, want %q", c.ticks, got, c.want)
		}
	}
	if got := str(logLabels([]float64{1e-6, 1, 1e3})); !reflect.DeepEqual(got, []string{"10^−6", "10^0", "10^3"}) {
		t.Errorf("decade labels %q", got)
	}
	if got := str(logLabels([]float64{2, 5, 10, 20})); !reflect.DeepEqual(got, []string{"2", "5", "10", "20"}) {
		t.Errorf("1-2-5 labels %q", got)
	}
	for v, want := range map[float64]string{
		1e-3: "1e−3", 1.5e-6: "1.5e−6", 0.001234: "1.234e−3", 0.05: "0.05", 1e4: "1e4", -2.5: "−2.5", 12346: "1.235e4",
		math.Copysign(0, -1): "0", math.Inf(1): "∞", 1e100: "1e100", 0.1: "0.1",
	} {
		if got := FormatValue(v); got != want {
			t.Errorf("FormatValue(%g) = %q, want %q", v, got, want)
		}
	}
}

func TestTextHelpers(t *testing.T) {
	if got := escape(`a<b & "c" 'd'>` + "\x01\xff"); got != "a&lt;b &amp; &quot;c&quot; &apos;d&apos;&gt;" {
		t.Errorf("escape: %q", got)
	}
	long := strings.Repeat("growth of the semigroup ", 20)
	lines := wrapText(long, 300, 15, 2)
	if len(lines) != 2 || !strings.HasSuffix(lines[1], "…") {
		t.Errorf("wrap: %q", lines)
	}
	for _, l := range lines {
		if TextWidth(l, 15) > 300 {
			t.Errorf("line %q is too wide", l)
		}
	}
	if got := shorten("abcdefghijklmnopqrstuvwxyz", 60, 10); TextWidth(got, 10) > 60 || !strings.HasSuffix(got, "…") {
		t.Errorf("shorten: %q", got)
	}
	// DejaVu Sans digits advance 0.636 em (font metrics, from memory): the
	// estimate must not be smaller.
	if TextWidth("0123456789", 10) < 63.6 {
		t.Error("digit width underestimated")
	}
}

func TestContoursCircle(t *testing.T) {
	z, xs, ys := circleField(81, 1.6)
	h := xs[1] - xs[0]
	radii := []float64{0.3, 0.75, 1.2}
	levels := make([]float64, len(radii))
	for k, r := range radii {
		levels[k] = r * r
	}
	got := Contours(z, xs, ys, levels)
	for k, r := range radii {
		if len(got[k]) != 1 || !got[k][0].Closed {
			t.Fatalf("r = %g: %d polylines, want one closed curve", r, len(got[k]))
		}
		pl := got[k][0]
		if pl.X[0] != pl.X[len(pl.X)-1] || pl.Y[0] != pl.Y[len(pl.Y)-1] {
			t.Errorf("r = %g: closed curve does not repeat its first point", r)
		}
		area := 0.0
		for i := 0; i+1 < len(pl.X); i++ {
			// Closed form: the level set of x² + y² at r² is the circle of radius r.
			if d := math.Abs(math.Hypot(pl.X[i], pl.Y[i]) - r); d > h {
				t.Errorf("r = %g: vertex (%g, %g) is %g from the circle, more than h = %g", r, pl.X[i], pl.Y[i], d, h)
			}
			area += pl.X[i]*pl.Y[i+1] - pl.X[i+1]*pl.Y[i]
		}
		// Closed form: the disc has area πr²; the inscribed polygon loses O(h²).
		if a := math.Abs(area) / 2; math.Abs(a-math.Pi*r*r) > 0.01*math.Pi*r*r {
			t.Errorf("r = %g: enclosed area %g, want πr² = %g", r, a, math.Pi*r*r)
		}
	}
}

func TestContoursLinearExact(t *testing.T) {
	// For f(x, y) = x + 2y linear interpolation is exact: every vertex of the
	// level c satisfies x + 2y = c, and the set is one open line across the grid.
	xs, ys := linspace(0, 1, 11), linspace(0, 1, 7)
	z := make([][]float64, len(xs))
	for i := range z {
		z[i] = make([]float64, len(ys))
		for j := range z[i] {
			z[i][j] = xs[i] + 2*ys[j]
		}
	}
	got := Contours(z, xs, ys, []float64{1.37})
	if len(got[0]) != 1 || got[0][0].Closed {
		t.Fatalf("got %d polylines (closed %v), want one open line", len(got[0]), len(got[0]) > 0 && got[0][0].Closed)
	}
	pl := got[0][0]
	for i := range pl.X {
		if math.Abs(pl.X[i]+2*pl.Y[i]-1.37) > 1e-12 {
			t.Errorf("vertex (%g, %g) off the line", pl.X[i], pl.Y[i])
		}
	}
}

func TestContoursSaddleAndGaps(t *testing.T) {
	// Saddle f = x·y on [−1, 1]² sampled at the corners only: corners alternate
	// in sign. Level 0.5 ± small: two separate pieces, never a crossing.
	xs, ys := []float64{-1, 1}, []float64{-1, 1}
	z := [][]float64{{1, -1}, {-1, 1}}
	for _, c := range []float64{0.1, -0.1} {
		got := Contours(z, xs, ys, []float64{c})
		if len(got[0]) != 2 {
			t.Errorf("saddle at level %g: %d pieces, want 2", c, len(got[0]))
		}
	}
	// A NaN corner removes its cells; nothing panics and curves stay finite.
	zz, gx, gy := circleField(21, 1)
	zz[10][10] = math.NaN()
	zz[3][4] = math.Inf(1)
	for _, pls := range Contours(zz, gx, gy, []float64{0.25, math.NaN()}) {
		for _, pl := range pls {
			for i := range pl.X {
				if !finite(pl.X[i]) || !finite(pl.Y[i]) {
					t.Fatal("non-finite vertex")
				}
			}
		}
	}
	if got := Contours([][]float64{{1}}, []float64{0}, []float64{0}, []float64{0.5}); len(got) != 1 || got[0] != nil {
		t.Errorf("1×1 grid: %v", got)
	}
	mustPanic(t, func() { Contours([][]float64{{1, 2}}, []float64{0, 1}, []float64{0, 1}, nil) })
	mustPanic(t, func() { Contours([][]float64{{1}, {2, 3}}, []float64{0, 1}, []float64{0}, nil) })
}

func mustPanic(t *testing.T, f func()) {
	t.Helper()
	defer func() {
		e := recover()
		err, ok := e.(error)
		if !ok || !errors.Is(err, ErrShape) {
			t.Errorf("panic %v, want ErrShape", e)
		}
	}()
	f()
}

func TestOKLab(t *testing.T) {
	// Ottosson (2020) / CSS Color 4: white is L = 1, a = b = 0; sRGB red is
	// oklab(0.62796 0.22486 0.12585) (reference values from memory, to 4e-4).
	w := RGB{255, 255, 255}.ToLab()
	if !near(w.L, 1, 1e-4) || math.Abs(w.A) > 1e-4 || math.Abs(w.B) > 1e-4 {
		t.Errorf("white: %+v", w)
	}
	red := RGB{255, 0, 0}.ToLab()
	if math.Abs(red.L-0.62796) > 4e-4 || math.Abs(red.A-0.22486) > 4e-4 || math.Abs(red.B-0.12585) > 4e-4 {
		t.Errorf("red: %+v", red)
	}
	rng := rand.New(rand.NewPCG(1, 2))
	for range 200 {
		c := RGB{uint8(rng.IntN(256)), uint8(rng.IntN(256)), uint8(rng.IntN(256))}
		if back := c.ToLab().RGB(); back != c {
			t.Fatalf("round trip %v → %v", c, back)
		}
	}
}

func gamutOK(p Lab) bool {
	r, g, b := p.linearRGB()
	const e = 1e-3
	return r > -e && g > -e && b > -e && r < 1+e && g < 1+e && b < 1+e
}

func TestPalette(t *testing.T) {
	for i, p := range paletteLab {
		if !gamutOK(p) {
			t.Errorf("palette colour %d out of sRGB gamut", i)
		}
		for j := range i {
			q := paletteLab[j]
			// Greyscale separation: lightness differs by at least 0.08.
			if math.Abs(p.L-q.L) < 0.08 {
				t.Errorf("palette %d and %d: lightness %.2f and %.2f too close", i, j, p.L, q.L)
			}
			if d := math.Sqrt((p.L-q.L)*(p.L-q.L) + (p.A-q.A)*(p.A-q.A) + (p.B-q.B)*(p.B-q.B)); d < 0.12 {
				t.Errorf("palette %d and %d: ΔE_ok = %.3f", i, j, d)
			}
		}
		// Visible on white: lightness at most 0.85.
		if p.L > 0.85 {
			t.Errorf("palette %d too light for lines on white", i)
		}
	}
}

func TestColorMap(t *testing.T) {
	for _, p := range Sequential.stops {
		if !gamutOK(p) {
			t.Errorf("control point %+v out of gamut", p)
		}
	}
	prev := -1.0
	for k := 0; k <= 100; k++ {
		p := Sequential.Lab(float64(k) / 100)
		if !gamutOK(p) {
			t.Errorf("t = %g out of gamut", float64(k)/100)
		}
		if p.L <= prev {
			t.Errorf("lightness not increasing at t = %g", float64(k)/100)
		}
		prev = p.L
	}
	if Sequential.At(math.NaN()) != Sequential.At(0) || Sequential.At(2) != Sequential.At(1) {
		t.Error("clamping")
	}
}

// dichromats holds the dichromat simulation matrices on linear sRGB,
// severity 1, of Machado, Oliveira & Fernandes, IEEE TVCG 2009, written by
// testdata/plot/make_cvd.py from Debian's python3-colorspacious.
func dichromats(t *testing.T) map[string][3][3]float64 {
	t.Helper()
	data, err := os.ReadFile(filepath.Join(goldenDir, "machado2009.json"))
	if err != nil {
		t.Fatal(err)
	}
	var f struct {
		Matrices map[string][3][3]float64
	}
	if err := json.Unmarshal(data, &f); err != nil || len(f.Matrices) != 3 {
		t.Fatalf("machado2009.json: %v (%d matrices)", err, len(f.Matrices))
	}
	return f.Matrices
}

// simulate returns p as seen by a dichromat with matrix m, in OKLab.
func simulate(m [3][3]float64, p Lab) Lab {
	r, g, b := p.linearRGB()
	c := [3]float64{r, g, b}
	var o [3]float64
	for k := range 3 {
		o[k] = math.Min(1, math.Max(0, m[k][0]*c[0]+m[k][1]*c[1]+m[k][2]*c[2]))
	}
	l := math.Cbrt(0.4122214708*o[0] + 0.5363325363*o[1] + 0.0514459929*o[2])
	mm := math.Cbrt(0.2119034982*o[0] + 0.6806995451*o[1] + 0.1073969566*o[2])
	s := math.Cbrt(0.0883024619*o[0] + 0.2817188376*o[1] + 0.6299787005*o[2])
	return Lab{0.2104542553*l + 0.7936177850*mm - 0.0040720468*s,
		1.9779984951*l - 2.4285922050*mm + 0.4505937099*s,
		0.0259040371*l + 0.7827717662*mm - 0.8086757660*s}
}

func deltaE(p, q Lab) float64 {
	return math.Sqrt((p.L-q.L)*(p.L-q.L) + (p.A-q.A)*(p.A-q.A) + (p.B-q.B)*(p.B-q.B))
}

// TestColorMapColourBlind: for each dichromat of Machado et al. (2009) the
// simulated heat-map colours still rise in lightness along the map, and 20
// equal steps of the map stay apart (ΔE_ok ≥ 0.02 each, a threshold of
// common practice, no source, for colours told apart side by side).
func TestColorMapColourBlind(t *testing.T) {
	for name, m := range dichromats(t) {
		prev := simulate(m, Sequential.Lab(0))
		for k := 1; k <= 20; k++ {
			p := simulate(m, Sequential.Lab(float64(k)/20))
			if p.L <= prev.L {
				t.Errorf("%s: simulated lightness falls at t = %g (%.3f after %.3f)", name, float64(k)/20, p.L, prev.L)
			}
			if d := deltaE(p, prev); d < 0.02 {
				t.Errorf("%s: step to t = %g is ΔE_ok = %.3f", name, float64(k)/20, d)
			}
			prev = p
		}
	}
}

// TestColorMapOwnPath: the heat map's hue turns from blue through red to
// yellow, never passing green–teal (hue 140°–220°), and its chroma stays
// low enough to read lightness first.
func TestColorMapOwnPath(t *testing.T) {
	for k := 0; k <= 100; k++ {
		p := Sequential.Lab(float64(k) / 100)
		c := math.Hypot(p.A, p.B)
		h := math.Mod(math.Atan2(p.B, p.A)*180/math.Pi+360, 360)
		if c > 0.03 && h > 140 && h < 220 {
			t.Errorf("t = %g: hue %.0f° lies on the green–teal side", float64(k)/100, h)
		}
		if c > 0.13 {
			t.Errorf("t = %g: chroma %.3f", float64(k)/100, c)
		}
	}
}

// TestContourColours: contour colours on paper differ from their
// neighbours (ΔE_ok ≥ min(0.08, 0.45/(n−1)), half that for each dichromat), and a contour on the
// heat map differs in lightness by at least 0.4 from the map under it.
func TestContourColours(t *testing.T) {
	ms := dichromats(t)
	for _, n := range []int{2, 3, 5, 8} {
		cs := ContourColors(n)
		for k := 1; k < n; k++ {
			a, _ := lightness(cs[k-1])
			b, _ := lightness(cs[k])
			var pa, pb RGB
			fmt.Sscanf(cs[k-1], "#%02x%02x%02x", &pa.R, &pa.G, &pa.B)
			fmt.Sscanf(cs[k], "#%02x%02x%02x", &pb.R, &pb.G, &pb.B)
			// Many levels crowd the ramp: the bound shrinks with n.
			if d := deltaE(pa.ToLab(), pb.ToLab()); d < math.Min(0.08, 0.45/float64(n-1)) {
				t.Errorf("n = %d: levels %d and %d differ by ΔE_ok = %.3f (L %.2f, %.2f)", n, k-1, k, d, a, b)
			}
			for name, m := range ms {
				if d := deltaE(simulate(m, pa.ToLab()), simulate(m, pb.ToLab())); d < math.Min(0.04, 0.22/float64(n-1)) {
					t.Errorf("%s, n = %d: levels %d and %d differ by ΔE_ok = %.3f", name, n, k-1, k, d)
				}
			}
		}
	}
	for k := 0; k <= 20; k++ {
		tt := float64(k) / 20
		l, _ := lightness(contourOnMap(tt))
		if d := math.Abs(l - Sequential.Lab(tt).L); d < 0.4 {
			t.Errorf("t = %g: contour lightness %.2f against map %.2f", tt, l, Sequential.Lab(tt).L)
		}
	}
}

func TestPaletteColourBlind(t *testing.T) {
	toLab := func(r, g, b float64) Lab {
		l := math.Cbrt(0.4122214708*r + 0.5363325363*g + 0.0514459929*b)
		m := math.Cbrt(0.2119034982*r + 0.6806995451*g + 0.1073969566*b)
		s := math.Cbrt(0.0883024619*r + 0.2817188376*g + 0.6299787005*b)
		return Lab{0.2104542553*l + 0.7936177850*m - 0.0040720468*s,
			1.9779984951*l - 2.4285922050*m + 0.4505937099*s,
			0.0259040371*l + 0.7827717662*m - 0.8086757660*s}
	}
	for name, m := range dichromats(t) {
		sim := make([]Lab, len(paletteLab))
		for i, p := range paletteLab {
			r, g, b := p.linearRGB()
			c := [3]float64{r, g, b}
			var o [3]float64
			for k := range 3 {
				o[k] = math.Max(0, m[k][0]*c[0]+m[k][1]*c[1]+m[k][2]*c[2])
			}
			sim[i] = toLab(o[0], o[1], o[2])
		}
		for i := range sim {
			for j := range i {
				d := math.Sqrt((sim[i].L-sim[j].L)*(sim[i].L-sim[j].L) + (sim[i].A-sim[j].A)*(sim[i].A-sim[j].A) + (sim[i].B-sim[j].B)*(sim[i].B-sim[j].B))
				if d < 0.08 {
					t.Errorf("%s: palette %d and %d differ by ΔE_ok = %.3f", name, i, j, d)
				}
			}
		}
	}
}

// TestFormatLevels: one legend, one number format.
func TestFormatLevels(t *testing.T) {
	for _, c := range []struct {
		in   []float64
		want string
	}{
		{[]float64{0.1, 0.01, 1e-3}, "1e−1 1e−2 1e−3"},
		{[]float64{0.5, 0.025, 2}, "0.5 0.025 2"},
		{[]float64{-0.25, 3e-5}, "−2.5e−1 3e−5"},
		{[]float64{1e4, 0}, "1e4 0"},
	} {
		if got := strings.Join(FormatLevels(c.in), " "); got != c.want {
			t.Errorf("FormatLevels(%v) = %q, want %q", c.in, got, c.want)
		}
	}
}

// TestUnseenLevels: a contour level whose curves lie outside the plot is
// left out of the legend and named under the figure; a halo rings markers.
func TestUnseenLevels(t *testing.T) {
	f := &Figure{X: Axis{Min: 0, Max: 1}, Y: Axis{Min: 0, Max: 1}}
	f.AddContours([]float64{0.5, 0.01}, [][]Polyline{
		{{X: []float64{0.2, 0.8}, Y: []float64{0.5, 0.5}}},
		{{X: []float64{5, 6}, Y: []float64{5, 6}}}, // far outside the limits
	}, "ε")
	p := f.AddPoints([]float64{0.5}, []float64{0.2}, "eigenvalue")
	p.Halo = true
	svg, r := render(t, f)
	if len(r.entries) != 2 || r.entries[0].label != "ε = 0.5" {
		t.Errorf("legend %+v", r.entries)
	}
	if !strings.Contains(svg, "ε = 0.01: too small to see or outside the plot") {
		t.Error("the unseen level is not named")
	}
	if strings.Count(svg, `fill="`+paperColor+`" fill-opacity="0.85"`) != 1 {
		t.Error("no halo under the marker")
	}
	// Two specks far apart are two small curves, not one large one.
	g := &Figure{X: Axis{Min: 0, Max: 10}, Y: Axis{Min: 0, Max: 10}}
	speck := func(x float64) Polyline {
		return Polyline{X: []float64{x, x + 0.01, x, x}, Y: []float64{5, 5, 5.01, 5}, Closed: true}
	}
	g.AddContours([]float64{0.1}, [][]Polyline{{speck(1), speck(9)}}, "ε")
	if svg, _ := render(t, g); !strings.Contains(svg, "ε = 0.1: too small to see") {
		t.Error("two specks counted as a visible level")
	}
}
