package main

import (
	"bufio"
	"context"
	"crypto/sha256"
	"encoding/hex"
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"os"
	"os/signal"
	"path/filepath"
	"regexp"
	"strings"
	"sync"
	"syscall"

	"semiflow/lang/builtin"
	"semiflow/lang/run"
	"semiflow/lang/syntax"
)

// termOutput writes a session's output to a terminal: streams as they are,
// displayed values as their text/plain form. With marks set, the output of
// each statement is preceded by a marker line naming the statement (see
// Statement); a statement that shows nothing gets none.
type termOutput struct {
	stdout, stderr io.Writer
	marks          bool
	pending        string // the marker not yet written
}

// markerWidth is the most code points of a statement shown in its marker.
const markerWidth = 60

// Statement records the marker of the statement about to run:
//
//	── line 12 ── sol = propagate(A, hot, [0, 1], crosscheck=true)
//
// its line and its first line of text (shortened to markerWidth, "…"
// where cut). It is written before the statement's first output.
func (t *termOutput) Statement(line int, text string) {
	if !t.marks {
		return
	}
	first, rest, _ := strings.Cut(text, "\n")
	first = strings.TrimRight(first, " \t\r")
	if r := []rune(first); len(r) > markerWidth {
		first = string(r[:markerWidth-1]) + "…"
	} else if strings.TrimSpace(rest) != "" {
		first += " …"
	}
	t.pending = fmt.Sprintf("── line %d ── %s\n", line, first)
}

// mark writes the pending marker, if any.
func (t *termOutput) mark() {
	if t.pending != "" {
		fmt.Fprint(t.stdout, t.pending)
		t.pending = ""
	}
}

func (t *termOutput) Stream(name, text string) {
	t.mark()
	if name == "stderr" {
		fmt.Fprint(t.stderr, text)
		return
	}
	fmt.Fprint(t.stdout, text)
}

// Display prints a bundle's text. An update that empties a display (a
// finished progress display) prints nothing: a terminal cannot take back
// what it printed.
func (t *termOutput) Display(data, metadata map[string]any, displayID string, update bool) {
	if s, ok := data["text/plain"].(string); ok && !(update && s == "") {
		t.mark()
		fmt.Fprintln(t.stdout, s)
	}
}

func (t *termOutput) Clear(wait bool) {}

func (t *termOutput) Page(data map[string]any) {
	if s, ok := data["text/plain"].(string); ok {
		t.mark()
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

// colouredTraceback returns the error's report in syntax.Coloured, or its
// plain traceback when it has no styled form.
func colouredTraceback(err error) []string {
	var l interface{ Lines(syntax.Style) []string }
	if errors.As(err, &l) {
		return l.Lines(syntax.Coloured)
	}
	return tracebackOf(err)
}

// reportFor is the error's report for w: in colour on a terminal (unless
// NO_COLOR is set or TERM is dumb), plain text otherwise.
func reportFor(w io.Writer, err error) []string {
	if f, ok := w.(*os.File); ok && os.Getenv("NO_COLOR") == "" && os.Getenv("TERM") != "dumb" {
		if st, e := f.Stat(); e == nil && st.Mode()&os.ModeCharDevice != 0 {
			return colouredTraceback(err)
		}
	}
	return tracebackOf(err)
}

// errorNameOf returns the error's class (the notebook's ename).
func errorNameOf(err error) string {
	var n interface{ ErrorName() string }
	if errors.As(err, &n) {
		return n.ErrorName()
	}
	return "failure"
}

const runUsage = `usage: semiflow run [--allow-errors] [-o OUT.ipynb] FILE
  FILE.sf      evaluate a script, printing each statement's value after a
               line "── line N ── statement" naming the statement
  FILE.ipynb   execute the notebook's code cells in order in one session and
               write the notebook back (to OUT.ipynb with -o) with outputs
`

// cmdRun evaluates a script (.sf) or a notebook (.ipynb).
//
// A script's statements run in one session and every displayed value is
// printed, each statement's output after a marker line naming it
// (termOutput.Statement); on the first error it prints the error report
// (FILE:LINE:COL: message, the numbered source line, carets and class) on
// stderr and returns 1.
//
// A notebook's code cells run in order in one session, every cell even
// after an error, and the notebook is written back in place (or to the -o
// file) with the outputs, as nbformat 4.5. The exit status is 1 when a
// cell failed, unless --allow-errors is given.
func cmdRun(args []string) int {
	var path, outPath string
	allowErrors := false
	for i := 0; i < len(args); i++ {
		switch a := args[i]; {
		case a == "--allow-errors" || a == "-allow-errors":
			allowErrors = true
		case a == "-o" || a == "--output" || a == "-output":
			if i+1 == len(args) {
				fmt.Fprint(os.Stderr, "semiflow run: -o needs a file name\n"+runUsage)
				return 2
			}
			i++
			outPath = args[i]
		case strings.HasPrefix(a, "-o="), strings.HasPrefix(a, "--output="):
			outPath = a[strings.IndexByte(a, '=')+1:]
		case a == "-h" || a == "--help" || a == "-help":
			fmt.Print(runUsage)
			return 0
		case strings.HasPrefix(a, "-") && a != "-":
			fmt.Fprintf(os.Stderr, "semiflow run: unknown flag %s\n%s", a, runUsage)
			return 2
		default:
			if path != "" {
				fmt.Fprint(os.Stderr, "semiflow run: one file at a time\n"+runUsage)
				return 2
			}
			path = a
		}
	}
	if path == "" {
		fmt.Fprint(os.Stderr, runUsage)
		return 2
	}
	ctx, stop := signal.NotifyContext(context.Background(), os.Interrupt)
	defer stop()
	if isNotebook(path) {
		if outPath == "" {
			outPath = path
		}
		return runNotebook(ctx, path, outPath, allowErrors, os.Stderr)
	}
	if outPath != "" || allowErrors {
		fmt.Fprint(os.Stderr, "semiflow run: -o and --allow-errors apply to notebooks (.ipynb) only\n")
		return 2
	}
	return runFile(ctx, path, os.Stdout, os.Stderr)
}

func isNotebook(path string) bool { return strings.EqualFold(filepath.Ext(path), ".ipynb") }

// maxSourceBytes bounds a script or notebook that run reads: far above any
// real one (a notebook with its figures is a few MB), and a bound on what a
// mistaken path can make the process hold.
const maxSourceBytes = 256 << 20

// readRegular reads the script or notebook at path, refusing anything but
// a regular file: a directory, a FIFO (whose read would wait for a writer
// for ever), a device or a socket gets an error naming what it is. The
// file is checked before it is opened and again after a non-blocking open,
// so a FIFO put in its place between the two cannot block either; a file
// larger than maxSourceBytes is refused before it is read.
func readRegular(path string) ([]byte, error) {
	st, err := os.Stat(path)
	if err != nil {
		return nil, err
	}
	if err := regularFile(path, st); err != nil {
		return nil, err
	}
	f, err := os.OpenFile(path, os.O_RDONLY|syscall.O_NONBLOCK, 0)
	if err != nil {
		return nil, err
	}
	defer f.Close()
	if st, err = f.Stat(); err != nil {
		return nil, err
	}
	if err := regularFile(path, st); err != nil {
		return nil, err
	}
	if st.Size() > maxSourceBytes {
		return nil, fmt.Errorf("%s: %d bytes, larger than the %d MiB a script or notebook may have", path, st.Size(), maxSourceBytes>>20)
	}
	b, err := io.ReadAll(io.LimitReader(f, maxSourceBytes+1))
	if err == nil && len(b) > maxSourceBytes {
		err = fmt.Errorf("%s: grew past the %d MiB a script or notebook may have while being read", path, maxSourceBytes>>20)
	}
	return b, err
}

// regularFile returns an error naming what path is unless st describes a
// regular file.
func regularFile(path string, st os.FileInfo) error {
	if st.Mode().IsRegular() {
		return nil
	}
	return fmt.Errorf("%s: is %s; only a regular file is run", path, builtin.FileKind(st.Mode()))
}

// runFile evaluates a script in one session, printing every displayed
// value, and stops at the first error (status 1).
func runFile(ctx context.Context, path string, stdout, stderr io.Writer) int {
	src, err := readRegular(path)
	if err != nil {
		fmt.Fprintln(stderr, "semiflow:", err)
		return 1
	}
	s := run.NewSession()
	out := &termOutput{stdout: stdout, stderr: stderr, marks: true}
	data, _, err := s.ExecuteNamed(ctx, path, string(src), out)
	if err != nil {
		out.pending = "" // the report names the statement itself
		for _, l := range reportFor(stderr, err) {
			fmt.Fprintln(stderr, l)
		}
		return 1
	}
	if data != nil {
		out.Display(data, nil, "", false)
	}
	return 0
}

// cmdRepl runs an interactive session on the terminal. A statement spanning
// several lines continues while a bracket is open. Ctrl-C interrupts a
// running statement; Ctrl-D (end of input) leaves.
func cmdRepl() int {
	s := run.NewSession()
	out := &termOutput{stdout: os.Stdout, stderr: os.Stderr}
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
			for _, l := range reportFor(os.Stderr, err) {
				fmt.Fprintln(os.Stderr, l)
			}
			continue
		}
		if data != nil {
			out.Display(data, nil, "", false)
		}
	}
}

// The notebook's language, as the kernel reports it in kernel_info.
var (
	nbKernelspec   = map[string]any{"name": "semiflow", "display_name": "Semiflow", "language": "semiflow"}
	nbLanguageInfo = map[string]any{"name": "semiflow", "version": version, "mimetype": "text/x-semiflow", "file_extension": ".sf",
		"pygments_lexer": "text", "codemirror_mode": "semiflow"}
)

// nbOutput collects the outputs of one code cell in nbformat 4 form, as a
// notebook front end would save them: consecutive stream texts of the same
// name merged, displays with an id updated in place (wherever they are in
// the notebook), clear_output honoured.
type nbOutput struct {
	outputs   []map[string]any
	clearWait bool
	ids       map[string][]map[string]any // display id → the outputs showing it
}

func (o *nbOutput) pending() {
	if o.clearWait {
		o.clearWait = false
		o.outputs = nil
	}
}

func (o *nbOutput) Stream(name, text string) {
	o.pending()
	if n := len(o.outputs); n > 0 {
		last := o.outputs[n-1]
		if last["output_type"] == "stream" && last["name"] == name {
			last["text"] = last["text"].(string) + text
			return
		}
	}
	o.outputs = append(o.outputs, map[string]any{"output_type": "stream", "name": name, "text": text})
}

func (o *nbOutput) Display(data, metadata map[string]any, displayID string, update bool) {
	md := outputMetadata(metadata)
	if update {
		for _, out := range o.ids[displayID] {
			out["data"] = data
			out["metadata"] = md
		}
		return
	}
	o.pending()
	out := map[string]any{"output_type": "display_data", "data": data, "metadata": md}
	o.outputs = append(o.outputs, out)
	if displayID != "" {
		o.ids[displayID] = append(o.ids[displayID], out)
	}
}

func (o *nbOutput) Clear(wait bool) {
	if wait {
		o.clearWait = true
		return
	}
	o.outputs = nil
	o.clearWait = false
}

// Page shows pager text as a display: a saved notebook has no pager.
func (o *nbOutput) Page(data map[string]any) { o.Display(data, nil, "", false) }

// outputMetadata is an output's metadata: the value's own (display.Metadata:
// under "semiflow" the release, the type and, for results that record it,
// method, tolerance and error estimates), with the release always present
// (also on stream-like displays that carry no metadata).
func outputMetadata(metadata map[string]any) map[string]any {
	md := map[string]any{}
	for k, v := range metadata {
		md[k] = v
	}
	sf := map[string]any{}
	if old, ok := md["semiflow"].(map[string]any); ok {
		for k, v := range old {
			sf[k] = v
		}
	}
	if _, ok := sf["version"]; !ok {
		sf["version"] = version
	}
	md["semiflow"] = sf
	return md
}

// runNotebook executes the code cells of the notebook at path in one
// session and writes it, with the outputs, to outPath. Errors are recorded
// as error outputs and reported on stderr; the status is 1 when a cell
// failed (0 with allowErrors) and when the notebook cannot be read or
// written.
func runNotebook(ctx context.Context, path, outPath string, allowErrors bool, stderr io.Writer) int {
	src, err := readRegular(path)
	if err != nil {
		fmt.Fprintln(stderr, "semiflow:", err)
		return 1
	}
	nb, err := decodeNotebook(src)
	if err != nil {
		fmt.Fprintf(stderr, "semiflow: %s: %v\n", path, err)
		return 1
	}
	cells := nb["cells"].([]any)

	s := run.NewSession()
	ids := map[string][]map[string]any{}
	count, failed := 0, 0
	for i, c := range cells {
		cell := c.(map[string]any)
		if cell["cell_type"] != "code" {
			continue
		}
		text := joinSource(cell["source"])
		cell["outputs"] = []any{}
		cell["execution_count"] = nil
		if strings.TrimSpace(text) == "" {
			continue // as front ends do: an empty cell is not executed
		}
		count++
		cell["execution_count"] = count
		out := &nbOutput{ids: ids}
		name := fmt.Sprintf("cell[%d]", count)
		data, md, err := s.ExecuteNamed(ctx, name, text, out)
		out.pending()
		if err != nil {
			failed++
			tb := tracebackOf(err)
			fmt.Fprintf(stderr, "%s: cell %d (In [%d]) failed:\n", path, i+1, count)
			for _, l := range tb {
				fmt.Fprintln(stderr, "  "+l)
			}
			out.outputs = append(out.outputs, map[string]any{"output_type": "error",
				"ename": errorNameOf(err), "evalue": err.Error(), "traceback": colouredTraceback(err)})
		} else if data != nil {
			out.outputs = append(out.outputs, map[string]any{"output_type": "execute_result",
				"execution_count": count, "data": data, "metadata": outputMetadata(md)})
		}
		outs := make([]any, len(out.outputs))
		for k, o := range out.outputs {
			outs[k] = o
		}
		cell["outputs"] = outs
		if ctx.Err() != nil {
			fmt.Fprintln(stderr, "semiflow: interrupted; the remaining cells are not run")
			break
		}
	}

	// Multi-line strings are written as lists of lines, as nbformat does.
	for _, c := range cells {
		cell := c.(map[string]any)
		cell["source"] = splitLines(joinSource(cell["source"]))
		if outs, ok := cell["outputs"].([]any); ok {
			for _, o := range outs {
				out := o.(map[string]any)
				if t, ok := out["text"].(string); ok {
					out["text"] = splitLines(t)
				}
				if d, ok := out["data"].(map[string]any); ok {
					d2 := map[string]any{}
					for k, v := range d {
						if s, ok := v.(string); ok && !isJSONMime(k) {
							d2[k] = splitLines(s)
						} else {
							d2[k] = v
						}
					}
					out["data"] = d2
				}
			}
		}
	}
	if err := writeNotebook(outPath, nb); err != nil {
		fmt.Fprintln(stderr, "semiflow:", err)
		return 1
	}
	fmt.Fprintf(stderr, "semiflow: wrote %s: %d code cells run, %d failed\n", outPath, count, failed)
	if failed > 0 && !allowErrors {
		return 1
	}
	return 0
}

// isJSONMime reports whether a MIME type's data is JSON, which nbformat
// stores as it is rather than as lines of text.
func isJSONMime(mime string) bool {
	return mime == "application/json" || strings.HasSuffix(mime, "+json")
}

// decodeNotebook reads an nbformat 4 notebook and brings it to 4.5: every
// cell gets an id (kept when it has one), the metadata names the semiflow
// kernel and language, and attachments, metadata and sources are kept.
func decodeNotebook(src []byte) (map[string]any, error) {
	d := json.NewDecoder(strings.NewReader(string(src)))
	d.UseNumber()
	var nb map[string]any
	if err := d.Decode(&nb); err != nil {
		return nil, fmt.Errorf("not a notebook: %v", err)
	}
	if v, _ := nb["nbformat"].(json.Number); v.String() != "4" {
		return nil, fmt.Errorf("not an nbformat 4 notebook (nbformat %v)", nb["nbformat"])
	}
	cells, ok := nb["cells"].([]any)
	if !ok {
		return nil, errors.New("not a notebook: no cells list")
	}
	nb["nbformat_minor"] = 5
	md, _ := nb["metadata"].(map[string]any)
	if md == nil {
		md = map[string]any{}
	}
	md["kernelspec"] = nbKernelspec
	md["language_info"] = nbLanguageInfo
	nb["metadata"] = md

	used := map[string]bool{}
	for _, c := range cells {
		if cell, ok := c.(map[string]any); ok {
			if id, ok := cell["id"].(string); ok && validCellID.MatchString(id) && !used[id] {
				used[id] = true
			} else {
				delete(cell, "id")
			}
		}
	}
	for i, c := range cells {
		cell, ok := c.(map[string]any)
		if !ok {
			return nil, fmt.Errorf("cell %d is not an object", i+1)
		}
		switch cell["cell_type"] {
		case "code", "markdown", "raw":
		default:
			return nil, fmt.Errorf("cell %d: unknown cell_type %v", i+1, cell["cell_type"])
		}
		if _, ok := cell["metadata"].(map[string]any); !ok {
			cell["metadata"] = map[string]any{}
		}
		if _, ok := cell["id"]; !ok {
			// A stable id from the cell's position and text, so that running a
			// notebook twice gives the same file.
			for salt := 0; ; salt++ {
				h := sha256.Sum256([]byte(fmt.Sprintf("%d\x00%d\x00%s", i, salt, joinSource(cell["source"]))))
				id := hex.EncodeToString(h[:4])
				if !used[id] {
					used[id] = true
					cell["id"] = id
					break
				}
			}
		}
	}
	return nb, nil
}

var validCellID = regexp.MustCompile(`^[a-zA-Z0-9-_]{1,64}$`)

// joinSource returns a cell's source, stored as a string or a list of lines.
func joinSource(v any) string {
	switch s := v.(type) {
	case string:
		return s
	case []any:
		var b strings.Builder
		for _, l := range s {
			if t, ok := l.(string); ok {
				b.WriteString(t)
			}
		}
		return b.String()
	}
	return ""
}

// splitLines splits text after each newline, as nbformat stores multi-line
// strings: joining the lines gives the text back.
func splitLines(s string) []string {
	lines := strings.SplitAfter(s, "\n")
	if lines[len(lines)-1] == "" {
		lines = lines[:len(lines)-1]
	}
	if lines == nil {
		lines = []string{}
	}
	return lines
}

// writeNotebook writes nb as nbformat's writer does (keys sorted, one-space
// indent, a final newline), through a temporary file renamed into place.
func writeNotebook(path string, nb map[string]any) error {
	var b strings.Builder
	enc := json.NewEncoder(&b)
	enc.SetEscapeHTML(false)
	enc.SetIndent("", " ")
	if err := enc.Encode(nb); err != nil {
		return err
	}
	tmp, err := os.CreateTemp(filepath.Dir(path), ".semiflow-*.ipynb")
	if err != nil {
		return err
	}
	if _, err := tmp.WriteString(b.String()); err != nil {
		tmp.Close()
		os.Remove(tmp.Name())
		return err
	}
	if err := tmp.Close(); err != nil {
		os.Remove(tmp.Name())
		return err
	}
	if st, err := os.Stat(path); err == nil {
		os.Chmod(tmp.Name(), st.Mode().Perm())
	} else {
		os.Chmod(tmp.Name(), 0o644)
	}
	return os.Rename(tmp.Name(), path)
}
