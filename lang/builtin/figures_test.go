package builtin_test

import (
	"bytes"
	"context"
	"encoding/base64"
	"encoding/json"
	"encoding/xml"
	"errors"
	"fmt"
	"image/png"
	"io"
	"math"
	"os"
	"path/filepath"
	"slices"
	"strconv"
	"strings"
	"testing"

	"semiflow/lang/plot"
	"semiflow/lang/run"
)

// TestWriteSVG checks that writesvg stores exactly the figure the value
// shows in a notebook, as well-formed XML.
func TestWriteSVG(t *testing.T) {
	dir := t.TempDir()
	path := filepath.Join(dir, "spec.svg")
	s := run.NewSession()
	exec(t, s, `sp = spectrum({-1, 5 | 0, -2})
writesvg(sp, "`+path+`")`)
	b, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	data, _, err := s.Execute(context.Background(), "sp", nil)
	if err != nil {
		t.Fatal(err)
	}
	want, _ := data["image/svg+xml"].(string)
	if want == "" || string(b) != want {
		t.Fatalf("file differs from the displayed figure (%d vs %d bytes)", len(b), len(want))
	}
	d := xml.NewDecoder(strings.NewReader(string(b)))
	root := ""
	for {
		tok, err := d.Token()
		if errors.Is(err, io.EOF) {
			break
		}
		if err != nil {
			t.Fatalf("not well-formed XML: %v", err)
		}
		if se, ok := tok.(xml.StartElement); ok && root == "" {
			root = se.Name.Local
		}
	}
	if root != "svg" {
		t.Errorf("root element %q, want svg", root)
	}
}

// TestWritePNG checks that writepng stores exactly the image/png part of
// the display, that it decodes as PNG at two pixels per px, and that a
// value without a figure is refused.
func TestWritePNG(t *testing.T) {
	dir := t.TempDir()
	path := filepath.Join(dir, "spec.png")
	s := run.NewSession()
	exec(t, s, `sp = spectrum({-1, 5 | 0, -2})
writepng(sp, "`+path+`")`)
	b, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	data, _, err := s.Execute(context.Background(), "sp", nil)
	if err != nil {
		t.Fatal(err)
	}
	enc, _ := data["image/png"].(string)
	want, err := base64.StdEncoding.DecodeString(enc)
	if err != nil || !bytes.Equal(b, want) {
		t.Fatalf("file differs from the displayed figure (%d vs %d bytes, %v)", len(b), len(want), err)
	}
	img, err := png.Decode(bytes.NewReader(b))
	if err != nil {
		t.Fatal(err)
	}
	if w, h := img.Bounds().Dx(), img.Bounds().Dy(); w != 1280 || h != 840 {
		t.Errorf("PNG is %d × %d pixels, want 1280 × 840", w, h)
	}
	if _, _, err := s.Execute(context.Background(), `writepng(3, "`+filepath.Join(dir, "x.png")+`")`, nil); err == nil || !strings.Contains(err.Error(), "a number has no figure") {
		t.Errorf("writepng of a number: %v", err)
	}
}

// TestFigureBundle checks the MIME bundle of a result with a figure: its
// keys, a PNG beside the SVG, the figure before the key numbers in the
// HTML, no inline SVG there (an untrusted notebook strips it and shows its
// text), and a long table folded away.
func TestFigureBundle(t *testing.T) {
	s := run.NewSession()
	data, _, err := s.Execute(context.Background(), `resolventline({-1, 5 | 0, -2}, 0.5, n=40)`, nil)
	if err != nil {
		t.Fatal(err)
	}
	var keys []string
	for k := range data {
		keys = append(keys, k)
	}
	slices.Sort(keys)
	if got := strings.Join(keys, " "); got != "application/json image/png image/svg+xml text/html text/plain" {
		t.Errorf("bundle keys %q", got)
	}
	h, _ := data["text/html"].(string)
	img := strings.Index(h, `<img src="data:image/png;base64,`)
	facts := strings.Index(h, "largest norm")
	if img < 0 || facts < 0 || img > facts {
		t.Errorf("figure at %d, key numbers at %d: want the figure first", img, facts)
	}
	if strings.Contains(h, "<svg") || strings.Contains(h, "Figure with") {
		t.Error("the HTML carries inline SVG or its description")
	}
	if !strings.Contains(h, `<details class="semiflow-fold"><summary>table of 40 rows`) {
		t.Error("a 40-row table is not folded")
	}
	if j, _ := json.Marshal(data["application/json"]); !strings.Contains(string(j), `"rows":[[`) || strings.Count(string(j), "],[") != 39 {
		t.Errorf("the record does not keep all 40 rows")
	}
	// The other values that draw: a solution and a picture.
	for code, want := range map[string]string{
		`propagate({0, 1 | -1, 0}, [1, 0], [0, 1, 2])`:  "application/json image/png image/svg+xml text/html text/plain",
		`picture(spectrum({-1, 5 | 0, -2}), title="a")`: "image/png image/svg+xml text/html text/plain",
	} {
		d, _, err := s.Execute(context.Background(), code, nil)
		if err != nil {
			t.Fatal(err)
		}
		var ks []string
		for k := range d {
			ks = append(ks, k)
		}
		slices.Sort(ks)
		if got := strings.Join(ks, " "); got != want {
			t.Errorf("%s: bundle keys %q, want %q", code, got, want)
		}
	}
	short, _, err := s.Execute(context.Background(), `spectrum({-1, 5 | 0, -2})`, nil)
	if err != nil {
		t.Fatal(err)
	}
	if h, _ := short["text/html"].(string); strings.Contains(h, "<details") {
		t.Error("a 2-row table is folded")
	}
}

// TestWriteAnalysisTable checks the CSV and JSON export of an analysis
// table (closed form: the eigenvalues of the triangular matrix are its
// diagonal, −1 and −2).
func TestWriteAnalysisTable(t *testing.T) {
	dir := t.TempDir()
	csv := filepath.Join(dir, "sp.csv")
	js := filepath.Join(dir, "sp.json")
	s := run.NewSession()
	exec(t, s, `sp = spectrum({-1, 5 | 0, -2})
writecsv(sp, "`+csv+`")
writejson(sp, "`+js+`")`)
	b, _ := os.ReadFile(csv)
	lines := strings.Split(strings.TrimSpace(string(b)), "\n")
	if len(lines) != 3 || lines[0] != "k,λ,Re λ,Im λ,condition" || !strings.HasPrefix(lines[1], "0,-1+0i,-1,0,") || !strings.HasPrefix(lines[2], "1,-2+0i,-2,0,") {
		t.Errorf("analysis CSV:\n%s", b)
	}
	b, _ = os.ReadFile(js)
	var rec struct {
		Kind string
		Rows [][]any
	}
	if err := json.Unmarshal(b, &rec); err != nil || rec.Kind != "spectrum" || len(rec.Rows) != 2 {
		t.Errorf("analysis JSON %s (%v)", b, err)
	}
}

// TestFigureWords checks figure titles in words and the weighted norm named
// as such in the growth figure.
func TestFigureWords(t *testing.T) {
	s := run.NewSession()
	for _, c := range []struct{ code, want string }{
		{`spectrum({-1, 5 | 0, -2})`, "<title>Eigenvalues of the 2 × 2 matrix</title>"},
		{`growth({-1, 5 | 0, -2}, weight=[1, 4], bounds="none")`, `‖exp(tA)‖<tspan dy="0.3em" font-size="70%">W</tspan><tspan dy="-0.21em">` + "\u00a0" + `(weighted norm)</tspan>`},
		// Levels 1e−1, 1e−2, 1e−3 given for a 2 × 2 matrix: the two
		// smaller ones ring each eigenvalue in a few px (radius about ε·κ),
		// hidden under its marker, so the legend lists 1e−1 only and the
		// note says why.
		{`pseudospectrum({-1, 5 | 0, -2}, levels=[0.1, 0.01, 0.001])`, ">ε = 1e−1</text>"},
		{`pseudospectrum({-1, 5 | 0, -2}, levels=[0.1, 0.01, 0.001])`, "ε = 1e−2, ε = 1e−3: too small to see or outside the plot, not in the legend"},
	} {
		data, _, err := s.Execute(context.Background(), c.code, nil)
		if err != nil {
			t.Fatal(err)
		}
		if svg, _ := data["image/svg+xml"].(string); !strings.Contains(svg, c.want) {
			t.Errorf("%s: the figure lacks %q", c.code, c.want)
		}
	}
}

// TestPicture checks a figure with a title, a time range and a unit of the
// reader's own, its vertical axis fitted to the curve within the range, and
// the refusals.
func TestPicture(t *testing.T) {
	s := run.NewSession()
	data, _, err := s.Execute(context.Background(), `picture(growth({-1, 5 | 0, -2}, bounds="none"), title="Shear model", xspan=[0, 4], xunit="s")`, nil)
	if err != nil {
		t.Fatal(err)
	}
	svg, _ := data["image/svg+xml"].(string)
	if data["text/plain"] != "picture: Shear model" || !strings.Contains(svg, "<title>Shear model</title>") || !strings.Contains(svg, ">t (s)</text>") {
		t.Fatalf("picture: %v; %.300s", data["text/plain"], svg)
	}
	if _, ok := data["image/png"]; !ok {
		t.Error("no PNG")
	}
	// Closed form: e^{tA} = [e^{−t}, 5(e^{−t} − e^{−2t}); 0, e^{−2t}], so
	// ‖e^{tA}‖₂ ≥ 5(e^{−4} − e^{−8}) = 0.0899 at t = 4 and above it before;
	// an axis fitted to t ∈ [0, 4] with its 3% margin starts above 0.05,
	// while the whole curve to t = 10 reaches down to about 1e−4.
	i := strings.Index(svg, "y from ")
	var lo float64
	if i < 0 {
		t.Fatal("no description")
	}
	if _, err := fmt.Sscanf(strings.ReplaceAll(svg[i:], "−", "-"), "y from %g", &lo); err != nil || lo < 0.05 {
		t.Errorf("y axis starts at %g (%v): not fitted to t ∈ [0, 4]", lo, err)
	}
	for _, c := range []struct{ code, want string }{
		{`picture(3)`, "picture: a number has no figure"},
		{`picture(spectrum({-1, 5 | 0, -2}), xspan=[1, 0])`, "picture: xspan must be an interval [a, b] with a < b"},
		{`picture(growth({-1, 5 | 0, -2}, bounds="none"), yspan=[-1, 1])`, "picture: yspan must be positive on a logarithmic axis"},
		{`picture(spectrum({-1, 5 | 0, -2}), title=7)`, "picture: title must be a string"},
	} {
		if _, _, err := s.Execute(context.Background(), c.code, nil); err == nil || !strings.Contains(err.Error(), c.want) {
			t.Errorf("%s: error %v, want %q", c.code, err, c.want)
		}
	}
}

// TestPseudospectrumDefaultLevels checks that the levels a pseudospectrum
// chooses by itself are all drawn: each level of the table has its legend
// entry, none is named as too small to see, and each closes inside the
// region. For the normal matrix diag(−1, −2), σ_min(zI − A) = min |z − λ|
// (closed form), so α_ε = −1 + ε for every ε below the distance to the edge.
func TestPseudospectrumDefaultLevels(t *testing.T) {
	s := run.NewSession()
	for _, c := range []struct {
		code   string
		normal bool
	}{
		{`pseudospectrum({-1, 5 | 0, -2})`, false},
		{`pseudospectrum({-1, 0 | 0, -2})`, true},
		{`pseudospectrum({0, 1 | 0, 0})`, false},
		{`pseudospectrum({-1, 100 | 0, -1.5})`, false},
		{`pseudospectrum({-1, 1, 1, 1 | 0, -1, 1, 1 | 0, 0, -1, 1 | 0, 0, 0, -1})`, false},
	} {
		data, _, err := s.Execute(context.Background(), "p = "+c.code+"\np", nil)
		if err != nil {
			t.Fatalf("%s: %v", c.code, err)
		}
		svg, _ := data["image/svg+xml"].(string)
		if strings.Contains(svg, "too small to see") {
			t.Errorf("%s: a chosen level is not drawn", c.code)
		}
		v, _, err := s.Execute(context.Background(), "p.levels", nil)
		if err != nil {
			t.Fatal(err)
		}
		levels := strings.Split(strings.Trim(v["text/plain"].(string), "[]"), ", ")
		if len(levels) < 2 || len(levels) > 4 { // psMaxLevels
			t.Errorf("%s: %d levels chosen (%v); want 2 to 4", c.code, len(levels), levels)
		}
		var eps []float64
		for _, l := range levels {
			e, err := strconv.ParseFloat(l, 64)
			if err != nil {
				t.Fatalf("%s: level %q: %v", c.code, l, err)
			}
			eps = append(eps, e)
		}
		names := plot.FormatLevels(eps)
		for _, n := range names {
			if !strings.Contains(svg, ">ε = "+n+"</text>") {
				t.Errorf("%s: the legend lacks ε = %s", c.code, n)
			}
		}
		if !c.normal {
			continue
		}
		a, _, err := s.Execute(context.Background(), "p.abscissae", nil)
		if err != nil {
			t.Fatal(err)
		}
		got := strings.Split(strings.Trim(a["text/plain"].(string), "[]"), ", ")
		for k, e := range eps {
			x, _ := strconv.ParseFloat(got[k], 64)
			if math.Abs(x-(-1+e)) > 1e-6 {
				t.Errorf("%s: α_ε at ε = %g is %g; closed form −1 + ε = %g", c.code, e, x, -1+e)
			}
		}
	}
}
