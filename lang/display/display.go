// Package display turns values into MIME bundles for the notebook and the
// terminal: "text/plain" always (the value's String form), plus whatever a
// value's MIME method adds (HTML tables, SVG figures).
package display

import "semiflow/lang/value"

// Version is the semiflow release recorded in every result's metadata.
const Version = "0.1.0"

// Render returns v's MIME bundle (see Bundle) and its display metadata (see
// Metadata), asking a value.Recorder for its record once for both.
func Render(v value.Value) (bundle, metadata map[string]any) {
	rec := record(v)
	return bundleOf(v, rec), metadataOf(v, rec)
}

// Bundle returns the MIME bundle of v: "text/plain" is v.String(); a
// value.Displayer adds its own entries (but cannot replace text/plain); a
// value.Recorder adds its record as "application/json" (machine-readable:
// method, tolerance, error estimates, work). Bundle(nil) and
// Bundle(value.None) are nil.
func Bundle(v value.Value) map[string]any { return bundleOf(v, record(v)) }

// Metadata returns the display metadata for v: under the key "semiflow",
// the release that computed it, the value's type and, for a
// value.Recorder, its record (method, tolerance, error estimate, work).
// nil and value.None have empty metadata.
func Metadata(v value.Value) map[string]any { return metadataOf(v, record(v)) }

func record(v value.Value) map[string]any {
	if r, ok := v.(value.Recorder); ok {
		return r.Record()
	}
	return nil
}

func bundleOf(v value.Value, rec map[string]any) map[string]any {
	if v == nil || v == value.None {
		return nil
	}
	b := map[string]any{}
	if d, ok := v.(value.Displayer); ok {
		for k, x := range d.MIME() {
			b[k] = x
		}
	}
	if _, has := b["application/json"]; rec != nil && !has {
		b["application/json"] = rec
	}
	b["text/plain"] = v.String()
	return b
}

func metadataOf(v value.Value, rec map[string]any) map[string]any {
	if v == nil || v == value.None {
		return map[string]any{}
	}
	m := map[string]any{"version": Version, "type": v.Type()}
	for k, x := range rec {
		if k != "version" && k != "type" {
			m[k] = x
		}
	}
	return map[string]any{"semiflow": m}
}
