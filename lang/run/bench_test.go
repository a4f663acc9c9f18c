package run

import (
	"context"
	"testing"

	"semiflow/lang/syntax"
)

// Speed targets live here, never in unit tests:
//
//	go test ./lang/run -run XXX -bench . -benchtime 2s

func BenchmarkParseTour(b *testing.B) {
	src, err := readFile("../../notebooks/tour.sf")
	if err != nil {
		b.Fatal(err)
	}
	b.SetBytes(int64(len(src)))
	for b.Loop() {
		if _, err := syntax.Parse("tour", src); err != nil {
			b.Fatal(err)
		}
	}
}

func benchExec(b *testing.B, setup, src string) {
	s := NewSession()
	if _, _, err := s.Execute(context.Background(), setup, nil); err != nil {
		b.Fatal(err)
	}
	for b.Loop() {
		if _, _, err := s.Execute(context.Background(), src, nil); err != nil {
			b.Fatal(err)
		}
	}
}

// User-function calls: 10^5 calls of a one-line function through map.
func BenchmarkMapUserFunction(b *testing.B) {
	benchExec(b, "f(x) = exp(-x^2) * cos(x)\nx = equispaced(0, 1, 100000)", "y = map(f, x)")
}

// The same work as whole-vector arithmetic.
func BenchmarkVectorArithmetic(b *testing.B) {
	benchExec(b, "x = equispaced(0, 1, 100000)", "y = exp(-x^2) * cos(x)")
}

// Recursion: fib(20) makes 21891 user-function calls.
func BenchmarkRecursion(b *testing.B) {
	benchExec(b, "fib(n) = when(n < 2, n, fib(n - 1) + fib(n - 2))", "fib(20)")
}
