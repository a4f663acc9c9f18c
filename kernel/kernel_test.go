package kernel

import (
	"encoding/json"
	"errors"
	"fmt"
	"net"
	"strings"
	"syscall"
	"testing"
	"time"

	"semiflow/kernel/wire"
)

const wait = 3 * time.Second

type step struct {
	msgType string
	content map[string]any
	control bool
	// reply checks the reply content; iopub is the expected iopub message
	// types of this request, in order (nil: not checked).
	reply func(t *testing.T, c map[string]any)
	iopub []string
	out   func(t *testing.T, ms []*wire.Message)
}

func exec(code string) map[string]any {
	return map[string]any{"code": code, "silent": false, "store_history": true, "user_expressions": map[string]any{}, "allow_stdin": false, "stop_on_error": true}
}

func status(want string) func(*testing.T, map[string]any) {
	return func(t *testing.T, c map[string]any) {
		t.Helper()
		if c["status"] != want {
			t.Errorf("status = %v, want %s (%v)", c["status"], want, c)
		}
	}
}

var busyIdle = []string{"status:busy", "status:idle"}

// Message sequences, each run on a fresh kernel. Expected values follow the
// Jupyter messaging protocol 5.3 specification.
var sequences = []struct {
	name  string
	steps []step
}{
	{"kernel_info", []step{{msgType: wire.KernelInfoRequest, iopub: busyIdle, reply: func(t *testing.T, c map[string]any) {
		li := c["language_info"].(map[string]any)
		if c["protocol_version"] != "5.3" || c["implementation"] != "semiflow" || li["name"] != "semiflow" ||
			li["file_extension"] != ".sf" || li["mimetype"] != "text/x-semiflow" || c["status"] != "ok" {
			t.Errorf("kernel_info = %v", c)
		}
		if _, ok := c["help_links"].([]any); !ok {
			t.Errorf("help_links = %v", c["help_links"])
		}
		// "text" is Pygments' plain-text lexer (pygments.lexers.special);
		// "semiflow" is the CodeMirror mode install/kernel.js defines.
		if li["pygments_lexer"] != "text" || li["codemirror_mode"] != "semiflow" {
			t.Errorf("language_info = %v", li)
		}
	}}}},
	{"kernel_info on control", []step{{msgType: wire.KernelInfoRequest, control: true, iopub: busyIdle, reply: status("ok")}}},
	{"execute result counts", []step{
		{msgType: wire.ExecuteRequest, content: exec("1 + 2"), iopub: []string{"status:busy", "execute_input", "execute_result", "status:idle"},
			reply: func(t *testing.T, c map[string]any) {
				if c["status"] != "ok" || c["execution_count"] != 1.0 {
					t.Errorf("reply = %v", c)
				}
			},
			out: func(t *testing.T, ms []*wire.Message) {
				in, res := content(ms[1]), content(ms[2])
				if in["code"] != "1 + 2" || in["execution_count"] != 1.0 {
					t.Errorf("execute_input = %v", in)
				}
				if res["execution_count"] != 1.0 || res["data"].(map[string]any)["text/plain"] != "1 + 2" {
					t.Errorf("execute_result = %v", res)
				}
				if _, ok := res["metadata"].(map[string]any); !ok {
					t.Errorf("execute_result metadata = %v", res["metadata"])
				}
			}},
		{msgType: wire.ExecuteRequest, content: exec("2"), reply: func(t *testing.T, c map[string]any) {
			if c["execution_count"] != 2.0 {
				t.Errorf("second count = %v", c["execution_count"])
			}
		}},
	}},
	{"streams, display, update, clear, page", []step{
		{msgType: wire.ExecuteRequest, content: exec("print hello"), iopub: []string{"status:busy", "execute_input", "stream", "status:idle"},
			out: func(t *testing.T, ms []*wire.Message) {
				if c := content(ms[2]); c["name"] != "stdout" || c["text"] != "hello\n" {
					t.Errorf("stream = %v", c)
				}
			}},
		{msgType: wire.ExecuteRequest, content: exec("warn careful"), out: func(t *testing.T, ms []*wire.Message) {
			if c := content(ms[2]); c["name"] != "stderr" {
				t.Errorf("stream = %v", c)
			}
		}},
		{msgType: wire.ExecuteRequest, content: exec("show x"), iopub: []string{"status:busy", "execute_input", "display_data", "status:idle"},
			out: func(t *testing.T, ms []*wire.Message) {
				d := content(ms[2])["data"].(map[string]any)
				if d["text/html"] != "<b>x</b>" || d["text/plain"] != "x" {
					t.Errorf("display_data = %v", d)
				}
			}},
		{msgType: wire.ExecuteRequest, content: exec("update d1 second"), iopub: []string{"status:busy", "execute_input", "display_data", "update_display_data", "status:idle"},
			out: func(t *testing.T, ms []*wire.Message) {
				for _, m := range ms[2:4] {
					c := content(m)
					if c["transient"].(map[string]any)["display_id"] != "d1" {
						t.Errorf("%s transient = %v", m.Header.MsgType, c["transient"])
					}
				}
				if d := content(ms[3])["data"].(map[string]any); d["text/plain"] != "second" {
					t.Errorf("update bundle = %v", d)
				}
			}},
		{msgType: wire.ExecuteRequest, content: exec("clear"), iopub: []string{"status:busy", "execute_input", "stream", "clear_output", "status:idle"}},
		{msgType: wire.ExecuteRequest, content: exec("page doc"), reply: func(t *testing.T, c map[string]any) {
			p := c["payload"].([]any)
			if len(p) != 1 || p[0].(map[string]any)["source"] != "page" || p[0].(map[string]any)["data"].(map[string]any)["text/plain"] != "doc" {
				t.Errorf("payload = %v", p)
			}
		}},
	}},
	{"execute error", []step{{msgType: wire.ExecuteRequest, content: exec("fail"), iopub: []string{"status:busy", "execute_input", "error", "status:idle"},
		reply: func(t *testing.T, c map[string]any) {
			if c["status"] != "error" || c["ename"] != "FakeError" || c["evalue"] != "it failed" || len(c["traceback"].([]any)) != 2 {
				t.Errorf("reply = %v", c)
			}
			// The failed cell ran: its reply carries its count.
			if c["execution_count"] != 1.0 {
				t.Errorf("error reply's execution_count = %v, want 1", c["execution_count"])
			}
		},
		out: func(t *testing.T, ms []*wire.Message) {
			if c := content(ms[2]); c["ename"] != "FakeError" || c["evalue"] != "it failed" {
				t.Errorf("error = %v", c)
			}
		}}}},
	{"panic becomes an error and the kernel keeps serving", []step{
		{msgType: wire.ExecuteRequest, content: exec("set a 7")},
		{msgType: wire.ExecuteRequest, content: exec("panic"), reply: func(t *testing.T, c map[string]any) {
			if c["status"] != "error" || c["ename"] != classInternal {
				t.Errorf("reply = %v", c)
			}
		}},
		{msgType: wire.CompleteRequest, content: map[string]any{"code": "crash", "cursor_pos": 5}, reply: status("error")},
		{msgType: wire.ExecuteRequest, content: exec("get a"), reply: status("ok"), out: func(t *testing.T, ms []*wire.Message) {
			if d := content(ms[2])["data"].(map[string]any); d["text/plain"] != "7" {
				t.Errorf("variable lost after a panic: %v", d)
			}
		}},
	}},
	{"silent", []step{
		{msgType: wire.ExecuteRequest, content: map[string]any{"code": "print quiet", "silent": true}, iopub: busyIdle,
			reply: func(t *testing.T, c map[string]any) {
				if c["status"] != "ok" || c["execution_count"] != 0.0 {
					t.Errorf("reply = %v", c)
				}
			}},
		{msgType: wire.ExecuteRequest, content: exec("x"), reply: func(t *testing.T, c map[string]any) {
			if c["execution_count"] != 1.0 {
				t.Errorf("silent cell counted: %v", c["execution_count"])
			}
		}},
	}},
	{"store_history false", []step{
		{msgType: wire.ExecuteRequest, content: map[string]any{"code": "a", "store_history": false}, reply: func(t *testing.T, c map[string]any) {
			if c["execution_count"] != 0.0 {
				t.Errorf("count = %v", c["execution_count"])
			}
		}},
		{msgType: wire.ExecuteRequest, content: exec("b")},
		{msgType: wire.HistoryRequest, content: map[string]any{"hist_access_type": "tail", "n": 10, "output": false, "raw": true}, reply: func(t *testing.T, c map[string]any) {
			h := c["history"].([]any)
			if len(h) != 1 || h[0].([]any)[2] != "b" || h[0].([]any)[1] != 1.0 {
				t.Errorf("history = %v", h)
			}
		}},
	}},
	{"user_expressions", []step{{msgType: wire.ExecuteRequest,
		content: map[string]any{"code": "set v 42", "user_expressions": map[string]any{"good": "get v", "bad": "fail"}},
		reply: func(t *testing.T, c map[string]any) {
			ue := c["user_expressions"].(map[string]any)
			g, b := ue["good"].(map[string]any), ue["bad"].(map[string]any)
			if g["status"] != "ok" || g["data"].(map[string]any)["text/plain"] != "42" {
				t.Errorf("good = %v", g)
			}
			if b["status"] != "error" || b["ename"] != "FakeError" {
				t.Errorf("bad = %v", b)
			}
		}}}},
	{"complete inspect is_complete", []step{
		{msgType: wire.CompleteRequest, content: map[string]any{"code": "x = pa", "cursor_pos": 6}, iopub: busyIdle, reply: func(t *testing.T, c map[string]any) {
			if fmt.Sprint(c["matches"]) != "[page panic]" || c["cursor_start"] != 4.0 || c["cursor_end"] != 6.0 || c["status"] != "ok" {
				t.Errorf("complete = %v", c)
			}
		}},
		// cursor_pos counts code points: "é" is one.
		{msgType: wire.CompleteRequest, content: map[string]any{"code": "é pr", "cursor_pos": 4}, reply: func(t *testing.T, c map[string]any) {
			if fmt.Sprint(c["matches"]) != "[print]" || c["cursor_start"] != 2.0 {
				t.Errorf("complete = %v", c)
			}
		}},
		{msgType: wire.InspectRequest, content: map[string]any{"code": "show", "cursor_pos": 2, "detail_level": 1}, reply: func(t *testing.T, c map[string]any) {
			if c["found"] != true || c["data"].(map[string]any)["text/plain"] != "show: a builtin (detail 1)" {
				t.Errorf("inspect = %v", c)
			}
		}},
		{msgType: wire.InspectRequest, content: map[string]any{"code": "zzz", "cursor_pos": 1}, reply: func(t *testing.T, c map[string]any) {
			if c["found"] != false || c["status"] != "ok" {
				t.Errorf("inspect = %v", c)
			}
		}},
		{msgType: wire.IsCompleteRequest, content: map[string]any{"code": "f("}, reply: func(t *testing.T, c map[string]any) {
			if c["status"] != "incomplete" || c["indent"] != "  " {
				t.Errorf("is_complete = %v", c)
			}
		}},
		{msgType: wire.IsCompleteRequest, content: map[string]any{"code": "1!"}, reply: status("invalid")},
		{msgType: wire.IsCompleteRequest, content: map[string]any{"code": "1"}, reply: status("complete")},
	}},
	{"history", []step{
		{msgType: wire.ExecuteRequest, content: exec("alpha")},
		{msgType: wire.ExecuteRequest, content: exec("beta")},
		{msgType: wire.ExecuteRequest, content: exec("alpha")},
		{msgType: wire.HistoryRequest, content: map[string]any{"hist_access_type": "tail", "n": 2, "output": true}, reply: func(t *testing.T, c map[string]any) {
			if fmt.Sprint(c["history"]) != "[[1 2 [beta beta]] [1 3 [alpha alpha]]]" {
				t.Errorf("tail = %v", c["history"])
			}
		}},
		{msgType: wire.HistoryRequest, content: map[string]any{"hist_access_type": "range", "session": 0, "start": 2, "stop": 3}, reply: func(t *testing.T, c map[string]any) {
			if fmt.Sprint(c["history"]) != "[[1 2 beta]]" {
				t.Errorf("range = %v", c["history"])
			}
		}},
		{msgType: wire.HistoryRequest, content: map[string]any{"hist_access_type": "search", "pattern": "al*"}, reply: func(t *testing.T, c map[string]any) {
			if fmt.Sprint(c["history"]) != "[[1 1 alpha] [1 3 alpha]]" {
				t.Errorf("search = %v", c["history"])
			}
		}},
		{msgType: wire.HistoryRequest, content: map[string]any{"hist_access_type": "search", "pattern": "al*", "unique": true}, reply: func(t *testing.T, c map[string]any) {
			if fmt.Sprint(c["history"]) != "[[1 3 alpha]]" {
				t.Errorf("unique search = %v", c["history"])
			}
		}},
		{msgType: wire.HistoryRequest, content: map[string]any{"hist_access_type": "sideways"}, reply: status("error")},
	}},
	{"comm_info and comms", []step{
		{msgType: wire.CommInfoRequest, content: map[string]any{}, iopub: busyIdle, reply: func(t *testing.T, c map[string]any) {
			if c["status"] != "ok" || len(c["comms"].(map[string]any)) != 0 {
				t.Errorf("comm_info = %v", c)
			}
		}},
	}},
	{"unknown and malformed requests get error replies", []step{
		{msgType: "frobnicate_request", content: map[string]any{}, iopub: busyIdle, reply: func(t *testing.T, c map[string]any) {
			if c["status"] != "error" || c["ename"] != classUnknownRequest {
				t.Errorf("reply = %v", c)
			}
		}},
		{msgType: wire.ExecuteRequest, content: map[string]any{"code": 12}, reply: func(t *testing.T, c map[string]any) {
			if c["status"] != "error" || c["ename"] != classBadRequest {
				t.Errorf("reply = %v", c)
			}
		}},
		{msgType: wire.ExecuteRequest, content: exec("still"), reply: status("ok")},
	}},
}

func TestSequences(t *testing.T) {
	for _, sq := range sequences {
		t.Run(sq.name, func(t *testing.T) {
			_, c, _ := startKernel(t, nil)
			for i, st := range sq.steps {
				sk := c.shell
				if st.control {
					sk = c.control
				}
				if st.content == nil {
					st.content = map[string]any{}
				}
				id := c.send(sk, st.msgType, st.content)
				r := c.reply(id, wait)
				if want := wire.ReplyType(st.msgType); r.Header.MsgType != want {
					t.Errorf("step %d: reply type %s, want %s", i, r.Header.MsgType, want)
				}
				ms := c.idle(id)
				if st.reply != nil {
					st.reply(t, content(r))
				}
				if st.iopub != nil && fmt.Sprint(types(ms)) != fmt.Sprint(st.iopub) {
					t.Errorf("step %d (%s): iopub %v, want %v", i, st.msgType, types(ms), st.iopub)
				}
				if st.out != nil {
					st.out(t, ms)
				}
			}
		})
	}
}

// stop_on_error aborts the requests already queued behind a failing one,
// and only those.
func TestStopOnErrorAbortsQueued(t *testing.T) {
	_, c, _ := startKernel(t, nil)
	failing := exec("sleep 200")
	failing["code"] = "fail"
	slow := c.send(c.shell, wire.ExecuteRequest, exec("sleep 200"))
	bad := c.send(c.shell, wire.ExecuteRequest, failing)
	queued := c.send(c.shell, wire.ExecuteRequest, exec("print queued"))
	info := c.send(c.shell, wire.KernelInfoRequest, map[string]any{})
	if s := content(c.reply(slow, wait))["status"]; s != "ok" {
		t.Errorf("first: %v", s)
	}
	if s := content(c.reply(bad, wait))["status"]; s != "error" {
		t.Errorf("failing: %v", s)
	}
	ab := content(c.reply(queued, wait))
	if s := ab["status"]; s != "aborted" {
		t.Errorf("queued behind failure: %v, want aborted", s)
	}
	// A cell that did not run carries no execution count (the classic
	// notebook shows the reply's count as the cell's prompt).
	if n, ok := ab["execution_count"]; !ok || n != nil {
		t.Errorf("aborted reply's execution_count = %v (present %v), want null", n, ok)
	}
	if s := content(c.reply(info, wait))["status"]; s != "ok" {
		t.Errorf("kernel_info behind failure: %v", s)
	}
	if ts := types(c.idle(queued)); fmt.Sprint(ts) != fmt.Sprint(busyIdle) {
		t.Errorf("aborted iopub = %v", ts)
	}
	// Sent after the failure was handled: runs.
	later := c.send(c.shell, wire.ExecuteRequest, exec("later"))
	if s := content(c.reply(later, wait))["status"]; s != "ok" {
		t.Errorf("later: %v", s)
	}
	// stop_on_error false: nothing is aborted.
	noStop := exec("fail")
	noStop["stop_on_error"] = false
	c.send(c.shell, wire.ExecuteRequest, exec("sleep 100"))
	c.send(c.shell, wire.ExecuteRequest, noStop)
	after := c.send(c.shell, wire.ExecuteRequest, exec("after"))
	if s := content(c.reply(after, wait))["status"]; s != "ok" {
		t.Errorf("after a failure without stop_on_error: %v", s)
	}
}

func checkInterrupted(t *testing.T, c *client, id string, sent time.Time) {
	t.Helper()
	r := content(c.reply(id, wait))
	if el := time.Since(sent); el > 500*time.Millisecond {
		t.Errorf("interrupted cell replied after %v (limit 0.5 s)", el)
	}
	if r["status"] != "error" || r["ename"] != classInterrupted {
		t.Errorf("interrupted reply = %v", r)
	}
	if ts := types(c.idle(id)); fmt.Sprint(ts) != "[status:busy execute_input error status:idle]" {
		t.Errorf("iopub = %v", ts)
	}
}

func TestInterruptRequest(t *testing.T) {
	_, c, _ := startKernel(t, nil)
	c.reply(c.send(c.shell, wire.ExecuteRequest, exec("set keep yes")), wait)
	id := c.send(c.shell, wire.ExecuteRequest, exec("sleep 60000"))
	c.waitFor(func(r recvd) bool { return r.pid == id && r.m.Header.MsgType == wire.ExecuteInput }, wait)
	sent := time.Now()
	ir := c.send(c.control, wire.InterruptRequest, map[string]any{})
	if r := c.reply(ir, wait); r.Header.MsgType != wire.InterruptReply || content(r)["status"] != "ok" {
		t.Errorf("interrupt_reply = %v", content(r))
	}
	checkInterrupted(t, c, id, sent)
	r := c.reply(c.send(c.shell, wire.ExecuteRequest, exec("get keep")), wait)
	if content(r)["status"] != "ok" {
		t.Errorf("variables lost after an interrupt: %v", content(r))
	}
}

// A session request sent on control while a cell runs waits in the queue
// and does not block the control channel: the interrupt still gets through.
func TestControlExecuteDoesNotBlockInterrupt(t *testing.T) {
	_, c, _ := startKernel(t, nil)
	long := exec("sleep 60000")
	long["stop_on_error"] = false
	id := c.send(c.shell, wire.ExecuteRequest, long)
	c.waitFor(func(r recvd) bool { return r.pid == id && r.m.Header.MsgType == wire.ExecuteInput }, wait)
	ctl := c.send(c.control, wire.ExecuteRequest, exec("on control"))
	time.Sleep(20 * time.Millisecond)
	sent := time.Now()
	c.reply(c.send(c.control, wire.InterruptRequest, map[string]any{}), wait)
	checkInterrupted(t, c, id, sent)
	r := c.waitFor(func(r recvd) bool { return r.from == "control" && r.pid == ctl }, wait)
	if r == nil || content(r)["status"] != "ok" {
		t.Fatalf("execute on control: %v", r)
	}
}

func TestInterruptSIGINT(t *testing.T) {
	_, c, _ := startKernel(t, func(cfg *Config) { cfg.HandleInterrupt = true })
	id := c.send(c.shell, wire.ExecuteRequest, exec("sleep 60000"))
	c.waitFor(func(r recvd) bool { return r.pid == id && r.m.Header.MsgType == wire.ExecuteInput }, wait)
	time.Sleep(20 * time.Millisecond)
	sent := time.Now()
	if err := syscall.Kill(syscall.Getpid(), syscall.SIGINT); err != nil {
		t.Fatal(err)
	}
	checkInterrupted(t, c, id, sent)
}

// A cell that ignores cancellation is answered at the grace deadline; the
// next cell waits for it to return rather than running beside it.
func TestInterruptStubbornCell(t *testing.T) {
	_, c, _ := startKernel(t, func(cfg *Config) { cfg.InterruptGrace = 100 * time.Millisecond })
	id := c.send(c.shell, wire.ExecuteRequest, exec("stubborn 800"))
	c.waitFor(func(r recvd) bool { return r.pid == id && r.m.Header.MsgType == wire.ExecuteInput }, wait)
	sent := time.Now()
	c.send(c.control, wire.InterruptRequest, map[string]any{})
	checkInterrupted(t, c, id, sent)
	next := c.send(c.shell, wire.ExecuteRequest, exec("next"))
	if s := content(c.reply(next, wait))["status"]; s != "ok" {
		t.Errorf("next = %v", s)
	}
	if el := time.Since(sent); el < 600*time.Millisecond {
		t.Errorf("next cell ran %v after the interrupt, while the stubborn one was still running", el)
	}
}

// A cell waiting for a stubborn interrupted one says so on stderr, and an
// interrupt ends the wait at once (the wait was once uninterruptible, so a
// cell blocked for good stopped every later one); once the stubborn cell
// returns, cells run again.
func TestInterruptWhileWaiting(t *testing.T) {
	_, c, _ := startKernel(t, func(cfg *Config) { cfg.InterruptGrace = 100 * time.Millisecond })
	stub := c.send(c.shell, wire.ExecuteRequest, exec("stubborn 1500"))
	c.waitFor(func(r recvd) bool { return r.pid == stub && r.m.Header.MsgType == wire.ExecuteInput }, wait)
	start := time.Now()
	c.send(c.control, wire.InterruptRequest, map[string]any{})
	checkInterrupted(t, c, stub, start)
	waiting := c.send(c.shell, wire.ExecuteRequest, exec("waits"))
	m := c.waitFor(func(r recvd) bool { return r.pid == waiting && r.m.Header.MsgType == wire.Stream }, wait)
	if txt, _ := content(m)["text"].(string); txt != strayWaiting || content(m)["name"] != "stderr" {
		t.Errorf("stream while waiting = %v", content(m))
	}
	sent := time.Now()
	c.send(c.control, wire.InterruptRequest, map[string]any{})
	r := content(c.reply(waiting, wait))
	if el := time.Since(sent); el > 500*time.Millisecond || r["status"] != "error" || r["ename"] != classInterrupted {
		t.Errorf("waiting cell interrupted: %v after %v", r, el)
	}
	if time.Since(start) > 1400*time.Millisecond {
		t.Fatalf("the wait ended only %v after the first interrupt, when the stubborn cell returned", time.Since(start))
	}
	next := c.send(c.shell, wire.ExecuteRequest, exec("after"))
	if s := content(c.reply(next, wait))["status"]; s != "ok" {
		t.Errorf("cell after the stubborn one returned: %v", s)
	}
	if el := time.Since(start); el < 1400*time.Millisecond {
		t.Errorf("a cell ran %v after the interrupt, while the stubborn one was still running", el)
	}
}

func TestShutdown(t *testing.T) {
	for _, restart := range []bool{false, true} {
		for _, onControl := range []bool{true, false} {
			t.Run(fmt.Sprintf("restart=%v,control=%v", restart, onControl), func(t *testing.T) {
				_, c, done := startKernel(t, nil)
				sk := c.shell
				if onControl {
					sk = c.control
				}
				id := c.send(sk, wire.ShutdownRequest, map[string]any{"restart": restart})
				r := c.reply(id, wait)
				if r.Header.MsgType != wire.ShutdownReply || content(r)["restart"] != restart || content(r)["status"] != "ok" {
					t.Errorf("shutdown_reply = %v", content(r))
				}
				c.idle(id)
				select {
				case got := <-done:
					if got != restart {
						t.Errorf("Run returned restart=%v", got)
					}
					done <- got // for the cleanup
				case <-time.After(wait):
					t.Fatal("kernel still running after shutdown_request")
				}
			})
		}
	}
}

func TestHeartbeat(t *testing.T) {
	_, c, _ := startKernel(t, nil)
	for range 3 {
		if !c.heartbeat(wait) {
			t.Fatal("no heartbeat echo")
		}
	}
}

// Messages with a wrong, empty or missing signature are dropped unexecuted.
func TestBadSignatureDropped(t *testing.T) {
	k, c, _ := startKernel(t, nil)
	mk := func(code string) (*wire.Message, [][]byte) {
		b, _ := json.Marshal(exec(code))
		m := &wire.Message{Header: wire.NewHeader(wire.ExecuteRequest, c.session, "x"), Content: b}
		f, _ := wire.Encode(m, c.signer)
		return m, f
	}
	var ids []string
	for i, tamper := range []func(f [][]byte) [][]byte{
		func(f [][]byte) [][]byte { f[1] = []byte(strings.Repeat("0", 64)); return f },     // wrong
		func(f [][]byte) [][]byte { f[1] = nil; return f },                                 // empty
		func(f [][]byte) [][]byte { return append(f[:1], f[2:]...) },                       // missing
		func(f [][]byte) [][]byte { f[5] = []byte(`{"code":"set hacked yes"}`); return f }, // content changed after signing
	} {
		m, f := mk(fmt.Sprintf("set hacked %d", i))
		c.sendFrames(c.shell, tamper(f))
		ids = append(ids, m.Header.MsgID)
	}
	r := c.reply(c.send(c.shell, wire.ExecuteRequest, exec("get hacked")), wait)
	if content(r)["status"] != "error" {
		t.Errorf("a badly signed cell was executed: %v", content(r))
	}
	for _, id := range ids {
		if m := c.waitFor(func(r recvd) bool { return r.pid == id }, 10*time.Millisecond); m != nil {
			t.Errorf("kernel answered a badly signed message with %s", m.Header.MsgType)
		}
	}
	if st := k.Stats(); st.BadSignatures != 3 || st.Malformed != 1 {
		t.Errorf("stats = %+v (want 3 bad signatures, 1 malformed)", st)
	}
}

// Malformed frames are logged and dropped, or answered where possible; the
// kernel keeps serving.
func TestMalformedMessages(t *testing.T) {
	k, c, _ := startKernel(t, nil)
	sign := func(h, p, m, ct string) [][]byte {
		return [][]byte{[]byte(wire.Delimiter), []byte(c.signer.Sign([]byte(h), []byte(p), []byte(m), []byte(ct))), []byte(h), []byte(p), []byte(m), []byte(ct)}
	}
	c.sendFrames(c.shell, [][]byte{[]byte("no delimiter here")})
	c.sendFrames(c.shell, sign("{not json", "{}", "{}", "{}"))
	c.sendFrames(c.shell, sign(`{"msg_id":"m1"}`, "{}", "{}", "{}"))
	c.sendFrames(c.shell, sign(`{"msg_id":"m2","msg_type":"execute_request"}`, "{}", "{}", "{oops"))
	c.sendFrames(c.shell, sign(`{"msg_type":"kernel_info_request"}`, "{}", "{}", "{}"))
	// The malformed execute_request with a usable header gets an error reply.
	r := c.reply("m2", wait)
	if r.Header.MsgType != wire.ExecuteReply || content(r)["status"] != "error" {
		t.Errorf("reply to malformed content = %s %v", r.Header.MsgType, content(r))
	}
	if r := c.reply(c.send(c.shell, wire.ExecuteRequest, exec("ok")), wait); content(r)["status"] != "ok" {
		t.Errorf("kernel unwell after malformed input: %v", content(r))
	}
	if st := k.Stats(); st.Malformed != 5 {
		t.Errorf("stats = %+v, want 5 malformed", st)
	}
}

// Hostile peers at the transport level: a silent connection on every port,
// an oversize frame, and a stranger using the client's identity.
func TestHostilePeers(t *testing.T) {
	k, c, _ := startKernel(t, func(cfg *Config) { cfg.Limits.MaxMessage = 1 << 20 })
	ci := k.Conn()
	for _, p := range []int{ci.ShellPort, ci.ControlPort, ci.IOPubPort, ci.StdinPort, ci.HBPort} {
		s, err := net.Dial("tcp", fmt.Sprintf("127.0.0.1:%d", p))
		if err != nil {
			t.Fatal(err)
		}
		defer s.Close()
	}
	// A second client connects and is served while the silent peers wait.
	c2 := dial(t, ci)
	defer c2.close()
	if r := c2.reply(c2.send(c2.shell, wire.ExecuteRequest, exec("two")), wait); content(r)["status"] != "ok" {
		t.Errorf("second client: %v", content(r))
	}
	// An oversize frame: the connection is dropped before allocation.
	big, err := net.Dial("tcp", fmt.Sprintf("127.0.0.1:%d", ci.ShellPort))
	if err != nil {
		t.Fatal(err)
	}
	defer big.Close()
	greet := make([]byte, 64)
	greet[0], greet[9], greet[10] = 0xFF, 0x7F, 3
	copy(greet[12:], "NULL")
	ready := append([]byte{5}, "READY"...)
	ready = append(ready, 11)
	ready = append(ready, "Socket-Type"...)
	ready = append(ready, 0, 0, 0, 6)
	ready = append(ready, "DEALER"...)
	big.Write(greet)
	big.Write(append([]byte{0x04, byte(len(ready))}, ready...))
	big.Write([]byte{0x02, 0, 0, 0x10, 0, 0, 0, 0, 0}) // 2^44 bytes announced
	big.SetReadDeadline(time.Now().Add(wait))
	buf := make([]byte, 4096)
	for {
		if _, err := big.Read(buf); err != nil {
			if ne, ok := err.(net.Error); ok && ne.Timeout() {
				t.Error("oversize-frame peer not disconnected")
			}
			break
		}
	}
	if st := k.Stats(); st.Transport.OversizeFrames != 1 {
		t.Errorf("stats = %+v", st)
	}
	if r := c.reply(c.send(c.shell, wire.ExecuteRequest, exec("one")), wait); content(r)["status"] != "ok" {
		t.Errorf("first client after hostile peers: %v", content(r))
	}
}

// Two clients whose shell sockets announce the same identity each get only
// their own replies.
func TestSameIdentityClients(t *testing.T) {
	k, c, _ := startKernel(t, nil)
	ci := k.Conn()
	a := dialWithID(t, ci, "shared-id")
	b := dialWithID(t, ci, "shared-id")
	for i := range 3 {
		ia := a.send(a.shell, wire.ExecuteRequest, exec(fmt.Sprintf("a%d", i)))
		ib := b.send(b.shell, wire.ExecuteRequest, exec(fmt.Sprintf("b%d", i)))
		a.reply(ia, wait)
		b.reply(ib, wait)
		if m := a.waitFor(func(r recvd) bool { return r.from == "shell" && r.pid == ib }, 50*time.Millisecond); m != nil {
			t.Fatal("client a received client b's reply")
		}
		if m := b.waitFor(func(r recvd) bool { return r.from == "shell" && r.pid == ia }, 50*time.Millisecond); m != nil {
			t.Fatal("client b received client a's reply")
		}
	}
	_ = c
}

// An error that names no class is reported as a "failure", its traceback
// one line led by the class as a badge; the kernel's own errors show their
// class the same way.
func TestDescribeClasses(t *testing.T) {
	ename, evalue, tb := describe(errors.New("no such thing"))
	if ename != classOther || evalue != "no such thing" || len(tb) != 1 || tb[0] != "\x1b[1;38;2;255;255;255;48;2;176;32;48m failure \x1b[0m no such thing" {
		t.Errorf("plain error = %q, %q, %q", ename, evalue, tb)
	}
	for _, e := range []EvalError{interruptedError{}, panicError{"boom"}} {
		tb := e.Traceback()
		if !strings.HasPrefix(tb[0], sgrClass+" "+e.ErrorName()+" \x1b[0m ") {
			t.Errorf("%s traceback = %q", e.ErrorName(), tb)
		}
	}
}
