package zguard

import (
	"fmt"
	"runtime"
	"sync"
	"sync/atomic"
	"time"
)

// Budget bounds the bytes that all peers together may have buffered in
// messages not yet accepted by Limits.Check (for a kernel: not yet
// authenticated). Every connection of every Transport that shares a Budget
// draws on it as bytes actually arrive, never by the length a frame header
// announces. When a grant would exceed the limit, the peer holding the most
// is disconnected and its bytes returned, unless that peer is the one
// asking, which is then disconnected itself: a small message from a
// well-behaved client always displaces a large one from a flood.
//
// Bytes returned become garbage (a refused message, a disconnected peer,
// the smaller buffer a frame grew out of). The collector would let them
// pile up to about the size of the live heap before running, which under
// a flood that keeps the budget full doubles the resident size; so once
// half a budget of garbage has built up, a Budget starts a collection
// itself (one at a time).
type Budget struct {
	limit int64

	mu      sync.Mutex
	used    int64
	peak    int64
	holders map[*conn]int64

	evictions  atomic.Int64
	garbage    atomic.Int64 // bytes returned since the last collection began
	collecting atomic.Bool
	collects   atomic.Int64
}

// DefaultBudget is the budget of a Transport given none: 32 MiB.
const DefaultBudget = 32 << 20

// NewBudget returns a budget of limit bytes (DefaultBudget if limit ≤ 0).
func NewBudget(limit int64) *Budget {
	if limit <= 0 {
		limit = DefaultBudget
	}
	return &Budget{limit: limit, holders: map[*conn]int64{}}
}

// Limit returns the budget's size in bytes.
func (b *Budget) Limit() int64 { return b.limit }

// Peak returns the most bytes held at once so far.
func (b *Budget) Peak() int64 {
	b.mu.Lock()
	defer b.mu.Unlock()
	return b.peak
}

// Used returns the bytes held now.
func (b *Budget) Used() int64 {
	b.mu.Lock()
	defer b.mu.Unlock()
	return b.used
}

// grant charges n bytes to g, disconnecting the largest holder when the
// budget is short. It reports false when g itself must go.
func (b *Budget) grant(g *conn, n int64) bool {
	if g.evicted.Load() {
		return false
	}
	var victims []*conn
	b.mu.Lock()
	ok := true
	for b.used+n > b.limit {
		var big *conn
		var bigN int64
		for c, h := range b.holders {
			if h > bigN {
				big, bigN = c, h
			}
		}
		if big == nil || big == g || bigN <= b.holders[g]+n {
			ok = false
			break
		}
		delete(b.holders, big)
		b.used -= bigN
		b.discard(bigN)
		big.evicted.Store(true)
		victims = append(victims, big)
	}
	if ok {
		b.holders[g] += n
		b.used += n
		b.peak = max(b.peak, b.used)
	}
	b.mu.Unlock()
	for _, v := range victims {
		b.evictions.Add(1)
		v.t.overBudget.Add(1)
		v.logf("disconnected: the buffers of unauthenticated messages are full (%d MiB) and this peer held the most", b.limit>>20)
		v.Conn.Close() // its reader fails at once and drops its buffers
	}
	return ok
}

// give returns n bytes charged to g, all of them if n < 0 (fewer if g was
// evicted meanwhile).
func (b *Budget) give(g *conn, n int64) {
	if n == 0 {
		return
	}
	b.mu.Lock()
	defer b.mu.Unlock()
	h, ok := b.holders[g]
	if !ok {
		return
	}
	if n < 0 || n > h {
		n = h
	}
	b.discard(n)
	b.used -= n
	if h == n {
		delete(b.holders, g)
	} else {
		b.holders[g] = h - n
	}
}

// discard counts n bytes of garbage and starts a collection when half a
// budget has built up.
func (b *Budget) discard(n int64) {
	if b.garbage.Add(n) < b.limit/2 || !b.collecting.CompareAndSwap(false, true) {
		return
	}
	go func() {
		b.garbage.Store(0)
		runtime.GC()
		b.collects.Add(1)
		b.collecting.Store(false)
	}()
}

// Collections returns how many collections the budget has started.
func (b *Budget) Collections() int64 { return b.collects.Load() }

// rateLog passes at most burst lines per window to logf and counts the
// rest; at the end of a window in which lines were suppressed it writes one
// line saying how many.
type rateLog struct {
	logf   func(format string, args ...any)
	burst  int
	window time.Duration
	what   string // names the suppressed lines in the summary

	mu         sync.Mutex
	start      time.Time
	n          int
	suppressed int64
	timer      *time.Timer
	total      atomic.Int64 // lines suppressed over the whole life
}

func newRateLog(logf func(string, ...any), burst int, window time.Duration, what string) *rateLog {
	return &rateLog{logf: logf, burst: burst, window: window, what: what}
}

// allow reports whether a line may be written now, counting it otherwise.
func (r *rateLog) allow() bool {
	r.mu.Lock()
	defer r.mu.Unlock()
	now := time.Now()
	if now.Sub(r.start) >= r.window {
		r.start, r.n = now, 0
	}
	if r.n < r.burst {
		r.n++
		return true
	}
	r.suppressed++
	r.total.Add(1)
	if r.timer == nil {
		r.timer = time.AfterFunc(r.start.Add(r.window).Sub(now), r.summary)
	}
	return false
}

func (r *rateLog) printf(format string, args ...any) {
	if r.allow() {
		r.logf(format, args...)
	}
}

func (r *rateLog) summary() {
	r.mu.Lock()
	n := r.suppressed
	r.suppressed, r.timer = 0, nil
	r.mu.Unlock()
	if n > 0 {
		r.logf("zguard: %d more %s suppressed in the last %v", n, r.what, r.window)
	}
}

// Log rates: each connection writes at most peerLines lines per logWindow,
// and all connections of a Transport together at most allLines.
const (
	logWindow = 10 * time.Second
	peerLines = 3
	allLines  = 20
)

// peerLog is the per-connection half of the log limit; the global half is
// the Transport's rateLog.
type peerLog struct {
	mu         sync.Mutex
	start      time.Time
	n          int
	suppressed int64
}

func (g *conn) logf(format string, args ...any) {
	p := &g.plog
	p.mu.Lock()
	now := time.Now()
	if now.Sub(p.start) >= logWindow {
		p.start, p.n = now, 0
	}
	ok := p.n < peerLines
	if ok {
		p.n++
	} else {
		p.suppressed++
	}
	p.mu.Unlock()
	if !ok {
		g.t.log.total.Add(1)
		return
	}
	g.t.log.printf("zguard: %s: %s", g.RemoteAddr(), fmt.Sprintf(format, args...))
}

// closeLog writes, on close, how many of this peer's lines were suppressed.
func (g *conn) closeLog() {
	p := &g.plog
	p.mu.Lock()
	n := p.suppressed
	p.mu.Unlock()
	if n > 0 {
		g.t.log.printf("zguard: %s: closed; %d more lines about this peer were suppressed", g.RemoteAddr(), n)
	}
}
