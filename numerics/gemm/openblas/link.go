//go:build openblas

package openblas

// #cgo LDFLAGS: -lopenblas
import "C"
