package objects

import (
	"math"
	"strings"
	"testing"

	"semiflow/lang/value"
	"semiflow/numerics/spectra"
)

func testAnalysis(rows int) *Analysis {
	r := &Analysis{Kind: "test", Title: "title", Columns: []string{"k", "z"}, Method: "m", Accuracy: "a",
		Facts: []Fact{{"one", "1"}, {"longer label", "2"}}}
	for k := 0; k < rows; k++ {
		r.Rows = append(r.Rows, []value.Value{value.Num(k), value.Complex(complex(float64(k), 1))})
	}
	return r
}

func TestAnalysisText(t *testing.T) {
	want := "title\n  one           1\n  longer label  2\n  k    z\n  0 0+1i\n  1 1+1i\n  method: m\n  accuracy: a"
	if got := testAnalysis(2).String(); got != want {
		t.Errorf("got\n%s\nwant\n%s", got, want)
	}
	long := testAnalysis(100).String()
	if !strings.Contains(long, "⋮") || !strings.Contains(long, "(100 rows)") || strings.Contains(long, " 50 ") || !strings.Contains(long, "99 99+1i") {
		t.Errorf("elided table wrong:\n%s", long)
	}
}

func TestAnalysisHTML(t *testing.T) {
	h := testAnalysis(MaxRowsHTML + 100).MIME()["text/html"].(string)
	if got := strings.Count(h, "<tr><td style"); got != MaxRowsHTML {
		t.Errorf("%d data rows in the HTML, want %d", got, MaxRowsHTML)
	}
	if !strings.Contains(h, "rows 450 to 549 of 600 not shown") {
		t.Errorf("HTML lacks the elision note")
	}
	if strings.Contains(testAnalysis(3).MIME()["text/html"].(string), "not shown") {
		t.Errorf("short table elided")
	}
}

func TestAnalysisIndex(t *testing.T) {
	r := testAnalysis(3)
	if v := r.Index2([]int{2}, []int{0}, true, true); v != value.Num(2) {
		t.Errorf("r[2, 0] = %v", v)
	}
	if v := r.Index2([]int{0, 1, 2}, []int{0}, false, true).String(); v != "[0, 1, 2]" {
		t.Errorf("r[.., 0] = %s", v)
	}
	if v := r.Index2([]int{0, 1}, []int{1}, false, true).String(); v != "[0+1i, 1+1i]" {
		t.Errorf("r[0 .. 1, 1] = %s", v)
	}
	if v := r.Index(1).String(); v != "[1+0i, 1+1i]" {
		t.Errorf("r[1] = %s", v)
	}
}

// The generator report never shows a bare sign for a value within
// rounding: ω(A) = 4.6e-19 against τ = 2.2e-14 (the practitioners' case)
// reads "0 within rounding" and "yes, within rounding", and M = 1 is
// marked exact (Lumer–Phillips).
func TestGeneratorReportWithinRounding(t *testing.T) {
	g := &spectra.GeneratorReport{N: 4, SpectralAbscissa: -0.5, NumericalAbscissa: 4.6e-19, Omega: 0,
		Rounding: 2.2e-14, AbscissaRounding: 2.2e-14, AbscissaSign: -1, Dissipative: true, WithinRounding: true, M: 1,
		Verdict: "v"}
	r := GeneratorReport("A", "Euclidean inner product", g)
	facts := map[string]string{}
	for _, f := range r.Facts {
		facts[f.Label] = f.Value
	}
	for label, want := range map[string]string{
		"numerical abscissa ω(A)":      "0 within rounding (computed 4.6e-19, |ω(A)| ≤ 2.2e-14 = n·u·‖A‖)",
		"dissipative (Lumer–Phillips)": "yes, within rounding: ω(A) − ω = 4.6e-19 ≤ 2.2e-14 = n·u·‖A‖",
		"Hille–Yosida estimate of M":   "1 (exact: Lumer–Phillips)",
		"spectral abscissa α(A)":       "-0.5",
	} {
		if !strings.HasPrefix(facts[label], want) {
			t.Errorf("%s: %q, want it to start with %q", label, facts[label], want)
		}
	}
}

// Eigenvalues above spectra.IllCondLimit get a note pointing to the
// pseudospectra; well-conditioned ones do not. A Markov gap whose error is
// unbounded says so instead of "± +Inf".
func TestReportsFlagDefective(t *testing.T) {
	s := &spectra.Spectrum{Values: []complex128{-1, -1, -2}, Cond: []float64{math.Inf(1), 3e15, 2}}
	r := SpectrumReport("J", 3, s, "all")
	if len(r.Notes) != 1 || !strings.Contains(r.Notes[0], "k = 0, 1 have condition above 1/√u") || !strings.Contains(r.Notes[0], "pseudospectrum(A)") {
		t.Errorf("notes %q", r.Notes)
	}
	s.Cond = []float64{1, 1, 1}
	if r := SpectrumReport("D", 3, s, "all"); len(r.Notes) != 0 {
		t.Errorf("well-conditioned spectrum flagged: %q", r.Notes)
	}
	m := MarkovReport("Q", &spectra.MarkovReport{Stationary: []float64{0.5, 0.5}, Gap: 2, GapError: math.Inf(1)})
	if !strings.Contains(m.Facts[0].Value, "error not bounded") {
		t.Errorf("gap fact %q", m.Facts[0].Value)
	}
	m = MarkovReport("Q", &spectra.MarkovReport{Stationary: []float64{0.5, 0.5}, Gap: 2, GapError: 4.4e-16})
	if m.Facts[0].Value != "2 ± 4.4e-16" {
		t.Errorf("gap fact %q", m.Facts[0].Value)
	}
}

// M that could not be estimated (ω = α(A) within rounding, not
// dissipative) or does not exist (ω < α(A)) is said in words.
func TestGeneratorReportNoM(t *testing.T) {
	g := &spectra.GeneratorReport{N: 2, M: math.NaN(), Sampled: "none: ω = α(A) within rounding", Verdict: "v"}
	if v := GeneratorReport("A", "ip", g).Facts[4].Value; v != "not estimated (none: ω = α(A) within rounding)" {
		t.Errorf("NaN M: %q", v)
	}
	g.M = math.Inf(1)
	if v := GeneratorReport("A", "ip", g).Facts[4].Value; !strings.HasPrefix(v, "inf: no bound") {
		t.Errorf("infinite M: %q", v)
	}
}
