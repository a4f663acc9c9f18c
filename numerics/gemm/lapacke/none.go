//go:build !openblas

package lapacke

// Available reports whether the binding is compiled in: not without the
// build tag openblas.
const Available = false
