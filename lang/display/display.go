// Package display turns values into MIME bundles for the notebook and the
// terminal: "text/plain" always (the value's String form), plus whatever a
// value's MIME method adds (HTML tables, SVG figures).
package display

import "semiflow/lang/value"

// Bundle returns the MIME bundle of v: "text/plain" is v.String(); a
// value.Displayer adds its own entries (but cannot replace text/plain); a
// value.Recorder adds its record as "application/json" (machine-readable:
// method, tolerance, error estimates, work).
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
	if r, ok := v.(value.Recorder); ok {
		if _, has := b["application/json"]; !has {
			b["application/json"] = r.Record()
		}
	}
	b["text/plain"] = v.String()
	return b
}

// Version is the semiflow release recorded in every result's metadata.
const Version = "0.1.0"

// Metadata returns the display metadata for v: under the key "semiflow",
// the release that computed it, the value's type and, for a
// value.Recorder, its record (method, tolerance, error estimate, work).
// Bundle(nil)-like values (nil, None) have empty metadata.
func Metadata(v value.Value) map[string]any {
	if v == nil || v == value.None {
		return map[string]any{}
	}
	m := map[string]any{"version": Version, "type": v.Type()}
	if r, ok := v.(value.Recorder); ok {
		for k, x := range r.Record() {
			if k != "version" && k != "type" {
				m[k] = x
			}
		}
	}
	return map[string]any{"semiflow": m}
}
