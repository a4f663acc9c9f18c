package builtin_test

import (
	"context"
	"encoding/json"
	"encoding/xml"
	"errors"
	"io"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"semiflow/lang/run"
)

// TestWriteSVG checks that writesvg stores exactly the figure the value
// shows in a notebook, as well-formed XML.
func TestWriteSVG(t *testing.T) {
	dir := t.TempDir()
	path := filepath.Join(dir, "spec.svg")
	s := run.NewSession()
	exec(t, s, `sp = spectrum({-1, 5 | 0, -2})
writesvg(sp, "`+path+`")`)
	b, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	data, _, err := s.Execute(context.Background(), "sp", nil)
	if err != nil {
		t.Fatal(err)
	}
	want, _ := data["image/svg+xml"].(string)
	if want == "" || string(b) != want {
		t.Fatalf("file differs from the displayed figure (%d vs %d bytes)", len(b), len(want))
	}
	d := xml.NewDecoder(strings.NewReader(string(b)))
	root := ""
	for {
		tok, err := d.Token()
		if errors.Is(err, io.EOF) {
			break
		}
		if err != nil {
			t.Fatalf("not well-formed XML: %v", err)
		}
		if se, ok := tok.(xml.StartElement); ok && root == "" {
			root = se.Name.Local
		}
	}
	if root != "svg" {
		t.Errorf("root element %q, want svg", root)
	}
}

// TestWriteAnalysisTable checks the CSV and JSON export of an analysis
// table (closed form: the eigenvalues of the triangular matrix are its
// diagonal, −1 and −2).
func TestWriteAnalysisTable(t *testing.T) {
	dir := t.TempDir()
	csv := filepath.Join(dir, "sp.csv")
	js := filepath.Join(dir, "sp.json")
	s := run.NewSession()
	exec(t, s, `sp = spectrum({-1, 5 | 0, -2})
writecsv(sp, "`+csv+`")
writejson(sp, "`+js+`")`)
	b, _ := os.ReadFile(csv)
	lines := strings.Split(strings.TrimSpace(string(b)), "\n")
	if len(lines) != 3 || lines[0] != "k,λ,Re λ,Im λ,condition" || !strings.HasPrefix(lines[1], "0,-1+0i,-1,0,") || !strings.HasPrefix(lines[2], "1,-2+0i,-2,0,") {
		t.Errorf("analysis CSV:\n%s", b)
	}
	b, _ = os.ReadFile(js)
	var rec struct {
		Kind string
		Rows [][]any
	}
	if err := json.Unmarshal(b, &rec); err != nil || rec.Kind != "spectrum" || len(rec.Rows) != 2 {
		t.Errorf("analysis JSON %s (%v)", b, err)
	}
}
