package builtin_test

import (
	"context"
	"encoding/xml"
	"errors"
	"fmt"
	"io"
	"strings"
	"testing"
	"time"

	"semiflow/lang/eval"
	"semiflow/lang/run"
)

// stabExec runs src in a fresh session and returns the bundle of its result.
func stabExec(t *testing.T, src string) map[string]any {
	t.Helper()
	s := run.NewSession()
	data, _, err := s.Execute(context.Background(), src, nil)
	if err != nil {
		t.Fatalf("%s: %v", src, err)
	}
	return data
}

// stabWellFormed reports an error if svg is not a well-formed XML document.
func stabWellFormed(svg string) error {
	d := xml.NewDecoder(strings.NewReader(svg))
	for {
		_, err := d.Token()
		if err == io.EOF {
			return nil
		}
		if err != nil {
			return err
		}
	}
}

// Every analysis shows a text table, an HTML table and, where it has one,
// an SVG figure that is well formed and free of non-finite coordinates.
func TestStabilityDisplays(t *testing.T) {
	const a = "A = {-1, 4 | 0, -1}\n"
	cases := []struct {
		src, title string
		figure     bool
		svgHas     []string
	}{
		{"spectrum(A)", "spectrum of", true, []string{"imaginary axis", "eigenvalues"}},
		{"numrange(A, points=16)", "numerical range", true, []string{"boundary of W(A)", "ω(A) = 1"}},
		// One number format for the three levels; ε = 1e−3 rings the
		// double eigenvalue in under 16 px and is named under the figure.
		{"pseudospectrum(A, n=24, levels=[0.1, 0.01, 0.001])", "pseudospectra", true, []string{">ε = 1e−1<", ">ε = 1e−2<", "ε = 1e−3: too small to see", "eigenvalues"}},
		{"resolventline(A, 0.5, n=20)", "along Re z = 0.5", true, nil},
		{"growth(A, t=0 .. 4 by 0.25)", "transient growth", true, []string{"upper bound e·N·K", "lower bound Kreiss K", "exp(ωt)"}},
		{"wellposed(A)", "generator report", false, nil},
		{"markov({-1, 1 | 3, -3})", "Markov chain", false, nil},
	}
	for _, c := range cases {
		data := stabExec(t, a+c.src)
		plain, _ := data["text/plain"].(string)
		if !strings.Contains(plain, c.title) || !strings.Contains(plain, "method: ") || !strings.Contains(plain, "accuracy: ") {
			t.Errorf("%s: text/plain lacks title, method or accuracy:\n%s", c.src, plain)
		}
		html, _ := data["text/html"].(string)
		if !strings.Contains(html, "<table>") || strings.Contains(html, "figure not drawn") {
			t.Errorf("%s: text/html lacks a table or a figure failed:\n%s", c.src, html)
		}
		svg, ok := data["image/svg+xml"].(string)
		if ok != c.figure {
			t.Errorf("%s: figure present = %v, want %v", c.src, ok, c.figure)
			continue
		}
		if !ok {
			continue
		}
		if err := stabWellFormed(svg); err != nil {
			t.Errorf("%s: SVG is not well formed: %v", c.src, err)
		}
		if strings.Contains(svg, "NaN") || strings.Contains(svg, "Inf") {
			t.Errorf("%s: SVG contains a non-finite number", c.src)
		}
		for _, s := range c.svgHas {
			if !strings.Contains(svg, s) {
				t.Errorf("%s: SVG lacks %q", c.src, s)
			}
		}
	}
}

// A quantity takes part in arithmetic as its number; q[0] is the number.
func TestQuantityArithmetic(t *testing.T) {
	for _, c := range []struct{ src, want string }{
		{"abscissa({-1, 5 | 0, -2}) * 2", "-2"},
		{"1 - abscissa({-1, 5 | 0, -2})", "2"},
		{"-numabscissa({-1, 4 | 0, -1})", "-1"},
		{"abscissa({-1, 5 | 0, -2}) + numabscissa({-1, 4 | 0, -1})", "0"},
		{"abscissa({-1, 5 | 0, -2})[0] < 0", "true"},
		{"typeof(abscissa({-1, 5 | 0, -2}))", `"quantity"`},
		{"resolvent({-1, 0 | 0, -2}, abscissa({0, 0 | 0, 0}))", "‖(zI − A)⁻¹‖₂ = 1  (resolvent norm at z = 0)\n  method: 1/σ_min(zI − T) by inverse Lanczos on the complex Schur form A = ZTZᴴ (no balancing)\n  accuracy: relative about 1e-10"},
		{"typeof(spectrum({1, 0 | 0, 2}))", `"spectrum"`},
		{"dims(spectrum({1, 0 | 0, 2}))", "[2, 5]"},
		{"spectrum({1, 0 | 0, 2})[0]", "[0+0i, 2+0i, 2+0i, 0+0i, 1+0i]"},
		{"spectrum({1, 0 | 0, 2})[0 .. 1, 2]", "[2, 1]"},
	} {
		data := stabExec(t, c.src)
		if got := fmt.Sprint(data["text/plain"]); got != c.want {
			t.Errorf("%s = %q, want %q", c.src, got, c.want)
		}
	}
}

// A long pseudospectrum computation stops promptly when the context is
// cancelled and reports an interruption. (The bound is generous: the test
// checks that cancellation reaches the grid loop, not a speed.)
func TestStabilityInterrupt(t *testing.T) {
	s := run.NewSession()
	if _, _, err := s.Execute(context.Background(), "A = dense(laplacian(interval(0, 1, 302)))", nil); err != nil {
		t.Fatal(err)
	}
	for _, src := range []string{
		"pseudospectrum(A, re=[-5, 1], im=[-1, 1], n=400)",
		"growth(A, t=0 .. 1 by 0.001)",
	} {
		ctx, cancel := context.WithCancel(context.Background())
		time.AfterFunc(150*time.Millisecond, cancel)
		start := time.Now()
		_, _, err := s.Execute(ctx, src, nil)
		cancel()
		var ee *eval.Error
		if !errors.As(err, &ee) || ee.Name != "interrupted" {
			t.Errorf("%s: got %v, want an Interrupted error", src, err)
		}
		if d := time.Since(start); d > 10*time.Second {
			t.Errorf("%s: stopped only after %v", src, d)
		}
	}
}
