package run

import (
	"context"
	"strings"
	"testing"
)

// A result that misses its tolerance warns once on standard error, whether
// it is assigned or shown, and says so on the first line of its text and
// in its record. The tolerance 1e-17 lies below the unit roundoff 2⁻⁵³ ≈
// 1.1e-16, so no estimate of a rounded computation can meet it.
func TestToleranceShortfallWarns(t *testing.T) {
	s := NewSession()
	rec := &recorder{}
	data, md, err := s.Execute(context.Background(),
		"A = operator({-1, 1 | 0, -2})\nsol = propagate(A, [1, 1], 1, tol=1e-17)\nsol", rec)
	if err != nil {
		t.Fatal(err)
	}
	var warns []string
	for _, l := range rec.lines {
		if strings.HasPrefix(l, "!> warning: ") {
			warns = append(warns, l)
		}
	}
	if len(warns) != 1 || !strings.Contains(warns[0], "tolerance 1e-17 not met") {
		t.Errorf("stderr warnings = %q, want one naming tolerance 1e-17", warns)
	}
	text, _ := data["text/plain"].(string)
	if first, _, _ := strings.Cut(text, "\n"); !strings.HasPrefix(first, "WARNING: tolerance 1e-17 not met") {
		t.Errorf("first line = %q, want the shortfall", first)
	}
	rcd, _ := md["semiflow"].(map[string]any)
	if rcd == nil {
		t.Fatalf("metadata %v has no semiflow record", md)
	}
	if rcd["tol_met"] != false || rcd["shortfall"] == nil {
		t.Errorf("record tol_met = %v, shortfall = %v; want false and a message", rcd["tol_met"], rcd["shortfall"])
	}

	// A tolerance that is met gives no warning and a record saying so.
	rec = &recorder{}
	_, md, err = s.Execute(context.Background(), "propagate(A, [1, 1], 1, tol=1e-8)", rec)
	if err != nil {
		t.Fatal(err)
	}
	for _, l := range rec.lines {
		if strings.Contains(l, "warning") {
			t.Errorf("unexpected output %q", l)
		}
	}
	if rcd, _ := md["semiflow"].(map[string]any); rcd == nil || rcd["tol_met"] != true {
		t.Errorf("record = %v, want tol_met true", md)
	}
}
