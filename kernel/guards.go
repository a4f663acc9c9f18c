package kernel

import (
	"crypto/sha256"
	"encoding/hex"
	"fmt"
	"io"
	"sync"
	"sync/atomic"
	"time"
)

// fifo is the execution queue: unbounded, so that the socket readers never
// wait and requests are numbered in the order they arrive.
type fifo struct {
	mu    sync.Mutex
	items []queued
	ready chan struct{} // has a value while items is non-empty
}

func (q *fifo) init() { q.ready = make(chan struct{}, 1) }

func (q *fifo) push(x queued) {
	q.mu.Lock()
	q.items = append(q.items, x)
	q.mu.Unlock()
	select {
	case q.ready <- struct{}{}:
	default:
	}
}

// pop returns the oldest request, or false when there is none.
func (q *fifo) pop() (queued, bool) {
	q.mu.Lock()
	defer q.mu.Unlock()
	if len(q.items) == 0 {
		return queued{}, false
	}
	x := q.items[0]
	q.items[0] = queued{}
	q.items = q.items[1:]
	if len(q.items) > 0 {
		select {
		case q.ready <- struct{}{}:
		default:
		}
	}
	return x, true
}

// sigSet remembers the last n signatures seen, to refuse replays. Memory is
// bounded: about 100 bytes a signature (6.5 MB for the default 65536).
type sigSet struct {
	mu   sync.Mutex
	seen map[[sha256.Size]byte]struct{}
	ring [][sha256.Size]byte
	next int
}

func newSigSet(n int) *sigSet {
	return &sigSet{seen: make(map[[sha256.Size]byte]struct{}, n), ring: make([][sha256.Size]byte, 0, n)}
}

// add records sig and reports whether it was new. The oldest signature is
// forgotten when the set is full.
func (s *sigSet) add(sig []byte) bool {
	var key [sha256.Size]byte
	if n, err := hex.Decode(key[:], sig); err != nil || n != sha256.Size {
		key = sha256.Sum256(sig)
	}
	s.mu.Lock()
	defer s.mu.Unlock()
	if _, dup := s.seen[key]; dup {
		return false
	}
	if len(s.ring) < cap(s.ring) {
		s.ring = append(s.ring, key)
	} else {
		delete(s.seen, s.ring[s.next])
		s.ring[s.next] = key
		s.next = (s.next + 1) % len(s.ring)
	}
	s.seen[key] = struct{}{}
	return true
}

// bucket is a token bucket of stream bytes: burst at most, refilled at
// rate a second. Once it runs dry, output stays off until a quarter of the
// burst has come back, so that the lines left out come in few long runs,
// each marked once.
type bucket struct {
	rate, burst float64

	mu      sync.Mutex
	tokens  float64
	last    time.Time
	dry     bool
	omitted atomic.Int64 // lines left out so far
}

func newBucket(rate, burst int) *bucket {
	return &bucket{rate: float64(rate), burst: float64(burst), tokens: float64(burst), last: time.Now()}
}

// take returns how many of n bytes may be shown now, and takes them.
func (b *bucket) take(n int) int {
	b.mu.Lock()
	defer b.mu.Unlock()
	now := time.Now()
	b.tokens = min(b.burst, b.tokens+b.rate*now.Sub(b.last).Seconds())
	b.last = now
	if b.dry && b.tokens < b.burst/4 {
		return 0
	}
	b.dry = false
	k := min(n, int(b.tokens))
	b.tokens -= float64(k)
	if k < n {
		b.dry = true
	}
	return k
}

// limitedWriter passes at most burst writes (log lines) per window to w and
// writes one line with the number left out when the window ends.
type limitedWriter struct {
	w      io.Writer
	burst  int
	window time.Duration

	mu         sync.Mutex
	start      time.Time
	n          int
	suppressed int
	timer      *time.Timer
}

func newLimitedWriter(w io.Writer, burst int, window time.Duration) *limitedWriter {
	return &limitedWriter{w: w, burst: burst, window: window}
}

func (l *limitedWriter) Write(p []byte) (int, error) {
	l.mu.Lock()
	defer l.mu.Unlock()
	now := time.Now()
	if now.Sub(l.start) >= l.window {
		l.start, l.n = now, 0
	}
	if l.n < l.burst {
		l.n++
		return l.w.Write(p)
	}
	l.suppressed++
	if l.timer == nil {
		l.timer = time.AfterFunc(l.start.Add(l.window).Sub(now), func() {
			l.mu.Lock()
			n := l.suppressed
			l.suppressed, l.timer = 0, nil
			l.mu.Unlock()
			if n > 0 {
				fmt.Fprintf(l.w, "semiflow kernel: %d more transport log lines suppressed in the last %v\n", n, l.window)
			}
		})
	}
	return len(p), nil
}
