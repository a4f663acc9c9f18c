package builtin_test

import (
	"context"
	"encoding/json"
	"math"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"testing"

	"semiflow/lang/run"
	"semiflow/lang/value"
)

// chainValue runs src in a fresh session and returns its result.
func chainValue(t *testing.T, src string) value.Value {
	t.Helper()
	s := run.NewSession()
	if _, _, err := s.Execute(context.Background(), src, nil); err != nil {
		t.Fatalf("%s: %v", src, err)
	}
	v, ok := s.Lookup("r")
	if !ok {
		t.Fatalf("%s: no r", src)
	}
	return v
}

// The gap of the 2000-state queue (arrivals 0.999, service 1) through
// spectrum(Q, count=2), nearest a shift and not, and spectrum(Q) (all
// 2000 eigenvalues, beyond the dense limit), and α(Q) = 0 exactly by
// abscissa, against the closed form at 50 digits in mpmath
// (testdata/spectra/make_birthdeath.py, mm1k_gaps, K = 1999): the
// relatively accurate chain route, to 1e-12 relative.
func TestChainSpectrumRelative(t *testing.T) {
	b, err := os.ReadFile(filepath.Join("..", "..", "testdata", "spectra", "birthdeath.json"))
	if err != nil {
		t.Fatal(err)
	}
	var ref struct {
		Gaps []struct {
			Lam, Mu   float64
			K         int
			Rightmost []string `json:"rightmost"`
		} `json:"mm1k_gaps"`
	}
	if err := json.Unmarshal(b, &ref); err != nil {
		t.Fatal(err)
	}
	var want float64
	for _, g := range ref.Gaps {
		if g.K == 1999 && g.Lam == 0.999 {
			x, err := strconv.ParseFloat(g.Rightmost[0], 64)
			if err != nil {
				t.Fatal(err)
			}
			want = -x
		}
	}
	if want == 0 {
		t.Fatal("no 2000-state reference")
	}
	const q = "n = 2000\ntr(k) = choose(k < n - 1, [k, k + 1, 0.999], [k - n + 2, k - n + 1, 1])\nQ = chain(n, map(tr, 0 .. 2*n - 3))\n"
	for _, call := range []string{"spectrum(Q, count=2)", "spectrum(Q, count=3, near=-0.00001)", "spectrum(Q)"} {
		v := chainValue(t, q+"s = "+call+"\nr = -re(s[1, 1])")
		got, ok := v.(value.Num)
		if !ok {
			t.Fatalf("%s: %v", call, v)
		}
		if rel := math.Abs(float64(got)-want) / want; !(rel <= 1e-12) {
			t.Errorf("%s: gap %.17g, mpmath %.17g: relative %.2g", call, float64(got), want, rel)
		}
	}
	if v := chainValue(t, q+"r = abscissa(Q)[0]"); v != value.Num(0) {
		t.Errorf("abscissa of the 2000-state chain: %v, want exactly 0", v)
	}
	if _, _, err := run.NewSession().Execute(context.Background(), q+"markov(Q)", nil); err == nil || !strings.Contains(err.Error(), "spectrum(Q, count=2) gives the gap") {
		t.Errorf("markov of the 2000-state chain: %v, want the refusal to point to spectrum(Q, count=2)", err)
	}
	data := stabExec(t, q+"spectrum(Q, count=2)")
	if text, _ := data["text/plain"].(string); !strings.Contains(text, "accurate relative to its own size") {
		t.Errorf("the report does not say the route is relatively accurate:\n%s", text)
	}
}

// generator's samples option: "auto" and "all" run, anything else is an
// error naming the choices.
func TestGeneratorSamplesOption(t *testing.T) {
	for _, src := range []string{`r = generator({-1, 4 | 0, -1}, samples="all")`, `r = generator({-1, 4 | 0, -1})`} {
		chainValue(t, src)
	}
	for src, want := range map[string]string{
		`generator({-1, 4 | 0, -1}, samples="most")`: `unknown samples "most"; the choices are "auto" and "all"`,
		`generator({-1, 4 | 0, -1}, samples=3)`:      `samples must be a string, "auto" or "all"`,
	} {
		s := run.NewSession()
		_, _, err := s.Execute(context.Background(), src, nil)
		if err == nil || !strings.Contains(err.Error(), want) {
			t.Errorf("%s: error %v, want %q", src, err, want)
		}
	}
}
