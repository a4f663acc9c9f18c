package builtin_test

import (
	"strings"
	"testing"

	"semiflow/lang/objects"
	"semiflow/lang/run"
)

// TestSolutionListsEnergy: a solution of a system from secondorder lists
// E(t) per output time; an undamped oscillator 2u″ + 3u = 0 from u = 1 at
// rest keeps E = ½·3·1² = 1.5 (closed form). Other solutions have no such
// column.
func TestSolutionListsEnergy(t *testing.T) {
	s := run.NewSession()
	exec(t, s, "sol = propagate(secondorder(2, 0, 3), [1, 0], [0, 1, 2])\nplain = propagate({-1}, [1], 1)")
	text := lookup[*objects.Solution](t, s, "sol").String()
	if !strings.Contains(text, "energy E(t)") || strings.Count(text, " 1.5\n")+strings.Count(text, " 1.5") < 3 {
		t.Errorf("no energy column with 1.5 at each time:\n%s", text)
	}
	if p := lookup[*objects.Solution](t, s, "plain").String(); strings.Contains(p, "energy") {
		t.Errorf("a plain solution lists an energy:\n%s", p)
	}
}
