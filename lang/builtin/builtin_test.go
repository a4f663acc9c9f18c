package builtin_test

import (
	"context"
	"flag"
	"fmt"
	"os"
	"strings"
	"testing"

	"semiflow/lang/builtin"
	"semiflow/lang/run"
)

// go test ./lang/... -update rewrites REFERENCE.md from the table.
var update = flag.Bool("update", false, "rewrite REFERENCE.md")

// TestDocumented fails when a builtin lacks documentation or examples, or
// when an example no longer runs or no longer shows its recorded result.
func TestDocumented(t *testing.T) {
	tab := builtin.Default()
	if len(tab.Names()) < 40 {
		t.Fatalf("only %d builtins", len(tab.Names()))
	}
	for _, b := range tab.All() {
		if len(strings.Fields(b.Doc)) < 4 {
			t.Errorf("%s: documentation missing or too short: %q", b.Name, b.Doc)
		}
		if len(b.Examples) == 0 {
			t.Errorf("%s: no example", b.Name)
		}
		for _, p := range b.Params {
			if p.Doc == "" {
				t.Errorf("%s: parameter %s undocumented", b.Name, p.Name)
			}
		}
		for _, ex := range b.Examples {
			s := run.NewSession()
			data, _, err := s.Execute(context.Background(), ex.Code, nil)
			if err != nil {
				t.Errorf("%s: example %q fails: %v", b.Name, ex.Code, err)
				continue
			}
			got := ""
			if data != nil {
				got = fmt.Sprint(data["text/plain"])
			}
			if got != ex.Result {
				t.Errorf("%s: example %q shows %q, documented as %q", b.Name, ex.Code, got, ex.Result)
			}
		}
	}
}

func TestHelpListsEveryBuiltin(t *testing.T) {
	s := run.NewSession()
	var out strings.Builder
	if _, _, err := s.Execute(context.Background(), "help()", writer{&out}); err != nil {
		t.Fatal(err)
	}
	for _, n := range builtin.Default().Names() {
		if !strings.Contains(out.String(), "\n  "+n) {
			t.Errorf("help() does not list %s", n)
		}
	}
}

func TestReference(t *testing.T) {
	ref := builtin.Default().Reference()
	const path = "REFERENCE.md"
	if *update {
		if err := os.WriteFile(path, []byte(ref), 0o644); err != nil {
			t.Fatal(err)
		}
	}
	want, err := os.ReadFile(path)
	if err != nil {
		t.Fatalf("%v (run go test ./lang/... -update)", err)
	}
	if string(want) != ref {
		t.Errorf("%s is out of date with the builtin table; run go test ./lang/... -update", path)
	}
}

func TestNewRejectsDuplicates(t *testing.T) {
	defer func() {
		if recover() == nil {
			t.Error("New accepted a duplicate name")
		}
	}()
	b := builtin.Default().Get("sum")
	builtin.New([]*builtin.Builtin{b, b})
}

type writer struct{ b *strings.Builder }

func (w writer) Stream(name, text string)                             { w.b.WriteString(text) }
func (w writer) Display(map[string]any, map[string]any, string, bool) {}
func (w writer) Clear(bool)                                           {}
func (w writer) Page(map[string]any)                                  {}
