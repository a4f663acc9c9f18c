package main

import (
	"context"
	"encoding/json"
	"fmt"
	"math"
	"os"
	"path/filepath"
	"strings"
	"syscall"
	"testing"
	"time"
)

func TestRunFile(t *testing.T) {
	dir := t.TempDir()
	path := filepath.Join(dir, "heat.sf")
	src := "kappa = 2\nrate(k) = -kappa * k^2\nrate(3)\nrate(kapa)\n"
	if err := os.WriteFile(path, []byte(src), 0o644); err != nil {
		t.Fatal(err)
	}
	var out, errs strings.Builder
	if rc := runFile(context.Background(), path, &out, &errs); rc != 1 {
		t.Errorf("exit status %d, want 1", rc)
	}
	if out.String() != "── line 3 ── rate(3)\n-18\n" {
		t.Errorf("stdout = %q", out.String())
	}
	want := path + ":4:6: unknown name kapa; did you mean kappa?\n  4 │ rate(kapa)\n    │      ^^^^ unknown name\n"
	if errs.String() != want {
		t.Errorf("stderr = %q, want %q", errs.String(), want)
	}
}

// TestRunNonRegular: run refuses a FIFO (whose read would wait for a writer
// for ever), a directory and a device, as script and as notebook, at once
// and with a message naming what the path is; a FIFO never blocks.
func TestRunNonRegular(t *testing.T) {
	dir := t.TempDir()
	fifo, nbFifo := filepath.Join(dir, "pipe.sf"), filepath.Join(dir, "pipe.ipynb")
	for _, p := range []string{fifo, nbFifo} {
		if err := syscall.Mkfifo(p, 0o600); err != nil {
			t.Skip("no FIFOs here:", err)
		}
	}
	for _, c := range []struct{ path, what string }{
		{fifo, "is a FIFO (named pipe)"}, {nbFifo, "is a FIFO (named pipe)"},
		{dir, "is a directory"}, {"/dev/null", "is a device"},
	} {
		t.Run(filepath.Base(c.path), func(t *testing.T) {
			done := make(chan string, 1)
			go func() {
				var out, errs strings.Builder
				rc := 0
				if isNotebook(c.path) {
					rc = runNotebook(context.Background(), c.path, filepath.Join(dir, "out.ipynb"), false, &errs)
				} else {
					rc = runFile(context.Background(), c.path, &out, &errs)
				}
				done <- fmt.Sprintf("%d %s", rc, errs.String())
			}()
			select {
			case got := <-done:
				want := fmt.Sprintf("1 semiflow: %s: %s; only a regular file is run\n", c.path, c.what)
				if got != want {
					t.Errorf("got %q, want %q", got, want)
				}
			case <-time.After(5 * time.Second):
				t.Fatalf("run %s still blocked after 5 s", c.path)
			}
		})
	}
}

// readNB reads a notebook written by runNotebook.
func readNB(t *testing.T, path string) map[string]any {
	t.Helper()
	b, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	var nb map[string]any
	if err := json.Unmarshal(b, &nb); err != nil {
		t.Fatalf("%s: %v", path, err)
	}
	return nb
}

func cellsOf(nb map[string]any) []map[string]any {
	var cs []map[string]any
	for _, c := range nb["cells"].([]any) {
		cs = append(cs, c.(map[string]any))
	}
	return cs
}

func outputsOf(c map[string]any) []map[string]any {
	var os []map[string]any
	for _, o := range c["outputs"].([]any) {
		os = append(os, o.(map[string]any))
	}
	return os
}

// text joins a multi-line field stored as nbformat does (string or lines).
func text(v any) string { return joinSource(v) }

func TestRunNotebook(t *testing.T) {
	dir := t.TempDir()
	in := filepath.Join(dir, "in.ipynb")
	src := `{"nbformat": 4, "nbformat_minor": 4, "metadata": {"title": "kept"},
	 "cells": [
	  {"cell_type": "markdown", "metadata": {}, "source": "# notes"},
	  {"cell_type": "code", "metadata": {"tags": ["x"]}, "execution_count": 7, "outputs": [{"output_type": "stream", "name": "stdout", "text": "old"}],
	   "source": ["a = 2\n", "print(\"a is\", a)\n", "print(\"twice\")\n", "a + 1"]},
	  {"cell_type": "code", "metadata": {}, "source": "  \n"},
	  {"cell_type": "code", "metadata": {}, "source": "show(1, id=\"p\"); show(2, id=\"p\"); [a, a]"},
	  {"cell_type": "code", "metadata": {}, "source": "a + kapa"},
	  {"cell_type": "code", "metadata": {}, "source": "propagate({-1}, [1], [0, 1])"}
	 ]}`
	if err := os.WriteFile(in, []byte(src), 0o644); err != nil {
		t.Fatal(err)
	}
	out := filepath.Join(dir, "out.ipynb")
	var errs strings.Builder
	if rc := runNotebook(context.Background(), in, out, false, &errs); rc != 1 {
		t.Errorf("exit status %d with a failing cell, want 1", rc)
	}
	if !strings.Contains(errs.String(), "unknown name kapa") {
		t.Errorf("stderr does not report the error: %q", errs.String())
	}
	if b, _ := os.ReadFile(in); string(b) != src {
		t.Error("the input notebook was changed although -o was given")
	}
	nb := readNB(t, out)
	if nb["nbformat"].(float64) != 4 || nb["nbformat_minor"].(float64) != 5 {
		t.Errorf("nbformat %v.%v, want 4.5", nb["nbformat"], nb["nbformat_minor"])
	}
	md := nb["metadata"].(map[string]any)
	ks := md["kernelspec"].(map[string]any)
	if md["title"] != "kept" || ks["name"] != "semiflow" || ks["display_name"] != "Semiflow" || ks["language"] != "semiflow" {
		t.Errorf("metadata = %v", md)
	}
	if li := md["language_info"].(map[string]any); li["name"] != "semiflow" || li["version"] != version ||
		li["pygments_lexer"] != "text" || li["codemirror_mode"] != "semiflow" {
		t.Errorf("language_info = %v", li)
	}
	cs := cellsOf(nb)
	ids := map[string]bool{}
	for i, c := range cs {
		id, _ := c["id"].(string)
		if !validCellID.MatchString(id) || ids[id] {
			t.Errorf("cell %d: id %q missing, invalid or repeated", i, id)
		}
		ids[id] = true
	}
	if text(cs[0]["source"]) != "# notes" || cs[0]["outputs"] != nil {
		t.Errorf("markdown cell changed: %v", cs[0])
	}

	// Cell 1: merged stdout, then the result with its execution count.
	o := outputsOf(cs[1])
	if len(o) != 2 || o[0]["output_type"] != "stream" || text(o[0]["text"]) != "a is 2\ntwice\n" {
		t.Fatalf("cell 1 outputs = %v", o)
	}
	if o[1]["output_type"] != "execute_result" || o[1]["execution_count"].(float64) != 1 ||
		cs[1]["execution_count"].(float64) != 1 || text(o[1]["data"].(map[string]any)["text/plain"]) != "3" {
		t.Errorf("cell 1 result = %v", o[1])
	}
	if sf := o[1]["metadata"].(map[string]any)["semiflow"].(map[string]any); sf["version"] != version {
		t.Errorf("result metadata = %v", o[1]["metadata"])
	}
	if tags := cs[1]["metadata"].(map[string]any)["tags"]; tags == nil {
		t.Error("cell metadata lost")
	}
	// Cell 2 is empty: not executed.
	if cs[2]["execution_count"] != nil || len(outputsOf(cs[2])) != 0 {
		t.Errorf("empty cell = %v", cs[2])
	}
	// Cell 3: one display, updated in place, then the result.
	o = outputsOf(cs[3])
	if len(o) != 2 || o[0]["output_type"] != "display_data" || text(o[0]["data"].(map[string]any)["text/plain"]) != "2" ||
		cs[3]["execution_count"].(float64) != 2 {
		t.Errorf("cell 3 outputs = %v", o)
	}
	// Cell 4: the error.
	o = outputsOf(cs[4])
	if len(o) != 1 || o[0]["output_type"] != "error" || o[0]["ename"] != "unknown name" ||
		!strings.Contains(o[0]["evalue"].(string), "kapa") || len(o[0]["traceback"].([]any)) < 2 {
		t.Errorf("cell 4 outputs = %v", o)
	}
	// Cell 5 runs after the error; its metadata records how it was computed.
	o = outputsOf(cs[5])
	if len(o) != 1 || o[0]["output_type"] != "execute_result" {
		t.Fatalf("cell 5 outputs = %v", o)
	}
	data := o[0]["data"].(map[string]any)
	if _, ok := data["text/html"]; !ok {
		t.Errorf("solution without text/html: %v", data)
	}
	sf := o[0]["metadata"].(map[string]any)["semiflow"].(map[string]any)
	if sf["method"] == nil || sf["tolerance"] == nil || sf["errest"] == nil || sf["version"] != version {
		t.Errorf("solution metadata = %v", sf)
	}

	// --allow-errors: status 0; in place; running twice gives the same ids.
	if rc := runNotebook(context.Background(), out, out, true, &errs); rc != 0 {
		t.Errorf("--allow-errors: exit status %d", rc)
	}
	nb2 := readNB(t, out)
	for i, c := range cellsOf(nb2) {
		if c["id"] != cs[i]["id"] {
			t.Errorf("cell %d: id changed from %v to %v", i, cs[i]["id"], c["id"])
		}
	}

	// Not a notebook.
	bad := filepath.Join(dir, "bad.ipynb")
	os.WriteFile(bad, []byte(`{"nbformat": 3, "worksheets": []}`), 0o644)
	errs.Reset()
	if rc := runNotebook(context.Background(), bad, bad, false, &errs); rc != 1 || !strings.Contains(errs.String(), "nbformat 4") {
		t.Errorf("nbformat 3: rc %d, stderr %q", rc, errs.String())
	}
}

func TestRunArgs(t *testing.T) {
	for _, args := range [][]string{{}, {"a.sf", "b.sf"}, {"-o"}, {"--bogus", "a.ipynb"}, {"-o", "x.ipynb", "a.sf"}} {
		if rc := cmdRun(args); rc != 2 {
			t.Errorf("cmdRun(%q) = %d, want 2", args, rc)
		}
	}
}

// TestExampleNotebooks runs every notebook in notebooks/ as `semiflow run`
// does and checks that no cell fails, that every code cell shows
// something, and that the notebook has figures and HTML tables.
func TestExampleNotebooks(t *testing.T) {
	paths, _ := filepath.Glob("notebooks/*.ipynb")
	if len(paths) < 4 {
		t.Fatalf("%d notebooks in notebooks/, want at least 4", len(paths))
	}
	for _, p := range paths {
		t.Run(filepath.Base(p), func(t *testing.T) {
			t.Parallel()
			out := filepath.Join(t.TempDir(), "out.ipynb")
			var errs strings.Builder
			if rc := runNotebook(context.Background(), p, out, false, &errs); rc != 0 {
				t.Fatalf("exit status %d: %s", rc, errs.String())
			}
			nb := readNB(t, out)
			svg, html, md := 0, 0, 0
			for i, c := range cellsOf(nb) {
				if c["cell_type"] == "markdown" {
					md++
					continue
				}
				if c["cell_type"] != "code" {
					continue
				}
				o := outputsOf(c)
				if len(o) == 0 {
					t.Errorf("code cell %d has no output", i)
				}
				for _, x := range o {
					switch x["output_type"] {
					case "error":
						t.Errorf("code cell %d failed: %v", i, x["evalue"])
					case "execute_result", "display_data":
						d := x["data"].(map[string]any)
						if s := text(d["image/svg+xml"]); s != "" {
							if !strings.HasPrefix(strings.TrimSpace(s), "<svg") || !strings.HasSuffix(strings.TrimSpace(s), "</svg>") {
								t.Errorf("code cell %d: malformed SVG", i)
							}
							svg++
						}
						if strings.Contains(text(d["text/html"]), "<table") {
							html++
						}
						if x["metadata"].(map[string]any)["semiflow"] == nil {
							t.Errorf("code cell %d: output without semiflow metadata", i)
						}
					}
				}
			}
			if svg == 0 || html == 0 || md < 3 {
				t.Errorf("%d SVG figures, %d HTML tables, %d Markdown cells", svg, html, md)
			}
		})
	}
}

// The README's first command runs notebooks/first_look.sf: an evolution
// with its error estimates and the stability question. Each output comes
// after a marker naming its statement, and the abscissae agree with the
// closed forms for the tridiagonal Toeplitz matrix the script builds:
// A = tridiag(b, a, c) with a = −2κ/h², b = κ/h² + c₀/(2h) (below the
// diagonal), c = κ/h² − c₀/(2h) (above), κ = 0.01, c₀ = 0.5, h = 0.01,
// n = 99, whose eigenvalues are a + 2√(bc) cos(kπ/(n+1)) (the classical
// formula for tridiagonal Toeplitz matrices), and whose symmetric part is
// tridiag((b+c)/2, a, (b+c)/2).
func TestFirstLookExample(t *testing.T) {
	var out, errs strings.Builder
	if rc := runFile(context.Background(), "notebooks/first_look.sf", &out, &errs); rc != 0 {
		t.Fatalf("exit status %d; stderr:\n%s", rc, errs.String())
	}
	text := out.String()
	last := -1
	for _, m := range []string{"── line 13 ── sol\n", "── line 14 ── errest(sol)\n", "── line 19 ── abscissa(A)\n",
		"── line 20 ── numabscissa(A)\n", "── line 21 ── growth(A, t=0 .. 4 by 0.5)\n", "── line 22 ── wellposed(A)\n"} {
		i := strings.Index(text, m)
		if i <= last {
			t.Errorf("marker %q missing or out of order", m)
		}
		last = i
	}
	if n := strings.Count(text, "── line "); n != 6 {
		t.Errorf("%d markers, want 6 (statements that show nothing get none)", n)
	}
	if !strings.Contains(text, "tolerance met           yes") {
		t.Errorf("the propagation does not say it met its tolerance:\n%s", text)
	}
	const kappa, c0, h, n = 0.01, 0.5, 0.01, 99
	a, b, c := -2*kappa/(h*h), kappa/(h*h)+c0/(2*h), kappa/(h*h)-c0/(2*h)
	alpha := a + 2*math.Sqrt(b*c)*math.Cos(math.Pi/(n+1))
	omega := a + (b+c)*math.Cos(math.Pi/(n+1))
	for _, q := range []struct {
		prefix string
		want   float64
	}{{"α(A) = ", alpha}, {"ω(A) = ", omega}} {
		i := strings.Index(text, q.prefix)
		if i < 0 {
			t.Errorf("no %q line", q.prefix)
			continue
		}
		var got float64
		if _, err := fmt.Sscan(text[i+len(q.prefix):], &got); err != nil {
			t.Errorf("%s: %v", q.prefix, err)
			continue
		}
		// Printed with 10 significant digits; the eigenvalue problems are
		// solved to n·u·‖A‖_F ≈ 3e-11 (absolute), and α's rightmost
		// eigenvalue is ill-conditioned (the report's own bound is 1e-3).
		tol := 1e-9 * math.Abs(q.want)
		if q.prefix == "α(A) = " {
			tol = 1e-3
		}
		if math.Abs(got-q.want) > tol {
			t.Errorf("%s%.10g, closed form %.10g", q.prefix, got, q.want)
		}
	}
}
