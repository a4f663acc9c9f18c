package plot

import (
	"encoding/json"
	"fmt"
	"math"
	"os"
	"path/filepath"
	"sort"
	"testing"
)

// TestContoursAgainstContourpy compares with level curves computed by
// Debian's contourpy (testdata/plot/contours_ref.py): the same edge crossings
// (each crossing is fixed by linear interpolation, whatever the joining), the
// same number of curves, and the same total length.
func TestContoursAgainstContourpy(t *testing.T) {
	raw, err := os.ReadFile(filepath.Join(goldenDir, "contours_ref.json"))
	if err != nil {
		t.Fatal(err)
	}
	var ref struct {
		Xs, Ys, Levels []float64
		Z              [][]float64
		Lines          [][][][2]float64
	}
	if err := json.Unmarshal(raw, &ref); err != nil {
		t.Fatal(err)
	}
	got := Contours(ref.Z, ref.Xs, ref.Ys, ref.Levels)
	key := func(x, y float64) string { return fmt.Sprintf("%.9f,%.9f", x+0, y+0) }
	for k, c := range ref.Levels {
		want := map[string]bool{}
		wantLen := 0.0
		for _, seg := range ref.Lines[k] {
			for i, p := range seg {
				want[key(p[0], p[1])] = true
				if i > 0 {
					wantLen += math.Hypot(p[0]-seg[i-1][0], p[1]-seg[i-1][1])
				}
			}
		}
		have := map[string]bool{}
		haveLen := 0.0
		for _, pl := range got[k] {
			for i := range pl.X {
				have[key(pl.X[i], pl.Y[i])] = true
				if i > 0 {
					haveLen += math.Hypot(pl.X[i]-pl.X[i-1], pl.Y[i]-pl.Y[i-1])
				}
			}
		}
		if len(got[k]) != len(ref.Lines[k]) {
			t.Errorf("level %g: %d curves, contourpy %d", c, len(got[k]), len(ref.Lines[k]))
		}
		if d := diff(want, have); len(d) > 0 || len(want) != len(have) {
			t.Errorf("level %g: %d vertices vs contourpy %d; first differences %v", c, len(have), len(want), d)
		}
		if math.Abs(haveLen-wantLen) > 1e-9*wantLen {
			t.Errorf("level %g: total length %.12g, contourpy %.12g", c, haveLen, wantLen)
		}
	}
}

func diff(a, b map[string]bool) []string {
	var d []string
	for k := range a {
		if !b[k] {
			d = append(d, "-"+k)
		}
	}
	for k := range b {
		if !a[k] {
			d = append(d, "+"+k)
		}
	}
	sort.Strings(d)
	if len(d) > 4 {
		d = d[:4]
	}
	return d
}
