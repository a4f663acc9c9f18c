// Package install writes the Semiflow kernelspec — kernel.json and logos —
// where Jupyter looks for kernels, and removes it again. It needs no Python.
//
// A kernelspec is a directory DATA/kernels/NAME holding kernel.json (the
// command line Jupyter runs, with {connection_file} standing for the path of
// the connection file) and optional logo-32x32.png, logo-64x64.png,
// logo-svg.svg and kernel.js (here: the notebook's syntax highlighting).
package install

import (
	"encoding/json"
	"errors"
	"fmt"
	"os"
	"path/filepath"
	"regexp"
	"strings"
)

// Scope says which Jupyter data directory receives the kernelspec.
type Scope int

const (
	User      Scope = iota // ~/.local/share/jupyter
	SysPrefix              // the active environment's share/jupyter
	Prefix                 // Options.Prefix/share/jupyter
)

// Options configures Install and Uninstall.
type Options struct {
	Scope      Scope
	Prefix     string // with Scope Prefix
	Name       string // kernelspec directory name; default "semiflow"
	Executable string // absolute path of the semiflow binary; default os.Executable
	// Env looks up environment variables (default os.Getenv).
	Env func(string) string
	// Words are the names kernel.js highlights (see KernelJS).
	Words Words
}

// ErrName reports a kernelspec name Jupyter would not accept.
var ErrName = errors.New("install: kernel name must be letters, digits, '.', '_' or '-'")

// ErrNotFound reports an uninstall with nothing to remove.
var ErrNotFound = errors.New("install: no semiflow kernelspec found")

var validName = regexp.MustCompile(`^[A-Za-z0-9._-]+$`)

func (o *Options) defaults() error {
	if o.Name == "" {
		o.Name = "semiflow"
	}
	if !validName.MatchString(o.Name) {
		return fmt.Errorf("%w: %q", ErrName, o.Name)
	}
	if o.Env == nil {
		o.Env = os.Getenv
	}
	return nil
}

// DataDir returns the Jupyter data directory for the options: DIR/share/jupyter
// for Prefix; otherwise JUPYTER_DATA_DIR when set; otherwise for SysPrefix
// the active virtual or conda environment's share/jupyter (VIRTUAL_ENV,
// CONDA_PREFIX), else /usr/local/share/jupyter; for User
// $XDG_DATA_HOME/jupyter or ~/.local/share/jupyter.
func DataDir(o Options) (string, error) {
	if err := o.defaults(); err != nil {
		return "", err
	}
	switch o.Scope {
	case Prefix:
		if o.Prefix == "" {
			return "", errors.New("install: --prefix needs a directory")
		}
		p, err := filepath.Abs(o.Prefix)
		if err != nil {
			return "", err
		}
		return filepath.Join(p, "share", "jupyter"), nil
	}
	if d := o.Env("JUPYTER_DATA_DIR"); d != "" {
		return filepath.Abs(d)
	}
	switch o.Scope {
	case SysPrefix:
		for _, v := range []string{"VIRTUAL_ENV", "CONDA_PREFIX"} {
			if p := o.Env(v); p != "" {
				return filepath.Join(p, "share", "jupyter"), nil
			}
		}
		return "/usr/local/share/jupyter", nil
	}
	if x := o.Env("XDG_DATA_HOME"); x != "" {
		return filepath.Join(x, "jupyter"), nil
	}
	home := o.Env("HOME")
	if home == "" {
		h, err := os.UserHomeDir()
		if err != nil {
			return "", err
		}
		home = h
	}
	return filepath.Join(home, ".local", "share", "jupyter"), nil
}

// Spec is the content of kernel.json.
type Spec struct {
	Argv          []string       `json:"argv"`
	DisplayName   string         `json:"display_name"`
	Language      string         `json:"language"`
	InterruptMode string         `json:"interrupt_mode"`
	Env           map[string]any `json:"env"`
	Metadata      map[string]any `json:"metadata"`
}

// NewSpec returns the kernelspec for the binary at exe.
func NewSpec(exe string) Spec {
	return Spec{
		Argv:          []string{exe, "kernel", "{connection_file}"},
		DisplayName:   "Semiflow",
		Language:      "semiflow",
		InterruptMode: "message",
		Env:           map[string]any{},
		Metadata:      map[string]any{"debugger": false, "semiflow": map[string]any{"file_extension": ".sf"}},
	}
}

// Install writes DATA/kernels/NAME/{kernel.json, kernel.js, logo-32x32.png,
// logo-64x64.png, logo-svg.svg} and returns the directory.
func Install(o Options) (string, error) {
	if err := o.defaults(); err != nil {
		return "", err
	}
	data, err := DataDir(o)
	if err != nil {
		return "", err
	}
	exe := o.Executable
	if exe == "" {
		if exe, err = os.Executable(); err != nil {
			return "", err
		}
	}
	if exe, err = filepath.Abs(exe); err != nil {
		return "", err
	}
	if r, err := filepath.EvalSymlinks(exe); err == nil {
		exe = r
	}
	dir := filepath.Join(data, "kernels", o.Name)
	if err := os.MkdirAll(dir, 0o755); err != nil {
		return "", err
	}
	js, err := json.MarshalIndent(NewSpec(exe), "", " ")
	if err != nil {
		return "", err
	}
	files := map[string][]byte{
		"kernel.json":    append(js, '\n'),
		"logo-32x32.png": LogoPNG(32),
		"logo-64x64.png": LogoPNG(64),
		"logo-svg.svg":   []byte(LogoSVG()),
		"kernel.js":      []byte(KernelJS(o.Words)),
	}
	for name, b := range files {
		if err := os.WriteFile(filepath.Join(dir, name), b, 0o644); err != nil {
			return "", err
		}
	}
	return dir, nil
}

// SearchPath returns the data directories Jupyter would search, in order:
// each entry of JUPYTER_PATH, JUPYTER_DATA_DIR, the user directory, the
// environment's, /usr/local/share/jupyter and /usr/share/jupyter.
func SearchPath(o Options) []string {
	_ = o.defaults()
	var dirs []string
	add := func(d string) {
		if d == "" {
			return
		}
		for _, x := range dirs {
			if x == d {
				return
			}
		}
		dirs = append(dirs, d)
	}
	if p := o.Env("JUPYTER_PATH"); p != "" {
		for _, d := range strings.Split(p, string(os.PathListSeparator)) {
			add(d)
		}
	}
	add(o.Env("JUPYTER_DATA_DIR"))
	if o.Scope == Prefix && o.Prefix != "" {
		if d, err := DataDir(o); err == nil {
			add(d)
		}
	}
	for _, s := range []Scope{User, SysPrefix} {
		q := o
		q.Scope = s
		if d, err := DataDir(q); err == nil {
			add(d)
		}
	}
	add("/usr/local/share/jupyter")
	add("/usr/share/jupyter")
	return dirs
}

// Uninstall removes every kernelspec named o.Name on the search path whose
// kernel.json declares the language "semiflow" (a kernelspec of another
// language with the same name is left alone). It returns the directories
// removed, or ErrNotFound.
func Uninstall(o Options) ([]string, error) {
	if err := o.defaults(); err != nil {
		return nil, err
	}
	var removed []string
	for _, data := range SearchPath(o) {
		dir := filepath.Join(data, "kernels", o.Name)
		b, err := os.ReadFile(filepath.Join(dir, "kernel.json"))
		if err != nil {
			continue
		}
		var s Spec
		if json.Unmarshal(b, &s) != nil || s.Language != "semiflow" {
			continue
		}
		if err := os.RemoveAll(dir); err != nil {
			return removed, err
		}
		removed = append(removed, dir)
	}
	if len(removed) == 0 {
		return nil, fmt.Errorf("%w under the name %q (searched %s)", ErrNotFound, o.Name, strings.Join(SearchPath(o), ", "))
	}
	return removed, nil
}
