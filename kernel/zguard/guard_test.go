package zguard

import (
	"bytes"
	"context"
	"encoding/binary"
	"errors"
	"fmt"
	"io"
	"net"
	"os"
	"runtime"
	"sync"
	"sync/atomic"
	"testing"
	"time"

	"github.com/go-zeromq/zmq4"
)

var schemeN atomic.Int64

// register makes a fresh guarded scheme for one test (zmq4's registry is
// global and refuses duplicates).
func register(t *testing.T, lim Limits) (*Transport, string) {
	t.Helper()
	tr := New("tcp", lim, t.Logf)
	name := fmt.Sprintf("zgtest%d", schemeN.Add(1))
	if err := zmq4.RegisterTransport(name, tr); err != nil {
		t.Fatal(err)
	}
	return tr, name
}

func listen(t *testing.T, sck zmq4.Socket, scheme string) string {
	t.Helper()
	if err := sck.Listen(scheme + "://127.0.0.1:0"); err != nil {
		t.Fatal(err)
	}
	return sck.Addr().String()
}

// rawPeer does a ZMTP 3.0 NULL handshake by hand (RFC 23/ZMTP) so that a
// test can then misbehave at the byte level.
func rawPeer(t *testing.T, addr, sockType, identity string) net.Conn {
	t.Helper()
	c, err := net.Dial("tcp", addr)
	if err != nil {
		t.Fatal(err)
	}
	if _, err := c.Write(ourGreeting()); err != nil {
		t.Fatal(err)
	}
	g := make([]byte, greetingLen)
	c.SetDeadline(time.Now().Add(5 * time.Second))
	if _, err := io.ReadFull(c, g); err != nil {
		t.Fatal(err)
	}
	r := &readyCmd{keys: []string{"Socket-Type", "Identity"}, vals: []string{sockType, identity}}
	body := r.encode()
	if _, err := c.Write(append(appendFrameHeader(nil, flagCommand, uint64(len(body))), body...)); err != nil {
		t.Fatal(err)
	}
	var hdr [2]byte
	if _, err := io.ReadFull(c, hdr[:]); err != nil {
		t.Fatal(err)
	}
	if _, err := io.ReadFull(c, make([]byte, hdr[1])); err != nil {
		t.Fatal(err)
	}
	c.SetDeadline(time.Time{})
	return c
}

func TestScannerSplits(t *testing.T) {
	// Two messages: [a, bb] and [ccc (long form)], then a command.
	var stream []byte
	stream = append(appendFrameHeader(stream, flagMore, 1), 'a')
	stream = append(appendFrameHeader(stream, 0, 2), "bb"...)
	stream = append(stream, flagLong, 0, 0, 0, 0, 0, 0, 0, 3)
	stream = append(stream, "ccc"...)
	stream = append(appendFrameHeader(stream, flagCommand, 4), "\x04PING"[:4]...)
	for chunk := 1; chunk <= len(stream); chunk++ {
		var s scanner
		var ends []int
		pos := 0
		for off := 0; off < len(stream); off += chunk {
			q := stream[off:min(off+chunk, len(stream))]
			for len(q) > 0 {
				k := s.feed(q)
				pos += k
				q = q[k:]
				if s.complete {
					s.complete = false
					ends = append(ends, pos)
				}
			}
		}
		want := []int{7, 19, 25}
		if fmt.Sprint(ends) != fmt.Sprint(want) {
			t.Fatalf("chunk %d: message ends %v, want %v", chunk, ends, want)
		}
	}
}

func TestParseReadyRejectsMalformed(t *testing.T) {
	good := (&readyCmd{keys: []string{"Socket-Type"}, vals: []string{"DEALER"}}).encode()
	if _, err := parseReady(good); err != nil {
		t.Fatal(err)
	}
	for _, b := range [][]byte{
		nil,
		[]byte("\x05HELLO"),
		append([]byte("\x05READY"), 11), // key length past the end
		append([]byte("\x05READY\x01k"), 0, 0, 0, 9, 'v'), // value length past the end
		[]byte("\x05READY"),                         // no Socket-Type
		append([]byte("\x05READY\x00"), 0, 0, 0, 0), // empty key
	} {
		if _, err := parseReady(b); err == nil {
			t.Errorf("parseReady(%q) accepted", b)
		}
	}
}

// A peer that connects and never sends a greeting must not delay others.
func TestSilentPeerDoesNotBlockAccept(t *testing.T) {
	tr, scheme := register(t, Limits{Handshake: 30 * time.Second})
	ctx := context.Background()
	router := zmq4.NewRouter(ctx)
	defer router.Close()
	addr := listen(t, router, scheme)

	silent, err := net.Dial("tcp", addr)
	if err != nil {
		t.Fatal(err)
	}
	defer silent.Close()
	time.Sleep(50 * time.Millisecond)

	dealer := zmq4.NewDealer(ctx, zmq4.WithDialerRetry(20*time.Millisecond))
	defer dealer.Close()
	done := make(chan error, 1)
	go func() {
		if err := dealer.Dial("tcp://" + addr); err != nil {
			done <- err
			return
		}
		done <- dealer.Send(zmq4.NewMsgString("hello"))
	}()
	select {
	case err := <-done:
		if err != nil {
			t.Fatal(err)
		}
	case <-time.After(3 * time.Second):
		t.Fatal("a second client could not connect while a silent peer was pending")
	}
	got := make(chan zmq4.Msg, 1)
	go func() { m, _ := router.Recv(); got <- m }()
	select {
	case m := <-got:
		if len(m.Frames) != 2 || string(m.Frames[1]) != "hello" {
			t.Fatalf("router got %q", m.Frames)
		}
	case <-time.After(3 * time.Second):
		t.Fatal("no message through the router")
	}
	_ = tr
}

// The silent peer is dropped at the handshake deadline.
func TestHandshakeDeadline(t *testing.T) {
	tr, scheme := register(t, Limits{Handshake: 100 * time.Millisecond})
	router := zmq4.NewRouter(context.Background())
	defer router.Close()
	addr := listen(t, router, scheme)
	c, err := net.Dial("tcp", addr)
	if err != nil {
		t.Fatal(err)
	}
	defer c.Close()
	c.SetReadDeadline(time.Now().Add(3 * time.Second))
	_, err = io.ReadAll(c) // our greeting, then EOF when the server closes
	if err != nil {
		t.Fatalf("connection not closed by the server: %v", err)
	}
	if tr.Stats().HandshakeFailures != 1 {
		t.Errorf("stats = %+v", tr.Stats())
	}
}

// A frame announcing 2^40 bytes is refused before zmq4 allocates it (without
// the guard, zmq4 would call make([]byte, 1<<40) and the process would die).
func TestOversizeFrameRefused(t *testing.T) {
	tr, scheme := register(t, Limits{MaxMessage: 1 << 20})
	router := zmq4.NewRouter(context.Background())
	defer router.Close()
	addr := listen(t, router, scheme)
	c := rawPeer(t, addr, "DEALER", "")
	defer c.Close()
	hdr := []byte{flagLong}
	hdr = binary.BigEndian.AppendUint64(hdr, 1<<40)
	if _, err := c.Write(hdr); err != nil {
		t.Fatal(err)
	}
	c.SetReadDeadline(time.Now().Add(3 * time.Second))
	if _, err := c.Read(make([]byte, 1)); err == nil {
		t.Fatal("connection still open after an oversize frame")
	} else if ne, ok := err.(net.Error); ok && ne.Timeout() {
		t.Fatal("server did not close the connection")
	}
	if tr.Stats().OversizeFrames != 1 {
		t.Errorf("stats = %+v", tr.Stats())
	}
	// The socket still serves a well-behaved client.
	dealer := zmq4.NewDealer(context.Background())
	defer dealer.Close()
	if err := dealer.Dial("tcp://" + addr); err != nil {
		t.Fatal(err)
	}
	if err := dealer.Send(zmq4.NewMsgString("after")); err != nil {
		t.Fatal(err)
	}
	m, err := router.Recv()
	if err != nil || string(m.Frames[len(m.Frames)-1]) != "after" {
		t.Fatalf("recv %q %v", m.Frames, err)
	}
}

// Two peers announcing one identity each receive only their own replies.
func TestDuplicateIdentity(t *testing.T) {
	tr, scheme := register(t, Limits{})
	ctx := context.Background()
	router := zmq4.NewRouter(ctx)
	defer router.Close()
	addr := listen(t, router, scheme)
	go func() {
		for {
			m, err := router.Recv()
			if err != nil {
				return
			}
			router.Send(zmq4.NewMsgFrom(m.Frames[0], append([]byte("re:"), m.Frames[1]...)))
		}
	}()
	var ds [2]zmq4.Socket
	for i := range ds {
		ds[i] = zmq4.NewDealer(ctx, zmq4.WithID(zmq4.SocketIdentity("same")))
		defer ds[i].Close()
		if err := ds[i].Dial("tcp://" + addr); err != nil {
			t.Fatal(err)
		}
	}
	for round := range 3 {
		for i, d := range ds {
			if err := d.Send(zmq4.NewMsgString(fmt.Sprintf("%d-%d", i, round))); err != nil {
				t.Fatal(err)
			}
		}
		for i, d := range ds {
			m, err := d.Recv()
			if err != nil {
				t.Fatal(err)
			}
			if want := fmt.Sprintf("re:%d-%d", i, round); string(m.Frames[0]) != want {
				t.Fatalf("peer %d got %q, want %q", i, m.Frames[0], want)
			}
		}
	}
	if tr.Stats().RenamedIdentities != 1 {
		t.Errorf("stats = %+v", tr.Stats())
	}
}

// A subscriber that never reads cannot make the publisher's memory grow:
// whole messages beyond the per-peer queue are dropped and counted.
func TestStalledSubscriberBounded(t *testing.T) {
	tr, scheme := register(t, Limits{MaxQueue: 1 << 20})
	pub := zmq4.NewPub(context.Background())
	defer pub.Close()
	addr := listen(t, pub, scheme)
	c := rawPeer(t, addr, "SUB", "")
	defer c.Close()
	// Subscribe to everything (ZMTP 3.0: a message whose body is 0x01 + topic).
	if _, err := c.Write([]byte{0, 1, 1}); err != nil {
		t.Fatal(err)
	}
	time.Sleep(100 * time.Millisecond)
	runtime.GC()
	var before, after runtime.MemStats
	runtime.ReadMemStats(&before)
	payload := bytes.Repeat([]byte("x"), 100<<10)
	const n = 2000 // 200 MiB in all
	for i := range n {
		if err := pub.Send(zmq4.NewMsgFrom([]byte("topic"), payload)); err != nil {
			t.Fatal(i, err)
		}
	}
	deadline := time.Now().Add(10 * time.Second)
	for tr.Stats().DroppedMessages < n/2 && time.Now().Before(deadline) {
		time.Sleep(20 * time.Millisecond)
	}
	runtime.GC()
	runtime.ReadMemStats(&after)
	st := tr.Stats()
	if st.DroppedMessages < n/2 {
		t.Fatalf("only %d of %d messages dropped for a stalled peer", st.DroppedMessages, n)
	}
	if grow := int64(after.HeapInuse) - int64(before.HeapInuse); grow > 64<<20 {
		t.Errorf("heap grew by %d MiB for a stalled subscriber", grow>>20)
	}
	t.Logf("dropped %d of %d messages; heap %d → %d MiB", st.DroppedMessages, n, before.HeapInuse>>20, after.HeapInuse>>20)
}

func TestDefaultLimits(t *testing.T) {
	tr := New("tcp", Limits{}, nil)
	if tr.lim.MaxMessage != 16<<20 || tr.lim.MaxFrames != 64 || tr.lim.Budget.Limit() != 32<<20 || tr.lim.Handshake != 5*time.Second || tr.lim.MaxQueue != 64<<20 {
		t.Errorf("defaults = %+v", tr.lim)
	}
}

// dialAs sends a ZMTP 3.0 greeting and a READY of the given socket type and
// returns the connection without waiting for the server's READY.
func dialAs(t *testing.T, addr, sockType string) net.Conn {
	t.Helper()
	c, err := net.Dial("tcp", addr)
	if err != nil {
		t.Fatal(err)
	}
	body := (&readyCmd{keys: []string{"Socket-Type"}, vals: []string{sockType}}).encode()
	msg := append(ourGreeting(), appendFrameHeader(nil, flagCommand, uint64(len(body)))...)
	if _, err := c.Write(append(msg, body...)); err != nil {
		t.Fatal(err)
	}
	return c
}

// closedByServer reads until the server closes c, failing the test if it
// has not within d.
func closedByServer(t *testing.T, c net.Conn, d time.Duration) {
	t.Helper()
	c.SetReadDeadline(time.Now().Add(d))
	if _, err := io.Copy(io.Discard, c); err != nil {
		if ne, ok := err.(net.Error); ok && ne.Timeout() {
			t.Fatal("the server did not close the connection")
		}
	}
}

func openFDs(t *testing.T) int {
	t.Helper()
	ents, err := os.ReadDir("/proc/self/fd")
	if err != nil {
		t.Skip("no /proc/self/fd")
	}
	return len(ents)
}

// echoRouter answers every message on a ROUTER with "re:" and its last frame.
func echoRouter(router zmq4.Socket) {
	for {
		m, err := router.Recv()
		if err != nil {
			return
		}
		router.Send(zmq4.NewMsgFrom(m.Frames[0], append([]byte("re:"), m.Frames[len(m.Frames)-1]...)))
	}
}

// roundTrip checks that a well-behaved DEALER is served by the router.
func roundTrip(t *testing.T, addr, text string) {
	t.Helper()
	ctx, cancel := context.WithTimeout(context.Background(), 5*time.Second)
	defer cancel()
	d := zmq4.NewDealer(ctx)
	defer d.Close()
	if err := d.Dial("tcp://" + addr); err != nil {
		t.Fatal(err)
	}
	if err := d.Send(zmq4.NewMsgString(text)); err != nil {
		t.Fatal(err)
	}
	m, err := d.Recv()
	if err != nil || string(m.Frames[len(m.Frames)-1]) != "re:"+text {
		t.Fatalf("round trip %q: %q %v", text, m.Frames, err)
	}
}

// A peer of the wrong socket type (a PUB at a ROUTER) is closed by the
// server: 200 of them leave no file descriptor behind. (zmq4 alone refuses
// the peer but never closes the connection.)
func TestWrongSocketTypeClosed(t *testing.T) {
	tr, scheme := register(t, Limits{})
	router := zmq4.NewRouter(context.Background())
	defer router.Close()
	addr := listen(t, router, scheme)
	go echoRouter(router)
	roundTrip(t, addr, "warm-up")
	before := openFDs(t)
	const n = 200
	for range n {
		c := dialAs(t, addr, "PUB")
		closedByServer(t, c, 3*time.Second)
		c.Close()
	}
	time.Sleep(50 * time.Millisecond)
	if after := openFDs(t); after > before+5 {
		t.Errorf("%d descriptors open after %d refused peers, %d before", after, n, before)
	}
	if st := tr.Stats(); st.Incompatible != n {
		t.Errorf("stats = %+v, want %d incompatible", st, n)
	}
	roundTrip(t, addr, "after")
}

// One endless message of empty frames is cut off at MaxFrames: the
// connection closes after 65 frames, not after memory runs out.
func TestEmptyFrameFlood(t *testing.T) {
	tr, scheme := register(t, Limits{})
	router := zmq4.NewRouter(context.Background())
	defer router.Close()
	addr := listen(t, router, scheme)
	go echoRouter(router)
	c := rawPeer(t, addr, "DEALER", "")
	defer c.Close()
	flood := bytes.Repeat([]byte{flagMore, 0}, 64<<10) // 64 Ki empty frames per write
	go func() {
		for range 100 { // up to 12.5 MiB on the wire
			if _, err := c.Write(flood); err != nil {
				return
			}
		}
	}()
	closedByServer(t, c, 5*time.Second)
	if st := tr.Stats(); st.OversizeFrames != 1 {
		t.Errorf("stats = %+v, want 1 oversize", st)
	}
	roundTrip(t, addr, "after the flood")
}

// Many peers each announcing a frame as large as allowed and sending part
// of it can hold no more than the shared budget between them; the largest
// are disconnected, and a small message from a well-behaved client still
// gets through.
func TestBudgetSharedByPeers(t *testing.T) {
	const budget = 4 << 20
	b := NewBudget(budget)
	tr, scheme := register(t, Limits{Budget: b, MaxMessage: 2 << 20})
	router := zmq4.NewRouter(context.Background())
	defer router.Close()
	addr := listen(t, router, scheme)
	go echoRouter(router)
	const peers = 16
	part := bytes.Repeat([]byte("z"), 1<<20)
	var conns []net.Conn
	for range peers {
		c := rawPeer(t, addr, "DEALER", "")
		defer c.Close()
		hdr := binary.BigEndian.AppendUint64([]byte{flagLong}, 2<<20) // announces 2 MiB
		c.Write(hdr)
		go c.Write(part) // sends 1 MiB of it and stalls
		conns = append(conns, c)
	}
	deadline := time.Now().Add(5 * time.Second)
	for tr.Stats().OverBudget < peers-4 && time.Now().Before(deadline) {
		time.Sleep(10 * time.Millisecond)
	}
	if p := b.Peak(); p > budget {
		t.Errorf("peak buffered %d bytes, budget %d", p, budget)
	}
	st := tr.Stats()
	if st.OverBudget < peers-4 {
		t.Errorf("stats = %+v: at most 4 peers of 1 MiB fit a 4 MiB budget", st)
	}
	roundTrip(t, addr, "small")
	t.Logf("peak %d KiB of a %d KiB budget; %d peers disconnected", b.Peak()>>10, budget>>10, st.OverBudget)
}

// Check sees each complete message before zmq4; refused messages never
// reach the socket, and the log about them is rate-limited per peer.
func TestCheckAndLogLimit(t *testing.T) {
	var lines atomic.Int64
	tr := New("tcp", Limits{Check: func(f [][]byte) error {
		if string(f[len(f)-1]) == "bad" {
			return errors.New("bad message")
		}
		return nil
	}}, func(string, ...any) { lines.Add(1) })
	name := fmt.Sprintf("zgtest%d", schemeN.Add(1))
	if err := zmq4.RegisterTransport(name, tr); err != nil {
		t.Fatal(err)
	}
	router := zmq4.NewRouter(context.Background())
	defer router.Close()
	addr := listen(t, router, name)
	got := make(chan string, 100)
	go func() {
		for {
			m, err := router.Recv()
			if err != nil {
				return
			}
			got <- string(m.Frames[len(m.Frames)-1])
		}
	}()
	d := zmq4.NewDealer(context.Background())
	defer d.Close()
	if err := d.Dial("tcp://" + addr); err != nil {
		t.Fatal(err)
	}
	const n = 2000
	for range n {
		d.Send(zmq4.NewMsgString("bad"))
	}
	d.Send(zmq4.NewMsgString("good"))
	select {
	case s := <-got:
		if s != "good" {
			t.Fatalf("router received %q", s)
		}
	case <-time.After(5 * time.Second):
		t.Fatal("the good message did not arrive")
	}
	st := tr.Stats()
	if st.Rejected != n {
		t.Errorf("rejected %d, want %d", st.Rejected, n)
	}
	if l := lines.Load(); l > peerLines {
		t.Errorf("%d log lines for one peer's %d bad messages (limit %d)", l, n, peerLines)
	}
	if st.SuppressedLogs != n-peerLines {
		t.Errorf("suppressed %d lines, want %d", st.SuppressedLogs, n-peerLines)
	}
}

// The global half of the log limit: many peers together write at most
// allLines lines per window, then one summary line.
func TestRateLogSummary(t *testing.T) {
	var mu sync.Mutex
	var lines []string
	r := newRateLog(func(f string, a ...any) {
		mu.Lock()
		lines = append(lines, fmt.Sprintf(f, a...))
		mu.Unlock()
	}, 5, 100*time.Millisecond, "lines")
	for i := range 1000 {
		r.printf("line %d", i)
	}
	time.Sleep(250 * time.Millisecond)
	mu.Lock()
	defer mu.Unlock()
	if len(lines) != 6 || lines[5] != "zguard: 995 more lines suppressed in the last 100ms" {
		t.Errorf("lines = %q", lines)
	}
}

func TestCompatible(t *testing.T) {
	// RFC 23/ZMTP, section "Socket types": the valid combinations.
	for _, p := range [][2]string{{"ROUTER", "DEALER"}, {"ROUTER", "REQ"}, {"PUB", "SUB"}, {"REP", "REQ"}, {"REP", "DEALER"}, {"PAIR", "PAIR"}} {
		if !compatible(p[0], p[1]) || !compatible(p[1], p[0]) {
			t.Errorf("%s and %s should fit", p[0], p[1])
		}
	}
	for _, p := range [][2]string{{"ROUTER", "PUB"}, {"ROUTER", "SUB"}, {"PUB", "DEALER"}, {"REP", "REP"}, {"PUB", "PUB"}, {"ROUTER", "NONSENSE"}} {
		if compatible(p[0], p[1]) {
			t.Errorf("%s and %s should not fit", p[0], p[1])
		}
	}
}

// The byte cap is on the whole message: three frames of 512 KiB, each under
// a 1 MiB cap, close the connection at the third header.
func TestMultipartOverCap(t *testing.T) {
	tr, scheme := register(t, Limits{MaxMessage: 1 << 20})
	router := zmq4.NewRouter(context.Background())
	defer router.Close()
	addr := listen(t, router, scheme)
	go echoRouter(router)
	c := rawPeer(t, addr, "DEALER", "")
	defer c.Close()
	frame := append(appendFrameHeader(nil, flagMore, 512<<10), make([]byte, 512<<10)...)
	go func() {
		for range 3 {
			if _, err := c.Write(frame); err != nil {
				return
			}
		}
	}()
	closedByServer(t, c, 5*time.Second)
	if st := tr.Stats(); st.OversizeFrames != 1 {
		t.Errorf("stats = %+v, want 1 oversize", st)
	}
	roundTrip(t, addr, "after")
}

// Commands after the handshake are ignored, not passed on as messages.
func TestCommandsIgnored(t *testing.T) {
	tr, scheme := register(t, Limits{})
	router := zmq4.NewRouter(context.Background())
	defer router.Close()
	addr := listen(t, router, scheme)
	got := make(chan string, 10)
	go func() {
		for {
			m, err := router.Recv()
			if err != nil {
				return
			}
			got <- string(m.Frames[len(m.Frames)-1])
		}
	}()
	c := rawPeer(t, addr, "DEALER", "")
	defer c.Close()
	ping := append([]byte{4}, "PING\x00\x0a"...)
	for range 5 {
		c.Write(append(appendFrameHeader(nil, flagCommand, uint64(len(ping))), ping...))
	}
	c.Write(append(appendFrameHeader(nil, 0, 5), "hello"...))
	select {
	case s := <-got:
		if s != "hello" {
			t.Errorf("router received %q", s)
		}
	case <-time.After(3 * time.Second):
		t.Fatal("no message")
	}
	if st := tr.Stats(); st.Commands != 5 {
		t.Errorf("stats = %+v, want 5 commands", st)
	}
}

// At MaxConns, a new connection displaces the one least recently active: a
// peer that never had a message accepted goes before one that did.
func TestConnectionCap(t *testing.T) {
	tr, scheme := register(t, Limits{MaxConns: 8})
	router := zmq4.NewRouter(context.Background())
	defer router.Close()
	addr := listen(t, router, scheme)
	go echoRouter(router)
	ctx := context.Background()
	active := zmq4.NewDealer(ctx)
	defer active.Close()
	if err := active.Dial("tcp://" + addr); err != nil {
		t.Fatal(err)
	}
	ask := func(text string) {
		t.Helper()
		if err := active.Send(zmq4.NewMsgString(text)); err != nil {
			t.Fatal(err)
		}
		m, err := active.Recv()
		if err != nil || string(m.Frames[len(m.Frames)-1]) != "re:"+text {
			t.Fatalf("active peer: %q %v", m.Frames, err)
		}
	}
	ask("first")
	var idle []net.Conn
	for range 20 {
		c := rawPeer(t, addr, "DEALER", "")
		defer c.Close()
		idle = append(idle, c)
	}
	time.Sleep(100 * time.Millisecond)
	ask("still here") // the active peer was never the one displaced
	tr.mu.Lock()
	n := len(tr.conns)
	tr.mu.Unlock()
	if n > 8 {
		t.Errorf("%d live connections, cap 8", n)
	}
	if st := tr.Stats(); st.Displaced != 13 {
		t.Errorf("stats = %+v, want 13 displaced (1 active + 20 idle into 8)", st)
	}
	closedByServer(t, idle[0], 3*time.Second) // the oldest idle one went first
}

// Beyond MaxPending handshakes under way, new connections are closed at
// once; once the silent ones time out, clients connect again.
func TestPendingCap(t *testing.T) {
	tr, scheme := register(t, Limits{MaxPending: 4, Handshake: 300 * time.Millisecond})
	router := zmq4.NewRouter(context.Background())
	defer router.Close()
	addr := listen(t, router, scheme)
	go echoRouter(router)
	for range 10 {
		c, err := net.Dial("tcp", addr)
		if err != nil {
			t.Fatal(err)
		}
		defer c.Close()
	}
	deadline := time.Now().Add(3 * time.Second)
	for tr.Stats().Refused < 6 && time.Now().Before(deadline) {
		time.Sleep(10 * time.Millisecond)
	}
	if st := tr.Stats(); st.Refused != 6 {
		t.Errorf("stats = %+v, want 6 refused", st)
	}
	time.Sleep(400 * time.Millisecond)
	roundTrip(t, addr, "after the silent ones")
}

// A message just under the default cap, from a client alone, passes Check
// and arrives whole; the cap is clamped to half a smaller budget.
func TestLargeMessageWithinBudget(t *testing.T) {
	checked := make(chan int, 1)
	tr := New("tcp", Limits{Check: func(f [][]byte) error { checked <- len(f[len(f)-1]); return nil }}, nil)
	name := fmt.Sprintf("zgtest%d", schemeN.Add(1))
	if err := zmq4.RegisterTransport(name, tr); err != nil {
		t.Fatal(err)
	}
	router := zmq4.NewRouter(context.Background())
	defer router.Close()
	addr := listen(t, router, name)
	d := zmq4.NewDealer(context.Background())
	defer d.Close()
	if err := d.Dial("tcp://" + addr); err != nil {
		t.Fatal(err)
	}
	big := bytes.Repeat([]byte("m"), DefaultMaxMessage-64)
	if err := d.Send(zmq4.NewMsgFrom([]byte("head"), big)); err != nil {
		t.Fatal(err)
	}
	m, err := router.Recv()
	if err != nil || !bytes.Equal(m.Frames[len(m.Frames)-1], big) {
		t.Fatalf("large message: %d frames, %v", len(m.Frames), err)
	}
	if n := <-checked; n != len(big) {
		t.Errorf("Check saw a last frame of %d bytes", n)
	}
	if p := tr.lim.Budget.Peak(); p > DefaultBudget {
		t.Errorf("peak %d over the budget", p)
	}
	if small := New("tcp", Limits{Budget: NewBudget(4 << 20)}, nil); small.lim.MaxMessage != 2<<20 {
		t.Errorf("MaxMessage %d with a 4 MiB budget, want 2 MiB", small.lim.MaxMessage)
	}
}
