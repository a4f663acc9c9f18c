package builtin_test

import (
	"encoding/json"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"semiflow/lang/run"
	"semiflow/lang/value"
)

func TestExportFiles(t *testing.T) {
	dir := t.TempDir()
	csv := filepath.Join(dir, "sol.csv")
	js := filepath.Join(dir, "sol.json")
	vec := filepath.Join(dir, "v.csv")
	mj := filepath.Join(dir, "m.json")
	s := run.NewSession()
	exec(t, s, `r = propagate({0, 1 | -1, 0}, [1, 0], [0, 1])
writecsv(r, "`+csv+`")
writejson(r, "`+js+`")
writecsv([1, 2.5, 1/3], "`+vec+`")
writejson([1, 1i, "a", {1, 2 | 3, 4}, nan, true], "`+mj+`")`)
	b, _ := os.ReadFile(csv)
	lines := strings.Split(strings.TrimSpace(string(b)), "\n")
	if len(lines) != 3 || lines[0] != "t,u0,u1" || lines[1] != "0,1,0" || !strings.HasPrefix(lines[2], "1,0.5403023058") {
		t.Errorf("solution CSV:\n%s", b)
	}
	b, _ = os.ReadFile(vec)
	if string(b) != "1\n2.5\n0.3333333333333333\n" {
		t.Errorf("vector CSV %q", b)
	}
	var sol struct {
		Method string
		Times  []float64
		Values [][]float64
		Errest []float64
	}
	b, _ = os.ReadFile(js)
	if err := json.Unmarshal(b, &sol); err != nil {
		t.Fatal(err)
	}
	if sol.Method != "dense" || len(sol.Times) != 2 || len(sol.Values) != 2 || len(sol.Values[1]) != 2 || len(sol.Errest) != 2 {
		t.Errorf("solution JSON %+v", sol)
	}
	b, _ = os.ReadFile(mj)
	var l []any
	if err := json.Unmarshal(b, &l); err != nil {
		t.Fatalf("%v: %s", err, b)
	}
	flat := strings.Join(strings.Fields(string(b)), "")
	if flat != `[1,{"im":1,"re":0},"a",[[1,2],[3,4]],null,true]` {
		t.Errorf("list JSON %s", flat)
	}
}

// The memory guard refuses a dense matrix too large for the machine with
// a message stating what it needs, before the evaluator's size limit.
func TestDenseRefusedByMemoryGuard(t *testing.T) {
	s := run.NewSession()
	_, _, err := s.Execute(t.Context(), `dense(laplacian(interval(0, 1, 200002)))`, nil)
	if err == nil || !strings.Contains(err.Error(), "needs") || !strings.Contains(err.Error(), "limit") {
		t.Errorf("error %v", err)
	}
}

// A Matrix Market round trip of a large sparse operator is exact.
func TestMatrixMarketRoundTrip(t *testing.T) {
	path := filepath.Join(t.TempDir(), "a.mtx")
	s := run.NewSession()
	exec(t, s, `g = tensorgrid(interval(0, 1, 30, order=4), interval(0, 2, 25, ends="neumann"))
c(x, y) = 1 + x * y / 3
A = multiplier(g, c) * laplacian(g) + deriv(g, along="y")
writemm(A, "`+path+`")
B = readmm("`+path+`")
u = tabulate(c, g)
d = max(abs(A * u - B * u))`)
	if d, _ := s.Lookup("d"); d.(value.Num) != 0 {
		t.Errorf("round trip differs by %v", d)
	}
}
