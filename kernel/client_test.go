package kernel

import (
	"context"
	"encoding/json"
	"sync"
	"testing"
	"time"

	"github.com/go-zeromq/zmq4"

	"semiflow/kernel/wire"
)

// client is a loopback Jupyter client over real zmq4 sockets.
type client struct {
	t       testing.TB
	signer  *wire.Signer
	session string
	ctx     context.Context
	cancel  context.CancelFunc

	shell, control, iopub, hb zmq4.Socket

	mu   sync.Mutex
	cond *sync.Cond
	got  []recvd
}

type recvd struct {
	from string // "shell", "control" or "iopub"
	m    *wire.Message
	pid  string // parent msg_id
}

// startKernel runs a kernel on free loopback ports with a fake evaluator.
func startKernel(t testing.TB, tweak func(*Config)) (*Kernel, *client, chan bool) {
	t.Helper()
	cfg := Config{
		Conn:    wire.ConnectionInfo{Transport: "tcp", IP: "127.0.0.1", Key: "secret-key", SignatureScheme: "hmac-sha256"},
		Eval:    newFake(),
		Version: "test",
		Log:     testLog{t},
	}
	if tweak != nil {
		tweak(&cfg)
	}
	k, err := New(cfg)
	if err != nil {
		t.Fatal(err)
	}
	done := make(chan bool, 1)
	runCtx, stop := context.WithCancel(context.Background())
	go func() {
		restart, _ := k.Run(runCtx)
		done <- restart
	}()
	c := dial(t, k.Conn())
	t.Cleanup(func() {
		c.close()
		stop()
		select {
		case <-done:
		case <-time.After(5 * time.Second):
			t.Error("kernel did not stop")
		}
	})
	return k, c, done
}

type testLog struct{ t testing.TB }

func (l testLog) Write(p []byte) (int, error) {
	l.t.Log(string(p))
	return len(p), nil
}

func dial(t testing.TB, ci wire.ConnectionInfo) *client {
	t.Helper()
	ctx, cancel := context.WithCancel(context.Background())
	c := &client{t: t, signer: wire.NewSigner(ci.Key), session: wire.NewID(), ctx: ctx, cancel: cancel}
	c.cond = sync.NewCond(&c.mu)
	c.shell = zmq4.NewDealer(ctx)
	c.control = zmq4.NewDealer(ctx)
	c.iopub = zmq4.NewSub(ctx)
	c.hb = zmq4.NewReq(ctx)
	for _, d := range []struct {
		s    zmq4.Socket
		port int
	}{{c.shell, ci.ShellPort}, {c.control, ci.ControlPort}, {c.iopub, ci.IOPubPort}, {c.hb, ci.HBPort}} {
		if err := d.s.Dial(ci.Endpoint(d.port)); err != nil {
			t.Fatal(err)
		}
	}
	if err := c.iopub.SetOption(zmq4.OptionSubscribe, ""); err != nil {
		t.Fatal(err)
	}
	go c.read("shell", c.shell)
	go c.read("control", c.control)
	go c.read("iopub", c.iopub)
	// Wait until iopub is subscribed: ask for kernel_info until its busy
	// status arrives.
	deadline := time.Now().Add(5 * time.Second)
	for {
		id := c.send(c.shell, wire.KernelInfoRequest, map[string]any{})
		if c.waitFor(func(r recvd) bool { return r.from == "iopub" && r.pid == id }, 200*time.Millisecond) != nil {
			c.reply(id, 2*time.Second)
			c.idle(id)
			break
		}
		if time.Now().After(deadline) {
			t.Fatal("iopub never delivered a status message")
		}
	}
	return c
}

func (c *client) close() {
	for _, s := range []zmq4.Socket{c.shell, c.control, c.iopub, c.hb} {
		s.Close()
	}
	c.cancel()
}

func (c *client) read(name string, s zmq4.Socket) {
	for {
		zm, err := s.Recv()
		if err != nil {
			if c.ctx.Err() != nil {
				return
			}
			time.Sleep(5 * time.Millisecond)
			continue
		}
		m, err := wire.Decode(zm.Frames, c.signer)
		if err != nil {
			c.t.Errorf("%s: kernel sent an undecodable message: %v", name, err)
			continue
		}
		var ph wire.Header
		_ = json.Unmarshal(m.Parent, &ph)
		c.mu.Lock()
		c.got = append(c.got, recvd{name, m, ph.MsgID})
		c.cond.Broadcast()
		c.mu.Unlock()
	}
}

// send sends a signed request and returns its msg_id.
func (c *client) send(s zmq4.Socket, msgType string, content any) string {
	c.t.Helper()
	b, _ := json.Marshal(content)
	m := &wire.Message{Header: wire.NewHeader(msgType, c.session, "tester"), Content: b}
	frames, err := wire.Encode(m, c.signer)
	if err != nil {
		c.t.Fatal(err)
	}
	if err := s.Send(zmq4.NewMsgFrom(frames...)); err != nil {
		c.t.Fatal(err)
	}
	return m.Header.MsgID
}

func (c *client) sendFrames(s zmq4.Socket, frames [][]byte) {
	if err := s.Send(zmq4.NewMsgFrom(frames...)); err != nil {
		c.t.Fatal(err)
	}
}

// waitFor returns the first message received so far or within timeout
// that satisfies pred, or nil.
func (c *client) waitFor(pred func(recvd) bool, timeout time.Duration) *wire.Message {
	deadline := time.Now().Add(timeout)
	timer := time.AfterFunc(timeout, func() {
		c.mu.Lock()
		c.cond.Broadcast()
		c.mu.Unlock()
	})
	defer timer.Stop()
	c.mu.Lock()
	defer c.mu.Unlock()
	for {
		for _, r := range c.got {
			if pred(r) {
				return r.m
			}
		}
		if time.Now().After(deadline) {
			return nil
		}
		c.cond.Wait()
	}
}

// reply waits for the shell or control reply to msgID.
func (c *client) reply(msgID string, timeout time.Duration) *wire.Message {
	c.t.Helper()
	m := c.waitFor(func(r recvd) bool { return r.from != "iopub" && r.pid == msgID }, timeout)
	if m == nil {
		c.t.Fatalf("no reply to %s within %v", msgID, timeout)
	}
	return m
}

// idle waits for the idle status of msgID and returns every iopub message
// of that request, in order, status messages included.
func (c *client) idle(msgID string) []*wire.Message {
	c.t.Helper()
	isIdle := func(r recvd) bool {
		return r.from == "iopub" && r.pid == msgID && r.m.Header.MsgType == wire.Status && content(r.m)["execution_state"] == "idle"
	}
	if c.waitFor(isIdle, 5*time.Second) == nil {
		c.t.Fatalf("no idle status for %s", msgID)
	}
	c.mu.Lock()
	defer c.mu.Unlock()
	var out []*wire.Message
	for _, r := range c.got {
		if r.from == "iopub" && r.pid == msgID {
			out = append(out, r.m)
		}
	}
	return out
}

func (c *client) heartbeat(timeout time.Duration) bool {
	done := make(chan bool, 1)
	go func() {
		if err := c.hb.Send(zmq4.NewMsgString("ping")); err != nil {
			done <- false
			return
		}
		m, err := c.hb.Recv()
		done <- err == nil && string(m.Frames[0]) == "ping"
	}()
	select {
	case ok := <-done:
		return ok
	case <-time.After(timeout):
		return false
	}
}

func content(m *wire.Message) map[string]any {
	var v map[string]any
	_ = json.Unmarshal(m.Content, &v)
	return v
}

func types(ms []*wire.Message) []string {
	var s []string
	for _, m := range ms {
		t := m.Header.MsgType
		if t == wire.Status {
			t += ":" + content(m)["execution_state"].(string)
		}
		s = append(s, t)
	}
	return s
}
