package builtin_test

import (
	"context"
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
