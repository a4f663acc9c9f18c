// Package kernel serves the Jupyter messaging protocol (version 5.3) for an
// Evaluator: shell and control (ROUTER), iopub (PUB), stdin (ROUTER) and
// heartbeat (REP) sockets, one execution queue for shell requests, and a
// control channel that bypasses it (interrupt, shutdown, kernel_info).
//
// Sockets are github.com/go-zeromq/zmq4 sockets over the guarded transport of
// package zguard, so a misbehaving peer cannot stall the accept loop, force
// a huge allocation, grow the send queue without bound, steal another
// peer's replies or keep a refused connection open. The signature of every
// message on shell, control and stdin is checked by the transport, before
// zmq4 buffers it, and a signature seen before (a replay) is refused.
package kernel

import (
	"context"
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"log"
	"os"
	"os/signal"
	"strings"
	"sync"
	"sync/atomic"
	"time"

	"github.com/go-zeromq/zmq4"

	"semiflow/kernel/wire"
	"semiflow/kernel/zguard"
)

// HelpLink is one entry of kernel_info's help_links.
type HelpLink struct {
	Text string `json:"text"`
	URL  string `json:"url"`
}

// Config configures a Kernel. Conn and Eval are required.
type Config struct {
	Conn wire.ConnectionInfo // a port of 0 binds a free port (see Kernel.Conn)
	Eval Evaluator

	Version         string // implementation_version and language version
	Banner          string
	HelpLinks       []HelpLink
	Log             io.Writer     // diagnostics; default os.Stderr
	Limits          zguard.Limits // transport limits of shell, control and stdin (Check is the kernel's own)
	IOPubQueue      int           // iopub messages waiting to be sent (default 1024)
	InterruptGrace  time.Duration // how long an interrupted cell may take to stop (default 0.5 s)
	HandleInterrupt bool          // treat SIGINT as interrupt_request
	// StreamRate and StreamBurst bound a cell's stream output: up to
	// StreamBurst bytes at once, then StreamRate bytes a second; lines
	// beyond are left out and a line in the stream says how many
	// (defaults 1 MiB/s and 4 MiB).
	StreamRate, StreamBurst int
	// Replays is how many recent signatures are remembered to refuse a
	// message sent twice (default 65536).
	Replays int
}

// Stats counts what the kernel refused or dropped.
type Stats struct {
	Transport     zguard.Stats // both transports (signed and unsigned sockets) together
	BufferedPeak  int64        // most bytes of unauthenticated messages buffered at once
	BadSignatures int64        // messages dropped for a wrong or empty signature
	Malformed     int64        // messages that could not be decoded
	Replayed      int64        // messages dropped because their signature was seen before
	StreamOmitted int64        // lines of stream output left out by the rate limit (and said so)
	Panics        int64        // evaluator panics turned into error replies
}

// ErrConfig reports a Config without a connection or evaluator.
var ErrConfig = errors.New("kernel: incomplete configuration")

// Kernel is one running kernel.
type Kernel struct {
	cfg     Config
	eval    Evaluator
	signer  *wire.Signer
	session string
	ident   string
	log     *log.Logger
	trans   *zguard.Transport // shell, control and stdin: messages checked before zmq4 sees them
	utrans  *zguard.Transport // iopub and heartbeat: small unsigned messages
	budget  *zguard.Budget
	replays *sigSet
	stream  *bucket

	shell, control, stdin *sock
	iopub, hb             zmq4.Socket

	ctx    context.Context
	cancel context.CancelFunc

	queue   fifo
	arrived atomic.Int64 // requests received so far on shell and control
	// abortUpTo: execute requests that arrived at or before this count are
	// aborted (set when a failure with stop_on_error is reported).
	abortUpTo int64
	iopubCh   chan [][]byte
	iopubWG   sync.WaitGroup

	mu         sync.Mutex
	cellCancel context.CancelFunc
	stray      chan struct{} // closed when an interrupted cell that overran its grace returns

	execMu  sync.Mutex // held while a request touches the session
	count   int        // execution_count
	history []histEntry

	shutdown chan bool // restart flag
	stopOnce sync.Once

	badSig, malformed, replayed, panics atomic.Int64
}

type queued struct {
	m   *wire.Message
	s   *sock // where the reply goes
	seq int64 // arrival order
}

type sock struct {
	zmq4.Socket
	name string
	mu   sync.Mutex
}

var schemeN atomic.Int64

// New binds the kernel's five sockets. Run serves them.
func New(cfg Config) (*Kernel, error) {
	if cfg.Eval == nil || cfg.Conn.IP == "" {
		return nil, ErrConfig
	}
	if cfg.Log == nil {
		cfg.Log = os.Stderr
	}
	if cfg.IOPubQueue <= 0 {
		cfg.IOPubQueue = 1024
	}
	if cfg.InterruptGrace <= 0 {
		cfg.InterruptGrace = 500 * time.Millisecond
	}
	if cfg.StreamRate <= 0 {
		cfg.StreamRate = 1 << 20
	}
	if cfg.StreamBurst <= 0 {
		cfg.StreamBurst = 4 << 20
	}
	if cfg.Replays <= 0 {
		cfg.Replays = 65536
	}
	if cfg.Conn.Transport == "" {
		cfg.Conn.Transport = "tcp"
	}
	k := &Kernel{
		cfg:      cfg,
		eval:     cfg.Eval,
		signer:   wire.NewSigner(cfg.Conn.Key),
		session:  wire.NewID(),
		ident:    wire.NewID(),
		log:      log.New(cfg.Log, "semiflow kernel: ", log.LstdFlags|log.Lmicroseconds),
		iopubCh:  make(chan [][]byte, cfg.IOPubQueue),
		shutdown: make(chan bool, 1),
		replays:  newSigSet(cfg.Replays),
		stream:   newBucket(cfg.StreamRate, cfg.StreamBurst),
	}
	k.queue.init()
	network, prefix := "tcp", "sfz"
	if cfg.Conn.Transport == "ipc" {
		network, prefix = "unix", "sfzipc"
	}
	lim := cfg.Limits
	if lim.Budget == nil {
		lim.Budget = zguard.NewBudget(0)
	}
	k.budget = lim.Budget
	lim.Check = k.check
	k.trans = zguard.New(network, lim, k.log.Printf)
	// Heartbeat pings and iopub subscriptions are a few bytes, unsigned.
	ulim := zguard.Limits{Handshake: lim.Handshake, MaxFrames: 8, MaxMessage: unsignedMax, Budget: lim.Budget, MaxQueue: lim.MaxQueue}
	k.utrans = zguard.New(network, ulim, k.log.Printf)
	n := schemeN.Add(1)
	scheme, uscheme := fmt.Sprintf("%s%d", prefix, n), fmt.Sprintf("%s%du", prefix, n)
	if err := zmq4.RegisterTransport(scheme, k.trans); err != nil {
		return nil, err
	}
	if err := zmq4.RegisterTransport(uscheme, k.utrans); err != nil {
		return nil, err
	}
	k.ctx, k.cancel = context.WithCancel(context.Background())
	// zmq4 writes a line for every connection it refuses: at most 20 per 10 s.
	zlog := zmq4.WithLogger(log.New(newLimitedWriter(cfg.Log, 20, 10*time.Second), "semiflow kernel: zmq4: ", log.LstdFlags))
	k.shell = &sock{Socket: zmq4.NewRouter(k.ctx, zlog), name: "shell"}
	k.control = &sock{Socket: zmq4.NewRouter(k.ctx, zlog), name: "control"}
	k.stdin = &sock{Socket: zmq4.NewRouter(k.ctx, zlog), name: "stdin"}
	k.iopub = zmq4.NewPub(k.ctx, zlog)
	k.hb = zmq4.NewRep(k.ctx, zlog)
	binds := []struct {
		s      zmq4.Socket
		port   *int
		scheme string
	}{
		{k.shell, &k.cfg.Conn.ShellPort, scheme}, {k.control, &k.cfg.Conn.ControlPort, scheme}, {k.stdin, &k.cfg.Conn.StdinPort, scheme},
		{k.iopub, &k.cfg.Conn.IOPubPort, uscheme}, {k.hb, &k.cfg.Conn.HBPort, uscheme},
	}
	for _, b := range binds {
		ep := k.cfg.Conn.Endpoint(*b.port)
		ep = b.scheme + ep[strings.Index(ep, "://"):]
		if err := b.s.Listen(ep); err != nil {
			k.closeSockets()
			return nil, fmt.Errorf("kernel: %w", err)
		}
		if *b.port == 0 && network == "tcp" {
			if a, ok := b.s.Addr().(interface{ String() string }); ok {
				s := a.String()
				fmt.Sscanf(s[strings.LastIndex(s, ":")+1:], "%d", b.port)
			}
		}
	}
	return k, nil
}

// Conn returns the connection information with the ports actually bound.
func (k *Kernel) Conn() wire.ConnectionInfo { return k.cfg.Conn }

// Stats returns the kernel's counters so far.
func (k *Kernel) Stats() Stats {
	a, b := k.trans.Stats(), k.utrans.Stats()
	return Stats{
		Transport: zguard.Stats{
			HandshakeFailures: a.HandshakeFailures + b.HandshakeFailures,
			OversizeFrames:    a.OversizeFrames + b.OversizeFrames,
			OverBudget:        a.OverBudget + b.OverBudget,
			Rejected:          a.Rejected + b.Rejected,
			Incompatible:      a.Incompatible + b.Incompatible,
			Commands:          a.Commands + b.Commands,
			DroppedMessages:   a.DroppedMessages + b.DroppedMessages,
			RenamedIdentities: a.RenamedIdentities + b.RenamedIdentities,
			SuppressedLogs:    a.SuppressedLogs + b.SuppressedLogs,
			Displaced:         a.Displaced + b.Displaced,
			Refused:           a.Refused + b.Refused,
		},
		BufferedPeak:  k.budget.Peak(),
		BadSignatures: k.badSig.Load(),
		Malformed:     k.malformed.Load(),
		Replayed:      k.replayed.Load(),
		StreamOmitted: k.stream.omitted.Load(),
		Panics:        k.panics.Load(),
	}
}

// unsignedMax is the largest message accepted on iopub and heartbeat.
const unsignedMax = 64 << 10

// check is the transport's Check for shell, control and stdin: a message
// reaches zmq4 only with a good signature never seen before.
func (k *Kernel) check(frames [][]byte) error {
	d, err := k.signer.Check(frames)
	switch {
	case err == nil:
	case errors.Is(err, wire.ErrSignature):
		k.badSig.Add(1)
		return err
	default:
		k.malformed.Add(1)
		return err
	}
	if k.signer.Enabled() && !k.replays.add(frames[d+1]) {
		k.replayed.Add(1)
		return errReplay
	}
	return nil
}

// errReplay refuses a message whose signature has been seen before.
var errReplay = errors.New("kernel: signature seen before (a replayed message)")

func (k *Kernel) closeSockets() {
	for _, s := range []zmq4.Socket{k.shell, k.control, k.stdin, k.iopub, k.hb} {
		if s != nil {
			s.Close()
		}
	}
}

// Run serves requests until a shutdown_request arrives or ctx is
// cancelled, then closes the sockets. restart is the shutdown request's
// restart flag (the process that started the kernel does the restarting).
func (k *Kernel) Run(ctx context.Context) (restart bool, err error) {
	if k.cfg.HandleInterrupt {
		sig := make(chan os.Signal, 1)
		signal.Notify(sig, os.Interrupt)
		defer signal.Stop(sig)
		go func() {
			for {
				select {
				case <-sig:
					k.log.Print("SIGINT: interrupting the running cell")
					k.Interrupt()
				case <-k.ctx.Done():
					return
				}
			}
		}()
	}
	k.iopubWG.Add(1)
	go k.iopubLoop()
	go k.heartbeat()
	go k.readLoop(k.shell, func(m *wire.Message, seq int64) { k.enqueue(k.shell, m, seq) })
	go k.readLoop(k.control, k.handleControl)
	go k.readLoop(k.stdin, func(m *wire.Message, _ int64) {
		k.log.Printf("stdin: ignoring %s (allow_stdin is not supported)", m.Header.MsgType)
	})
	go k.executor()
	k.publish(nil, wire.Status, map[string]any{"execution_state": "starting"})

	select {
	case restart = <-k.shutdown:
	case <-ctx.Done():
		err = ctx.Err()
	}
	k.Interrupt()
	// Let the final replies and the idle status leave before closing.
	time.Sleep(100 * time.Millisecond)
	k.cancel()
	close(k.iopubCh)
	k.iopubWG.Wait()
	time.Sleep(50 * time.Millisecond)
	k.closeSockets()
	return restart, err
}

// enqueue puts a request on the execution queue; its reply goes to s. The
// queue has no bound: only authenticated requests reach it, and a reader
// that never waits numbers requests in the order they arrived.
func (k *Kernel) enqueue(s *sock, m *wire.Message, seq int64) {
	k.queue.push(queued{m: m, s: s, seq: seq})
}

// Interrupt cancels the running cell, if any. It is what interrupt_request
// and SIGINT do.
func (k *Kernel) Interrupt() {
	k.mu.Lock()
	if k.cellCancel != nil {
		k.cellCancel()
	}
	k.mu.Unlock()
}

func (k *Kernel) stop(restart bool) {
	k.stopOnce.Do(func() { k.shutdown <- restart })
}

func (k *Kernel) heartbeat() {
	for {
		m, err := k.hb.Recv()
		if err != nil {
			if k.ctx.Err() != nil {
				return
			}
			time.Sleep(10 * time.Millisecond)
			continue
		}
		if err := k.hb.Send(m); err != nil && k.ctx.Err() == nil {
			k.log.Printf("heartbeat: %v", err)
		}
	}
}

// readLoop receives from s, decodes each message and hands the good ones
// to handle with their arrival number. Messages reach it only through
// check (signed, not replayed); one whose header or content is malformed
// is logged and dropped, or answered with an error reply when its header
// is good enough to reply to.
func (k *Kernel) readLoop(s *sock, handle func(*wire.Message, int64)) {
	for {
		zm, err := s.Recv()
		if err != nil {
			if k.ctx.Err() != nil {
				return
			}
			time.Sleep(10 * time.Millisecond)
			continue
		}
		seq := k.arrived.Add(1)
		m, err := wire.Decode(zm.Frames, k.signer)
		switch {
		case err == nil:
		case errors.Is(err, wire.ErrSignature):
			k.badSig.Add(1)
			k.log.Printf("%s: dropping a message with a bad signature (%v)", s.name, err)
			continue
		case errors.Is(err, wire.ErrHeader) && m != nil && wire.ReplyType(m.Header.MsgType) != "":
			k.malformed.Add(1)
			k.log.Printf("%s: malformed %s: %v", s.name, m.Header.MsgType, err)
			k.replyError(s, m, "BadMessage", err.Error())
			continue
		default:
			k.malformed.Add(1)
			k.log.Printf("%s: dropping an undecodable message: %v", s.name, err)
			continue
		}
		handle(m, seq)
	}
}

// send signs and sends a reply on a ROUTER socket to the request's identities.
func (k *Kernel) send(s *sock, parent *wire.Message, msgType string, content any) {
	frames, err := k.encode(parent, parent.Identities, msgType, content)
	if err != nil {
		k.log.Printf("%s: encoding %s: %v", s.name, msgType, err)
		return
	}
	if len(frames) == 0 || len(parent.Identities) == 0 {
		k.log.Printf("%s: %s has no routing identity; not sent", s.name, msgType)
		return
	}
	s.mu.Lock()
	err = s.Send(zmq4.NewMsgFrom(frames...))
	s.mu.Unlock()
	if err != nil && k.ctx.Err() == nil {
		k.log.Printf("%s: sending %s: %v", s.name, msgType, err)
	}
}

func (k *Kernel) encode(parent *wire.Message, ids [][]byte, msgType string, content any) ([][]byte, error) {
	c, err := json.Marshal(content)
	if err != nil {
		return nil, err
	}
	m := &wire.Message{
		Identities: ids,
		Header:     wire.NewHeader(msgType, k.session, "semiflow"),
		Metadata:   json.RawMessage("{}"),
		Content:    c,
	}
	if parent != nil {
		m.Parent = parent.RawHeader
	}
	return wire.Encode(m, k.signer)
}

// publish queues an iopub message, waiting for room: nothing is dropped
// here (stream output is bounded before it gets here, see output).
func (k *Kernel) publish(parent *wire.Message, msgType string, content any) {
	topic := []byte("kernel." + k.ident + "." + msgType)
	frames, err := k.encode(parent, [][]byte{topic}, msgType, content)
	if err != nil {
		k.log.Printf("iopub: encoding %s: %v", msgType, err)
		return
	}
	defer func() { recover() }() // the channel is closed at shutdown
	select {
	case k.iopubCh <- frames:
	case <-k.ctx.Done():
	}
}

func (k *Kernel) iopubLoop() {
	defer k.iopubWG.Done()
	for frames := range k.iopubCh {
		if err := k.iopub.Send(zmq4.NewMsgFrom(frames...)); err != nil && k.ctx.Err() == nil {
			k.log.Printf("iopub: %v", err)
		}
	}
}

// replyError answers a request that could not be handled, between busy and
// idle, with status "error".
func (k *Kernel) replyError(s *sock, m *wire.Message, ename, evalue string) {
	rt := wire.ReplyType(m.Header.MsgType)
	if rt == "" {
		return
	}
	k.publish(m, wire.Status, map[string]any{"execution_state": "busy"})
	k.send(s, m, rt, errorContent(ename, evalue, []string{ename + ": " + evalue}))
	k.publish(m, wire.Status, map[string]any{"execution_state": "idle"})
}

func errorContent(ename, evalue string, tb []string) map[string]any {
	if tb == nil {
		tb = []string{}
	}
	return map[string]any{"status": "error", "ename": ename, "evalue": evalue, "traceback": tb}
}
