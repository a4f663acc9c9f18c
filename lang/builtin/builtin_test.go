package builtin_test

import (
	"context"
	"flag"
	"fmt"
	"html"
	"os"
	"strings"
	"testing"
	"unicode/utf8"

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
	data, _, err := s.Execute(context.Background(), "help()", nil)
	if err != nil {
		t.Fatal(err)
	}
	text, _ := data["text/plain"].(string)
	page, _ := data["text/html"].(string)
	for _, n := range builtin.Default().Names() {
		if !strings.Contains(text, "\n  "+n+" ") {
			t.Errorf("help() does not list %s", n)
		}
		if !strings.Contains(page, "<code>"+html.EscapeString(n)) {
			t.Errorf("help()'s table does not list %s", n)
		}
	}
	for _, l := range strings.Split(text, "\n") {
		if n := utf8.RuneCountInString(l); n > 100 {
			t.Errorf("help() line of %d characters: %q", n, l)
		}
	}
	if strings.Contains(text, "\nOther\n") {
		t.Errorf("builtins outside every family heading of help():\n%s", text[strings.Index(text, "\nOther\n"):])
	}
	// Families in their reading order, each heading once.
	last := -1
	for _, h := range []string{"\nConstants\n", "\nGrids and grid functions\n", "\nOperators\n", "\nEvolution u(t) = e^{tA} u0\n", "\nStability: spectra, numerical range, resolvents, growth\n"} {
		i := strings.Index(text, h)
		if i <= last || strings.Count(text, h) != 1 {
			t.Errorf("heading %q missing, repeated or out of order", h)
		}
		last = i
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
