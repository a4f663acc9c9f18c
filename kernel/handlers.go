package kernel

import (
	"context"
	"encoding/json"
	"fmt"
	"path"
	"runtime/debug"
	"strings"
	"sync"
	"time"
	"unicode/utf8"

	"semiflow/kernel/wire"
)

// executor runs shell requests one at a time, in arrival order. An
// execute request that arrived before a failure with stop_on_error was
// reported is aborted; one that arrived after runs.
func (k *Kernel) executor() {
	for {
		q, ok := k.queue.pop()
		if !ok {
			select {
			case <-k.queue.ready:
				continue
			case <-k.ctx.Done():
				return
			}
		}
		abort := q.seq <= k.abortUpTo && q.m.Header.MsgType == wire.ExecuteRequest
		k.handle(q.s, q.m, abort)
	}
}

// handleControl serves the control channel directly, ahead of the queue.
// Requests that touch the session (execute, complete, inspect, is_complete,
// history) join the execution queue instead, so that the control channel
// stays free for interrupts; their replies still go out on control.
func (k *Kernel) handleControl(m *wire.Message, seq int64) {
	switch m.Header.MsgType {
	case wire.ExecuteRequest, wire.CompleteRequest, wire.InspectRequest, wire.IsCompleteRequest, wire.HistoryRequest:
		k.enqueue(k.control, m, seq)
		return
	}
	if m.Header.MsgType == wire.InterruptRequest {
		k.publish(m, wire.Status, map[string]any{"execution_state": "busy"})
		k.Interrupt()
		k.send(k.control, m, wire.InterruptReply, map[string]any{"status": "ok"})
		k.publish(m, wire.Status, map[string]any{"execution_state": "idle"})
		return
	}
	k.handle(k.control, m, false)
}

// handle answers one request between busy and idle status messages.
func (k *Kernel) handle(s *sock, m *wire.Message, abort bool) {
	t := m.Header.MsgType
	switch t {
	case wire.CommOpen, wire.CommMsg, wire.CommClose:
		k.log.Printf("%s: ignoring %s (no comm targets)", s.name, t)
		return
	}
	k.publish(m, wire.Status, map[string]any{"execution_state": "busy"})
	defer k.publish(m, wire.Status, map[string]any{"execution_state": "idle"})
	defer func() {
		if r := recover(); r != nil {
			k.panics.Add(1)
			k.log.Printf("%s: panic handling %s: %v\n%s", s.name, t, r, debug.Stack())
			k.send(s, m, replyTypeOr(t), errorContent(classInternal, fmt.Sprint(r), nil))
		}
	}()
	if abort {
		// Not run, so no execution count: a front end shows the cell's
		// prompt empty ("In [ ]") rather than as if it ran.
		k.send(s, m, replyTypeOr(t), map[string]any{"status": "aborted", "execution_count": nil})
		return
	}
	switch t {
	case wire.ExecuteRequest, wire.CompleteRequest, wire.InspectRequest, wire.IsCompleteRequest, wire.HistoryRequest:
		// The session's state belongs to one request at a time, even when
		// a client sends these on control.
		k.execMu.Lock()
		defer k.execMu.Unlock()
	}
	var err error
	switch t {
	case wire.KernelInfoRequest:
		k.send(s, m, wire.KernelInfoReply, k.kernelInfo())
	case wire.ExecuteRequest:
		err = k.execute(s, m)
	case wire.CompleteRequest:
		err = k.complete(s, m)
	case wire.InspectRequest:
		err = k.inspect(s, m)
	case wire.IsCompleteRequest:
		err = k.isComplete(s, m)
	case wire.HistoryRequest:
		err = k.historyReq(s, m)
	case wire.CommInfoRequest:
		k.send(s, m, wire.CommInfoReply, map[string]any{"status": "ok", "comms": map[string]any{}})
	case wire.ShutdownRequest:
		var c struct {
			Restart bool `json:"restart"`
		}
		err = json.Unmarshal(m.Content, &c)
		if err == nil {
			k.send(s, m, wire.ShutdownReply, map[string]any{"status": "ok", "restart": c.Restart})
			k.stop(c.Restart)
		}
	case wire.InterruptRequest: // also accepted on shell
		k.Interrupt()
		k.send(s, m, wire.InterruptReply, map[string]any{"status": "ok"})
	default:
		if rt := wire.ReplyType(t); rt != "" {
			k.log.Printf("%s: unknown message type %q; replying with an error", s.name, t)
			k.send(s, m, rt, errorContent(classUnknownRequest, fmt.Sprintf("the kernel does not handle %q", t), nil))
		} else {
			k.log.Printf("%s: unknown message type %q; ignored", s.name, t)
		}
	}
	if err != nil {
		k.log.Printf("%s: bad %s content: %v", s.name, t, err)
		k.send(s, m, replyTypeOr(t), errorContent(classBadRequest, "malformed "+t+" content: "+err.Error(), nil))
	}
}

func replyTypeOr(t string) string {
	if rt := wire.ReplyType(t); rt != "" {
		return rt
	}
	return t + "_reply"
}

func (k *Kernel) kernelInfo() map[string]any {
	links := k.cfg.HelpLinks
	if links == nil {
		links = []HelpLink{}
	}
	return map[string]any{
		"status":                 "ok",
		"protocol_version":       wire.ProtocolVersion,
		"implementation":         "semiflow",
		"implementation_version": k.cfg.Version,
		"language_info": map[string]any{
			"name":           "semiflow",
			"version":        k.cfg.Version,
			"mimetype":       "text/x-semiflow",
			"file_extension": ".sf",
			// Pygments has no lexer for the language: name its plain-text
			// one, so nbconvert and the console do not warn at each start.
			// The notebook highlights with the CodeMirror mode that the
			// kernelspec's kernel.js defines.
			"pygments_lexer":  "text",
			"codemirror_mode": "semiflow",
		},
		"banner":     k.cfg.Banner,
		"help_links": links,
		"debugger":   false,
	}
}

type executeRequest struct {
	Code            string            `json:"code"`
	Silent          bool              `json:"silent"`
	StoreHistory    *bool             `json:"store_history"`
	UserExpressions map[string]string `json:"user_expressions"`
	AllowStdin      bool              `json:"allow_stdin"`
	StopOnError     *bool             `json:"stop_on_error"`
}

// The classes of the errors the kernel itself reports, in the language's
// words (lang/LANGUAGE.md, "Errors").
const (
	classInterrupted    = "interrupted"
	classInternal       = "internal fault"
	classUnknownRequest = "unknown request"
	classBadRequest     = "malformed request"
	classOther          = "failure" // an evaluator error that names no class
)

// sgrClass is the ANSI SGR colour of an error's class in a traceback: a
// badge in bold white on deep red (24-bit colour), as the language's own
// reports begin; front ends render ANSI colours in error outputs.
const sgrClass = "\x1b[1;38;2;255;255;255;48;2;176;32;48m"

// classLine is a traceback line that starts with the class as a badge.
func classLine(class, text string) string { return sgrClass + " " + class + " \x1b[0m " + text }

// interruptedError is the error of a cell stopped by an interrupt.
type interruptedError struct{}

func (interruptedError) Error() string     { return "the cell was interrupted" }
func (interruptedError) ErrorName() string { return classInterrupted }
func (interruptedError) Traceback() []string {
	return []string{classLine(classInterrupted, "the cell was stopped; what its finished statements assigned is kept")}
}

// panicError is an evaluator panic turned into an error.
type panicError struct{ v any }

func (p panicError) Error() string     { return fmt.Sprintf("internal error: %v", p.v) }
func (p panicError) ErrorName() string { return classInternal }
func (p panicError) Traceback() []string {
	return []string{classLine(classInternal, fmt.Sprint(p.v)), "(the kernel recovered; the session's variables are kept; please report the cell)"}
}

func (k *Kernel) execute(s *sock, m *wire.Message) error {
	var c executeRequest
	if err := json.Unmarshal(m.Content, &c); err != nil {
		return err
	}
	store := c.StoreHistory == nil || *c.StoreHistory
	stopOnError := c.StopOnError == nil || *c.StopOnError
	if c.Silent {
		store = false
	}
	if store {
		k.count++
	}
	count := k.count
	// An interrupt from here on stops this cell, also one that arrives
	// between execute_input and the start of the evaluation.
	ctx, done := k.cellContext()
	defer done()
	if !c.Silent {
		k.publish(m, wire.ExecuteInput, map[string]any{"code": c.Code, "execution_count": count})
	}
	out := &output{k: k, parent: m, silent: c.Silent}
	data, md, err := k.run(ctx, c.Code, out)
	out.close()
	if store {
		k.history = append(k.history, histEntry{line: count, input: c.Code, output: plainText(data)})
	}
	if err != nil {
		if stopOnError {
			// Before the failure is reported: a request sent in answer to
			// it cannot have arrived yet.
			k.abortUpTo = k.arrived.Load()
		}
		ename, evalue, tb := describe(err)
		if !c.Silent {
			k.publish(m, wire.Error, map[string]any{"ename": ename, "evalue": evalue, "traceback": tb})
		}
		reply := errorContent(ename, evalue, tb)
		reply["execution_count"] = count
		k.send(s, m, wire.ExecuteReply, reply)
		return nil
	}
	if data != nil && !c.Silent {
		k.publish(m, wire.ExecuteResult, map[string]any{"execution_count": count, "data": data, "metadata": orMap(md)})
	}
	ue := map[string]any{}
	for name, expr := range c.UserExpressions {
		ue[name] = k.userExpression(ctx, expr)
	}
	k.send(s, m, wire.ExecuteReply, map[string]any{
		"status":           "ok",
		"execution_count":  count,
		"payload":          out.payloads(),
		"user_expressions": ue,
	})
	return nil
}

func (k *Kernel) userExpression(ctx context.Context, expr string) map[string]any {
	data, md, err := k.run(ctx, expr, discard{})
	if err != nil {
		ename, evalue, tb := describe(err)
		return errorContent(ename, evalue, tb)
	}
	if data == nil {
		data = map[string]any{"text/plain": ""}
	}
	return map[string]any{"status": "ok", "data": data, "metadata": orMap(md)}
}

// cellContext returns the context of a request that runs code, which
// Interrupt cancels until done is called.
func (k *Kernel) cellContext() (ctx context.Context, done func()) {
	ctx, cancel := context.WithCancel(k.ctx)
	k.mu.Lock()
	k.cellCancel = cancel
	k.mu.Unlock()
	return ctx, func() {
		k.mu.Lock()
		k.cellCancel = nil
		k.mu.Unlock()
		cancel()
	}
}

// strayWaiting is written on stderr by a cell that waits for an interrupted
// cell still running.
const strayWaiting = "[semiflow: waiting for the interrupted cell before this one, still in a call that could not be stopped; interrupt again to give up waiting]\n"

// run evaluates code under ctx (from cellContext), turning a panic into an
// error and an interrupt into an interruptedError within the grace period.
func (k *Kernel) run(ctx context.Context, code string, out Output) (data, md map[string]any, err error) {
	if k.stray != nil {
		// An earlier interrupted cell has not returned yet: the session is
		// still in use, so this cell waits for it, saying so, and an
		// interrupt stops the wait at once.
		select {
		case <-k.stray:
			k.stray = nil
		default:
			out.Stream("stderr", strayWaiting)
			select {
			case <-k.stray:
				k.stray = nil
			case <-ctx.Done():
				return nil, nil, interruptedError{}
			}
		}
	}
	type result struct {
		data, md map[string]any
		err      error
	}
	ch := make(chan result, 1)
	done := make(chan struct{})
	go func() {
		defer close(done)
		defer func() {
			if r := recover(); r != nil {
				k.panics.Add(1)
				k.log.Printf("evaluator panic: %v\n%s", r, debug.Stack())
				ch <- result{err: panicError{r}}
			}
		}()
		d, m, e := k.eval.Execute(ctx, code, out)
		ch <- result{d, m, e}
	}()
	var r result
	select {
	case r = <-ch:
	case <-ctx.Done():
		select {
		case r = <-ch:
		case <-time.After(k.cfg.InterruptGrace):
			k.log.Printf("interrupted cell did not stop within %v; replying now, next cell waits for it", k.cfg.InterruptGrace)
			k.stray = done
			return nil, nil, interruptedError{}
		}
	}
	if ctx.Err() != nil && r.err != nil {
		if _, isPanic := r.err.(panicError); !isPanic {
			r.err = interruptedError{}
		}
	}
	return r.data, r.md, r.err
}

func describe(err error) (ename, evalue string, tb []string) {
	if e, ok := err.(EvalError); ok {
		tb = e.Traceback()
		if tb == nil {
			tb = []string{}
		}
		return e.ErrorName(), e.Error(), tb
	}
	return classOther, err.Error(), []string{classLine(classOther, err.Error())}
}

func orMap(m map[string]any) map[string]any {
	if m == nil {
		return map[string]any{}
	}
	return m
}

func plainText(data map[string]any) string {
	if s, ok := data["text/plain"].(string); ok {
		return s
	}
	return ""
}

// safe calls f, turning a panic into an internal-fault reply.
func (k *Kernel) safe(f func()) (err error) {
	defer func() {
		if r := recover(); r != nil {
			k.panics.Add(1)
			k.log.Printf("evaluator panic: %v\n%s", r, debug.Stack())
			err = panicError{r}
		}
	}()
	f()
	return nil
}

func (k *Kernel) complete(s *sock, m *wire.Message) error {
	var c struct {
		Code      string `json:"code"`
		CursorPos *int   `json:"cursor_pos"`
	}
	if err := json.Unmarshal(m.Content, &c); err != nil {
		return err
	}
	cur := cursor(c.Code, c.CursorPos)
	var matches []string
	var start, end int
	if err := k.safe(func() { matches, start, end = k.eval.Complete(c.Code, cur) }); err != nil {
		k.send(s, m, wire.CompleteReply, errorContent(classInternal, err.Error(), nil))
		return nil
	}
	if matches == nil {
		matches = []string{}
	}
	k.send(s, m, wire.CompleteReply, map[string]any{
		"status": "ok", "matches": matches, "cursor_start": start, "cursor_end": end, "metadata": map[string]any{},
	})
	return nil
}

// cursor clamps a cursor position (in code points) to the code; a missing
// one means the end.
func cursor(code string, pos *int) int {
	n := utf8.RuneCountInString(code)
	if pos == nil || *pos > n {
		return n
	}
	return max(*pos, 0)
}

func (k *Kernel) inspect(s *sock, m *wire.Message) error {
	var c struct {
		Code        string `json:"code"`
		CursorPos   *int   `json:"cursor_pos"`
		DetailLevel int    `json:"detail_level"`
	}
	if err := json.Unmarshal(m.Content, &c); err != nil {
		return err
	}
	var data map[string]any
	var found bool
	if err := k.safe(func() { data, found = k.eval.Inspect(c.Code, cursor(c.Code, c.CursorPos), c.DetailLevel) }); err != nil {
		k.send(s, m, wire.InspectReply, errorContent(classInternal, err.Error(), nil))
		return nil
	}
	k.send(s, m, wire.InspectReply, map[string]any{"status": "ok", "found": found, "data": orMap(data), "metadata": map[string]any{}})
	return nil
}

func (k *Kernel) isComplete(s *sock, m *wire.Message) error {
	var c struct {
		Code string `json:"code"`
	}
	if err := json.Unmarshal(m.Content, &c); err != nil {
		return err
	}
	var status, indent string
	if err := k.safe(func() { status, indent = k.eval.IsComplete(c.Code) }); err != nil {
		status = "unknown"
	}
	reply := map[string]any{"status": status}
	if status == "incomplete" {
		reply["indent"] = indent
	}
	k.send(s, m, wire.IsCompleteReply, reply)
	return nil
}

// histEntry is one stored input of this session.
type histEntry struct {
	line          int
	input, output string
}

// sessionNumber is the history session of the running kernel; history
// does not outlive the process.
const sessionNumber = 1

func (k *Kernel) historyReq(s *sock, m *wire.Message) error {
	var c struct {
		Output     bool   `json:"output"`
		AccessType string `json:"hist_access_type"`
		Session    int    `json:"session"`
		Start      int    `json:"start"`
		Stop       *int   `json:"stop"`
		N          *int   `json:"n"`
		Pattern    string `json:"pattern"`
		Unique     bool   `json:"unique"`
	}
	if err := json.Unmarshal(m.Content, &c); err != nil {
		return err
	}
	var sel []histEntry
	switch c.AccessType {
	case "tail":
		sel = k.history
		if c.N != nil && *c.N >= 0 && *c.N < len(sel) {
			sel = sel[len(sel)-*c.N:]
		}
	case "range":
		if c.Session == 0 || c.Session == sessionNumber {
			for _, h := range k.history {
				if h.line >= c.Start && (c.Stop == nil || h.line < *c.Stop) {
					sel = append(sel, h)
				}
			}
		}
	case "search":
		pat := c.Pattern
		if pat == "" {
			pat = "*"
		}
		if _, err := path.Match(pat, ""); err != nil {
			return fmt.Errorf("pattern %q: %v", pat, err)
		}
		seen := map[string]bool{}
		for i := len(k.history) - 1; i >= 0; i-- {
			h := k.history[i]
			if ok, _ := path.Match(pat, h.input); !ok {
				continue
			}
			if c.Unique && seen[h.input] {
				continue
			}
			seen[h.input] = true
			sel = append([]histEntry{h}, sel...)
			if c.N != nil && *c.N > 0 && len(sel) == *c.N {
				break
			}
		}
	default:
		return fmt.Errorf("hist_access_type %q is not tail, range or search", c.AccessType)
	}
	list := make([]any, 0, len(sel))
	for _, h := range sel {
		if c.Output {
			var o any
			if h.output != "" {
				o = h.output
			}
			list = append(list, []any{sessionNumber, h.line, []any{h.input, o}})
		} else {
			list = append(list, []any{sessionNumber, h.line, h.input})
		}
	}
	k.send(s, m, wire.HistoryReply, map[string]any{"status": "ok", "history": list})
	return nil
}

// output publishes what a running cell emits, with the request as parent.
// After close it ignores everything (a stray goroutine of a finished cell).
//
// Stream text is coalesced: it collects for up to streamDelay, or up to
// streamChunk bytes, and goes out as one message, so a cell printing a
// line at a time sends few messages. The kernel's stream bucket bounds the
// rate; lines beyond it are left out and a line in the stream itself says
// how many. Every other message goes out in order, after the stream text
// before it, and is never dropped.
type output struct {
	k      *Kernel
	parent *wire.Message
	silent bool

	mu      sync.Mutex
	closed  bool
	pages   []any
	name    string // stream of buf
	buf     []byte
	lastNL  bool  // the last text sent on name ended a line
	omitted int64 // lines left out since the last marker
	omitB   int64 // and their bytes
	timer   *time.Timer
}

// Coalescing of stream output.
const (
	streamDelay = 50 * time.Millisecond
	streamChunk = 64 << 10
)

func (o *output) emit(msgType string, content map[string]any) {
	o.mu.Lock()
	defer o.mu.Unlock()
	if o.closed || o.silent {
		return
	}
	o.flushLocked(true)
	o.k.publish(o.parent, msgType, content)
}

func (o *output) Stream(name, text string) {
	if name != "stdout" && name != "stderr" {
		name = "stdout"
	}
	o.mu.Lock()
	defer o.mu.Unlock()
	if o.closed || o.silent || text == "" {
		return
	}
	if name != o.name {
		o.flushLocked(true)
		o.name, o.lastNL = name, true
	}
	keep := o.k.stream.take(len(text))
	if keep < len(text) {
		// Whole lines only: cut after the last newline that fits.
		keep = strings.LastIndexByte(text[:keep], '\n') + 1
		rest := text[keep:]
		n := int64(strings.Count(rest, "\n"))
		if !strings.HasSuffix(rest, "\n") {
			n++
		}
		o.omitted += n
		o.omitB += int64(len(rest))
		o.k.stream.omitted.Add(n)
		text = text[:keep]
	}
	if text != "" {
		o.marker()
		o.buf = append(o.buf, text...)
	}
	if len(o.buf) >= streamChunk {
		o.flushLocked(false)
	} else if len(o.buf) > 0 && o.timer == nil {
		o.timer = time.AfterFunc(streamDelay, func() {
			o.mu.Lock()
			defer o.mu.Unlock()
			o.timer = nil
			if !o.closed {
				o.flushLocked(false)
			}
		})
	}
}

// marker appends to buf the line that says how many lines were left out.
func (o *output) marker() {
	if o.omitted == 0 {
		return
	}
	if !o.lastNL && (len(o.buf) == 0 || o.buf[len(o.buf)-1] != '\n') {
		o.buf = append(o.buf, '\n')
	}
	o.buf = fmt.Appendf(o.buf, "[semiflow: %d lines (%d bytes) of output left out here: more than %d KiB/s]\n",
		o.omitted, o.omitB, int(o.k.stream.rate)>>10)
	o.omitted, o.omitB = 0, 0
}

// flushLocked sends the collected stream text; with final, also the marker
// of lines left out since. The caller holds o.mu.
func (o *output) flushLocked(final bool) {
	if final {
		o.marker()
	}
	if len(o.buf) == 0 {
		return
	}
	text := string(o.buf)
	o.buf = o.buf[:0]
	o.lastNL = text[len(text)-1] == '\n'
	o.k.publish(o.parent, wire.Stream, map[string]any{"name": o.name, "text": text})
}

func (o *output) Display(data, metadata map[string]any, displayID string, update bool) {
	c := map[string]any{"data": orMap(data), "metadata": orMap(metadata), "transient": map[string]any{}}
	if displayID != "" {
		c["transient"] = map[string]any{"display_id": displayID}
	}
	t := wire.DisplayData
	if update {
		if displayID == "" {
			o.k.log.Print("update_display_data without a display id; ignored")
			return
		}
		t = wire.UpdateDisplayData
	}
	o.emit(t, c)
}

func (o *output) Clear(wait bool) { o.emit(wire.ClearOutput, map[string]any{"wait": wait}) }

func (o *output) Page(data map[string]any) {
	o.mu.Lock()
	defer o.mu.Unlock()
	if !o.closed {
		o.pages = append(o.pages, map[string]any{"source": "page", "data": orMap(data), "start": 0})
	}
}

// close sends what stream text is left and ignores everything after.
func (o *output) close() {
	o.mu.Lock()
	defer o.mu.Unlock()
	if !o.silent && !o.closed {
		o.flushLocked(true)
	}
	if o.timer != nil {
		o.timer.Stop()
		o.timer = nil
	}
	o.closed = true
}

func (o *output) payloads() []any {
	o.mu.Lock()
	defer o.mu.Unlock()
	if o.pages == nil {
		return []any{}
	}
	return o.pages
}

// discard is the Output of user expressions.
type discard struct{}

func (discard) Stream(string, string)                                {}
func (discard) Display(map[string]any, map[string]any, string, bool) {}
func (discard) Clear(bool)                                           {}
func (discard) Page(map[string]any)                                  {}
