package main

import (
	"bufio"
	"context"
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"os"
	"os/signal"
	"path/filepath"
	"strings"
	"sync"

	"semiflow/lang/run"
)

// termOutput writes a session's output to a terminal: streams as they are,
// displayed values as their text/plain form.
type termOutput struct {
	stdout, stderr io.Writer
}

func (t termOutput) Stream(name, text string) {
	if name == "stderr" {
		fmt.Fprint(t.stderr, text)
		return
	}
	fmt.Fprint(t.stdout, text)
}

func (t termOutput) Display(data, metadata map[string]any, displayID string, update bool) {
	if s, ok := data["text/plain"].(string); ok {
		fmt.Fprintln(t.stdout, s)
	}
}

func (t termOutput) Clear(wait bool) {}

func (t termOutput) Page(data map[string]any) {
	if s, ok := data["text/plain"].(string); ok {
		fmt.Fprint(t.stdout, s)
	}
}

// tracebackOf returns the error's traceback lines, or its message.
func tracebackOf(err error) []string {
	var tb interface{ Traceback() []string }
	if errors.As(err, &tb) {
		return tb.Traceback()
	}
	return []string{err.Error()}
}

// cmdRun evaluates a script (.sf) or the code cells of a notebook (.ipynb)
// in one session, printing every displayed value. On the first error it
// prints FILE:LINE:COL: message, the source line and a caret line, and
// returns 1.
func cmdRun(args []string) int {
	if len(args) != 1 {
		fmt.Fprintln(os.Stderr, "usage: semiflow run FILE")
		return 2
	}
	ctx, stop := signal.NotifyContext(context.Background(), os.Interrupt)
	defer stop()
	return runFile(ctx, args[0], os.Stdout, os.Stderr)
}

// runFile is cmdRun with its context and output streams given.
func runFile(ctx context.Context, path string, stdout, stderr io.Writer) int {
	src, err := os.ReadFile(path)
	if err != nil {
		fmt.Fprintln(stderr, "semiflow:", err)
		return 1
	}
	type cell struct{ name, src string }
	var cells []cell
	if strings.EqualFold(filepath.Ext(path), ".ipynb") {
		var nb struct {
			Cells []struct {
				CellType string          `json:"cell_type"`
				Source   json.RawMessage `json:"source"`
			} `json:"cells"`
		}
		if err := json.Unmarshal(src, &nb); err != nil {
			fmt.Fprintf(stderr, "semiflow: %s: not a notebook: %v\n", path, err)
			return 1
		}
		n := 0
		for _, c := range nb.Cells {
			if c.CellType != "code" {
				continue
			}
			n++
			var text string
			var lines []string
			if json.Unmarshal(c.Source, &text) != nil {
				if err := json.Unmarshal(c.Source, &lines); err != nil {
					fmt.Fprintf(stderr, "semiflow: %s: code cell %d: bad source\n", path, n)
					return 1
				}
				text = strings.Join(lines, "")
			}
			cells = append(cells, cell{fmt.Sprintf("%s[%d]", path, n), text})
		}
	} else {
		cells = []cell{{path, string(src)}}
	}

	s := run.NewSession()
	out := termOutput{stdout, stderr}
	for _, c := range cells {
		data, _, err := s.ExecuteNamed(ctx, c.name, c.src, out)
		if err != nil {
			for _, l := range tracebackOf(err) {
				fmt.Fprintln(stderr, l)
			}
			return 1
		}
		if data != nil {
			out.Display(data, nil, "", false)
		}
	}
	return 0
}

// cmdRepl runs an interactive session on the terminal. A statement spanning
// several lines continues while a bracket is open. Ctrl-C interrupts a
// running statement; Ctrl-D (end of input) leaves.
func cmdRepl() int {
	s := run.NewSession()
	out := termOutput{os.Stdout, os.Stderr}
	in := bufio.NewScanner(os.Stdin)
	in.Buffer(make([]byte, 1<<16), 1<<24)

	sigs := make(chan os.Signal, 1)
	signal.Notify(sigs, os.Interrupt)
	defer signal.Stop(sigs)
	var mu sync.Mutex
	var cancel context.CancelFunc
	go func() {
		for range sigs {
			mu.Lock()
			if cancel != nil {
				cancel()
			} else {
				fmt.Fprint(os.Stderr, "\n(Ctrl-D leaves)\n")
			}
			mu.Unlock()
		}
	}()

	fmt.Printf("semiflow %s — help() lists the builtins, Ctrl-D leaves\n", version)
	var buf strings.Builder
	for {
		if buf.Len() == 0 {
			fmt.Print("sf> ")
		} else {
			fmt.Print("... ")
		}
		if !in.Scan() {
			fmt.Println()
			return 0
		}
		buf.WriteString(in.Text())
		buf.WriteByte('\n')
		src := buf.String()
		if st, _ := s.IsComplete(src); st == "incomplete" {
			continue
		}
		buf.Reset()
		if strings.TrimSpace(src) == "" {
			continue
		}
		ctx, c := context.WithCancel(context.Background())
		mu.Lock()
		cancel = c
		mu.Unlock()
		data, _, err := s.Execute(ctx, src, out)
		mu.Lock()
		cancel = nil
		mu.Unlock()
		c()
		if err != nil {
			for _, l := range tracebackOf(err) {
				fmt.Fprintln(os.Stderr, l)
			}
			continue
		}
		if data != nil {
			out.Display(data, nil, "", false)
		}
	}
}
