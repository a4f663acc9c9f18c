package builtin_test

import (
	"path/filepath"
	"strings"
	"syscall"
	"testing"
	"time"

	"semiflow/lang/run"
	"semiflow/lang/value"
)

// TestFIFORefused: a write to a FIFO that nobody reads, or a read from one
// that nobody writes, would block the session forever (every later cell
// waits behind it). Every builtin that writes or reads a file refuses it
// at once with a "file refused" error naming the path, and the session goes on.
func TestFIFORefused(t *testing.T) {
	fifo := filepath.Join(t.TempDir(), "pipe")
	if err := syscall.Mkfifo(fifo, 0o600); err != nil {
		t.Skipf("mkfifo: %v", err)
	}
	s := run.NewSession()
	exec(t, s, `A = {-1, 1 | 0, -2}
r = propagate(A, [1, 0], [0, 1])
x = 7`)
	for _, call := range []string{
		`writecsv([1, 2], "` + fifo + `")`,
		`writecsv(r, "` + fifo + `")`,
		`writejson([1, 2], "` + fifo + `")`,
		`writemm(A, "` + fifo + `")`,
		`writesvg(r, "` + fifo + `")`,
		`writepng(r, "` + fifo + `")`,
		`readmm("` + fifo + `")`,
		`readcsv("` + fifo + `")`,
	} {
		t.Run(call[:strings.Index(call, "(")], func(t *testing.T) {
			done := make(chan error, 1)
			go func() {
				_, _, err := s.Execute(t.Context(), call, nil)
				done <- err
			}()
			select {
			case err := <-done:
				if err == nil || !strings.Contains(err.Error(), fifo+": is a FIFO") {
					t.Errorf("%s: error %v, want 'is a FIFO'", call, err)
				}
			case <-time.After(time.Second):
				t.Fatalf("%s blocked for more than a second", call)
			}
		})
	}
	if v, ok := s.Lookup("x"); !ok || v.(value.Num) != 7 {
		t.Errorf("session state after the refusals: x = %v", v)
	}
}
