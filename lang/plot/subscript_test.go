package plot

import (
	"reflect"
	"testing"
)

// TestTextLabelSubscripts checks which underscores become subscripts in
// figure text (after a symbol: σ_min, u_i, ‖u‖_{TV}) and which stay (a
// word's underscore: decay_rate), and the SVG of a lowered part.
func TestTextLabelSubscripts(t *testing.T) {
	for _, c := range []struct {
		in   string
		want []textPart
	}{
		{"σ_min(zI − A)", []textPart{{"σ", false}, {"min", true}, {"(zI − A)", false}}},
		{"u_i(t)", []textPart{{"u", false}, {"i", true}, {"(t)", false}}},
		{"‖exp(tA)‖_W (weighted norm)", []textPart{{"‖exp(tA)‖", false}, {"W", true}, {" (weighted norm)", false}}},
		{"‖u‖_{TV}", []textPart{{"‖u‖", false}, {"TV", true}}},
		{"decay_rate", []textPart{{"decay_rate", false}}},
		{"x_", []textPart{{"x_", false}}},
		{"a _b", []textPart{{"a _b", false}}},
		{"no underscore", nil},
	} {
		if got := textLabel(c.in).parts; !reflect.DeepEqual(got, c.want) {
			t.Errorf("textLabel(%q) = %v, want %v", c.in, got, c.want)
		}
	}
	if got, want := textLabel("σ_min and x").svg(), `σ<tspan dy="0.3em" font-size="70%">min</tspan><tspan dy="-0.21em">`+"\u00a0"+`and x</tspan>`; got != want {
		t.Errorf("svg: %s, want %s", got, want)
	}
	if w0, w1 := textLabel("σ_min").width(12), TextWidth("σmin", 12); !(w0 < w1) {
		t.Errorf("a subscript is narrower: %g, not below %g", w0, w1)
	}
}
