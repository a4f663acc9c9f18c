package zguard

import (
	"bytes"
	"context"
	"fmt"
	"testing"

	"github.com/go-zeromq/zmq4"
)

// BenchmarkRoundTrip measures a DEALER→ROUTER→DEALER echo of a 1 KiB and a
// 1 MiB message over loopback, through the guarded transport (every message
// read whole, charged to the budget and passed to a Check) and through
// zmq4's plain tcp, for the cost of the guard.
//
//	go test -run '^$' -bench RoundTrip ./kernel/zguard/
func BenchmarkRoundTrip(b *testing.B) {
	for _, size := range []int{1 << 10, 1 << 20} {
		for _, guarded := range []bool{true, false} {
			name := fmt.Sprintf("%dKiB/plain", size>>10)
			scheme := "tcp"
			if guarded {
				name = fmt.Sprintf("%dKiB/guarded", size>>10)
				tr := New("tcp", Limits{Check: func([][]byte) error { return nil }}, nil)
				scheme = fmt.Sprintf("zgbench%d", schemeN.Add(1))
				if err := zmq4.RegisterTransport(scheme, tr); err != nil {
					b.Fatal(err)
				}
			}
			b.Run(name, func(b *testing.B) {
				ctx := context.Background()
				router := zmq4.NewRouter(ctx)
				defer router.Close()
				if err := router.Listen(scheme + "://127.0.0.1:0"); err != nil {
					b.Fatal(err)
				}
				go echoRouter(router)
				d := zmq4.NewDealer(ctx)
				defer d.Close()
				if err := d.Dial("tcp://" + router.Addr().String()); err != nil {
					b.Fatal(err)
				}
				payload := bytes.Repeat([]byte("p"), size)
				b.SetBytes(int64(size))
				b.ResetTimer()
				for range b.N {
					if err := d.Send(zmq4.NewMsgFrom([]byte("<IDS|MSG>"), payload)); err != nil {
						b.Fatal(err)
					}
					if _, err := d.Recv(); err != nil {
						b.Fatal(err)
					}
				}
			})
		}
	}
}
