package plot

import (
	"bytes"
	"encoding/xml"
	"flag"
	"io"
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

var update = flag.Bool("update", false, "rewrite the golden SVG files under testdata/plot")

const goldenDir = "../../testdata/plot"

func linspace(a, b float64, n int) []float64 {
	out := make([]float64, n)
	for i := range out {
		out[i] = a + (b-a)*float64(i)/float64(n-1)
	}
	return out
}

// growthFigure: a transient-growth curve on a log axis with a band of bounds.
// The curve is the closed form ‖e^{tA}‖₁-like envelope (1 + 5t)e^{−t} of a
// Jordan-type block, with bounds (1+5t)e^{−t}/2 and 2(1+5t)e^{−t}.
func growthFigure() *Figure {
	t := linspace(0, 12, 121)
	y, lo, hi := make([]float64, len(t)), make([]float64, len(t)), make([]float64, len(t))
	for i, s := range t {
		y[i] = (1 + 5*s) * math.Exp(-s)
		lo[i], hi[i] = y[i]/2, 2*y[i]
	}
	y[60] = math.NaN() // a failed evaluation: skipped, and noted
	f := &Figure{Title: "Transient growth of ‖e^{tA}‖ before decay", Y: Axis{Label: "‖e^{tA}‖", Log: true}, X: Axis{Label: "t"}}
	f.AddBand(t, lo, hi, "bounds")
	f.AddLine(t, y, "‖e^{tA}‖")
	f.AddHLine(1, "1")
	return f
}

// spectrumFigure: eigenvalues of S − I, S the cyclic shift of order 24, are
// −1 + e^{2πik/24} (closed form), a circle of radius 1 about −1 touching the
// imaginary axis at 0.
func spectrumFigure() *Figure {
	n := 24
	re, im := make([]float64, n), make([]float64, n)
	for k := range re {
		s, c := math.Sincos(2 * math.Pi * float64(k) / float64(n))
		re[k], im[k] = -1+c, s
	}
	f := &Figure{Title: "Spectrum of S − I", X: Axis{Label: "Re λ"}, Y: Axis{Label: "Im λ"}, EqualAspect: true}
	f.AddVLine(0, "imaginary axis").Color = "#888888"
	f.AddPoints(re, im, "eigenvalues")
	p := f.AddPoints([]float64{-1}, []float64{0}, "centre")
	p.Marker = Cross
	f.AddText(-1, 1.15, "|λ + 1| = 1").Anchor = AnchorMiddle
	return f
}

func circleField(n int, half float64) (z [][]float64, xs, ys []float64) {
	xs, ys = linspace(-half, half, n), linspace(-half, half, n)
	z = make([][]float64, n)
	for i := range z {
		z[i] = make([]float64, n)
		for j := range z[i] {
			z[i][j] = xs[i]*xs[i] + ys[j]*ys[j]
		}
	}
	return
}

// contourFigure: level sets of x² + y², circles of radius √c (closed form).
func contourFigure() *Figure {
	z, xs, ys := circleField(41, 1.6)
	levels := []float64{0.01, 0.1, 0.5, 1, 2}
	f := &Figure{Title: "Level sets of x² + y²", X: Axis{Label: "x"}, Y: Axis{Label: "y"}, EqualAspect: true}
	f.AddContours(levels, Contours(z, xs, ys, levels), "ε")
	f.AddPoints([]float64{0}, []float64{0}, "minimum").Marker = Diamond
	return f
}

// heatFigure: the field e^{x}·(1 + y²) on a log colour scale with contours.
func heatFigure(nx, ny int) *Figure {
	xs, ys := linspace(-4, 2, nx), linspace(-2, 2, ny)
	z := make([][]float64, nx)
	for i := range z {
		z[i] = make([]float64, ny)
		for j := range z[i] {
			z[i][j] = math.Exp(2*xs[i]) * (1 + ys[j]*ys[j])
		}
	}
	f := &Figure{Title: "Resolvent-norm-like field on a log colour scale", X: Axis{Label: "Re z"}, Y: Axis{Label: "Im z"}}
	h := f.AddHeatMapGrid(z, xs, ys, "value")
	h.Log = true
	levels := []float64{1e-2, 1, 1e2}
	f.AddContours(levels, Contours(z, xs, ys, levels), "ε") // coloured against the map under them
	return f
}

var goldens = []struct {
	name string
	fig  func() *Figure
}{
	{"growth_logy_band", growthFigure},
	{"spectrum_equal_aspect", spectrumFigure},
	{"contours_legend", contourFigure},
	{"heatmap_png_colourbar", func() *Figure { return heatFigure(90, 60) }},
	{"heatmap_rects", func() *Figure { return heatFigure(24, 16) }},
}

func TestGolden(t *testing.T) {
	for _, g := range goldens {
		t.Run(g.name, func(t *testing.T) {
			got, err := g.fig().SVG()
			if err != nil {
				t.Fatal(err)
			}
			checkSVG(t, got)
			if dir := os.Getenv("SEMIFLOW_PNG_DIR"); dir != "" { // for a person to look at
				img, err := g.fig().PNG()
				if err != nil {
					t.Fatal(err)
				}
				if err := os.WriteFile(filepath.Join(dir, g.name+".png"), img, 0o644); err != nil {
					t.Fatal(err)
				}
			}
			if len(got) > 100_000 {
				t.Errorf("size %d bytes, want < 100 kB", len(got))
			}
			path := filepath.Join(goldenDir, g.name+".svg")
			if *update {
				if err := os.WriteFile(path, got, 0o644); err != nil {
					t.Fatal(err)
				}
				return
			}
			want, err := os.ReadFile(path)
			if err != nil {
				t.Fatalf("%v (run go test ./lang/plot -update)", err)
			}
			if !bytes.Equal(got, want) {
				t.Errorf("output differs from %s; inspect and run go test ./lang/plot -update", path)
			}
			// Rendering is deterministic.
			again, _ := g.fig().SVG()
			if !bytes.Equal(got, again) {
				t.Error("two renderings differ")
			}
		})
	}
}

// checkSVG parses svg with encoding/xml and checks the invariants every
// figure must satisfy.
func checkSVG(t *testing.T, svg []byte) {
	t.Helper()
	d := xml.NewDecoder(bytes.NewReader(svg))
	var root string
	hasTitle := false
	for {
		tok, err := d.Token()
		if err == io.EOF {
			break
		}
		if err != nil {
			t.Fatalf("invalid XML: %v", err)
		}
		if se, ok := tok.(xml.StartElement); ok {
			if root == "" {
				root = se.Name.Local
				attrs := map[string]string{}
				for _, a := range se.Attr {
					attrs[a.Name.Local] = a.Value
				}
				for _, k := range []string{"viewBox", "width", "height", "font-family"} {
					if attrs[k] == "" {
						t.Errorf("root lacks %s", k)
					}
				}
				if !strings.HasSuffix(attrs["font-family"], "sans-serif") {
					t.Errorf("font-family %q lacks a generic family", attrs["font-family"])
				}
			}
			if se.Name.Local == "title" {
				hasTitle = true
			}
			for _, a := range se.Attr {
				if strings.HasPrefix(a.Value, "data:") { // base64 may spell anything
					continue
				}
				if strings.Contains(a.Value, "NaN") || strings.Contains(a.Value, "Inf") {
					t.Errorf("attribute %s=%q of <%s> holds a non-finite number", a.Name.Local, a.Value, se.Name.Local)
				}
				if a.Name.Local == "href" && !strings.HasPrefix(a.Value, "data:image/png;base64,") {
					t.Errorf("image href %.40q is not a PNG data URI", a.Value)
				}
			}
		}
	}
	if root != "svg" {
		t.Errorf("root element %q", root)
	}
	if !hasTitle {
		t.Error("no <title>")
	}
}
