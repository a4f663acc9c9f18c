package objects

import (
	"math/rand"
	"strings"
	"testing"

	"semiflow/lang/value"
)

// TestMathHTML checks the formulas found in report texts and their TeX
// (the TeX is written by hand from the notation, common practice, no
// source), and that the prose around them is left alone.
func TestMathHTML(t *testing.T) {
	f := func(tex string) string { return `<span class="semiflow-math">\(` + tex + `\)</span>` }
	for _, c := range []struct{ in, want string }{
		{"ε-pseudospectra of matrix (2×2): σ_ε(A) = {z : σ_min(zI − A) ≤ ε}",
			"ε-pseudospectra of matrix (2×2): " + f(`\sigma _{\varepsilon }(A) = \{z : \sigma _{\min}(zI - A) \le  \varepsilon \}`)},
		{"transient growth ‖e^{tA}‖₂ of matrix (2×2), t ∈ [0, 10]",
			"transient growth " + f(`\|e^{tA}\|_{2}`) + " of matrix (2×2), " + f(`t \in  [0, 10]`)},
		{"yes: A − ωI is dissipative for ω = 0.5, so ‖e^{tA}‖ ≤ e^{ωt} (Lumer–Phillips)",
			"yes: " + f(`A - \omega I`) + " is dissipative for " + f(`\omega  = 0.5`) + ", so " + f(`\|e^{tA}\| \le  e^{\omega t}`) + " (Lumer–Phillips)"},
		{"Kreiss constant sup_{Re z > 0} Re z ‖(zI − A)⁻¹‖₂",
			"Kreiss constant " + f(`\sup _{\operatorname{Re}  z &gt; 0} \operatorname{Re}  z \|(zI - A)^{-1}\|_{2}`)},
		{"the mixing time t_mix = min{t : max_i ‖e_iᵀe^{tQ} − π‖_TV ≤ 1/4}",
			"the mixing time " + f(`t_{\mathrm{mix}} = \min \{t : \max _{i} \|e_{i}^{T}e^{tQ} - \pi \|_{\mathrm{TV}} \le  1/4\}`)},
		{"σ_min relative error ≲ 5.0e-07 where converged",
			f(`\sigma _{\min}`) + " relative error " + f(`\lesssim  \text{5.0e-07}`) + " where converged"},
		{"‖u(t)‖∞", f(`\|u(t)\|_{\infty}`)},
		{"ω(A) = λmax((A + A*)/2)", f(`\omega (A) = \lambda_{\max}((A + A^{*})/2)`)},
		// √ as a symbol (never an undefined macro), Σ as a sum, angle
		// brackets, indices ij italic, a word subscript upright.
		{"the non-negative √x", "the non-negative " + f(`\surd x`)},
		{"Q_ii = −Σ_{j≠i} Q_ij", f(`Q_{ii} = -\sum _{j\ne i} Q_{ij}`)},
		{"⟨A x, y⟩_W = ⟨x, A* y⟩_W", f(`\langle A x, y\rangle _{W} = \langle x, A^{*} y\rangle _{W}`)},
		{"ln(4/π_min)", f(`\ln (4/\pi _{\min})`)},
		// Prose, numbers and user text without mathematics stay text.
		{"spectrum of matrix (2×2): all 2 eigenvalues", "spectrum of matrix (2×2): all 2 eigenvalues"},
		{"table of 30 rows", "table of 30 rows"},
		{"-0.6225594314+3.2e-8i", "-0.6225594314+3.2e-8i"},
		{"cost in $ and $", "cost in <span>$</span> and <span>$</span>"},
		{"a <b> & c", "a &lt;b&gt; &amp; c"},
	} {
		if got := MathHTML(c.in); got != c.want {
			t.Errorf("MathHTML(%q)\n got %s\nwant %s", c.in, got, c.want)
		}
	}
	if got, want := MathMarkdown("smallest σ_min on the grid, a_b * c"), `smallest $\sigma _{\min}$ on the grid, $a_{b}$ \* c`; got != want {
		t.Errorf("MathMarkdown: got %s, want %s", got, want)
	}
}

// TestMathSpansKeepText checks on random texts over the notation's
// alphabet that the pieces put together give the text back and that every
// formula's brackets balance (so no \( is left open).
func TestMathSpansKeepText(t *testing.T) {
	alphabet := []rune("abzAIT εσω‖_^{}()[]:=≤−-+,.0123⁻¹₂ᵀ∞*·eRSupminax")
	rng := rand.New(rand.NewSource(1))
	for k := 0; k < 20000; k++ {
		rs := make([]rune, rng.Intn(30))
		for i := range rs {
			rs[i] = alphabet[rng.Intn(len(alphabet))]
		}
		s := string(rs)
		var b strings.Builder
		for _, p := range mathSpans(s) {
			b.WriteString(p.text)
			if p.math && !balanced(mathTokens(p.text)) {
				t.Fatalf("%q: formula %q has unbalanced brackets", s, p.text)
			}
		}
		if b.String() != s {
			t.Fatalf("%q: pieces give %q", s, b.String())
		}
	}
}

// TestQuantityMarkdown checks that a quantity carries text/markdown with
// its formula and that a report's HTML carries its formulas as TeX.
func TestQuantityMarkdown(t *testing.T) {
	q := &Quantity{X: value.Num(-1), Symbol: "α(A)", What: "spectral abscissa max Re λ", Method: "QR algorithm", Accuracy: "≲ Cond·n·u·‖A‖_F"}
	md, _ := q.MIME()["text/markdown"].(string)
	for _, want := range []string{`$\alpha (A) = -1$`, `$\max  \operatorname{Re}  \lambda$`, "*method:* QR algorithm", `\|A\|_{F}`} {
		if !strings.Contains(md, want) {
			t.Errorf("the Markdown lacks %s:\n%s", want, md)
		}
	}
	r := &Analysis{Kind: "growth", Title: "transient growth ‖e^{tA}‖₂", Columns: []string{"t", "‖e^{tA}‖₂"}, Rows: [][]value.Value{{value.Num(0), value.Num(1)}}}
	h, _ := r.MIME()["text/html"].(string)
	if strings.Count(h, `\(\|e^{tA}\|_{2}\)`) != 1 || !strings.Contains(h, "<th>‖e<sup>tA</sup>‖₂</th>") {
		t.Errorf("the report's title does not carry ‖e^{tA}‖₂ as TeX, or its column heading not as text with a superscript (a typeset heading is stacked in a notebook's fixed table layout):\n%s", h)
	}
}

// TestHeadingHTML: table headings as escaped text with <sub>/<sup>, never
// typeset (common practice, no source: HTML's own sub- and superscripts).
func TestHeadingHTML(t *testing.T) {
	for _, c := range []struct{ in, want string }{
		{"M_n = sup (λ − ω)^n ‖R(λ)^n‖", "M<sub>n</sub> = sup (λ − ω)<sup>n</sup> ‖R(λ)<sup>n</sup>‖"},
		{"‖e^{tA}‖_W", "‖e<sup>tA</sup>‖<sub>W</sub>"},
		{"a < b & c", "a &lt; b &amp; c"},
		{"error estimate", "error estimate"},
	} {
		if got := HeadingHTML(c.in); got != c.want {
			t.Errorf("HeadingHTML(%q) = %q, want %q", c.in, got, c.want)
		}
	}
}
