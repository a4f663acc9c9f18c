package display_test

import (
	"context"
	"encoding/json"
	"testing"

	"semiflow/lang/display"
	"semiflow/lang/run"
	"semiflow/lang/value"
)

// TestMetadataRecordsSolution checks that a propagated result's metadata
// carries the release, the method, the tolerance and the error estimate,
// and that the metadata is valid JSON (a saved notebook holds it).
func TestMetadataRecordsSolution(t *testing.T) {
	s := run.NewSession()
	_, md, err := s.Execute(context.Background(), `propagate({0, 1 | -1, 0}, [1, 0], [0, 1], tol=1e-9)`, nil)
	if err != nil {
		t.Fatal(err)
	}
	m, ok := md["semiflow"].(map[string]any)
	if !ok {
		t.Fatalf("no semiflow metadata: %v", md)
	}
	if m["version"] != display.Version || m["type"] != "solution" || m["method"] == "" || m["tolerance"] != 1e-9 {
		t.Errorf("metadata %v", m)
	}
	if e, ok := m["errest"].(float64); !ok || e < 0 {
		t.Errorf("errest %v", m["errest"])
	}
	if _, err := json.Marshal(md); err != nil {
		t.Errorf("metadata is not JSON: %v", err)
	}
	data, _, _ := s.Execute(context.Background(), `propagate({0, 1 | -1, 0}, [1, 0], [0, 1], tol=1e-9)`, nil)
	j, ok := data["application/json"].(map[string]any)
	if !ok || j["method"] != m["method"] {
		t.Errorf("application/json %v", data["application/json"])
	}
	if _, err := json.Marshal(data); err != nil {
		t.Errorf("bundle is not JSON: %v", err)
	}
}

func TestMetadataPlainValues(t *testing.T) {
	if len(display.Metadata(value.None)) != 0 || len(display.Metadata(nil)) != 0 {
		t.Error("none should have empty metadata")
	}
	m := display.Metadata(value.Num(2))["semiflow"].(map[string]any)
	if m["type"] != "number" || m["version"] != display.Version {
		t.Errorf("metadata %v", m)
	}
}

// TestAnalysisRecord checks the machine-readable form of a stability
// report: its method and table survive as JSON.
func TestAnalysisRecord(t *testing.T) {
	s := run.NewSession()
	data, md, err := s.Execute(context.Background(), `spectrum({-1, 5 | 0, -2})`, nil)
	if err != nil {
		t.Fatal(err)
	}
	j, ok := data["application/json"].(map[string]any)
	if !ok || j["kind"] != "spectrum" || j["method"] == "" {
		t.Fatalf("application/json %v", data["application/json"])
	}
	if rows, _ := j["rows"].([][]any); len(rows) != 2 {
		t.Errorf("rows %v", j["rows"])
	}
	if m := md["semiflow"].(map[string]any); m["method"] != j["method"] {
		t.Errorf("metadata %v", m)
	}
	if _, err := json.Marshal(data); err != nil {
		t.Errorf("bundle is not JSON: %v", err)
	}
}
