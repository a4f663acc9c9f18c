//go:build unix

package expo

import "syscall"

// cpuSeconds is the CPU time this process has used (user + system, all
// threads), for benchmarks that report it beside the wall time: on a
// shared machine it is the steadier of the two.
func cpuSeconds() float64 {
	var r syscall.Rusage
	if syscall.Getrusage(syscall.RUSAGE_SELF, &r) != nil {
		return 0
	}
	return float64(r.Utime.Sec+r.Stime.Sec) + float64(r.Utime.Usec+r.Stime.Usec)/1e6
}
