package abandon

import (
	"context"
	"errors"
	"strings"
	"testing"
	"time"

	"semiflow/numerics/memguard"
)

// A call that ignores its context is abandoned at once when the context is
// cancelled; its declared bytes count against the guard until it returns,
// so a later call that would exceed the limit beside it is refused, naming
// the abandoned work; once it returns, nothing is held.
func TestRunAbandons(t *testing.T) {
	old := memguard.SetLimit(100 << 20)
	defer memguard.SetLimit(old)
	release := make(chan struct{})
	ctx, cancel := context.WithCancel(context.Background())
	go func() { time.Sleep(20 * time.Millisecond); cancel() }()
	start := time.Now()
	_, err := Run(ctx, 60<<20, "stubborn", func() (int, error) { <-release; return 1, nil })
	if !errors.Is(err, context.Canceled) || time.Since(start) > time.Second {
		t.Fatalf("Run = %v after %v, want the cancellation at once", err, time.Since(start))
	}
	if n, b := Held(); n != 1 || b != 60<<20 {
		t.Errorf("Held = %d, %d, want 1 call of 60 MiB", n, b)
	}
	_, err = Run(context.Background(), 50<<20, "second", func() (int, error) { return 2, nil })
	if !errors.Is(err, memguard.ErrTooLarge) || !strings.Contains(err.Error(), "second while 1 interrupted computation(s) still finish in the background (holding 60 MiB) needs 110 MiB") {
		t.Errorf("second call beside the abandoned one: %v", err)
	}
	close(release)
	for deadline := time.Now().Add(5 * time.Second); time.Now().Before(deadline); time.Sleep(5 * time.Millisecond) {
		if n, _ := Held(); n == 0 {
			break
		}
	}
	if n, b := Held(); n != 0 || b != 0 {
		t.Errorf("Held after the call returned = %d, %d", n, b)
	}
	if v, err := Run(context.Background(), 50<<20, "third", func() (int, error) { return 3, nil }); v != 3 || err != nil {
		t.Errorf("third call = %d, %v", v, err)
	}
}
