package main

import (
	"context"
	"encoding/json"
	"errors"
	"os"
	"path/filepath"
	"regexp"
	"strings"
	"testing"

	"semiflow/kernel"
	"semiflow/lang/run"
)

func TestCmdInstallPrefixAndUninstall(t *testing.T) {
	p := t.TempDir()
	t.Setenv("JUPYTER_PATH", filepath.Join(p, "share", "jupyter"))
	if rc := cmdInstall([]string{"--prefix", p, "--name", "sf-test"}); rc != 0 {
		t.Fatalf("install rc = %d", rc)
	}
	b, err := os.ReadFile(filepath.Join(p, "share", "jupyter", "kernels", "sf-test", "kernel.json"))
	if err != nil {
		t.Fatal(err)
	}
	var spec struct {
		Argv []string `json:"argv"`
	}
	if err := json.Unmarshal(b, &spec); err != nil || len(spec.Argv) != 3 || !filepath.IsAbs(spec.Argv[0]) || spec.Argv[1] != "kernel" {
		t.Errorf("kernel.json argv = %v (%v)", spec.Argv, err)
	}
	if rc := cmdInstall([]string{"--uninstall", "--name", "sf-test"}); rc != 0 {
		t.Errorf("uninstall rc = %d", rc)
	}
	if _, err := os.Stat(filepath.Join(p, "share", "jupyter", "kernels", "sf-test")); !os.IsNotExist(err) {
		t.Error("kernelspec not removed")
	}
	if rc := cmdInstall([]string{"--user", "--sys-prefix"}); rc != 2 {
		t.Errorf("conflicting flags rc = %d, want 2", rc)
	}
}

func TestCmdKernelBadArgs(t *testing.T) {
	if rc := cmdKernel(nil); rc != 2 {
		t.Errorf("no args rc = %d", rc)
	}
	if rc := cmdKernel([]string{filepath.Join(t.TempDir(), "missing.json")}); rc != 1 {
		t.Errorf("missing file rc = %d", rc)
	}
}

// The kernel receives a language error with its class as ename and the
// report in colour; without the colour sequences it is the plain report
// semiflow run prints.
func TestKernelErrorReport(t *testing.T) {
	e := langEvaluator{run.NewSession()}
	_, _, err := e.Execute(context.Background(), "x = 1\nx + nope", nil)
	var ke kernel.EvalError
	if !errors.As(err, &ke) {
		t.Fatalf("%T is not a kernel.EvalError", err)
	}
	if ke.ErrorName() != "unknown name" {
		t.Errorf("ename = %q", ke.ErrorName())
	}
	tb := ke.Traceback()
	plain := tracebackOf(errors.Unwrap(err)) // the language error inside
	if len(tb) != len(plain) || len(tb) != 3 {
		t.Fatalf("traceback %q, plain %q", tb, plain)
	}
	sgr := regexp.MustCompile("\x1b\\[[0-9;]*m")
	for i := range tb {
		w := plain[i]
		if i == 0 {
			w = " unknown name  " + w // the class's badge leads the notebook's report
		}
		if !strings.Contains(tb[i], "\x1b[") || sgr.ReplaceAllString(tb[i], "") != w {
			t.Errorf("line %d: %q, plain %q", i, tb[i], plain[i])
		}
	}
	if plain[2] != "    │     ^^^^ unknown name" {
		t.Errorf("caret line %q", plain[2])
	}
}

// The kernelspec gets a kernel.js whose mode knows the builtins and the
// reserved words of the language.
func TestInstallWritesHighlighting(t *testing.T) {
	w := highlightWords()
	has := func(list []string, s string) bool {
		for _, x := range list {
			if x == s {
				return true
			}
		}
		return false
	}
	if !has(w.Builtins, "propagate") || !has(w.Builtins, "equispaced") || has(w.Builtins, "span") ||
		!has(w.Constants, "pi") || !has(w.Keywords, "where") || has(w.Builtins, "pi") {
		t.Errorf("words = %+v", w)
	}
}
