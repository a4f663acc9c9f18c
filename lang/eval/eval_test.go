package eval

import (
	"flag"
	"fmt"
	"strings"
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

type events struct{ ids []string }

func (e *events) Stream(string, string) {}
func (e *events) Display(data, md map[string]any, id string, update bool) {
	e.ids = append(e.ids, fmt.Sprintf("%s %v %s", id, update, data["text/plain"]))
}
func (e *events) Clear(bool)          {}
func (e *events) Page(map[string]any) {}

func TestProgress(t *testing.T) {
	out := &events{}
	in := New(nil, nil, out)
	c := &Call{Interp: in, Name: "work"}
	p := c.Progress()
	p(0, 4)
	p(1, 4) // within 200 ms of the first: skipped
	p(4, 4) // completion is always shown
	want := []string{"progress-work-1 false work: 0/4 (0%)", "progress-work-1 true work: 4/4 (100%)"}
	if strings.Join(out.ids, "|") != strings.Join(want, "|") {
		t.Errorf("progress displays = %q, want %q", out.ids, want)
	}
}
