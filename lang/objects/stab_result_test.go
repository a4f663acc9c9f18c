package objects

import (
	"strings"
	"testing"

	"semiflow/lang/value"
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
