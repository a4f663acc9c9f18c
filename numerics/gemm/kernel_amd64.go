package gemm

import "golang.org/x/sys/cpu"

// haveKernel reports whether the assembly kernel can run: it uses 256-bit
// AVX registers and fused multiply–add.
var haveKernel = cpu.X86.HasAVX2 && cpu.X86.HasFMA

// kernel6x8 adds A·B to the 6×8 tile of C at c (row stride ldc elements),
// where a is a packed 6×k panel (a[p*6+i]) and b a packed k×8 panel
// (b[p*8+j]). Implemented in kernel_amd64.s.
//
//go:noescape
func kernel6x8(k int, a, b, c *float64, ldc int)
