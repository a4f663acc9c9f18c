package expo

import "golang.org/x/sys/cpu"

// haveTriQuad reports whether the assembly kernel for four tridiagonal
// solves side by side can run: it uses 256-bit AVX registers and fused
// multiply–add.
var haveTriQuad = cpu.X86.HasAVX2 && cpu.X86.HasFMA

// etdTriFwd4 forms the right sides v + Σ_j p_{k,j} w_j of four nodes and
// runs their forward substitutions: fac is a packed quad (see packTriQuad),
// coef holds Re p_0, Im p_0, Re p_1, Im p_1, Re p_2, Im p_2 of the four
// lanes (24 values), and e receives y_i/d_i, row i at e[8i:8i+8] (real
// parts of the lanes, then imaginary). Implemented in etd_quad_amd64.s.
//
//go:noescape
func etdTriFwd4(n int, fac, v, w0, w1, w2, coef, e *float64)

// etdTriBwd4 runs the four backward substitutions from e and adds
// Re Σ_k c_k x_{k,i} to acc[i]; cw holds Re c and Im c of the lanes, and m
// receives max_i |Re x_k,i| + |Im x_k,i| for each lane. Implemented in
// etd_quad_amd64.s.
//
//go:noescape
func etdTriBwd4(n int, fac, e, acc, cw, m *float64)

// etdTriFactor4 is factorTriQuad's recurrence for four lanes at once in
// AVX2 registers (see etdTriFactor4Go for the checks around it).
// Implemented in etd_quad_amd64.s.
//
//go:noescape
func etdTriFactor4(n int, q, shifts, above, diag, below, right, one, stats *float64)
