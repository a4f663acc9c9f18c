package gemm

import (
	"runtime"
	"sync"

	"gonum.org/v1/gonum/blas"
	"gonum.org/v1/gonum/blas/gonum"
)

// Implementation is gonum's native BLAS with a faster Dgemm.
type Implementation struct {
	gonum.Implementation
}

// Tile and block sizes. mr × nr is the register tile of the kernel; a
// kc × nr panel of B (16 KiB) and an mr × kc panel of A (12 KiB) share the
// L1 cache, an mc × kc block of A (240 KiB) sits in L2.
const (
	mr = 6
	nr = 8
	kc = 256
	mc = 120
	nc = 2048
)

// smallWork is the m·n·k below which gonum's Dgemm is used: packing does
// not pay for itself on tiny products.
const smallWork = 24 * 24 * 24

// parallelWork is the m·n·k above which the rows of C are shared among
// goroutines.
const parallelWork = 64 * 64 * 64

// Dgemm computes C = α op(A) op(B) + β C for row-major matrices, where
// op(X) is X or Xᵀ, op(A) is m×k, op(B) is k×n and C is m×n. It panics as
// gonum's Dgemm does on bad arguments.
func (impl Implementation) Dgemm(tA, tB blas.Transpose, m, n, k int, alpha float64, a []float64, lda int, b []float64, ldb int, beta float64, c []float64, ldc int) {
	if !haveKernel || !validArgs(tA, tB, m, n, k, a, lda, b, ldb, c, ldc) ||
		m*n*k < smallWork {
		impl.Implementation.Dgemm(tA, tB, m, n, k, alpha, a, lda, b, ldb, beta, c, ldc)
		return
	}
	scaleC(m, n, beta, c, ldc)
	if alpha == 0 || k == 0 {
		return
	}
	p := opMatrix{data: a, ld: lda, trans: tA == blas.Trans || tA == blas.ConjTrans}
	q := opMatrix{data: b, ld: ldb, trans: tB == blas.Trans || tB == blas.ConjTrans}
	workers := runtime.GOMAXPROCS(0)
	if m*n*k < parallelWork || workers < 2 {
		gemmSerial(0, m, 0, n, k, alpha, p, q, c, ldc)
		return
	}
	// Share C among the workers in row blocks (or column blocks when C is
	// short and wide), each a whole number of register tiles.
	var wg sync.WaitGroup
	if m >= n || m < workers*mr {
		rows := roundUp((m+workers-1)/workers, mr)
		for r0 := 0; r0 < m; r0 += rows {
			r1 := min(r0+rows, m)
			wg.Add(1)
			go func() {
				defer wg.Done()
				gemmSerial(r0, r1, 0, n, k, alpha, p, q, c, ldc)
			}()
		}
	} else {
		cols := roundUp((n+workers-1)/workers, nr)
		for c0 := 0; c0 < n; c0 += cols {
			c1 := min(c0+cols, n)
			wg.Add(1)
			go func() {
				defer wg.Done()
				gemmSerial(0, m, c0, c1, k, alpha, p, q, c, ldc)
			}()
		}
	}
	wg.Wait()
}

// validArgs reports whether the arguments are ones gonum's Dgemm accepts;
// for anything else that Dgemm is called, so it panics with its message.
func validArgs(tA, tB blas.Transpose, m, n, k int, a []float64, lda int, b []float64, ldb int, c []float64, ldc int) bool {
	okT := func(t blas.Transpose) bool {
		return t == blas.NoTrans || t == blas.Trans || t == blas.ConjTrans
	}
	if !okT(tA) || !okT(tB) || m < 0 || n < 0 || k < 0 || ldc < max(1, n) {
		return false
	}
	rowA, colA := m, k
	if tA != blas.NoTrans {
		rowA, colA = k, m
	}
	rowB, colB := k, n
	if tB != blas.NoTrans {
		rowB, colB = n, k
	}
	if lda < max(1, colA) || ldb < max(1, colB) {
		return false
	}
	if m == 0 || n == 0 {
		return true
	}
	return len(a) >= lda*(rowA-1)+colA && len(b) >= ldb*(rowB-1)+colB && len(c) >= ldc*(m-1)+n
}

func roundUp(x, step int) int { return (x + step - 1) / step * step }

// scaleC sets C = β C; β = 0 clears C whatever it held (NaN included).
func scaleC(m, n int, beta float64, c []float64, ldc int) {
	if beta == 1 {
		return
	}
	for i := 0; i < m; i++ {
		row := c[i*ldc : i*ldc+n]
		if beta == 0 {
			clear(row)
			continue
		}
		for j := range row {
			row[j] *= beta
		}
	}
}

// opMatrix is op(X) for a row-major X with leading dimension ld.
type opMatrix struct {
	data  []float64
	ld    int
	trans bool
}

// buffers holds one goroutine's packing space.
type buffers struct {
	a   []float64 // mc × kc, in mr-row panels
	b   []float64 // kc × nc, in nr-column panels
	acc [mr * nr]float64
}

var pool = sync.Pool{New: func() any {
	return &buffers{a: make([]float64, mc*kc), b: make([]float64, kc*nc)}
}}

// gemmSerial adds α op(A)[r0:r1, :] op(B)[:, c0:c1] to C[r0:r1, c0:c1].
func gemmSerial(r0, r1, c0, c1, k int, alpha float64, a, b opMatrix, c []float64, ldc int) {
	buf := pool.Get().(*buffers)
	defer pool.Put(buf)
	for jc := c0; jc < c1; jc += nc {
		nb := min(nc, c1-jc)
		for pc := 0; pc < k; pc += kc {
			kb := min(kc, k-pc)
			packB(buf.b, b, pc, kb, jc, nb)
			for ic := r0; ic < r1; ic += mc {
				mb := min(mc, r1-ic)
				packA(buf.a, a, ic, mb, pc, kb, alpha)
				for jr := 0; jr < nb; jr += nr {
					bp := buf.b[jr*kb:]
					w := min(nr, nb-jr)
					for ir := 0; ir < mb; ir += mr {
						ap := buf.a[ir*kb:]
						h := min(mr, mb-ir)
						off := (ic+ir)*ldc + jc + jr
						if h == mr && w == nr {
							kernel6x8(kb, &ap[0], &bp[0], &c[off], ldc)
							continue
						}
						// Edge tile: compute the full tile into acc, add the part inside C.
						clear(buf.acc[:])
						kernel6x8(kb, &ap[0], &bp[0], &buf.acc[0], nr)
						for i := 0; i < h; i++ {
							row := c[off+i*ldc : off+i*ldc+w]
							for j := range row {
								row[j] += buf.acc[i*nr+j]
							}
						}
					}
				}
			}
		}
	}
}

// packA copies α op(A)[i0:i0+mb, p0:p0+kb] into panels of mr rows: panel
// q holds element (q·mr+i, p) at q·mr·kb + p·mr + i, rows past mb zero.
func packA(dst []float64, a opMatrix, i0, mb, p0, kb int, alpha float64) {
	for q := 0; q*mr < mb; q++ {
		panel := dst[q*mr*kb : (q+1)*mr*kb]
		h := min(mr, mb-q*mr)
		for i := 0; i < mr; i++ {
			if i >= h {
				for p := 0; p < kb; p++ {
					panel[p*mr+i] = 0
				}
				continue
			}
			row := i0 + q*mr + i
			if a.trans { // op(A)[row, p] = A[p, row]
				for p := 0; p < kb; p++ {
					panel[p*mr+i] = alpha * a.data[(p0+p)*a.ld+row]
				}
			} else {
				src := a.data[row*a.ld+p0 : row*a.ld+p0+kb]
				for p, v := range src {
					panel[p*mr+i] = alpha * v
				}
			}
		}
	}
}

// packB copies op(B)[p0:p0+kb, j0:j0+nb] into panels of nr columns: panel
// q holds element (p, q·nr+j) at q·nr·kb + p·nr + j, columns past nb zero.
func packB(dst []float64, b opMatrix, p0, kb, j0, nb int) {
	for q := 0; q*nr < nb; q++ {
		panel := dst[q*nr*kb : (q+1)*nr*kb]
		w := min(nr, nb-q*nr)
		col := j0 + q*nr
		for p := 0; p < kb; p++ {
			out := panel[p*nr : p*nr+nr]
			if b.trans { // op(B)[p, col+j] = B[col+j, p]
				for j := 0; j < w; j++ {
					out[j] = b.data[(col+j)*b.ld+p0+p]
				}
			} else {
				copy(out[:w], b.data[(p0+p)*b.ld+col:(p0+p)*b.ld+col+w])
			}
			clear(out[w:])
		}
	}
}
