package plot

import (
	"bytes"
	"encoding/base64"
	"errors"
	"fmt"
	"image/png"
	"math"
	"strings"
	"testing"
)

// render renders f, checks the SVG, and returns it with the renderer's state.
func render(t *testing.T, f *Figure) (string, *renderer) {
	t.Helper()
	r, err := f.render()
	if err != nil {
		t.Fatalf("render: %v", err)
	}
	var c svgCanvas
	r.draw(&c)
	checkSVG(t, c.b.Bytes())
	return c.b.String(), r
}

func TestRobustness(t *testing.T) {
	nan, inf := math.NaN(), math.Inf(1)
	cases := map[string]*Figure{
		"empty":       {},
		"empty-log":   {X: Axis{Log: true}, Y: Axis{Log: true}},
		"empty-line":  {Series: []Series{&Line{}, &Points{}, &Band{}, &ContourSet{}, &HeatMap{}}},
		"one-point":   {Series: []Series{&Line{X: []float64{2}, Y: []float64{3}}, &Points{X: []float64{2}, Y: []float64{3}}}},
		"all-equal":   {Series: []Series{&Line{X: []float64{1, 1, 1}, Y: []float64{5, 5, 5}}}},
		"zero-points": {Series: []Series{&Points{X: []float64{0, 0}, Y: []float64{0, 0}}}, EqualAspect: true},
		"huge-range":  {Series: []Series{&Line{X: []float64{-math.MaxFloat64, 0, math.MaxFloat64}, Y: []float64{1e-300, 1, 1e300}}}},
		"huge-log":    {Y: Axis{Log: true}, Series: []Series{&Line{X: []float64{0, 1, 2}, Y: []float64{math.SmallestNonzeroFloat64, 1, math.MaxFloat64}}}},
		"tiny-range":  {Series: []Series{&Line{X: []float64{1, 1 + 1e-15}, Y: []float64{1e-310, 2e-310}}}},
		"non-finite":  {Series: []Series{&Line{X: []float64{0, 1, nan, 3, 4}, Y: []float64{0, inf, 2, -inf, 4}}, &Band{X: []float64{0, 1, 2}, Lower: []float64{nan, 0, 1}, Upper: []float64{1, 2, nan}}}},
		"all-nan":     {Series: []Series{&Line{X: []float64{nan, nan}, Y: []float64{nan, nan}}, &HLine{Y: nan}, &VLine{X: inf}, &Text{X: nan, Y: 1, S: "x"}}},
		"outside-limits": {X: Axis{Min: 0, Max: 1}, Y: Axis{Min: 0, Max: 1},
			Series: []Series{&Line{X: []float64{-1e200, 1e200}, Y: []float64{-1e250, 1e250}}, &Points{X: []float64{5}, Y: []float64{5}}, &Band{X: []float64{-10, 10}, Lower: []float64{-10, -10}, Upper: []float64{10, 10}}}},
		"narrow-limits":   {X: Axis{Min: 1e300, Max: math.Nextafter(1e300, math.Inf(1))}, Y: Axis{Min: 1, Max: math.Nextafter(1, 2), Log: true}, Series: []Series{&Line{X: []float64{0, 1}, Y: []float64{1, 1}}}},
		"reversed-limits": {X: Axis{Min: 3, Max: 1}, Series: []Series{&Line{X: []float64{0, 1}, Y: []float64{0, 1}}}},
		"tiny-figure":     {Width: 10, Height: 10, Title: "tiny", X: Axis{Label: "x"}, Y: Axis{Label: "y"}, Series: []Series{&Line{X: []float64{0, 1}, Y: []float64{0, 1}, Label: "a"}}},
		"heat-nan":        {Series: []Series{&HeatMap{Z: [][]float64{{nan, nan}, {nan, inf}}, X0: 0, X1: 1, Y0: 0, Y1: 1}}},
		"heat-one":        {Series: []Series{&HeatMap{Z: [][]float64{{7}}, X0: 0, X1: 1, Y0: 0, Y1: 1, Log: true}}},
		"heat-equal":      {Series: []Series{&HeatMap{Z: [][]float64{{2, 2}, {2, 2}}, X0: nan, X1: 1, Y0: 0, Y1: 1}}},
		"heat-log-neg":    {Series: []Series{&HeatMap{Z: [][]float64{{-1, 0}, {1, 10}}, X0: 0, X1: 1, Y0: 0, Y1: 1, Log: true, Label: "v"}}},
		"contour-nan":     {Series: []Series{&ContourSet{Levels: []float64{nan}, Lines: [][]Polyline{{{X: []float64{nan}, Y: []float64{1}}}}}}},
		"escape": {Title: `<script>alert("x")</script> & more`, X: Axis{Label: "a<b"}, Y: Axis{Label: "c&d"},
			Series: []Series{&Line{X: []float64{0, 1}, Y: []float64{0, 1}, Label: `"quoted" & <tag>`, Color: `red"/><script>`}, &Text{X: 0.5, Y: 0.5, S: "]]><!--"}}},
		"long-title": {Title: strings.Repeat("A very long title about resolvent norms ", 10), Series: []Series{&Line{X: []float64{0, 1}, Y: []float64{0, 1}}}},
		"many-legend": {Height: 150, Series: func() []Series {
			var s []Series
			for k := range 30 {
				s = append(s, &Line{X: []float64{0, 1}, Y: []float64{float64(k), float64(k)}, Label: strings.Repeat("w", k)})
			}
			return s
		}()},
	}
	for name, f := range cases {
		t.Run(name, func(t *testing.T) {
			svg, _ := render(t, f)
			if strings.Contains(svg, "NaN") || strings.Contains(svg, "Inf") {
				t.Error("SVG contains NaN or Inf")
			}
			if name == "escape" && strings.Contains(svg, "<script>") {
				t.Error("unescaped text")
			}
		})
	}
}

func TestNotes(t *testing.T) {
	nan := math.NaN()
	f := &Figure{Series: []Series{&Line{X: []float64{0, 1, nan, 3}, Y: []float64{0, math.Inf(1), 2, 3}}}}
	n, err := f.WriteSVG(&strings.Builder{})
	if err != nil || n.NonFinite != 2 {
		t.Errorf("notes %+v, err %v; want 2 non-finite", n, err)
	}
	svg, _ := f.SVG()
	if !strings.Contains(string(svg), "2 non-finite values skipped") {
		t.Error("note missing from figure")
	}
	// Log axis: non-positive data are an error unless dropped.
	g := &Figure{Y: Axis{Log: true}, Series: []Series{&Line{X: []float64{0, 1, 2}, Y: []float64{1, -0.5, 0}}}}
	if _, err := g.SVG(); err == nil || !strings.Contains(err.Error(), "2 non-positive values (first −0.5)") {
		t.Errorf("log error: %v", err)
	}
	g.DropNonPositive = true
	n, err = g.WriteSVG(&strings.Builder{})
	if err != nil || n.NonPositive != 2 {
		t.Errorf("drop: %+v %v", n, err)
	}
	h := &Figure{X: Axis{Log: true, Min: -1, Max: 10}}
	if _, err := h.SVG(); err == nil {
		t.Error("non-positive log limit accepted")
	}
	hm := &Figure{X: Axis{Log: true}, Series: []Series{&HeatMap{Z: [][]float64{{1}}, X0: 1, X1: 2, Y0: 1, Y1: 2}}}
	if _, err := hm.SVG(); err == nil {
		t.Error("heat map on a log axis accepted")
	}
	hn := &Figure{Series: []Series{&HeatMap{Z: [][]float64{{nan, 1}, {-1, 2}}, X0: 0, X1: 1, Y0: 0, Y1: 1, Log: true}}}
	n, _ = hn.WriteSVG(&strings.Builder{})
	if n.NonFinite != 1 || n.NonPositive != 1 {
		t.Errorf("heat map notes %+v", n)
	}
}

func TestShapePanics(t *testing.T) {
	f := &Figure{}
	mustPanic(t, func() { f.AddLine([]float64{1}, nil, "") })
	mustPanic(t, func() { f.AddPoints([]float64{1}, nil, "") })
	mustPanic(t, func() { f.AddBand([]float64{1}, []float64{1}, nil, "") })
	mustPanic(t, func() { f.AddContours([]float64{1}, nil, "") })
	mustPanic(t, func() { f.AddHeatMap([][]float64{{1}, {1, 2}}, 0, 1, 0, 1, "") })
	mustPanic(t, func() { f.AddHeatMapGrid([][]float64{{1}}, []float64{0}, []float64{0}, "") })
	g := &Figure{Series: []Series{&Line{X: []float64{1, 2}, Y: []float64{1}}}}
	mustPanic(t, func() { g.SVG() })
	if len(f.Series) != 0 {
		t.Error("a refused series was added")
	}
}

func TestEqualAspect(t *testing.T) {
	for _, f := range []*Figure{spectrumFigure(), contourFigure(),
		{EqualAspect: true, Width: 300, Height: 600, Series: []Series{&Points{X: []float64{-10, 10}, Y: []float64{0, 1}}}},
		{EqualAspect: true, Series: []Series{&Points{X: []float64{0, 0.1}, Y: []float64{-50, 50}}}},
	} {
		_, r := render(t, f)
		ux := (r.xs.hi - r.xs.lo) / (r.plot.x1 - r.plot.x0)
		uy := (r.ys.hi - r.ys.lo) / (r.plot.y1 - r.plot.y0)
		if math.Abs(ux-uy) > 1e-9*ux {
			t.Errorf("%q: %g x-units per px, %g y-units per px", f.Title, ux, uy)
		}
	}
}

func TestLegendPlacement(t *testing.T) {
	// Data crowd the top right: the legend goes elsewhere, and top left wins
	// the tie among empty corners.
	var xs, ys []float64
	for i := range 50 {
		xs = append(xs, 8+2*float64(i%7)/7)
		ys = append(ys, 8+2*float64(i/7)/7)
	}
	f := &Figure{Series: []Series{&Points{X: append(xs, 0), Y: append(ys, 0), Label: "cluster"}}}
	_, r := render(t, f)
	p := r.plot
	if r.legend.x1 > (p.x0+p.x1)/2 || r.legend.y1 > (p.y0+p.y1)/2 {
		t.Errorf("legend at %+v in plot %+v, want top left", r.legend, p)
	}
	// A rising line leaves the top left and bottom right empty; the legend
	// takes one of them and meets no segment.
	line := &Figure{Series: []Series{&Line{X: []float64{0, 10}, Y: []float64{0, 10}, Label: "rising"}}}
	_, r = render(t, line)
	if n := r.overlap(r.legend); n != 0 {
		t.Errorf("legend meets %d segments", n)
	}
	none := &Figure{Legend: LegendNone, Series: []Series{&Line{X: []float64{0, 1}, Y: []float64{0, 1}, Label: "a"}}}
	if svg, _ := render(t, none); strings.Contains(svg, `fill-opacity="0.9"`) {
		t.Error("legend drawn with LegendNone")
	}
}

func TestTickThinning(t *testing.T) {
	// A narrow figure with long tick labels: labels must not touch.
	for _, w := range []int{160, 240, 640} {
		f := &Figure{Width: w, Series: []Series{&Line{X: []float64{123456.7, 123456.7 + 0.9}, Y: []float64{-1e6, 3e7}}}}
		_, r := render(t, f)
		prev, labels := -1, 0
		for k := range r.xt.major {
			if r.xt.labels[k].mant == "" {
				continue
			}
			labels++
			if prev >= 0 {
				a, _ := r.xs.px(r.xt.major[prev])
				b, _ := r.xs.px(r.xt.major[k])
				if half := (r.xt.labels[prev].width(tickSize) + r.xt.labels[k].width(tickSize)) / 2; b-a < half {
					t.Errorf("width %d: x labels %q and %q overlap", w, r.xt.labels[prev], r.xt.labels[k])
				}
			}
			prev = k
		}
		if labels == 0 {
			t.Errorf("width %d: no x label", w)
		}
		// The y tick labels fit in the left margin.
		if need := maxWidth(r.yt.labels, tickSize) + tickLen + 3; need > r.plot.x0 {
			t.Errorf("width %d: y labels need %g px, margin %g", w, need, r.plot.x0)
		}
		if len(r.xt.major) < 2 || len(r.yt.major) < 2 {
			t.Errorf("width %d: too few ticks %v %v", w, r.xt.major, r.yt.major)
		}
	}
}

func TestUniqueIDs(t *testing.T) {
	a, _ := growthFigure().SVG()
	b, _ := contourFigure().SVG()
	id := func(s []byte) string {
		i := strings.Index(string(s), `clipPath id="`)
		return string(s[i+13 : i+23])
	}
	if id(a) == id(b) {
		t.Errorf("two figures share the id %s", id(a))
	}
}

func TestLargeHeatMapSize(t *testing.T) {
	// 300×300 cells go into a PNG; the file stays well under 100 kB for a
	// smooth field.
	f := heatFigure(300, 300)
	svg, err := f.SVG()
	if err != nil {
		t.Fatal(err)
	}
	checkSVG(t, svg)
	if len(svg) > 100_000 {
		t.Errorf("300×300 heat map: %d bytes", len(svg))
	}
	if !strings.Contains(string(svg), "data:image/png;base64,") {
		t.Error("no PNG data URI")
	}
	if errors.Is(err, ErrShape) {
		t.Error("unexpected")
	}
}

func TestHeatMapOrientation(t *testing.T) {
	// Cell (i, j) = (0, 0) holds the smallest value; with X0 > X1 and Y0 < Y1
	// it is the bottom-right cell of the picture, in both drawing modes.
	for _, n := range []int{4, 50} { // 16 cells as rectangles, 2500 as a PNG
		z := make([][]float64, n)
		for i := range z {
			z[i] = make([]float64, n)
			for j := range z[i] {
				z[i][j] = float64(i + j)
			}
		}
		f := &Figure{Series: []Series{&HeatMap{Z: z, X0: 1, X1: 0, Y0: 0, Y1: 1}}}
		svg, r := render(t, f)
		low := Sequential.quick(0)
		p := r.plot
		if n*n <= RectCells {
			// The rectangle in the colour of the minimum touches the right and bottom edges.
			i := strings.Index(svg, `fill="`+low.Hex()+`"`)
			if i < 0 {
				t.Fatal("no cell in the colour of the minimum")
			}
			var x, y, w, h float64
			tag := svg[strings.LastIndex(svg[:i], "<rect"):i]
			if _, err := fmt.Sscanf(tag, `<rect x="%g" y="%g" width="%g" height="%g"`, &x, &y, &w, &h); err != nil {
				t.Fatalf("%q: %v", tag, err)
			}
			if math.Abs(x+w-0.4-p.x1) > 0.02 || math.Abs(y+h-0.4-p.y1) > 0.02 {
				t.Errorf("minimum cell at x %g..%g, y %g..%g; plot %+v", x, x+w, y, y+h, p)
			}
			continue
		}
		i := strings.Index(svg, "base64,")
		j := strings.Index(svg[i:], `"`)
		data, err := base64.StdEncoding.DecodeString(svg[i+7 : i+j])
		if err != nil {
			t.Fatal(err)
		}
		img, err := png.Decode(bytes.NewReader(data))
		if err != nil {
			t.Fatal(err)
		}
		cr, cg, cb, _ := img.At(n-1, n-1).RGBA()
		if got := (RGB{uint8(cr >> 8), uint8(cg >> 8), uint8(cb >> 8)}); got != low {
			t.Errorf("bottom-right pixel %v, want the minimum's colour %v", got, low)
		}
	}
}

// TestLegendNeverOnData: with data in every corner, or a heat map filling
// the plot, the legend goes beside the plot, right of the colour bar.
func TestLegendNeverOnData(t *testing.T) {
	var xs, ys []float64
	for i := range 400 { // a filled square: every corner holds data
		xs, ys = append(xs, float64(i%20)), append(ys, float64(i/20))
	}
	f := &Figure{Series: []Series{&Points{X: xs, Y: ys, Label: "grid points"}}}
	_, r := render(t, f)
	if r.outside == 0 || r.legend.x0 < r.plot.x1 {
		t.Errorf("legend at %+v, plot %+v: want it beside the plot", r.legend, r.plot)
	}
	if n := r.overlap(r.legend); n != 0 {
		t.Errorf("legend meets %d data marks", n)
	}
	h := heatFigure(24, 16)
	_, r = render(t, h)
	if r.legend.x0 < r.cbarRight {
		t.Errorf("legend at x = %g, colour bar ends at %g", r.legend.x0, r.cbarRight)
	}
	if r.legend.x1 > r.W {
		t.Errorf("legend ends at x = %g, beyond the figure (%g px)", r.legend.x1, r.W)
	}
}

// TestHeatMapFitted: an equal-aspect heat map fills its plot, no blank band
// beside it; the figure shrinks to the data's aspect instead.
func TestHeatMapFitted(t *testing.T) {
	z := [][]float64{{1, 2}, {3, 4}}
	for _, c := range []struct{ x1, y1 float64 }{{1, 1}, {2, 1}, {1, 0.5}} {
		f := &Figure{EqualAspect: true, Series: []Series{&HeatMap{Z: z, X0: 0, X1: c.x1, Y0: 0, Y1: c.y1}}}
		_, r := render(t, f)
		if r.xs.lo != 0 || r.xs.hi != c.x1 || r.ys.lo != 0 || r.ys.hi != c.y1 {
			t.Errorf("[0, %g] × [0, %g]: axes %g..%g × %g..%g", c.x1, c.y1, r.xs.lo, r.xs.hi, r.ys.lo, r.ys.hi)
		}
		pw, ph := r.plot.x1-r.plot.x0, r.plot.y1-r.plot.y0
		if math.Abs(pw/ph-c.x1/c.y1) > 1e-9 {
			t.Errorf("[0, %g] × [0, %g]: plot %g × %g px", c.x1, c.y1, pw, ph)
		}
	}
}
