package run

import (
	"context"
	"errors"
	"flag"
	"fmt"
	"os"
	"path/filepath"
	"sort"
	"strings"
	"testing"

	"semiflow/lang/eval"
	"semiflow/lang/syntax"
)

// Regenerate the expected outputs of the golden scripts with
//
//	go test ./lang/... -update
//
// and review the diff before committing.
var update = flag.Bool("update", false, "rewrite the expected outputs of testdata/lang/*.sf")

const goldenDir = "../../testdata/lang"

// The golden-script format (testdata/lang/*.sf).
//
// A file is a sequence of blocks separated by blank lines. A block is one
// or more input lines (run together as one cell, in one session per file)
// followed by the lines the cell is expected to produce, in order:
//
//	=> TEXT    a displayed value or the cell's result (text/plain; one
//	           "=> " line per line of a multi-line value)
//	-> TEXT    a line written to standard output (print, help)
//	!> TEXT    a line written to standard error (warn)
//	~> TEXT    another output event: "clear", "clear wait", "page NAME...",
//	           "display id=ID" / "update id=ID" for named displays
//	!! TEXT    the error: "CLASS LINE:COL: message" for each error message
//	           line, "LINE:COL: in the call of f" for each call-stack frame
//
// A line starting with any other text is input; an input line after output
// lines starts a new block. Blocks in files named *_fail.sf must end with
// an error; blocks in other files must not.
type block struct {
	input  []string
	output []string
	line   int // of the first input line
}

func parseGolden(text string) []*block {
	var blocks []*block
	var cur *block
	for i, l := range strings.Split(strings.TrimRight(text, "\n"), "\n") {
		isOut := isOutputLine(l)
		switch {
		case strings.TrimSpace(l) == "":
			cur = nil
		case isOut && cur != nil:
			cur.output = append(cur.output, l)
		case isOut:
			cur = &block{line: i + 1, output: []string{l}}
			blocks = append(blocks, cur)
		default:
			if cur == nil || len(cur.output) > 0 {
				cur = &block{line: i + 1}
				blocks = append(blocks, cur)
			}
			cur.input = append(cur.input, l)
		}
	}
	return blocks
}

func isOutputLine(l string) bool {
	for _, p := range []string{"=> ", "-> ", "!> ", "~> ", "!! "} {
		if strings.HasPrefix(l, p) || l == strings.TrimSpace(p) {
			return true
		}
	}
	return false
}

// recorder is an Output that records events as golden lines.
type recorder struct{ lines []string }

func (r *recorder) add(prefix, text string) {
	for _, l := range strings.Split(strings.TrimSuffix(text, "\n"), "\n") {
		r.lines = append(r.lines, strings.TrimRight(prefix+l, " "))
	}
}

func (r *recorder) Stream(name, text string) {
	if name == "stderr" {
		r.add("!> ", text)
	} else {
		r.add("-> ", text)
	}
}

func (r *recorder) Display(data, metadata map[string]any, id string, update bool) {
	if strings.HasPrefix(id, "progress-") {
		// A builtin's progress display appears only when the computation
		// runs longer than a delay, so whether it is seen depends on the
		// machine's load: goldens record results, not timing.
		return
	}
	if id != "" {
		kind := "display"
		if update {
			kind = "update"
		}
		r.add("~> ", kind+" id="+id)
	}
	r.add("=> ", fmt.Sprint(data["text/plain"]))
}

func (r *recorder) Clear(wait bool) {
	if wait {
		r.add("~> ", "clear wait")
	} else {
		r.add("~> ", "clear")
	}
}

func (r *recorder) Page(data map[string]any) {
	first, _, _ := strings.Cut(fmt.Sprint(data["text/plain"]), "\n")
	r.add("~> ", "page "+first)
}

// errorLines renders an Execute error in the golden form.
func errorLines(err error) []string {
	var lines []string
	var el syntax.ErrorList
	var ee *eval.Error
	switch {
	case errors.As(err, &el):
		for _, e := range el {
			p := e.File.Position(e.Pos)
			lines = append(lines, fmt.Sprintf("!! %s %d:%d: %s", syntax.ErrorClass, p.Line, p.Column, e.Msg))
		}
	case errors.As(err, &ee):
		p := ee.File.Position(ee.Pos)
		lines = append(lines, fmt.Sprintf("!! %s %d:%d: %s", ee.Name, p.Line, p.Column, ee.Msg))
		for _, f := range ee.Stack {
			q := f.File.Position(f.Pos)
			lines = append(lines, fmt.Sprintf("!! %d:%d: in the call of %s", q.Line, q.Column, f.Func))
			if f.Repeat > 0 {
				lines = append(lines, fmt.Sprintf("!! (the same call %d more times)", f.Repeat))
			}
		}
	default:
		lines = append(lines, "!! failure "+err.Error())
	}
	return lines
}

// runBlock executes one block and returns its output lines and whether it
// failed.
func runBlock(s *Session, b *block) ([]string, bool) {
	rec := &recorder{}
	data, _, err := s.Execute(context.Background(), strings.Join(b.input, "\n")+"\n", rec)
	if err != nil {
		return append(rec.lines, errorLines(err)...), true
	}
	if data != nil {
		rec.add("=> ", fmt.Sprint(data["text/plain"]))
	}
	return rec.lines, false
}

func goldenFiles(t testing.TB) []string {
	files, err := filepath.Glob(filepath.Join(goldenDir, "*.sf"))
	if err != nil || len(files) == 0 {
		t.Fatalf("no golden scripts in %s (%v)", goldenDir, err)
	}
	sort.Strings(files)
	return files
}

func TestGolden(t *testing.T) {
	for _, path := range goldenFiles(t) {
		t.Run(filepath.Base(path), func(t *testing.T) {
			raw, err := os.ReadFile(path)
			if err != nil {
				t.Fatal(err)
			}
			failFile := strings.HasSuffix(path, "_fail.sf")
			s := NewSession()
			var out strings.Builder
			for i, b := range parseGolden(string(raw)) {
				if len(b.input) == 0 {
					t.Errorf("%s:%d: output lines without input", path, b.line)
					continue
				}
				got, failed := runBlock(s, b)
				if failed != failFile {
					if failFile {
						t.Errorf("%s:%d: block should fail but did not: %q", path, b.line, b.input)
					} else {
						t.Errorf("%s:%d: block failed: %q", path, b.line, got)
					}
				}
				if !*update && strings.Join(got, "\n") != strings.Join(b.output, "\n") {
					t.Errorf("%s:%d: input\n  %s\ngot\n  %s\nwant\n  %s", path, b.line,
						strings.Join(b.input, "\n  "), strings.Join(got, "\n  "), strings.Join(b.output, "\n  "))
				}
				if i > 0 {
					out.WriteString("\n")
				}
				out.WriteString(strings.Join(b.input, "\n") + "\n")
				for _, l := range got {
					out.WriteString(l + "\n")
				}
			}
			if *update {
				if err := os.WriteFile(path, []byte(out.String()), 0o644); err != nil {
					t.Fatal(err)
				}
			}
		})
	}
}

func goldenFilesNoT() []string {
	files, _ := filepath.Glob(filepath.Join(goldenDir, "*.sf"))
	sort.Strings(files)
	return files
}

func readFile(path string) (string, error) {
	b, err := os.ReadFile(path)
	return string(b), err
}
