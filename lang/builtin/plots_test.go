package builtin_test

import (
	"bytes"
	"context"
	"encoding/base64"
	"encoding/xml"
	"image"
	"image/png"
	"io"
	"regexp"
	"strconv"
	"strings"
	"testing"

	"semiflow/lang/plot"
	"semiflow/lang/run"
)

// figureOf runs code in a fresh session and returns its SVG and decoded PNG.
func figureOf(t *testing.T, code string) (string, image.Image, map[string]any) {
	t.Helper()
	s := run.NewSession()
	data, _, err := s.Execute(context.Background(), code, nil)
	if err != nil {
		t.Fatalf("%s: %v", code, err)
	}
	svg, _ := data["image/svg+xml"].(string)
	b64, _ := data["image/png"].(string)
	if svg == "" || b64 == "" {
		t.Fatalf("%s: the bundle lacks image/svg+xml or image/png: %v", code, keys(data))
	}
	dec := xml.NewDecoder(strings.NewReader(svg))
	for {
		if _, err := dec.Token(); err == io.EOF {
			break
		} else if err != nil {
			t.Fatalf("%s: the SVG is not well-formed XML: %v", code, err)
		}
	}
	raw, err := base64.StdEncoding.DecodeString(b64)
	if err != nil {
		t.Fatal(err)
	}
	img, err := png.Decode(bytes.NewReader(raw))
	if err != nil {
		t.Fatalf("%s: the PNG does not decode: %v", code, err)
	}
	if html, _ := data["text/html"].(string); !strings.Contains(html, `<img src="data:image/png;base64,`) {
		t.Errorf("%s: the HTML does not show the PNG", code)
	}
	return svg, img, data
}

func keys(m map[string]any) []string {
	var out []string
	for k := range m {
		out = append(out, k)
	}
	return out
}

// near reports whether some pixel within r px (of the PNG) of (x, y) has a
// colour within tol (sum of channel differences, 0–765) of hex.
func near(img image.Image, x, y float64, r int, hex string, tol int) bool {
	want, _ := strconv.ParseUint(strings.TrimPrefix(hex, "#"), 16, 32)
	wr, wg, wb := int(want>>16), int(want>>8&0xff), int(want&0xff)
	cx, cy := int(x*plot.PixelDensity), int(y*plot.PixelDensity)
	for dy := -r; dy <= r; dy++ {
		for dx := -r; dx <= r; dx++ {
			cr, cg, cb, _ := img.At(cx+dx, cy+dy).RGBA()
			d := abs(int(cr>>8)-wr) + abs(int(cg>>8)-wg) + abs(int(cb>>8)-wb)
			if d <= tol {
				return true
			}
		}
	}
	return false
}

func abs(x int) int {
	if x < 0 {
		return -x
	}
	return x
}

var pathRE = regexp.MustCompile(`<path d="M([0-9.]+),([0-9.]+) ([0-9.]+),([0-9.]+)[^"]*" fill="none" stroke="(#[0-9a-f]{6})" stroke-width="1.8"`)

// TestCurvesFigure checks a figure of two series: each is a stroked path in
// its own colour with a legend entry, and the PNG has that colour on the
// path (midway along its first segment).
func TestCurvesFigure(t *testing.T) {
	svg, img, data := figureOf(t, `curves([0, 1, 2, 3], [[0, 1, 4, 9], [9, 4, 1, 0]], names=["rising", "falling"], title="Two series", xlabel="x", ylabel="y", xunit="m")`)
	if data["text/plain"] != "picture: Two series" {
		t.Errorf("text/plain = %q", data["text/plain"])
	}
	for _, want := range []string{">rising</text>", ">falling</text>", "<title>Two series</title>", ">x (m)</text>", ">y</text>"} {
		if !strings.Contains(svg, want) {
			t.Errorf("the SVG lacks %s", want)
		}
	}
	// The two data paths, then the legend's two swatches.
	m := pathRE.FindAllStringSubmatch(svg, -1)
	if len(m) != 4 || m[0][5] == m[1][5] || m[2][5] != m[0][5] || m[3][5] != m[1][5] {
		t.Fatalf("want two data paths in two colours and their two swatches, got %d: %v", len(m), m)
	}
	for _, p := range m[:2] {
		x0, _ := strconv.ParseFloat(p[1], 64)
		y0, _ := strconv.ParseFloat(p[2], 64)
		x1, _ := strconv.ParseFloat(p[3], 64)
		y1, _ := strconv.ParseFloat(p[4], 64)
		if !near(img, (x0+x1)/2, (y0+y1)/2, 2, p[5], 60) {
			t.Errorf("the PNG lacks the colour %s on the series' path at (%.0f, %.0f) px", p[5], (x0+x1)/2, (y0+y1)/2)
		}
	}
}

// TestUserFigureKinds checks that dots, argand and shade each give a figure
// with PNG pixels of their data colour where the SVG draws the data.
func TestUserFigureKinds(t *testing.T) {
	palette := plot.Palette[0].Hex()
	// dots: markers in the first line colour, at least one where the data
	// are: the SVG's markers are paths filled in that colour.
	svg, img, _ := figureOf(t, `dots([0, 1, 2, 3], [3, 1, 2, 0], names=["measured"])`)
	if !strings.Contains(svg, ">measured</text>") || !strings.Contains(svg, `fill="`+palette+`"`) {
		t.Errorf("dots: the SVG lacks the legend entry or markers in %s", palette)
	}
	// Markers are filled at opacity 0.85 on white: within 90 of the colour.
	if n := countColour(img, palette, 90); n < 40 {
		t.Errorf("dots: %d PNG pixels in the marker colour; want the four markers", n)
	}
	// argand: one unit as long on both axes, imaginary axis drawn.
	svg, img, _ = figureOf(t, `argand([-1+2i, -1-2i, -0.5], title="A spectrum")`)
	if !strings.Contains(svg, ">Re z</text>") || !strings.Contains(svg, ">Im z</text>") {
		t.Errorf("argand: the axes are not Re z and Im z")
	}
	if n := countColour(img, palette, 90); n < 30 {
		t.Errorf("argand: %d PNG pixels in the marker colour; want the three points", n)
	}
	// shade: each cell of a 2 × 2 matrix a rectangle filled with the map's
	// colour for its value, and the PNG shows that colour at its centre.
	svg, img, _ = figureOf(t, `shade({1, 2 | 3, 4}, label="a", unit="m")`)
	if !strings.Contains(svg, ">a (m)</text>") {
		t.Errorf("shade: the colour bar is not titled a (m)")
	}
	cells := regexp.MustCompile(`<rect x="([0-9.]+)" y="([0-9.]+)" width="([0-9.]+)" height="([0-9.]+)" fill="(#[0-9a-f]{6})"/>`).FindAllStringSubmatch(svg, -1)
	if len(cells) < 4 {
		t.Fatalf("shade: %d filled cells in the SVG, want 4", len(cells))
	}
	seen := map[string]bool{}
	for _, c := range cells[:4] {
		x, _ := strconv.ParseFloat(c[1], 64)
		y, _ := strconv.ParseFloat(c[2], 64)
		w, _ := strconv.ParseFloat(c[3], 64)
		h, _ := strconv.ParseFloat(c[4], 64)
		seen[c[5]] = true
		if !near(img, x+w/2, y+h/2, 0, c[5], 12) {
			t.Errorf("shade: the PNG is not %s at the centre of the cell at (%.0f, %.0f) px", c[5], x+w/2, y+h/2)
		}
	}
	if len(seen) != 4 {
		t.Errorf("shade: four values in %d colours", len(seen))
	}
	// Dropped values on a logarithmic axis are counted in the figure.
	svg, _, _ = figureOf(t, `curves([1, 2, 3, 4], [0, -1, 10, 100], log="y", dropnonpositive=true)`)
	if !strings.Contains(svg, "2 non-positive") {
		t.Errorf("a figure with two values dropped from a log axis does not say so")
	}
}

// countColour counts the PNG pixels within tol of hex.
func countColour(img image.Image, hex string, tol int) int {
	b := img.Bounds()
	n := 0
	for y := b.Min.Y; y < b.Max.Y; y++ {
		for x := b.Min.X; x < b.Max.X; x++ {
			if near(img, float64(x)/plot.PixelDensity, float64(y)/plot.PixelDensity, 0, hex, tol) {
				n++
			}
		}
	}
	return n
}

// TestUserFiguresSaved checks that writesvg and writepng take the pictures
// of the new builtins, and picture changes their words.
func TestUserFiguresSaved(t *testing.T) {
	dir := t.TempDir()
	s := run.NewSession()
	code := `p = curves(0 .. 1 by 0.1, x -> x^2)
writesvg(p, "` + dir + `/c.svg")
writepng(p, "` + dir + `/c.png")
picture(p, title="Renamed")`
	data, _, err := s.Execute(context.Background(), code, nil)
	if err != nil {
		t.Fatal(err)
	}
	if data["text/plain"] != "picture: Renamed" {
		t.Errorf("picture of a curves figure: %q", data["text/plain"])
	}
}

// TestColumnsHTML checks the HTML form of a table with digits and its
// folding beyond 20 rows (the record keeps every row).
func TestColumnsHTML(t *testing.T) {
	s := run.NewSession()
	data, _, err := s.Execute(context.Background(), `columns([0 .. 24, (0 .. 24)/7], names=["k", "k/7"], digits=3)`, nil)
	if err != nil {
		t.Fatal(err)
	}
	html, _ := data["text/html"].(string)
	if !strings.Contains(html, "<th>k/7</th>") || !strings.Contains(html, ">0.143<") {
		t.Errorf("the HTML table lacks its heading or 1/7 to 3 digits:\n%.400s", html)
	}
	if !strings.Contains(html, "<details") || !strings.Contains(html, "table of 25 rows") {
		t.Errorf("a table of 25 rows is not folded in HTML")
	}
	rec, _ := data["application/json"].(map[string]any)
	if rows, _ := rec["rows"].([][]any); len(rows) != 25 {
		t.Errorf("the record holds %d rows, want 25", len(rows))
	}
}

// TestFormulaBundles checks which MIME form carries the formulas a
// notebook typesets: a report's HTML (TeX between \( and \)), a quantity's
// Markdown ($…$), while text/plain keeps the Unicode form.
func TestFormulaBundles(t *testing.T) {
	s := run.NewSession()
	data, _, err := s.Execute(context.Background(), "abscissa({-1, 5 | 0, -2})", nil)
	if err != nil {
		t.Fatal(err)
	}
	if md, _ := data["text/markdown"].(string); !strings.Contains(md, `$\alpha (A) = -1$`) {
		t.Errorf("a quantity's Markdown lacks its formula: %q", md)
	}
	if plain, _ := data["text/plain"].(string); !strings.HasPrefix(plain, "α(A) = -1") {
		t.Errorf("a quantity's text: %q", plain)
	}
	data, _, err = s.Execute(context.Background(), `growth({-1, 5 | 0, -2}, t=[0, 1], bounds="none")`, nil)
	if err != nil {
		t.Fatal(err)
	}
	if h, _ := data["text/html"].(string); !strings.Contains(h, `\(\|e^{tA}\|_{2}\)`) {
		t.Errorf("a report's HTML lacks ‖e^{tA}‖₂ as TeX")
	}
	if plain, _ := data["text/plain"].(string); !strings.Contains(plain, "‖e^{tA}‖₂") {
		t.Errorf("a report's text lost its Unicode formula")
	}
}
