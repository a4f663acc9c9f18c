package kernel

import (
	"context"
	"errors"
	"fmt"
	"os"
	"strconv"
	"syscall"
	"time"
)

// WatchParent calls gone once, and returns, when the process that started
// the kernel is no longer there: when the parent process id changes from
// its value at the call (the parent died and the kernel was handed to
// another process, usually init), or when the process named by the
// JPY_PARENT_PID environment variable, if set, no longer exists. It polls
// every interval until ctx is done. A kernel left running after its
// notebook server died would otherwise hold its ports and memory forever.
func WatchParent(ctx context.Context, interval time.Duration, gone func(why string)) {
	jpy := 0
	if v := os.Getenv("JPY_PARENT_PID"); v != "" {
		if n, err := strconv.Atoi(v); err == nil && n > 1 {
			jpy = n
		}
	}
	watchParent(ctx, interval, os.Getppid(), os.Getppid, jpy, gone)
}

func watchParent(ctx context.Context, interval time.Duration, ppid0 int, getppid func() int, jpy int, gone func(string)) {
	t := time.NewTicker(interval)
	defer t.Stop()
	for {
		select {
		case <-ctx.Done():
			return
		case <-t.C:
		}
		if p := getppid(); p != ppid0 {
			gone(fmt.Sprintf("the parent process %d has exited (the parent is now %d)", ppid0, p))
			return
		}
		if jpy > 0 && !alive(jpy) {
			gone(fmt.Sprintf("the process %d named by JPY_PARENT_PID has exited", jpy))
			return
		}
	}
}

// alive reports whether a process with this id exists (signal 0 checks
// without sending; EPERM means it exists but belongs to someone else).
func alive(pid int) bool {
	err := syscall.Kill(pid, 0)
	return err == nil || errors.Is(err, syscall.EPERM)
}
