// Package zguard is a ZeroMQ (ZMTP 3) transport for github.com/go-zeromq/zmq4
// that puts deadlines and limits around the pure-Go socket implementation.
//
// zmq4 performs each incoming connection's handshake on its single accept
// loop, allocates every frame at the length the peer announces, queues
// messages for a slow peer without bound, delivers a ROUTER reply to every
// connection that announced the same identity, and leaves open a connection
// whose peer has the wrong socket type. A Transport registered with
// zmq4.RegisterTransport and used for listening guards against each:
//
//   - The ZMTP greeting and the peer's READY command are read on a
//     goroutine of their own, under a deadline, before zmq4 sees the
//     connection; a silent peer delays no one and is dropped at the deadline.
//   - Incoming messages are read whole by the guard before zmq4 sees them:
//     frames are read as their bytes arrive, never allocated at an announced
//     length, and charged to a Budget shared by every connection; a message
//     of more than MaxFrames frames or MaxMessage bytes closes the
//     connection. A complete message is passed to Limits.Check (for a
//     kernel, the signature check); only accepted messages reach zmq4, and
//     their bytes leave the budget.
//   - Outgoing messages go through a bounded per-connection queue; whole
//     messages that do not fit are dropped and counted, so a stalled reader
//     cannot make memory grow.
//   - A peer whose READY names an identity already in use on the same
//     listener is given a fresh random identity, so two peers never share
//     one another's replies.
//   - A peer whose socket type cannot talk to the listening socket's is
//     closed at once. Commands after the handshake (PING and the like,
//     which zmq4 would pass on as messages) are ignored.
//   - Log lines about peers are rate-limited, per connection and in all.
//
// Only the NULL security mechanism is supported.
package zguard

import (
	"bytes"
	"context"
	"crypto/rand"
	"encoding/binary"
	"errors"
	"fmt"
	"io"
	"net"
	"strings"
	"sync"
	"sync/atomic"
	"time"

	"github.com/go-zeromq/zmq4/transport"
)

// Limits configures a Transport. Zero fields take the defaults.
type Limits struct {
	// Handshake bounds the time from accept to a complete peer READY
	// command (default 5 s).
	Handshake time.Duration
	// MaxFrames is the most frames one incoming message may have (default
	// 64: a Jupyter message has six plus routing identities and buffers).
	MaxFrames int
	// MaxMessage is the most bytes, all frames together, of one incoming
	// message (default 16 MiB; at most half the Budget).
	MaxMessage uint64
	// Budget is shared by every connection of the Transports given it:
	// the bytes of incoming messages not yet accepted by Check. Nil gives
	// the Transport a budget of its own of DefaultBudget bytes.
	Budget *Budget
	// Check, if set, sees every complete incoming message before zmq4
	// does; a message it refuses is dropped and counted, and the error
	// logged (rate-limited). Check runs on the connection's reader
	// goroutine, for many connections at once.
	Check func(frames [][]byte) error
	// MaxQueue is the number of bytes of outgoing messages that may wait
	// for one slow peer (default 64 MiB).
	MaxQueue int
	// MaxConns bounds the connections of a Transport (default 1024; each
	// costs about 13 KiB). A new one beyond it closes the connection least
	// recently active: one that never had a message accepted by Check
	// first, the oldest of those first.
	MaxConns int
	// MaxPending bounds the connections still in their handshake (default
	// 256); beyond it a new connection is closed at once.
	MaxPending int
}

// Default limits.
const (
	DefaultMaxFrames  = 64
	DefaultMaxMessage = 16 << 20
)

// Stats counts what a Transport has refused or dropped.
type Stats struct {
	HandshakeFailures int64 // peers that did not complete a valid handshake in time
	OversizeFrames    int64 // connections closed for a message of too many bytes or frames
	OverBudget        int64 // connections closed because the shared budget was spent
	Rejected          int64 // complete messages refused by Limits.Check
	Incompatible      int64 // connections closed because the peer's socket type does not fit
	Commands          int64 // ZMTP commands after the handshake, ignored
	DroppedMessages   int64 // outgoing messages dropped because a peer's queue was full
	RenamedIdentities int64 // peers given a fresh identity because theirs was in use
	SuppressedLogs    int64 // log lines about peers left out by the rate limit
	Displaced         int64 // connections closed to make room under MaxConns
	Refused           int64 // connections closed at once: MaxPending handshakes under way
}

// Transport implements transport.Transport for tcp and unix sockets.
type Transport struct {
	network string
	lim     Limits
	log     *rateLog

	handshakeFailures atomic.Int64
	oversizeFrames    atomic.Int64
	overBudget        atomic.Int64
	rejected          atomic.Int64
	incompatible      atomic.Int64
	commands          atomic.Int64
	droppedMessages   atomic.Int64
	renamedIDs        atomic.Int64
	displaced         atomic.Int64
	refused           atomic.Int64
	pending           atomic.Int64

	mu    sync.Mutex
	conns map[*conn]struct{} // live connections after their handshake
}

// New returns a guarded transport over network ("tcp" or "unix"). logf
// receives lines about refused peers, at most 3 per peer and 20 in all per
// 10 s, then a line saying how many were left out; nil discards them.
func New(network string, lim Limits, logf func(format string, args ...any)) *Transport {
	if lim.Handshake <= 0 {
		lim.Handshake = 5 * time.Second
	}
	if lim.MaxFrames <= 0 {
		lim.MaxFrames = DefaultMaxFrames
	}
	if lim.MaxMessage == 0 {
		lim.MaxMessage = DefaultMaxMessage
	}
	if lim.Budget == nil {
		lim.Budget = NewBudget(0)
	}
	if half := uint64(lim.Budget.Limit() / 2); lim.MaxMessage > half {
		// A frame grows by doubling, the old buffer and the new one both
		// charged: a message must fit in half the budget.
		lim.MaxMessage = half
	}
	if lim.MaxQueue <= 0 {
		lim.MaxQueue = 64 << 20
	}
	if lim.MaxConns <= 0 {
		lim.MaxConns = 1024
	}
	if lim.MaxPending <= 0 {
		lim.MaxPending = 256
	}
	if logf == nil {
		logf = func(string, ...any) {}
	}
	return &Transport{network: network, lim: lim, log: newRateLog(logf, allLines, logWindow, "lines about peers"), conns: map[*conn]struct{}{}}
}

// Stats returns the counters so far.
func (t *Transport) Stats() Stats {
	return Stats{
		HandshakeFailures: t.handshakeFailures.Load(),
		OversizeFrames:    t.oversizeFrames.Load(),
		OverBudget:        t.overBudget.Load(),
		Rejected:          t.rejected.Load(),
		Incompatible:      t.incompatible.Load(),
		Commands:          t.commands.Load(),
		DroppedMessages:   t.droppedMessages.Load(),
		RenamedIdentities: t.renamedIDs.Load(),
		SuppressedLogs:    t.log.total.Load(),
		Displaced:         t.displaced.Load(),
		Refused:           t.refused.Load(),
	}
}

// Dial connects without guards: the kernel only listens.
func (t *Transport) Dial(ctx context.Context, d transport.Dialer, addr string) (net.Conn, error) {
	return d.DialContext(ctx, t.network, addr)
}

// Addr returns the listening address of an end-point.
func (t *Transport) Addr(ep string) (string, error) {
	return transport.New(t.network).Addr(ep)
}

// Listen announces on addr and returns a listener whose Accept yields only
// connections that completed the ZMTP greeting and READY exchange.
func (t *Transport) Listen(ctx context.Context, addr string) (net.Listener, error) {
	inner, err := net.Listen(t.network, addr)
	if err != nil {
		return nil, err
	}
	l := &listener{Listener: inner, t: t, ready: make(chan net.Conn), done: make(chan struct{}), ids: map[string]int{}}
	go l.loop()
	return l, nil
}

var _ transport.Transport = (*Transport)(nil)

type listener struct {
	net.Listener
	t     *Transport
	ready chan net.Conn
	done  chan struct{}
	once  sync.Once

	mu  sync.Mutex
	ids map[string]int // identities of live connections
}

func (l *listener) loop() {
	for {
		c, err := l.Listener.Accept()
		if err != nil {
			if errors.Is(err, net.ErrClosed) {
				l.once.Do(func() { close(l.done) })
				return
			}
			time.Sleep(10 * time.Millisecond)
			continue
		}
		if l.t.pending.Add(1) > int64(l.t.lim.MaxPending) {
			l.t.pending.Add(-1)
			l.t.refused.Add(1)
			l.t.log.printf("zguard: %s: %d handshakes under way already; closing the connection", c.RemoteAddr(), l.t.lim.MaxPending)
			c.Close()
			continue
		}
		go func() {
			defer l.t.pending.Add(-1)
			l.handshake(c)
		}()
	}
}

// admit counts g among the live connections, first closing the least
// recently active one if the Transport is at MaxConns.
func (t *Transport) admit(g *conn) {
	t.mu.Lock()
	var victim *conn
	if len(t.conns) >= t.lim.MaxConns {
		for c := range t.conns {
			if victim == nil || c.before(victim) {
				victim = c
			}
		}
		delete(t.conns, victim) // no other admission picks it too
	}
	t.conns[g] = struct{}{}
	t.mu.Unlock()
	if victim != nil {
		t.displaced.Add(1)
		victim.logf("closed to make room: %d connections at most", t.lim.MaxConns)
		victim.Close()
	}
}

func (t *Transport) forget(g *conn) {
	t.mu.Lock()
	delete(t.conns, g)
	t.mu.Unlock()
}

func (l *listener) Accept() (net.Conn, error) {
	select {
	case c := <-l.ready:
		return c, nil
	case <-l.done:
		return nil, net.ErrClosed
	}
}

func (l *listener) Close() error {
	err := l.Listener.Close()
	l.once.Do(func() { close(l.done) })
	return err
}

// ZMTP 3.0 framing constants (RFC 23/ZMTP).
const (
	greetingLen = 64
	flagMore    = 0x01
	flagLong    = 0x02
	flagCommand = 0x04
	maxCommand  = 64 << 10 // READY carries a few short properties
)

// ourGreeting is the greeting zmq4 itself sends: version 3.0, NULL, as-server 0.
func ourGreeting() []byte {
	g := make([]byte, greetingLen)
	g[0], g[9], g[10], g[11] = 0xFF, 0x7F, 3, 0
	copy(g[12:32], "NULL")
	return g
}

func (l *listener) handshake(c net.Conn) {
	t := l.t
	fail := func(format string, args ...any) {
		t.handshakeFailures.Add(1)
		t.log.printf("zguard: %s: "+format, append([]any{c.RemoteAddr()}, args...)...)
		c.Close()
	}
	_ = c.SetDeadline(time.Now().Add(t.lim.Handshake))
	if _, err := c.Write(ourGreeting()); err != nil {
		fail("sending greeting: %v", err)
		return
	}
	greet := make([]byte, greetingLen)
	if _, err := io.ReadFull(c, greet); err != nil {
		fail("no ZMTP greeting: %v", err)
		return
	}
	if greet[0] != 0xFF || greet[9] != 0x7F || greet[10] < 3 {
		fail("not a ZMTP 3 greeting")
		return
	}
	if mech := string(bytes.TrimRight(greet[12:32], "\x00")); mech != "NULL" {
		fail("security mechanism %q is not NULL", mech)
		return
	}
	var hdr [9]byte
	if _, err := io.ReadFull(c, hdr[:2]); err != nil {
		fail("no READY command: %v", err)
		return
	}
	if hdr[0]&flagCommand == 0 || hdr[0]&flagMore != 0 {
		fail("first frame after the greeting is not a command")
		return
	}
	size := uint64(hdr[1])
	if hdr[0]&flagLong != 0 {
		if _, err := io.ReadFull(c, hdr[2:9]); err != nil {
			fail("no READY command: %v", err)
			return
		}
		size = binary.BigEndian.Uint64(hdr[1:9])
	}
	if size > maxCommand {
		t.oversizeFrames.Add(1)
		fail("READY command of %d bytes exceeds %d", size, maxCommand)
		return
	}
	body := make([]byte, size)
	if _, err := io.ReadFull(c, body); err != nil {
		fail("short READY command: %v", err)
		return
	}
	props, err := parseReady(body)
	if err != nil {
		fail("%v", err)
		return
	}
	id, hasID := props.get("Identity")
	if hasID && id != "" {
		l.mu.Lock()
		if l.ids[id] > 0 {
			fresh := make([]byte, 16)
			_, _ = rand.Read(fresh)
			fresh[0] = 0 // libzmq reserves a leading zero byte for generated identities
			t.renamedIDs.Add(1)
			t.log.printf("zguard: %s: identity %q already in use on this socket; assigning a fresh one", c.RemoteAddr(), id)
			id = string(fresh)
			props.set("Identity", id)
		}
		l.ids[id]++
		l.mu.Unlock()
	}
	_ = c.SetDeadline(time.Time{})
	ready := props.encode()
	replay := make([]byte, 0, greetingLen+9+len(ready))
	replay = append(replay, greet...)
	replay = appendFrameHeader(replay, flagCommand, uint64(len(ready)))
	replay = append(replay, ready...)
	peerType, _ := props.get("Socket-Type")
	gc := newConn(c, t, replay, peerType)
	if hasID && id != "" {
		gc.release = func() {
			l.mu.Lock()
			if l.ids[id]--; l.ids[id] <= 0 {
				delete(l.ids, id)
			}
			l.mu.Unlock()
		}
	}
	t.admit(gc)
	select {
	case l.ready <- gc:
	case <-l.done:
		gc.Close()
	}
}

func appendFrameHeader(b []byte, flags byte, size uint64) []byte {
	if size > 255 {
		b = append(b, flags|flagLong)
		return binary.BigEndian.AppendUint64(b, size)
	}
	return append(b, flags, byte(size))
}

// readyCmd is a parsed READY command: its properties in order.
type readyCmd struct {
	keys, vals []string
}

func (r *readyCmd) get(k string) (string, bool) {
	for i, key := range r.keys {
		if equalFold(key, k) {
			return r.vals[i], true
		}
	}
	return "", false
}

func (r *readyCmd) set(k, v string) {
	for i, key := range r.keys {
		if equalFold(key, k) {
			r.vals[i] = v
			return
		}
	}
	r.keys, r.vals = append(r.keys, k), append(r.vals, v)
}

func (r *readyCmd) encode() []byte {
	b := append([]byte{5}, "READY"...)
	for i, k := range r.keys {
		b = append(b, byte(len(k)))
		b = append(b, k...)
		b = binary.BigEndian.AppendUint32(b, uint32(len(r.vals[i])))
		b = append(b, r.vals[i]...)
	}
	return b
}

func equalFold(a, b string) bool { return bytes.EqualFold([]byte(a), []byte(b)) }

// parseReady checks a READY command body strictly (zmq4's own property
// reader can index past the end of a malformed body).
func parseReady(b []byte) (*readyCmd, error) {
	if len(b) < 6 || b[0] != 5 || string(b[1:6]) != "READY" {
		return nil, errors.New("first command is not READY")
	}
	r := &readyCmd{}
	p := b[6:]
	for len(p) > 0 {
		kl := int(p[0])
		if kl == 0 || 1+kl+4 > len(p) {
			return nil, errors.New("malformed READY property")
		}
		k := string(p[1 : 1+kl])
		vl := binary.BigEndian.Uint32(p[1+kl : 1+kl+4])
		p = p[1+kl+4:]
		if uint64(vl) > uint64(len(p)) {
			return nil, errors.New("malformed READY property value")
		}
		if equalFold(k, "Identity") && vl > 255 {
			return nil, fmt.Errorf("identity of %d bytes exceeds 255", vl)
		}
		r.keys, r.vals = append(r.keys, k), append(r.vals, string(p[:vl]))
		p = p[vl:]
	}
	if _, ok := r.get("Socket-Type"); !ok {
		return nil, errors.New("READY names no Socket-Type")
	}
	return r, nil
}

// compatible reports whether sockets of types a and b may be connected
// (RFC 23/ZMTP, and RFC 28, 29 and 30 for the request-reply, publish-
// subscribe and pipeline patterns).
func compatible(a, b string) bool {
	ok := map[string][]string{
		"PAIR":   {"PAIR"},
		"PUB":    {"SUB", "XSUB"},
		"XPUB":   {"SUB", "XSUB"},
		"SUB":    {"PUB", "XPUB"},
		"XSUB":   {"PUB", "XPUB"},
		"REQ":    {"REP", "ROUTER"},
		"REP":    {"REQ", "DEALER"},
		"DEALER": {"REP", "DEALER", "ROUTER"},
		"ROUTER": {"REQ", "DEALER", "ROUTER"},
		"PUSH":   {"PULL"},
		"PULL":   {"PUSH"},
	}
	for _, t := range ok[strings.ToUpper(a)] {
		if strings.EqualFold(t, b) {
			return true
		}
	}
	return false
}
