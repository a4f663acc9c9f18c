//go:build !amd64

package expo

// haveTriQuad is false: off amd64 the contour path runs two nodes per
// sweep in Go (etdFusedPair).
const haveTriQuad = false

func etdTriFwd4(n int, fac, v, w0, w1, w2, coef, e *float64) {
	panic("expo: no four-node kernel on this architecture")
}

func etdTriBwd4(n int, fac, e, acc, cw, m *float64) {
	panic("expo: no four-node kernel on this architecture")
}

func etdTriFactor4(n int, q, shifts, above, diag, below, right, one, stats *float64) {
	panic("expo: no four-node kernel on this architecture")
}
