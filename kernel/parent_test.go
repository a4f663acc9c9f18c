package kernel

import (
	"context"
	osexec "os/exec"
	"strings"
	"sync/atomic"
	"testing"
	"time"
)

// The process named by JPY_PARENT_PID exits: the watcher notices within a
// few polls.
func TestWatchParentJPYPID(t *testing.T) {
	cmd := osexec.Command("sleep", "30")
	if err := cmd.Start(); err != nil {
		t.Skip("no sleep command:", err)
	}
	ctx, cancel := context.WithTimeout(context.Background(), 5*time.Second)
	defer cancel()
	why := make(chan string, 1)
	go watchParent(ctx, 20*time.Millisecond, 1, func() int { return 1 }, cmd.Process.Pid, func(s string) { why <- s })
	select {
	case s := <-why:
		t.Fatalf("reported gone while the process runs: %s", s)
	case <-time.After(100 * time.Millisecond):
	}
	cmd.Process.Kill()
	cmd.Wait() // reaped, as init reaps an orphan
	killed := time.Now()
	select {
	case s := <-why:
		if !strings.Contains(s, "JPY_PARENT_PID") {
			t.Errorf("reason %q", s)
		}
		t.Logf("noticed after %v: %s", time.Since(killed), s)
	case <-ctx.Done():
		t.Fatal("the watcher did not notice the process exit")
	}
}

// The parent process id changes (the parent died and init adopted the
// kernel): the watcher notices.
func TestWatchParentReparented(t *testing.T) {
	var ppid atomic.Int64
	ppid.Store(4242)
	ctx, cancel := context.WithTimeout(context.Background(), 5*time.Second)
	defer cancel()
	why := make(chan string, 1)
	go watchParent(ctx, 10*time.Millisecond, 4242, func() int { return int(ppid.Load()) }, 0, func(s string) { why <- s })
	time.Sleep(50 * time.Millisecond)
	select {
	case s := <-why:
		t.Fatalf("reported gone too early: %s", s)
	default:
	}
	ppid.Store(1)
	select {
	case s := <-why:
		if !strings.Contains(s, "4242") {
			t.Errorf("reason %q", s)
		}
	case <-ctx.Done():
		t.Fatal("the watcher did not notice the new parent")
	}
}
