package main

import (
	"context"
	"os"
	"path/filepath"
	"strings"
	"testing"
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
	if out.String() != "-18\n" {
		t.Errorf("stdout = %q", out.String())
	}
	want := path + ":4:6: unknown name kapa; did you mean kappa?\nrate(kapa)\n     ^^^^\n"
	if errs.String() != want {
		t.Errorf("stderr = %q, want %q", errs.String(), want)
	}

	nb := filepath.Join(dir, "n.ipynb")
	os.WriteFile(nb, []byte(`{"cells": [{"cell_type": "markdown", "source": "x"},
		{"cell_type": "code", "source": ["a = 2\n", "a + 1"]},
		{"cell_type": "code", "source": "print(a * 10)"}]}`), 0o644)
	out.Reset()
	errs.Reset()
	if rc := runFile(context.Background(), nb, &out, &errs); rc != 0 || out.String() != "3\n20\n" {
		t.Errorf("notebook: rc %d, stdout %q, stderr %q", rc, out.String(), errs.String())
	}
}
