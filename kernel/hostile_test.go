package kernel

import (
	"fmt"
	"io"
	"net"
	"path/filepath"
	"runtime"
	"strings"
	"testing"
	"time"

	"semiflow/kernel/wire"
)

// rawSubscriber completes a ZMTP 3.0 handshake as a SUB socket (RFC
// 23/ZMTP), subscribes to everything and then never reads again.
func rawSubscriber(t *testing.T, port int) net.Conn {
	t.Helper()
	c, err := net.Dial("tcp", fmt.Sprintf("127.0.0.1:%d", port))
	if err != nil {
		t.Fatal(err)
	}
	greet := make([]byte, 64)
	greet[0], greet[9], greet[10] = 0xFF, 0x7F, 3
	copy(greet[12:], "NULL")
	ready := append([]byte{5}, "READY"...)
	ready = append(ready, 11)
	ready = append(ready, "Socket-Type"...)
	ready = append(ready, 0, 0, 0, 3)
	ready = append(ready, "SUB"...)
	c.Write(greet)
	c.Write(append([]byte{0x04, byte(len(ready))}, ready...))
	c.SetReadDeadline(time.Now().Add(wait))
	if _, err := io.ReadFull(c, make([]byte, 64)); err != nil {
		t.Fatal(err)
	}
	c.Write([]byte{0, 1, 1}) // subscribe to ""
	return c
}

// A stalled iopub subscriber cannot make the kernel's memory grow, and a
// normal client still receives every output.
func TestStalledIOPubSubscriber(t *testing.T) {
	k, c, _ := startKernel(t, func(cfg *Config) { cfg.Limits.MaxQueue = 1 << 20 })
	stalled := rawSubscriber(t, k.Conn().IOPubPort)
	defer stalled.Close()
	time.Sleep(100 * time.Millisecond)
	runtime.GC()
	var before, after runtime.MemStats
	runtime.ReadMemStats(&before)
	// Each cell sends 128 KiB on iopub (the code in execute_input and the
	// stream), well within the 1 MiB queue of a client that reads.
	big := strings.Repeat("y", 64<<10)
	const cells = 600 // 75 MiB in all
	for range cells {
		cell := exec("print " + big)
		cell["store_history"] = false // history would keep every input
		id := c.send(c.shell, wire.ExecuteRequest, cell)
		c.reply(id, wait)
		ms := c.idle(id)
		if fmt.Sprint(types(ms)) != "[status:busy execute_input stream status:idle]" {
			t.Fatalf("normal client got %v", types(ms))
		}
		c.mu.Lock()
		c.got = c.got[:0]
		c.mu.Unlock()
	}
	runtime.GC()
	runtime.ReadMemStats(&after)
	st := k.Stats()
	if st.Transport.DroppedMessages == 0 {
		t.Error("nothing was dropped for the stalled subscriber")
	}
	if grow := int64(after.HeapInuse) - int64(before.HeapInuse); grow > 32<<20 {
		t.Errorf("heap grew by %d MiB with a stalled subscriber", grow>>20)
	}
	t.Logf("dropped %d messages for the stalled peer; heap %d → %d MiB", st.Transport.DroppedMessages, before.HeapInuse>>20, after.HeapInuse>>20)
}

// The kernel also serves ipc connection files (unix sockets named IP-PORT).
func TestIPCTransport(t *testing.T) {
	dir := t.TempDir()
	_, c, _ := startKernel(t, func(cfg *Config) {
		cfg.Conn = wire.ConnectionInfo{Transport: "ipc", IP: filepath.Join(dir, "k"), Key: "k",
			ShellPort: 1, IOPubPort: 2, StdinPort: 3, ControlPort: 4, HBPort: 5}
	})
	if r := c.reply(c.send(c.shell, wire.ExecuteRequest, exec("over ipc")), wait); content(r)["status"] != "ok" {
		t.Errorf("ipc execute: %v", content(r))
	}
}
