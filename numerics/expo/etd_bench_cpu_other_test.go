//go:build !unix

package expo

// cpuSeconds is not measured here (see the unix version).
func cpuSeconds() float64 { return 0 }
