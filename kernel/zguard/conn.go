package zguard

import (
	"bufio"
	"encoding/binary"
	"errors"
	"fmt"
	"io"
	"net"
	"sync"
	"sync/atomic"
	"time"
)

// Errors that close a connection.
var (
	errOversize   = errors.New("zguard: message exceeds the size limit")
	errOverBudget = errors.New("zguard: buffer budget for unauthenticated messages spent")
	errProtocol   = errors.New("zguard: ZMTP framing error")
	errMismatch   = errors.New("zguard: socket types do not fit")
)

// conn is an accepted connection after a guarded handshake. Reads first
// replay the peer's greeting and READY, then hand zmq4 whole messages that
// the guard has read, within its limits, and that Limits.Check accepted;
// writes swallow zmq4's own greeting (already sent), check zmq4's READY
// against the peer's socket type, and queue whole messages for a writer
// goroutine.
type conn struct {
	net.Conn
	t        *Transport
	replay   []byte
	peerType string
	br       *bufio.Reader
	deliver  net.Buffers // an accepted message, as zmq4 is to read it
	release  func()
	evicted  atomic.Bool // disconnected by the Budget
	plog     peerLog
	born     time.Time
	active   atomic.Int64 // unix nanoseconds of the last accepted message; 0: none yet

	swallow  int  // bytes of zmq4's greeting still to discard
	sentOurs bool // zmq4's READY has gone out
	out      scanner
	pending  []byte // the outgoing message being assembled

	mu     sync.Mutex
	cond   *sync.Cond
	queue  [][]byte
	queued int
	err    error
	closed bool
	once   sync.Once
}

func newConn(c net.Conn, t *Transport, replay []byte, peerType string) *conn {
	g := &conn{Conn: c, t: t, replay: replay, peerType: peerType, swallow: greetingLen, br: bufio.NewReaderSize(c, 4096), born: time.Now()}
	g.cond = sync.NewCond(&g.mu)
	go g.writer()
	return g
}

func (g *conn) Read(p []byte) (int, error) {
	if len(g.replay) > 0 {
		n := copy(p, g.replay)
		g.replay = g.replay[n:]
		return n, nil
	}
	for len(g.deliver) == 0 {
		if err := g.next(); err != nil {
			g.Close()
			return 0, err
		}
	}
	n := 0
	for n < len(p) && len(g.deliver) > 0 {
		k := copy(p[n:], g.deliver[0])
		n += k
		if k == len(g.deliver[0]) {
			g.deliver[0] = nil
			g.deliver = g.deliver[1:]
		} else {
			g.deliver[0] = g.deliver[0][k:]
		}
	}
	return n, nil
}

// before reports whether g is to be displaced before h: never active
// before active, then the least recently active, then the older.
func (g *conn) before(h *conn) bool {
	a, b := g.active.Load(), h.active.Load()
	if a != b {
		return a < b
	}
	return g.born.Before(h.born)
}

// frameCost is charged to the budget for each frame besides its bytes: the
// slice headers and bookkeeping of an empty frame.
const frameCost = 64

// next reads one message or command from the peer and, if it is accepted,
// sets deliver to its bytes. A refused message leaves deliver empty.
func (g *conn) next() error {
	b := g.t.lim.Budget
	defer b.give(g, -1)
	charge := func(n int64) error {
		if !b.grant(g, n) {
			if !g.evicted.Load() {
				g.t.overBudget.Add(1)
				g.logf("disconnected: the buffers of unauthenticated messages are full (%d MiB)", b.limit>>20)
			}
			return errOverBudget
		}
		return nil
	}
	var frames [][]byte
	var total uint64
	for {
		flags, size, err := g.header()
		if err != nil {
			return err
		}
		if flags&flagCommand != 0 {
			if len(frames) > 0 || flags&flagMore != 0 {
				g.logf("a command inside a multipart message")
				return errProtocol
			}
			if size > maxCommand {
				g.t.oversizeFrames.Add(1)
				g.logf("command of %d bytes exceeds %d; closing the connection", size, maxCommand)
				return errOversize
			}
			body, err := g.body(size, charge)
			if err != nil {
				return err
			}
			// After the handshake zmq4 has no use for a command (it would
			// hand one to the application as if it were a message).
			g.t.commands.Add(1)
			g.logf("ignoring a ZMTP command after the handshake (%q)", commandName(body))
			return nil
		}
		if len(frames) == g.t.lim.MaxFrames {
			g.t.oversizeFrames.Add(1)
			g.logf("message of more than %d frames; closing the connection", g.t.lim.MaxFrames)
			return errOversize
		}
		if total += size; size > g.t.lim.MaxMessage || total > g.t.lim.MaxMessage {
			g.t.oversizeFrames.Add(1)
			g.logf("message of %d bytes or more exceeds %d; closing the connection", total, g.t.lim.MaxMessage)
			return errOversize
		}
		if err := charge(frameCost); err != nil {
			return err
		}
		body, err := g.body(size, charge)
		if err != nil {
			return err
		}
		frames = append(frames, body)
		if flags&flagMore == 0 {
			break
		}
	}
	if g.t.lim.Check != nil {
		if err := g.t.lim.Check(frames); err != nil {
			g.t.rejected.Add(1)
			g.logf("message dropped: %v", err)
			return nil
		}
	}
	g.active.Store(time.Now().UnixNano())
	d := make(net.Buffers, 0, 2*len(frames))
	for i, f := range frames {
		fl := byte(0)
		if i < len(frames)-1 {
			fl = flagMore
		}
		d = append(d, appendFrameHeader(nil, fl, uint64(len(f))), f)
	}
	g.deliver = d
	return nil
}

// commandName is the name a command body starts with (RFC 23/ZMTP).
func commandName(body []byte) string {
	if len(body) == 0 || int(body[0]) >= len(body) {
		return ""
	}
	return string(body[1 : 1+int(body[0])])
}

// header reads a frame's flags and size.
func (g *conn) header() (flags byte, size uint64, err error) {
	var hdr [9]byte
	if _, err = io.ReadFull(g.br, hdr[:2]); err != nil {
		return 0, 0, err
	}
	flags = hdr[0]
	if flags&^(flagMore|flagLong|flagCommand) != 0 {
		g.logf("reserved frame flag bits set (%#x); closing the connection", flags)
		return 0, 0, errProtocol
	}
	if flags&flagLong == 0 {
		return flags, uint64(hdr[1]), nil
	}
	if _, err = io.ReadFull(g.br, hdr[2:9]); err != nil {
		return 0, 0, err
	}
	return flags, binary.BigEndian.Uint64(hdr[1:9]), nil
}

// firstChunk is the most allocated for a frame before any of its bytes
// have arrived; the buffer then doubles as they do.
const firstChunk = 16 << 10

// body reads size bytes, growing its buffer only as bytes arrive and
// charging each growth before allocating it.
func (g *conn) body(size uint64, charge func(int64) error) ([]byte, error) {
	if size == 0 {
		return []byte{}, nil
	}
	var buf []byte
	for uint64(len(buf)) < size {
		if len(buf) == cap(buf) {
			c := min(size, max(2*uint64(cap(buf)), firstChunk))
			if err := charge(int64(c)); err != nil {
				return nil, err
			}
			nb := make([]byte, len(buf), c)
			copy(nb, buf)
			g.t.lim.Budget.give(g, int64(cap(buf))) // the old buffer is garbage now
			buf = nb
		}
		n, err := g.br.Read(buf[len(buf):cap(buf)])
		buf = buf[:len(buf)+n]
		if err != nil {
			return nil, err
		}
	}
	return buf, nil
}

func (g *conn) Write(p []byte) (int, error) {
	g.mu.Lock()
	err := g.err
	g.mu.Unlock()
	if err != nil {
		return 0, err
	}
	n := len(p)
	if g.swallow > 0 {
		k := min(g.swallow, len(p))
		g.swallow -= k
		p = p[k:]
	}
	for len(p) > 0 {
		k := g.out.feed(p)
		g.pending = append(g.pending, p[:k]...)
		p = p[k:]
		if g.out.complete {
			g.out.complete = false
			msg := g.pending
			g.pending = nil
			if !g.sentOurs {
				g.sentOurs = true
				if err := g.checkTypes(msg); err != nil {
					g.Close()
					return 0, err
				}
			}
			g.enqueue(msg)
		}
	}
	return n, nil
}

// checkTypes reads the socket type from zmq4's own READY command (its first
// outgoing command) and refuses a peer whose type cannot talk to it. zmq4
// would refuse it too, but without closing the connection, so that every
// such peer would keep a file descriptor for the life of the process.
func (g *conn) checkTypes(cmd []byte) error {
	hdrLen := 2
	if len(cmd) > 0 && cmd[0]&flagLong != 0 {
		hdrLen = 9
	}
	if len(cmd) < hdrLen || cmd[0]&flagCommand == 0 {
		return nil
	}
	r, err := parseReady(cmd[hdrLen:])
	if err != nil {
		return nil // not a READY: nothing to compare
	}
	ours, _ := r.get("Socket-Type")
	if !compatible(ours, g.peerType) {
		g.t.incompatible.Add(1)
		g.logf("a %s socket cannot connect to this %s socket; closing the connection", g.peerType, ours)
		return fmt.Errorf("%w: %s peer, %s here", errMismatch, g.peerType, ours)
	}
	return nil
}

func (g *conn) enqueue(msg []byte) {
	g.mu.Lock()
	defer g.mu.Unlock()
	if g.queued > 0 && g.queued+len(msg) > g.t.lim.MaxQueue {
		g.t.droppedMessages.Add(1)
		return
	}
	g.queue = append(g.queue, msg)
	g.queued += len(msg)
	g.cond.Signal()
}

func (g *conn) writer() {
	for {
		g.mu.Lock()
		for len(g.queue) == 0 && !g.closed {
			g.cond.Wait()
		}
		if g.closed {
			g.mu.Unlock()
			return
		}
		msg := g.queue[0]
		g.queue[0] = nil
		g.queue = g.queue[1:]
		g.mu.Unlock()
		_, err := g.Conn.Write(msg)
		g.mu.Lock()
		g.queued -= len(msg)
		if err != nil && g.err == nil {
			g.err = err
		}
		g.mu.Unlock()
		if err != nil {
			g.Close()
			return
		}
	}
}

func (g *conn) Close() error {
	var err error
	g.once.Do(func() {
		g.mu.Lock()
		g.closed = true
		if g.err == nil {
			g.err = net.ErrClosed
		}
		g.queue = nil
		g.cond.Broadcast()
		g.mu.Unlock()
		err = g.Conn.Close()
		if g.release != nil {
			g.release()
		}
		g.t.lim.Budget.give(g, -1)
		g.t.forget(g)
		g.closeLog()
	})
	return err
}

// scanner follows the ZMTP frame structure of the byte stream zmq4 writes
// (whose sizes are trusted): a flags byte, a one- or eight-byte size, then
// the body.
type scanner struct {
	state    int // 0 flags, 1 short size, 2..9 long size bytes, 10 body
	flags    byte
	size     uint64
	sizeN    int
	body     uint64 // body bytes still to come
	complete bool   // a whole message (or command) ended at the last byte fed
}

// feed advances over p and returns how many bytes it consumed: all of p,
// or fewer when a message completes early (complete is then set).
func (s *scanner) feed(p []byte) int {
	i := 0
	for i < len(p) {
		switch {
		case s.state == 0:
			s.flags = p[i]
			i++
			s.size, s.sizeN = 0, 0
			if s.flags&flagLong != 0 {
				s.state = 2
			} else {
				s.state = 1
			}
		case s.state == 1:
			s.size = uint64(p[i])
			i++
			s.sized()
		case s.state == 2:
			s.size = s.size<<8 | uint64(p[i])
			i++
			if s.sizeN++; s.sizeN == 8 {
				s.sized()
			}
		default: // body
			k := uint64(len(p) - i)
			if k > s.body {
				k = s.body
			}
			i += int(k)
			s.body -= k
			if s.body == 0 {
				s.endFrame()
			}
		}
		if s.complete {
			return i
		}
	}
	return i
}

func (s *scanner) sized() {
	s.body = s.size
	s.state = 10
	if s.body == 0 {
		s.endFrame()
	}
}

func (s *scanner) endFrame() {
	s.state = 0
	if s.flags&flagCommand != 0 || s.flags&flagMore == 0 {
		s.complete = true
	}
}
