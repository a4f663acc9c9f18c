package kernel

import (
	"os"
	"sort"
	"strconv"
	"strings"
	"testing"
	"time"

	"semiflow/kernel/wire"
)

// BenchmarkExecuteRoundTrip measures a trivial execute_request over
// loopback: from send until both the execute_reply and the idle status
// have arrived. It reports the median (target ≤ 2 ms).
//
//	go test -run '^$' -bench ExecuteRoundTrip ./kernel/
func BenchmarkExecuteRoundTrip(b *testing.B) {
	_, c, _ := startKernelB(b)
	times := make([]time.Duration, 0, b.N)
	b.ResetTimer()
	for range b.N {
		t0 := time.Now()
		id := c.send(c.shell, wire.ExecuteRequest, exec("1"))
		c.reply(id, wait)
		c.idle(id)
		times = append(times, time.Since(t0))
		c.mu.Lock()
		c.got = c.got[:0]
		c.mu.Unlock()
	}
	b.StopTimer()
	sort.Slice(times, func(i, j int) bool { return times[i] < times[j] })
	b.ReportMetric(float64(times[len(times)/2].Microseconds())/1000, "median-ms")
	b.ReportMetric(float64(times[len(times)*9/10].Microseconds())/1000, "p90-ms")
}

// BenchmarkIdle measures the CPU time the process (kernel plus an idle
// connected client) uses over 5 s of idleness, and its resident set size.
//
//	go test -run '^$' -bench Idle -benchtime 1x ./kernel/
func BenchmarkIdle(b *testing.B) {
	startKernelB(b)
	for range b.N {
		time.Sleep(200 * time.Millisecond)
		u0 := cpuTicks(b)
		time.Sleep(5 * time.Second)
		u1 := cpuTicks(b)
		b.ReportMetric(float64(u1-u0)*10, "cpu-ms/5s") // clock ticks are 10 ms on Linux (USER_HZ 100)
		b.ReportMetric(float64(rssKiB(b))/1024, "rss-MiB")
	}
}

func startKernelB(b *testing.B) (*Kernel, *client, chan bool) {
	return startKernel(b, func(cfg *Config) { cfg.Log = discardLog{} })
}

type discardLog struct{}

func (discardLog) Write(p []byte) (int, error) { return len(p), nil }

func cpuTicks(b *testing.B) int64 {
	s, err := os.ReadFile("/proc/self/stat")
	if err != nil {
		b.Skip("no /proc/self/stat")
	}
	f := strings.Fields(string(s[strings.LastIndexByte(string(s), ')')+2:]))
	ut, _ := strconv.ParseInt(f[11], 10, 64) // field 14 utime
	st, _ := strconv.ParseInt(f[12], 10, 64) // field 15 stime
	return ut + st
}

func rssKiB(b *testing.B) int64 {
	s, err := os.ReadFile("/proc/self/status")
	if err != nil {
		b.Skip("no /proc/self/status")
	}
	for _, line := range strings.Split(string(s), "\n") {
		if strings.HasPrefix(line, "VmRSS:") {
			v, _ := strconv.ParseInt(strings.Fields(line)[1], 10, 64)
			return v
		}
	}
	return 0
}
