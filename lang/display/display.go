// Package display turns values into MIME bundles for the notebook and the
// terminal: "text/plain" always (the value's String form), plus whatever a
// value's MIME method adds (HTML tables, SVG figures).
package display

import "semiflow/lang/value"

// Bundle returns the MIME bundle of v: "text/plain" is v.String(); a
// value.Displayer adds its own entries (but cannot replace text/plain).
// Bundle(nil) and Bundle(value.None) are nil.
func Bundle(v value.Value) map[string]any {
	if v == nil || v == value.None {
		return nil
	}
	b := map[string]any{}
	if d, ok := v.(value.Displayer); ok {
		for k, x := range d.MIME() {
			b[k] = x
		}
	}
	b["text/plain"] = v.String()
	return b
}

// Metadata returns the display metadata for v (empty for now; values with
// figures will report sizes here).
func Metadata(v value.Value) map[string]any { return map[string]any{} }
