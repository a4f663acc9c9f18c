package eval

import (
	"flag"
	"testing"
)

var _ = flag.Bool("update", false, "unused here; accepted for go test ./lang/... -update")

func TestSuggest(t *testing.T) {
	names := []string{"sqrt", "span", "sum", "norm", "heat_flux", "pi", "e"}
	tests := []struct{ name, want string }{
		{"sprt", "sqrt"}, {"nrom", "norm"}, {"pii", "pi"}, {"sun", "sum"},
		{"heatflux", "heat_flux"}, {"zzzzqqq", ""}, {"x", ""}, {"Norm", "norm"},
	}
	for _, tt := range tests {
		if got := suggest(tt.name, names); got != tt.want {
			t.Errorf("suggest(%q) = %q, want %q", tt.name, got, tt.want)
		}
	}
	if d := editDistance("kitten", "sitting"); d != 3 {
		t.Errorf("editDistance = %d, want 3 (the classic example)", d)
	}
}
