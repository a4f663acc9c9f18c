package install

import (
	"encoding/json"
	"os"
	"os/exec"
	"path/filepath"
	"reflect"
	"strings"
	"testing"
)

// Debian's classic notebook ships CodeMirror 5 with its runmode for node,
// which runs a mode without a browser.
const runmodeNode = "/usr/lib/python3/dist-packages/notebook/static/components/codemirror/addon/runmode/runmode.node.js"

// TestKernelJSTokens runs the mode that kernel.js defines over a few lines
// and checks the class of every token.
func TestKernelJSTokens(t *testing.T) {
	node, err := exec.LookPath("node")
	if err != nil {
		skipUnlessCI(t, "node is not installed")
	}
	if _, err := os.Stat(runmodeNode); err != nil {
		skipUnlessCI(t, "the classic notebook's CodeMirror is not installed")
	}
	js := filepath.Join(t.TempDir(), "kernel.js")
	w := Words{Keywords: []string{"and", "by", "where"}, Builtins: []string{"exp", "interval", "print"}, Constants: []string{"pi", "true"}}
	if err := os.WriteFile(js, []byte(KernelJS(w)), 0o644); err != nil {
		t.Fatal(err)
	}
	src := `f(x, t=0.1) = exp(-pi * t) * x  # decay
print("a\"b", 2.5e-3i); f(1)
g = interval(0, 1, 11, ends="neumann")
u = [1, 2] where (a = 1 .. 3 by 1)
exp == true and x -> x ↦ y
`
	cmd := exec.Command(node, "testdata/tokens.js", runmodeNode, js)
	cmd.Stdin = strings.NewReader(src)
	out, err := cmd.Output()
	if err != nil {
		t.Fatalf("node: %v\n%s", err, out)
	}
	var got [][2]*string
	if err := json.Unmarshal(out, &got); err != nil {
		t.Fatalf("%v: %s", err, out)
	}
	var pairs []string
	for _, p := range got {
		style := "-"
		if p[1] != nil {
			style = *p[1]
		}
		pairs = append(pairs, *p[0]+" "+style)
	}
	want := strings.Fields(`f def ( bracket x variable , - t attribute = operator 0.1 number ) bracket = operator
		exp builtin ( bracket - operator pi atom * operator t variable ) bracket * operator x variable`)
	var w2 []string
	for i := 0; i+1 < len(want); i += 2 {
		w2 = append(w2, want[i]+" "+want[i+1])
	}
	w2 = append(w2, "# decay comment")
	rest := strings.Fields(`print builtin ( bracket - - , - 2.5e-3i number ) bracket ; - f variable ( bracket 1 number ) bracket
		g def = operator interval builtin ( bracket 0 number , - 1 number , - 11 number , - ends attribute = operator
		"neumann" string ) bracket u def = operator [ bracket 1 number , - 2 number ] bracket where keyword ( bracket
		a attribute = operator 1 number .. operator 3 number by keyword 1 number ) bracket
		exp variable == operator true atom and keyword x variable -> operator x variable ↦ operator y variable`)
	for i := 0; i+1 < len(rest); i += 2 {
		w2 = append(w2, rest[i]+" "+rest[i+1])
	}
	w2[len(want)/2+3] = `"a\"b" string` // the string token (spaces-free, so written here)
	if !reflect.DeepEqual(pairs, w2) {
		t.Errorf("tokens:\n got  %q\n want %q", pairs, w2)
	}
}

func skipUnlessCI(t *testing.T, why string) {
	t.Helper()
	if os.Getenv("CI") == "true" {
		t.Fatal(why)
	}
	t.Skip(why)
}

// KernelJS carries every word it is given, and Install writes it.
func TestKernelJSWords(t *testing.T) {
	w := Words{Keywords: []string{"with"}, Builtins: []string{"propagate", "zeta"}, Constants: []string{"nan"}}
	js := KernelJS(w)
	for _, s := range []string{`["with"]`, `["propagate","zeta"]`, `["nan"]`, `CodeMirror.defineMode("semiflow"`, `defineMIME("text/x-semiflow"`} {
		if !strings.Contains(js, s) {
			t.Errorf("kernel.js lacks %s", s)
		}
	}
	dir, err := Install(Options{Scope: Prefix, Prefix: t.TempDir(), Executable: "/bin/true", Words: w})
	if err != nil {
		t.Fatal(err)
	}
	b, err := os.ReadFile(filepath.Join(dir, "kernel.js"))
	if err != nil || string(b) != js {
		t.Errorf("installed kernel.js differs (%v)", err)
	}
}
