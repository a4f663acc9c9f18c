package install

import (
	"bytes"
	"encoding/json"
	"encoding/xml"
	"errors"
	"image/png"
	"os"
	"path/filepath"
	"testing"
)

func env(m map[string]string) func(string) string {
	return func(k string) string { return m[k] }
}

func TestDataDir(t *testing.T) {
	cases := []struct {
		o    Options
		want string
	}{
		{Options{Scope: User, Env: env(map[string]string{"HOME": "/h"})}, "/h/.local/share/jupyter"},
		{Options{Scope: User, Env: env(map[string]string{"HOME": "/h", "XDG_DATA_HOME": "/x"})}, "/x/jupyter"},
		{Options{Scope: User, Env: env(map[string]string{"HOME": "/h", "JUPYTER_DATA_DIR": "/j"})}, "/j"},
		{Options{Scope: SysPrefix, Env: env(nil)}, "/usr/local/share/jupyter"},
		{Options{Scope: SysPrefix, Env: env(map[string]string{"VIRTUAL_ENV": "/venv"})}, "/venv/share/jupyter"},
		{Options{Scope: Prefix, Prefix: "/opt/p", Env: env(map[string]string{"JUPYTER_DATA_DIR": "/j"})}, "/opt/p/share/jupyter"},
	}
	for _, c := range cases {
		got, err := DataDir(c.o)
		if err != nil || got != c.want {
			t.Errorf("DataDir(%+v) = %q, %v; want %q", c.o.Scope, got, err, c.want)
		}
	}
	if _, err := DataDir(Options{Name: "a b"}); !errors.Is(err, ErrName) {
		t.Errorf("bad name: %v", err)
	}
}

func TestInstallUninstall(t *testing.T) {
	data := t.TempDir()
	o := Options{Executable: "/opt/semiflow/bin/semiflow", Env: env(map[string]string{"JUPYTER_DATA_DIR": data})}
	dir, err := Install(o)
	if err != nil {
		t.Fatal(err)
	}
	if dir != filepath.Join(data, "kernels", "semiflow") {
		t.Errorf("dir = %s", dir)
	}
	b, err := os.ReadFile(filepath.Join(dir, "kernel.json"))
	if err != nil {
		t.Fatal(err)
	}
	var s Spec
	if err := json.Unmarshal(b, &s); err != nil {
		t.Fatal(err)
	}
	// Kernelspec fields as the Jupyter client documentation defines them.
	if len(s.Argv) != 3 || s.Argv[0] != "/opt/semiflow/bin/semiflow" || s.Argv[1] != "kernel" || s.Argv[2] != "{connection_file}" ||
		s.DisplayName != "Semiflow" || s.Language != "semiflow" || s.InterruptMode != "message" || s.Metadata == nil {
		t.Errorf("kernel.json = %s", b)
	}
	for name, n := range map[string]int{"logo-32x32.png": 32, "logo-64x64.png": 64} {
		f, err := os.Open(filepath.Join(dir, name))
		if err != nil {
			t.Fatal(err)
		}
		img, err := png.Decode(f)
		f.Close()
		if err != nil {
			t.Fatalf("%s: %v", name, err)
		}
		if r := img.Bounds(); r.Dx() != n || r.Dy() != n {
			t.Errorf("%s is %v", name, r)
		}
		// Transparent corner, opaque centre.
		if _, _, _, a := img.At(0, 0).RGBA(); a != 0 {
			t.Errorf("%s: corner alpha %d", name, a)
		}
		if _, _, _, a := img.At(n/2, n/4).RGBA(); a != 0xffff {
			t.Errorf("%s: centre alpha %d", name, a)
		}
	}
	svg, _ := os.ReadFile(filepath.Join(dir, "logo-svg.svg"))
	dec := xml.NewDecoder(bytes.NewReader(svg))
	for {
		if _, err := dec.Token(); err != nil {
			if err.Error() != "EOF" {
				t.Errorf("logo-svg.svg is not well-formed XML: %v", err)
			}
			break
		}
	}

	// Another language's kernelspec under the same name is not removed.
	other := filepath.Join(t.TempDir(), "kernels", "semiflow")
	os.MkdirAll(other, 0o755)
	os.WriteFile(filepath.Join(other, "kernel.json"), []byte(`{"language":"other"}`), 0o644)

	// Uninstall finds the spec through JUPYTER_PATH.
	u := Options{Env: env(map[string]string{"JUPYTER_PATH": filepath.Dir(filepath.Dir(other)) + string(os.PathListSeparator) + data, "HOME": t.TempDir()})}
	removed, err := Uninstall(u)
	if err != nil || len(removed) != 1 || removed[0] != dir {
		t.Fatalf("Uninstall = %v, %v", removed, err)
	}
	if _, err := os.Stat(dir); !os.IsNotExist(err) {
		t.Error("kernelspec still there")
	}
	if _, err := os.Stat(filepath.Join(other, "kernel.json")); err != nil {
		t.Error("another language's kernelspec was removed")
	}
	if _, err := Uninstall(u); !errors.Is(err, ErrNotFound) {
		t.Errorf("second uninstall: %v", err)
	}
}

func TestInstallPrefixAndName(t *testing.T) {
	p := t.TempDir()
	dir, err := Install(Options{Scope: Prefix, Prefix: p, Name: "semiflow-dev", Executable: "/bin/true", Env: env(nil)})
	if err != nil {
		t.Fatal(err)
	}
	if want := filepath.Join(p, "share", "jupyter", "kernels", "semiflow-dev"); dir != want {
		t.Errorf("dir = %s, want %s", dir, want)
	}
	if _, err := Install(Options{Name: "../evil", Env: env(map[string]string{"JUPYTER_DATA_DIR": p})}); !errors.Is(err, ErrName) {
		t.Errorf("path-escaping name accepted: %v", err)
	}
}
