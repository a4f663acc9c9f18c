package zguard

import (
	"errors"
	"fmt"
	"net"
	"sync"
)

// errOversize is returned by Read when the peer announces too much.
var errOversize = errors.New("zguard: frame exceeds the size limit")

// conn is an accepted connection after a guarded handshake. Reads first
// replay the peer's greeting and READY, then pass frames through a header
// scanner; writes swallow zmq4's own greeting (already sent) and queue whole
// messages for a writer goroutine.
type conn struct {
	net.Conn
	t       *Transport
	replay  []byte
	in      scanner
	release func()

	swallow int // bytes of zmq4's greeting still to discard
	out     scanner
	pending []byte // the outgoing message being assembled

	mu     sync.Mutex
	cond   *sync.Cond
	queue  [][]byte
	queued int
	err    error
	closed bool
	once   sync.Once
}

func newConn(c net.Conn, t *Transport, replay []byte) *conn {
	g := &conn{Conn: c, t: t, replay: replay, swallow: greetingLen}
	g.in.max = t.lim.MaxFrame
	g.out.max = ^uint64(0)
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
	n, err := g.Conn.Read(p)
	if n > 0 {
		for q := p[:n]; len(q) > 0; {
			k, serr := g.in.feed(q)
			if serr != nil {
				g.t.oversizeFrames.Add(1)
				g.t.logf("zguard: %s: %v; closing the connection", g.RemoteAddr(), serr)
				g.Close()
				return 0, errOversize
			}
			g.in.complete = false
			q = q[k:]
		}
	}
	return n, err
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
		k, _ := g.out.feed(p)
		g.pending = append(g.pending, p[:k]...)
		p = p[k:]
		if g.out.complete {
			g.out.complete = false
			g.enqueue(g.pending)
			g.pending = nil
		}
	}
	return n, nil
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
	})
	return err
}

// scanner follows the ZMTP frame structure of a byte stream: a flags byte,
// a one- or eight-byte size, then the body.
type scanner struct {
	max      uint64 // largest frame and message accepted
	state    int    // 0 flags, 1 short size, 2..9 long size bytes, 10 body
	flags    byte
	size     uint64
	sizeN    int
	body     uint64 // body bytes still to come
	msgLen   uint64 // bytes of frame bodies so far in this message
	complete bool   // a whole message (or command) ended at the last byte fed
}

// feed advances over p and returns how many bytes it consumed: all of p,
// or fewer when a message completes early (complete is then set). It
// returns an error when a frame or message announces more than max.
func (s *scanner) feed(p []byte) (int, error) {
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
			if err := s.sized(); err != nil {
				return i, err
			}
		case s.state == 2:
			s.size = s.size<<8 | uint64(p[i])
			i++
			if s.sizeN++; s.sizeN == 8 {
				if err := s.sized(); err != nil {
					return i, err
				}
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
			return i, nil
		}
	}
	return i, nil
}

func (s *scanner) sized() error {
	if s.size > s.max {
		return fmt.Errorf("%w: peer announced a frame of %d bytes (limit %d)", errOversize, s.size, s.max)
	}
	if s.flags&flagCommand == 0 {
		s.msgLen += s.size
		if s.msgLen > s.max {
			return fmt.Errorf("%w: multipart message of over %d bytes (limit %d)", errOversize, s.msgLen, s.max)
		}
	}
	s.body = s.size
	s.state = 10
	if s.body == 0 {
		s.endFrame()
	}
	return nil
}

func (s *scanner) endFrame() {
	s.state = 0
	if s.flags&flagCommand != 0 || s.flags&flagMore == 0 {
		s.complete = true
		if s.flags&flagCommand == 0 {
			s.msgLen = 0
		}
	}
}
