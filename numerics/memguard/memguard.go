// Package memguard refuses dense allocations that would not fit in the
// machine's memory.
//
// The limit is a fraction (default 0.5) of MemTotal as read from
// /proc/meminfo; where that file cannot be read a fixed size of 8 GiB is
// assumed. Every dense matrix the numerics packages create on behalf of a
// user goes through Check first, so an impossible request fails with a
// message stating what it needs instead of exhausting memory.
package memguard

import (
	"bufio"
	"errors"
	"fmt"
	"math"
	"math/bits"
	"os"
	"strconv"
	"strings"
	"sync"
	"sync/atomic"
)

// ErrTooLarge is matched (errors.Is) by every refusal from this package.
var ErrTooLarge = errors.New("memguard: allocation too large")

// DefaultFraction is the fraction of total memory allowed for one request.
const DefaultFraction = 0.5

// FallbackTotal is the assumed total memory when /proc/meminfo is unreadable.
const FallbackTotal int64 = 8 << 30

// Element sizes in bytes.
const (
	RealBytes    = 8
	ComplexBytes = 16
)

var (
	limit    atomic.Int64 // 0 means not yet initialised
	initOnce sync.Once
	largest  atomic.Int64 // largest side of a dense matrix checked since ResetLargest
)

// LargestSide returns the largest number of rows or columns of a dense
// matrix checked by Dense since the last ResetLargest (refused or not).
// Benchmarks and tests use it to show that a sparse or structured operator
// of order N was never copied into an N×N dense matrix.
func LargestSide() int { return int(largest.Load()) }

// ResetLargest starts a new LargestSide record.
func ResetLargest() { largest.Store(0) }

func noteSide(r, c int) {
	side := int64(max(r, c))
	for {
		old := largest.Load()
		if side <= old || largest.CompareAndSwap(old, side) {
			return
		}
	}
}

// TooLargeError describes a refused request.
type TooLargeError struct {
	What  string  // e.g. "dense 200000×200000 complex matrix"
	Need  float64 // bytes the request needs (float64: may exceed int64)
	Limit int64   // bytes allowed
}

func (e *TooLargeError) Error() string {
	return fmt.Sprintf("%s needs %s; limit is %s", e.What, FormatBytes(e.Need), FormatBytes(float64(e.Limit)))
}

// Is reports whether target is ErrTooLarge.
func (e *TooLargeError) Is(target error) bool { return target == ErrTooLarge }

// MemTotal returns the machine's total memory in bytes from /proc/meminfo,
// or FallbackTotal with ok false when it cannot be read.
func MemTotal() (total int64, ok bool) {
	f, err := os.Open("/proc/meminfo")
	if err != nil {
		return FallbackTotal, false
	}
	defer f.Close()
	sc := bufio.NewScanner(f)
	for sc.Scan() {
		line := sc.Text()
		if !strings.HasPrefix(line, "MemTotal:") {
			continue
		}
		fields := strings.Fields(line[len("MemTotal:"):])
		if len(fields) == 0 {
			break
		}
		kb, err := strconv.ParseInt(fields[0], 10, 64)
		if err != nil || kb <= 0 {
			break
		}
		return kb * 1024, true
	}
	return FallbackTotal, false
}

func ensure() {
	initOnce.Do(func() {
		if limit.Load() == 0 {
			t, _ := MemTotal()
			limit.Store(int64(float64(t) * DefaultFraction))
		}
	})
}

// Limit returns the current limit in bytes.
func Limit() int64 {
	ensure()
	return limit.Load()
}

// SetLimit sets the limit to n bytes and returns the previous limit.
// SetLimit panics if n <= 0.
func SetLimit(n int64) (old int64) {
	if n <= 0 {
		panic("memguard: non-positive limit")
	}
	ensure()
	return limit.Swap(n)
}

// SetFraction sets the limit to f times the machine's total memory and
// returns the previous limit. SetFraction panics unless 0 < f <= 1.
func SetFraction(f float64) (old int64) {
	if !(f > 0 && f <= 1) {
		panic("memguard: fraction outside (0, 1]")
	}
	t, _ := MemTotal()
	return SetLimit(int64(float64(t) * f))
}

// CheckBytes returns a *TooLargeError (matching ErrTooLarge) if need bytes
// exceed the limit, and nil otherwise. what names the request in the message.
func CheckBytes(need int64, what string) error {
	if need < 0 {
		panic("memguard: negative size")
	}
	if l := Limit(); need > l {
		return &TooLargeError{What: what, Need: float64(need), Limit: l}
	}
	return nil
}

// Check returns an error if count elements of elemBytes bytes each, for a
// request named what, exceed the limit. Products that overflow int64 are
// refused. Check panics if count or elemBytes is negative.
func Check(count, elemBytes int, what string) error {
	if count < 0 || elemBytes < 0 {
		panic("memguard: negative size")
	}
	hi, lo := bits.Mul64(uint64(count), uint64(elemBytes))
	need := float64(count) * float64(elemBytes)
	if hi != 0 || lo > math.MaxInt64 {
		return &TooLargeError{What: what, Need: need, Limit: Limit()}
	}
	return CheckBytes(int64(lo), what)
}

// Bytes returns an error if need bytes, given as a float64 so that sums of
// products of sizes read from input cannot overflow, exceed the limit. A
// NaN or negative need is refused as well (it can only come from an
// overflowed size). what names the request in the message.
func Bytes(need float64, what string) error {
	if l := Limit(); !(need >= 0 && need <= float64(l)) {
		return &TooLargeError{What: what, Need: need, Limit: l}
	}
	return nil
}

// Floats checks n float64 values (work vectors, a Krylov basis, a copy)
// for a request named what, e.g. "Krylov basis (31 vectors of order
// 10000000000)". Every allocation whose size comes from an operator's order
// or from input goes through Floats, Complexes, Bytes or Dense first.
// Floats panics if n is negative.
func Floats(n int, what string) error { return Check(n, RealBytes, what) }

// Complexes checks n complex128 values, as Floats.
func Complexes(n int, what string) error { return Check(n, ComplexBytes, what) }

// Vectors checks k work vectors of order n with elements of elemBytes
// bytes (RealBytes or ComplexBytes), naming them "<what> (k vectors of
// order n)". The product is formed in floating point, so no order
// overflows it. Vectors panics if k, n or elemBytes is negative.
func Vectors(k, n, elemBytes int, what string) error {
	if k < 0 || n < 0 || elemBytes < 0 {
		panic("memguard: negative size")
	}
	return Bytes(float64(k)*float64(n)*float64(elemBytes), fmt.Sprintf("%s (%d vectors of order %d)", what, k, n))
}

// Dense checks an r×c dense matrix with elements of elemBytes bytes
// (RealBytes or ComplexBytes). The message reads, for example,
// "dense 200000×200000 complex matrix needs 596 GiB; limit is 12 GiB".
// Dense panics if r, c or elemBytes is negative.
func Dense(r, c, elemBytes int) error {
	if r < 0 || c < 0 || elemBytes < 0 {
		panic("memguard: negative size")
	}
	noteSide(r, c)
	kind := "real"
	if elemBytes == ComplexBytes {
		kind = "complex"
	}
	what := fmt.Sprintf("dense %d×%d %s matrix", r, c, kind)
	hi, lo := bits.Mul64(uint64(r), uint64(c))
	if hi != 0 {
		return &TooLargeError{What: what, Need: float64(r) * float64(c) * float64(elemBytes), Limit: Limit()}
	}
	if lo > math.MaxInt64 {
		return &TooLargeError{What: what, Need: float64(lo) * float64(elemBytes), Limit: Limit()}
	}
	return Check(int(lo), elemBytes, what)
}

// DenseReal is Dense(r, c, RealBytes).
func DenseReal(r, c int) error { return Dense(r, c, RealBytes) }

// DenseComplex is Dense(r, c, ComplexBytes).
func DenseComplex(r, c int) error { return Dense(r, c, ComplexBytes) }

// FormatBytes renders a byte count with a binary unit, rounded to a whole
// number of units at or above 10 units and to one decimal below.
func FormatBytes(n float64) string {
	units := []string{"B", "KiB", "MiB", "GiB", "TiB", "PiB", "EiB"}
	i := 0
	for n >= 1024 && i < len(units)-1 {
		n /= 1024
		i++
	}
	if i == 0 {
		return fmt.Sprintf("%.0f B", n)
	}
	if n >= 10 {
		return fmt.Sprintf("%.0f %s", n, units[i])
	}
	return fmt.Sprintf("%.1f %s", n, units[i])
}
