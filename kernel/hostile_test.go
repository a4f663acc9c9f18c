package kernel

import (
	"bytes"
	"encoding/binary"
	"encoding/json"
	"fmt"
	"io"
	"net"
	"os"
	"path/filepath"
	"runtime"
	"strings"
	"sync"
	"testing"
	"time"

	"semiflow/kernel/wire"
	"semiflow/kernel/zguard"
)

// rawSubscriber completes a ZMTP 3.0 handshake as a SUB socket (RFC
// 23/ZMTP), subscribes to everything and then never reads again.
func rawSubscriber(t *testing.T, port int) net.Conn {
	t.Helper()
	c, err := net.Dial("tcp", fmt.Sprintf("127.0.0.1:%d", port))
	if err != nil {
		t.Fatal(err)
	}
	greet := make([]byte, 64)
	greet[0], greet[9], greet[10] = 0xFF, 0x7F, 3
	copy(greet[12:], "NULL")
	ready := append([]byte{5}, "READY"...)
	ready = append(ready, 11)
	ready = append(ready, "Socket-Type"...)
	ready = append(ready, 0, 0, 0, 3)
	ready = append(ready, "SUB"...)
	c.Write(greet)
	c.Write(append([]byte{0x04, byte(len(ready))}, ready...))
	c.SetReadDeadline(time.Now().Add(wait))
	if _, err := io.ReadFull(c, make([]byte, 64)); err != nil {
		t.Fatal(err)
	}
	c.Write([]byte{0, 1, 1}) // subscribe to ""
	return c
}

// A stalled iopub subscriber cannot make the kernel's memory grow, and a
// normal client still receives every output.
func TestStalledIOPubSubscriber(t *testing.T) {
	k, c, _ := startKernel(t, func(cfg *Config) { cfg.Limits.MaxQueue = 1 << 20 })
	stalled := rawSubscriber(t, k.Conn().IOPubPort)
	defer stalled.Close()
	time.Sleep(100 * time.Millisecond)
	runtime.GC()
	var before, after runtime.MemStats
	runtime.ReadMemStats(&before)
	// Each cell sends 128 KiB on iopub (the code in execute_input and the
	// stream), well within the 1 MiB queue of a client that reads.
	big := strings.Repeat("y", 64<<10)
	const cells = 600 // 75 MiB in all
	for range cells {
		cell := exec("print " + big)
		cell["store_history"] = false // history would keep every input
		id := c.send(c.shell, wire.ExecuteRequest, cell)
		c.reply(id, wait)
		ms := c.idle(id)
		if fmt.Sprint(types(ms)) != "[status:busy execute_input stream status:idle]" {
			t.Fatalf("normal client got %v", types(ms))
		}
		c.mu.Lock()
		c.got = c.got[:0]
		c.mu.Unlock()
	}
	runtime.GC()
	runtime.ReadMemStats(&after)
	st := k.Stats()
	if st.Transport.DroppedMessages == 0 {
		t.Error("nothing was dropped for the stalled subscriber")
	}
	if grow := int64(after.HeapInuse) - int64(before.HeapInuse); grow > 32<<20 {
		t.Errorf("heap grew by %d MiB with a stalled subscriber", grow>>20)
	}
	t.Logf("dropped %d messages for the stalled peer; heap %d → %d MiB", st.Transport.DroppedMessages, before.HeapInuse>>20, after.HeapInuse>>20)
}

// The kernel also serves ipc connection files (unix sockets named IP-PORT).
func TestIPCTransport(t *testing.T) {
	dir := t.TempDir()
	_, c, _ := startKernel(t, func(cfg *Config) {
		cfg.Conn = wire.ConnectionInfo{Transport: "ipc", IP: filepath.Join(dir, "k"), Key: "k",
			ShellPort: 1, IOPubPort: 2, StdinPort: 3, ControlPort: 4, HBPort: 5}
	})
	if r := c.reply(c.send(c.shell, wire.ExecuteRequest, exec("over ipc")), wait); content(r)["status"] != "ok" {
		t.Errorf("ipc execute: %v", content(r))
	}
}

// rawPeer sends a ZMTP 3.0 greeting and a READY of the given socket type
// (RFC 23/ZMTP) and returns the connection.
func rawPeer(t *testing.T, port int, sockType string) net.Conn {
	t.Helper()
	c, err := net.Dial("tcp", fmt.Sprintf("127.0.0.1:%d", port))
	if err != nil {
		t.Fatal(err)
	}
	greet := make([]byte, 64)
	greet[0], greet[9], greet[10] = 0xFF, 0x7F, 3
	copy(greet[12:], "NULL")
	ready := append([]byte{5}, "READY"...)
	ready = append(ready, 11)
	ready = append(ready, "Socket-Type"...)
	ready = append(ready, 0, 0, 0, byte(len(sockType)))
	ready = append(ready, sockType...)
	c.Write(greet)
	c.Write(append([]byte{0x04, byte(len(ready))}, ready...))
	return c
}

// untilClosed reads c until the kernel closes it; false if it has not
// within d.
func untilClosed(c net.Conn, d time.Duration) bool {
	c.SetReadDeadline(time.Now().Add(d))
	_, err := io.Copy(io.Discard, c)
	ne, ok := err.(net.Error)
	return !(ok && ne.Timeout())
}

func openFDs(t *testing.T) int {
	ents, err := os.ReadDir("/proc/self/fd")
	if err != nil {
		t.Skip("no /proc/self/fd")
	}
	return len(ents)
}

// A cell printing 200,000 lines one call at a time: every line arrives, in
// order, in a few coalesced stream messages, and the execute_result and the
// idle status follow.
func TestHeavyStreamOutput(t *testing.T) {
	_, c, _ := startKernel(t, nil)
	const n = 200000
	id := c.send(c.shell, wire.ExecuteRequest, exec(fmt.Sprintf("lines %d", n)))
	if r := content(c.reply(id, 30*time.Second)); r["status"] != "ok" {
		t.Fatalf("reply = %v", r)
	}
	ms := c.idle(id)
	var text strings.Builder
	streams := 0
	for _, m := range ms {
		if m.Header.MsgType == wire.Stream {
			streams++
			text.WriteString(content(m)["text"].(string))
		}
	}
	var want strings.Builder
	for i := 1; i <= n; i++ {
		fmt.Fprintf(&want, "line %d\n", i)
	}
	if text.String() != want.String() {
		t.Errorf("stream text of %d bytes differs from the %d bytes printed", text.Len(), want.Len())
	}
	ts := types(ms)
	if ts[len(ts)-2] != wire.ExecuteResult || ts[len(ts)-1] != "status:idle" {
		t.Errorf("iopub ends %v", ts[max(0, len(ts)-3):])
	}
	if streams > 200 {
		t.Errorf("%d stream messages for %d lines: not coalesced", streams, n)
	}
	t.Logf("%d lines (%d bytes) in %d stream messages", n, want.Len(), streams)
}

// Output beyond the stream rate is left out, never silently: the stream
// says how many lines are missing, and shown plus left out is everything.
func TestStreamRateLimit(t *testing.T) {
	k, c, _ := startKernel(t, func(cfg *Config) { cfg.StreamRate, cfg.StreamBurst = 64<<10, 64<<10 })
	const n = 100000 // 1.2 MB, far beyond a 64 KiB burst
	id := c.send(c.shell, wire.ExecuteRequest, exec(fmt.Sprintf("lines %d", n)))
	c.reply(id, 30*time.Second)
	var text strings.Builder
	for _, m := range c.idle(id) {
		if m.Header.MsgType == wire.Stream {
			text.WriteString(content(m)["text"].(string))
		}
	}
	shown, left := 0, 0
	next := 1 // the shown lines are in order, with gaps only at markers
	for _, line := range strings.Split(strings.TrimSuffix(text.String(), "\n"), "\n") {
		var i, b int
		if _, err := fmt.Sscanf(line, "[semiflow: %d lines (%d bytes) of output left out here", &i, &b); err == nil {
			left += i
			next += i
			continue
		}
		if line != fmt.Sprintf("line %d", next) {
			t.Fatalf("line %q where %q was due", line, fmt.Sprintf("line %d", next))
		}
		shown++
		next++
	}
	if shown+left != n || left == 0 {
		t.Errorf("%d lines shown and %d said to be left out, of %d", shown, left, n)
	}
	if got := k.Stats().StreamOmitted; got != int64(left) {
		t.Errorf("StreamOmitted = %d, markers say %d", got, left)
	}
	t.Logf("%d lines shown, %d left out and marked", shown, left)
}

// After an error reply with stop_on_error, a request sent in answer to it
// runs; only requests that arrived before the failure was reported are
// aborted. (Under load the old code aborted some of the later ones.)
func TestAbortOnlyEarlierRequests(t *testing.T) {
	_, c, _ := startKernel(t, nil)
	for i := range 200 {
		bad := c.send(c.shell, wire.ExecuteRequest, exec("fail"))
		if s := content(c.reply(bad, wait))["status"]; s != "error" {
			t.Fatalf("round %d: failing cell %v", i, s)
		}
		// Three at once, to load the queue.
		var ids []string
		for j := range 3 {
			ids = append(ids, c.send(c.shell, wire.ExecuteRequest, exec(fmt.Sprintf("next %d %d", i, j))))
		}
		for _, id := range ids {
			if s := content(c.reply(id, wait))["status"]; s != "ok" {
				t.Fatalf("round %d: request sent after the error reply was %v", i, s)
			}
		}
		c.mu.Lock()
		c.got = c.got[:0]
		c.mu.Unlock()
	}
}

// A signed request sent three times runs once; the copies are dropped and
// counted.
func TestReplayRefused(t *testing.T) {
	k, c, _ := startKernel(t, nil)
	b, _ := json.Marshal(exec("print once"))
	m := &wire.Message{Header: wire.NewHeader(wire.ExecuteRequest, c.session, "x"), Content: b}
	f, err := wire.Encode(m, c.signer)
	if err != nil {
		t.Fatal(err)
	}
	for range 3 {
		c.sendFrames(c.shell, f)
	}
	c.reply(m.Header.MsgID, wait)
	c.reply(c.send(c.shell, wire.ExecuteRequest, exec("after")), wait)
	n := 0
	c.mu.Lock()
	for _, r := range c.got {
		if r.from == "shell" && r.pid == m.Header.MsgID {
			n++
		}
	}
	c.mu.Unlock()
	if n != 1 {
		t.Errorf("%d replies to a request sent three times", n)
	}
	if st := k.Stats(); st.Replayed != 2 {
		t.Errorf("stats = %+v, want 2 replayed", st)
	}
}

// countingLog counts the lines written to it.
type countingLog struct {
	mu    sync.Mutex
	lines int
	bad   int // lines about signatures
}

func (l *countingLog) Write(p []byte) (int, error) {
	l.mu.Lock()
	l.lines += strings.Count(string(p), "\n")
	if strings.Contains(string(p), "signature") {
		l.bad++
	}
	l.mu.Unlock()
	return len(p), nil
}

// 20,000 badly signed messages write a handful of log lines, not 20,000.
func TestBadSignatureFloodLog(t *testing.T) {
	var lg countingLog
	k, c, _ := startKernel(t, func(cfg *Config) { cfg.Log = &lg })
	b, _ := json.Marshal(exec("print x"))
	const n = 20000
	for range n {
		m := &wire.Message{Header: wire.NewHeader(wire.ExecuteRequest, c.session, "x"), Content: b}
		f, _ := wire.Encode(m, c.signer)
		f[1] = []byte(strings.Repeat("0", 64))
		c.sendFrames(c.shell, f)
	}
	if r := content(c.reply(c.send(c.shell, wire.ExecuteRequest, exec("still here")), 10*time.Second)); r["status"] != "ok" {
		t.Errorf("after the flood: %v", r)
	}
	st := k.Stats()
	if st.BadSignatures != n {
		t.Errorf("counted %d bad signatures of %d", st.BadSignatures, n)
	}
	lg.mu.Lock()
	defer lg.mu.Unlock()
	if lg.bad > 5 || lg.lines > 30 {
		t.Errorf("%d log lines (%d about signatures) for %d bad messages", lg.lines, lg.bad, n)
	}
	t.Logf("%d bad messages: %d log lines, %d suppressed", n, lg.lines, st.Transport.SuppressedLogs)
}

// Peers of the wrong socket type on every port are closed; 100 of them
// leave no descriptor behind.
func TestWrongSocketTypeNoLeak(t *testing.T) {
	k, c, _ := startKernel(t, func(cfg *Config) { cfg.Log = discardLog{} })
	ci := k.Conn()
	before := openFDs(t)
	const n = 100
	ports := []struct {
		port int
		typ  string
	}{{ci.ShellPort, "PUB"}, {ci.ControlPort, "SUB"}, {ci.IOPubPort, "DEALER"}, {ci.HBPort, "PUB"}, {ci.StdinPort, "PULL"}}
	for i := range n {
		p := ports[i%len(ports)]
		conn := rawPeer(t, p.port, p.typ)
		if !untilClosed(conn, wait) {
			t.Fatalf("a %s peer on port %d was not closed", p.typ, p.port)
		}
		conn.Close()
	}
	time.Sleep(50 * time.Millisecond)
	if after := openFDs(t); after > before+5 {
		t.Errorf("%d descriptors open after %d refused peers, %d before", after, n, before)
	}
	if st := k.Stats(); st.Transport.Incompatible != n {
		t.Errorf("stats = %+v, want %d incompatible", st.Transport, n)
	}
	if r := content(c.reply(c.send(c.shell, wire.ExecuteRequest, exec("ok")), wait)); r["status"] != "ok" {
		t.Errorf("after: %v", r)
	}
}

// Unauthenticated peers cannot make the kernel's memory grow past the
// budget: an endless message of empty frames, and 16 peers each sending
// 6 MiB of a frame announced at 7 MiB (96 MiB in all), against a 16 MiB
// budget (whose messages are at most 8 MiB).
func TestUnauthenticatedMemoryBounded(t *testing.T) {
	const budget = 16 << 20
	k, c, _ := startKernel(t, func(cfg *Config) {
		cfg.Limits.Budget = zguard.NewBudget(budget)
		cfg.Log = discardLog{}
	})
	ci := k.Conn()
	runtime.GC()
	var before, after runtime.MemStats
	runtime.ReadMemStats(&before)

	flood := rawPeer(t, ci.ShellPort, "DEALER")
	defer flood.Close()
	go func() {
		empty := bytes.Repeat([]byte{0x01, 0}, 32<<10)
		for range 200 {
			if _, err := flood.Write(empty); err != nil {
				return
			}
		}
	}()
	part := bytes.Repeat([]byte("z"), 6<<20)
	var wg sync.WaitGroup
	for i := range 16 {
		p := rawPeer(t, []int{ci.ShellPort, ci.ControlPort, ci.StdinPort}[i%3], "DEALER")
		defer p.Close()
		wg.Add(1)
		go func() {
			defer wg.Done()
			p.Write(binary.BigEndian.AppendUint64([]byte{0x02}, 7<<20))
			p.Write(part)
		}()
	}
	if !untilClosed(flood, wait) {
		t.Error("the empty-frame flood was not cut off")
	}
	done := make(chan struct{})
	go func() { wg.Wait(); close(done) }()
	select {
	case <-done:
	case <-time.After(10 * time.Second):
	}
	runtime.GC()
	runtime.ReadMemStats(&after)
	if r := content(c.reply(c.send(c.shell, wire.ExecuteRequest, exec("served")), wait)); r["status"] != "ok" {
		t.Errorf("a client during the attack: %v", r)
	}
	st := k.Stats()
	if st.BufferedPeak > budget {
		t.Errorf("buffered %d bytes at peak, budget %d", st.BufferedPeak, budget)
	}
	if st.Transport.OverBudget < 12 || st.Transport.OversizeFrames < 1 {
		t.Errorf("stats = %+v", st.Transport)
	}
	// What is still live: at most the budget, held by the peers still
	// connected, and the test's own 6 MiB, with room for what other tests'
	// goroutines hold meanwhile (the attack suite measures the resident
	// size of a kernel process alone).
	if grow := int64(after.HeapAlloc) - int64(before.HeapAlloc); grow > 3*budget {
		t.Errorf("heap grew by %d MiB under attack (budget %d MiB)", grow>>20, budget>>20)
	}
	t.Logf("peak buffered %d KiB; heap %d → %d MiB; %+v", st.BufferedPeak>>10, before.HeapAlloc>>20, after.HeapAlloc>>20, st.Transport)
}

// zmq4 writes a line for every connection it refuses; the kernel passes at
// most a burst of them per window, then one line with the number left out.
func TestLimitedWriter(t *testing.T) {
	var lg countingLog
	w := newLimitedWriter(&lg, 5, 100*time.Millisecond)
	for i := range 100 {
		fmt.Fprintf(w, "refused %d\n", i)
	}
	time.Sleep(250 * time.Millisecond)
	lg.mu.Lock()
	defer lg.mu.Unlock()
	if lg.lines != 6 {
		t.Errorf("%d lines for 100 writes with a burst of 5 (want 5 and a summary)", lg.lines)
	}
}

// 5,000 displays, each after a line of stream output, far more than the
// iopub queue holds: every one arrives, in order, each after its line, and
// the execute_result and the idle status follow.
func TestManyDisplaysNoneDropped(t *testing.T) {
	_, c, _ := startKernel(t, func(cfg *Config) { cfg.IOPubQueue = 16 })
	const n = 5000
	id := c.send(c.shell, wire.ExecuteRequest, exec(fmt.Sprintf("shows %d", n)))
	c.reply(id, 30*time.Second)
	ms := c.idle(id)
	next := 1
	for _, m := range ms {
		switch m.Header.MsgType {
		case wire.Stream:
			if want := fmt.Sprintf("before %d\n", next); content(m)["text"] != want {
				t.Fatalf("stream %q, want %q", content(m)["text"], want)
			}
		case wire.DisplayData:
			if got := content(m)["data"].(map[string]any)["text/plain"]; got != fmt.Sprintf("d%d", next) {
				t.Fatalf("display %v, want d%d", got, next)
			}
			next++
		}
	}
	if next != n+1 {
		t.Errorf("%d of %d displays arrived", next-1, n)
	}
	ts := types(ms)
	if ts[len(ts)-2] != wire.ExecuteResult || ts[len(ts)-1] != "status:idle" {
		t.Errorf("iopub ends %v", ts[max(0, len(ts)-3):])
	}
}
