package run

import (
	"strings"
	"testing"
)

// TestCompleteParts: after r. the completions are r's named parts that can
// be written as names; elsewhere the keywords include where and with.
func TestCompleteParts(t *testing.T) {
	s := NewSession()
	mustExec(t, s, "g = growth({-1, 10 | 0, -2}, bounds=\"none\")\nwidth = 1")
	m, start, end := s.Complete("g.pe", 4)
	if strings.Join(m, " ") != "peak peak_time" || start != 2 || end != 4 {
		t.Errorf("Complete(g.pe) = %q [%d, %d), want peak peak_time [2, 4)", m, start, end)
	}
	m, _, _ = s.Complete("g.", 2)
	for _, f := range m {
		if strings.ContainsAny(f, " ‖{") {
			t.Errorf("completion %q after g. cannot be written as a name", f)
		}
	}
	if len(m) < 5 {
		t.Errorf("Complete(g.) = %q, want the report's parts", m)
	}
	m, _, _ = s.Complete("x wi", 4)
	if strings.Join(m, " ") != "width with" {
		t.Errorf("Complete(x wi) = %q, want width with", m)
	}
}

// TestInspectPart: inspecting the name after r. shows that part of r.
func TestInspectPart(t *testing.T) {
	s := NewSession()
	mustExec(t, s, "g = interval(0, 1, 5)")
	data, found := s.Inspect("g.h + 1", 3, 0)
	if !found || !strings.HasPrefix(data["text/plain"].(string), "h: number, a part of a grid\n0.25") {
		t.Errorf("Inspect(g.h) = %v, %v", data, found)
	}
	if _, found := s.Inspect("g.nope", 4, 0); found {
		t.Errorf("Inspect(g.nope) found something")
	}
}
