// Package kernel serves the Jupyter messaging protocol (version 5.3) for an
// Evaluator: shell and control (ROUTER), iopub (PUB), stdin (ROUTER) and
// heartbeat (REP) sockets, one execution queue for shell requests, and a
// control channel that bypasses it (interrupt, shutdown, kernel_info).
//
// Sockets are github.com/go-zeromq/zmq4 sockets over the guarded transport of
// package zguard, so a misbehaving peer cannot stall the accept loop, force
// a huge allocation, grow the send queue without bound or steal another
// peer's replies.
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
	Limits          zguard.Limits // transport limits
	IOPubQueue      int           // iopub messages waiting to be sent (default 1024)
	InterruptGrace  time.Duration // how long an interrupted cell may take to stop (default 0.5 s)
	HandleInterrupt bool          // treat SIGINT as interrupt_request
}

// Stats counts what the kernel refused or dropped.
type Stats struct {
	Transport     zguard.Stats
	BadSignatures int64 // messages dropped for a wrong, empty or missing signature
	Malformed     int64 // messages that could not be decoded
	IOPubDropped  int64 // iopub messages dropped because the queue was full
	Panics        int64 // evaluator panics turned into error replies
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
	trans   *zguard.Transport

	shell, control, stdin *sock
	iopub, hb             zmq4.Socket

	ctx    context.Context
	cancel context.CancelFunc

	queue   chan queued
	pending []queued // drained behind a failure; executed or aborted first
	iopubCh chan [][]byte
	iopubWG sync.WaitGroup

	mu         sync.Mutex
	cellCancel context.CancelFunc
	stray      chan struct{} // closed when an interrupted cell that overran its grace returns

	execMu  sync.Mutex // held while a request touches the session
	count   int        // execution_count
	history []histEntry

	shutdown chan bool // restart flag
	stopOnce sync.Once

	badSig, malformed, iopubDropped, panics atomic.Int64
}

type queued struct {
	m     *wire.Message
	s     *sock // where the reply goes
	abort bool
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
		queue:    make(chan queued, 256),
		iopubCh:  make(chan [][]byte, cfg.IOPubQueue),
		shutdown: make(chan bool, 1),
	}
	network, prefix := "tcp", "sfz"
	if cfg.Conn.Transport == "ipc" {
		network, prefix = "unix", "sfzipc"
	}
	k.trans = zguard.New(network, cfg.Limits, k.log.Printf)
	scheme := fmt.Sprintf("%s%d", prefix, schemeN.Add(1))
	if err := zmq4.RegisterTransport(scheme, k.trans); err != nil {
		return nil, err
	}
	k.ctx, k.cancel = context.WithCancel(context.Background())
	zlog := zmq4.WithLogger(log.New(cfg.Log, "semiflow kernel: zmq4: ", log.LstdFlags))
	k.shell = &sock{Socket: zmq4.NewRouter(k.ctx, zlog), name: "shell"}
	k.control = &sock{Socket: zmq4.NewRouter(k.ctx, zlog), name: "control"}
	k.stdin = &sock{Socket: zmq4.NewRouter(k.ctx, zlog), name: "stdin"}
	k.iopub = zmq4.NewPub(k.ctx, zlog)
	k.hb = zmq4.NewRep(k.ctx, zlog)
	binds := []struct {
		s    zmq4.Socket
		port *int
	}{
		{k.shell, &k.cfg.Conn.ShellPort}, {k.control, &k.cfg.Conn.ControlPort}, {k.stdin, &k.cfg.Conn.StdinPort},
		{k.iopub, &k.cfg.Conn.IOPubPort}, {k.hb, &k.cfg.Conn.HBPort},
	}
	for _, b := range binds {
		ep := k.cfg.Conn.Endpoint(*b.port)
		ep = scheme + ep[strings.Index(ep, "://"):]
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
	return Stats{
		Transport:     k.trans.Stats(),
		BadSignatures: k.badSig.Load(),
		Malformed:     k.malformed.Load(),
		IOPubDropped:  k.iopubDropped.Load(),
		Panics:        k.panics.Load(),
	}
}

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
	go k.readLoop(k.shell, func(m *wire.Message) { k.enqueue(k.shell, m) })
	go k.readLoop(k.control, k.handleControl)
	go k.readLoop(k.stdin, func(m *wire.Message) {
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

// enqueue puts a request on the execution queue; its reply goes to s.
func (k *Kernel) enqueue(s *sock, m *wire.Message) {
	select {
	case k.queue <- queued{m: m, s: s}:
	case <-k.ctx.Done():
	}
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

// readLoop receives from s, decodes and checks each message and hands the
// good ones to handle. Bad messages are logged and dropped, or answered with
// an error reply when their header is good enough to reply to.
func (k *Kernel) readLoop(s *sock, handle func(*wire.Message)) {
	for {
		zm, err := s.Recv()
		if err != nil {
			if k.ctx.Err() != nil {
				return
			}
			time.Sleep(10 * time.Millisecond)
			continue
		}
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
		handle(m)
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

// publish queues an iopub message. Status messages wait for room (up to a
// second); others are dropped and counted when the queue is full.
func (k *Kernel) publish(parent *wire.Message, msgType string, content any) {
	topic := []byte("kernel." + k.ident + "." + msgType)
	frames, err := k.encode(parent, [][]byte{topic}, msgType, content)
	if err != nil {
		k.log.Printf("iopub: encoding %s: %v", msgType, err)
		return
	}
	defer func() { recover() }() // the channel is closed at shutdown
	if msgType == wire.Status {
		select {
		case k.iopubCh <- frames:
		case <-time.After(time.Second):
			k.iopubDropped.Add(1)
		}
		return
	}
	select {
	case k.iopubCh <- frames:
	default:
		if n := k.iopubDropped.Add(1); n == 1 || n%1000 == 0 {
			k.log.Printf("iopub: queue full, %d messages dropped so far", n)
		}
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
