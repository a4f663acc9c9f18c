package main

import (
	"encoding/json"
	"os"
	"path/filepath"
	"testing"
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
