package plot

import (
	"bytes"
	"fmt"
	"image"
	"image/png"
	"math"
	"regexp"
	"strconv"
	"strings"
	"testing"
)

// decodePNG renders f as PNG and decodes it.
func decodePNG(t *testing.T, f *Figure) (image.Image, int) {
	t.Helper()
	b, err := f.PNG()
	if err != nil {
		t.Fatal(err)
	}
	img, err := png.Decode(bytes.NewReader(b))
	if err != nil {
		t.Fatalf("not a PNG: %v", err)
	}
	return img, len(b)
}

func rgbAt(img image.Image, x, y float64) RGB {
	r, g, b, _ := img.At(int(x*PixelDensity), int(y*PixelDensity)).RGBA()
	return RGB{uint8(r >> 8), uint8(g >> 8), uint8(b >> 8)}
}

func hexRGB(s string) RGB {
	var c RGB
	fmt.Sscanf(s, "#%02x%02x%02x", &c.R, &c.G, &c.B)
	return c
}

func near8(a, b RGB, tol int) bool {
	d := func(x, y uint8) int { return max(int(x)-int(y), int(y)-int(x)) }
	return d(a.R, b.R) <= tol && d(a.G, b.G) <= tol && d(a.B, b.B) <= tol
}

var pathRE = regexp.MustCompile(`<path d="([^"]*)" fill="none" stroke="([^"]*)" stroke-width="([^"]*)"([^>]*)>`)

// segDist is the distance from q to the segment ab.
func segDist(q, a, b point) float64 {
	dx, dy := b.x-a.x, b.y-a.y
	t := 0.0
	if l := dx*dx + dy*dy; l > 0 {
		t = math.Max(0, math.Min(1, ((q.x-a.x)*dx+(q.y-a.y)*dy)/l))
	}
	return math.Hypot(q.x-a.x-t*dx, q.y-a.y-t*dy)
}

// svgStrokes returns the vertices of every stroked path of colour c in svg.
func svgStrokes(svg, c string) [][]point {
	var out [][]point
	for _, m := range pathRE.FindAllStringSubmatch(svg, -1) {
		if m[2] != c {
			continue
		}
		for _, part := range strings.Split(m[1], "M")[1:] {
			var pl []point
			for _, xy := range strings.Fields(part) {
				xs, ys, ok := strings.Cut(strings.TrimSuffix(xy, "Z"), ",")
				x, e1 := strconv.ParseFloat(xs, 64)
				y, e2 := strconv.ParseFloat(ys, 64)
				if ok && e1 == nil && e2 == nil {
					pl = append(pl, point{x, y})
				}
			}
			out = append(out, pl)
		}
	}
	return out
}

// TestPNGMatchesSVG draws the golden figures with both back ends and
// probes the PNG where the SVG has lines, markers, cells and text: the
// same colours must be there, and the paper must be paper elsewhere.
func TestPNGMatchesSVG(t *testing.T) {
	for _, g := range goldens {
		t.Run(g.name, func(t *testing.T) {
			f := g.fig()
			svg, r := render(t, f)
			img, size := decodePNG(t, f)
			if w, h := img.Bounds().Dx(), img.Bounds().Dy(); w != int(math.Ceil(r.W*PixelDensity)) || h != int(math.Ceil(r.H*PixelDensity)) {
				t.Errorf("PNG %d × %d, figure %g × %g px", w, h, r.W, r.H)
			}
			if size > 150_000 {
				t.Errorf("PNG of %d bytes, want < 150 kB", size)
			}
			if c := rgbAt(img, 1, 1); c != hexRGB(paperColor) {
				t.Errorf("corner pixel %v, want paper", c)
			}
			// Strokes: the midpoint of every data segment longer than 3 px
			// carries its line's colour (anti-aliasing blends the edges).
			probes := 0
			paths := pathRE.FindAllStringSubmatch(svg, -1)
			covered := func(q point, later [][]string) bool { // by a stroke drawn afterwards
				for _, m := range later {
					for _, pl := range svgStrokes(m[0], m[2]) {
						for k := 0; k+1 < len(pl); k++ {
							if segDist(q, pl[k], pl[k+1]) < 4 {
								return true
							}
						}
					}
				}
				return false
			}
			for i, m := range paths {
				c := m[2]
				if w, _ := strconv.ParseFloat(m[3], 64); w < 1.2 || c == gridColor || c == frameColor || c == keyRule || strings.Contains(m[4], "dasharray") {
					continue
				}
				for _, pl := range svgStrokes(m[0], c) {
					for k := 0; k+1 < len(pl); k++ {
						a, b := pl[k], pl[k+1]
						mid := lerp(a, b, 0.5)
						if math.Hypot(b.x-a.x, b.y-a.y) < 3 || !r.plot.inflate(-2).contains(mid.x, mid.y) || r.legend.inflate(2).contains(mid.x, mid.y) || covered(mid, paths[i+1:]) {
							continue
						}
						probes++
						if got := rgbAt(img, mid.x, mid.y); !near8(got, hexRGB(c), 60) {
							t.Errorf("at (%g, %g) px the SVG has a %s line; the PNG pixel is %s", mid.x, mid.y, c, got.Hex())
						}
					}
				}
			}
			// Markers: not paper at their centres.
			for _, q := range r.marks {
				if r.plot.contains(q.x, q.y) {
					probes++
					if got := rgbAt(img, q.x, q.y); near8(got, hexRGB(paperColor), 30) {
						t.Errorf("marker at (%g, %g) px: paper in the PNG", q.x, q.y)
					}
				}
			}
			// Heat-map cells: the centre of each rectangle has its fill.
			cellRE := regexp.MustCompile(`<rect x="([^"]*)" y="([^"]*)" width="([^"]*)" height="([^"]*)" fill="(#[0-9a-f]{6})"/>`)
			for _, m := range cellRE.FindAllStringSubmatch(svg, -1) {
				v := make([]float64, 4)
				for i := range v {
					v[i], _ = strconv.ParseFloat(m[i+1], 64)
				}
				if v[2] < 4 || v[3] < 4 || m[5] == paperColor {
					continue
				}
				x, y := v[0]+v[2]/2, v[1]+v[3]/2
				if !r.plot.contains(x, y) || r.overlap(rect{x - 3, y - 3, x + 3, y + 3}) > 0 {
					continue
				}
				probes++
				if got := rgbAt(img, x, y); !near8(got, hexRGB(m[5]), 2) {
					t.Errorf("cell at (%g, %g): PNG %s, SVG %s", x, y, got.Hex(), m[5])
				}
			}
			if probes < 10 {
				t.Errorf("only %d probes", probes)
			}
			// The title is set: ink among the pixels of its first line.
			ink := 0
			for y := 14.0; y < 12+titleSize; y += 0.5 {
				for x := r.W / 4; x < 3*r.W/4; x += 0.5 {
					if l := rgbAt(img, x, y).ToLab().L; l < 0.5 {
						ink++
					}
				}
			}
			if ink < 20 {
				t.Errorf("%d dark pixels where the title is", ink)
			}
		})
	}
}

// TestPNGEmpty: figures that draw nothing still give a valid image.
func TestPNGEmpty(t *testing.T) {
	for _, f := range []*Figure{{}, {Width: 121, Height: 91}, {X: Axis{Log: true}}} {
		img, _ := decodePNG(t, f)
		if img.Bounds().Empty() {
			t.Error("empty image")
		}
	}
}

// TestVerticalText: a y-axis label is drawn upright along the axis: its
// ink is taller than wide, left of the plot, and centred on the plot.
func TestVerticalText(t *testing.T) {
	f := &Figure{Y: Axis{Label: "a long vertical label"}, Series: []Series{&Line{X: []float64{0, 1}, Y: []float64{0, 1}}}}
	_, r := render(t, f)
	img, _ := decodePNG(t, f)
	x0, x1, y0, y1 := math.Inf(1), math.Inf(-1), math.Inf(1), math.Inf(-1)
	for y := 0.0; y < r.H; y += 0.5 {
		for x := 0.0; x < 8+labelSize*1.2; x += 0.5 {
			if rgbAt(img, x, y).ToLab().L < 0.6 {
				x0, x1, y0, y1 = math.Min(x0, x), math.Max(x1, x), math.Min(y0, y), math.Max(y1, y)
			}
		}
	}
	if !(y1-y0 > 4*(x1-x0)) {
		t.Fatalf("label ink spans x %g..%g, y %g..%g", x0, x1, y0, y1)
	}
	if mid := (r.plot.y0 + r.plot.y1) / 2; math.Abs((y0+y1)/2-mid) > 6 {
		t.Errorf("label centred at y = %g, plot centre %g", (y0+y1)/2, mid)
	}
}

func BenchmarkPNG(b *testing.B) {
	for _, g := range goldens {
		f := g.fig()
		b.Run(g.name, func(b *testing.B) {
			for range b.N {
				if _, err := f.PNG(); err != nil {
					b.Fatal(err)
				}
			}
		})
	}
}

// TestPNGConcurrent: figures painted at once from several goroutines (two
// sessions of one kernel, parallel tests) come out the same as one at a
// time; run with -race to see the faces are not shared.
func TestPNGConcurrent(t *testing.T) {
	want, err := spectrumFigure().PNG()
	if err != nil {
		t.Fatal(err)
	}
	errs := make(chan error, 4)
	for range 4 {
		go func() {
			got, err := spectrumFigure().PNG()
			if err == nil && !bytes.Equal(got, want) {
				err = fmt.Errorf("a PNG painted beside others differs (%d vs %d bytes)", len(got), len(want))
			}
			errs <- err
		}()
	}
	for range 4 {
		if err := <-errs; err != nil {
			t.Error(err)
		}
	}
}
