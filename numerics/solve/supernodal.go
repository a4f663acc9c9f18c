package solve

import (
	"context"
	"errors"
	"fmt"
	"math"
	"runtime"
	"sort"
	"sync"
	"sync/atomic"

	"semiflow/numerics/linop"
	"semiflow/numerics/memguard"
)

// Supernodal is a multifrontal LU factorisation P Q M Qᵀ = L U of
// M = zI − A for a sparse real A (Duff & Reid, ACM TOMS 1983; Liu, SIAM
// Review 1992), in real arithmetic when z is real and complex otherwise:
//
//   - Q is a fill-reducing symmetric order of the pattern of A + Aᵀ: the
//     one of approximate minimum degree (AMD), nested dissection (by grid
//     geometry when the operator lives on a tensor grid, by level
//     structures otherwise) — whichever predicts fewer entries of L;
//   - the elimination tree is postordered and its columns grouped into
//     supernodes (fundamental, then relaxed amalgamation);
//   - each supernode assembles a dense front from M's entries and its
//     children's update matrices, factors its own columns with row
//     pivoting inside its diagonal block (P), and passes the Schur
//     complement to its parent; the dense work is blocked triangular
//     solves and matrix products on the project's BLAS (BLAS-3);
//   - independent subtrees are factored on separate cores.
//
// A pivot below weakTol times its column's largest entry in the front is
// accepted and counted in Weak; solves after such a factorisation are
// refined (iterative refinement in working precision) until the backward
// error ‖r‖∞/(‖M‖∞‖x‖∞ + ‖b‖∞) is at most 4u or stops decreasing. A pivot
// below tinyRel times that entry (or negligible against ‖M‖) makes
// NewShiftedContext fall back to the frontal factorisation with delayed
// pivots (Multifrontal), which pivots across supernodes and reports a
// singular matrix.
type Supernodal struct {
	// Weak counts pivots accepted below the threshold.
	Weak int
	// Ordering names the fill-reducing order used, and Fill is the
	// predicted number of entries of L (diagonal included) for it.
	Ordering string
	Fill     float64

	n     int
	real  bool // factors in real arithmetic (z real)
	z     complex128
	a     *linop.CSR // for refinement
	anrm  float64    // ‖M‖∞
	anrm1 float64    // ‖M‖₁
	rf    *snFactor[float64]
	cf    *snFactor[complex128]
}

// snFactor holds the numeric factors over the supernodal structure.
type snFactor[T scalar] struct {
	sn   *snodes
	piv  []int // piv[j]: row (relative to its front) swapped with row j − first[s]
	data []T
	offU []int // supernode s: U block k×f at data[offU[s]:], L21 r×k after it
}

func (f *snFactor[T]) blocks(s int) (k, r int, u, l []T) {
	sn := f.sn
	k = sn.first[s+1] - sn.first[s]
	r = len(sn.rows[s])
	fz := k + r
	o := f.offU[s]
	return k, r, f.data[o : o+k*fz], f.data[o+k*fz : o+k*fz+r*k]
}

// errFallback marks a pivot too small for pivoting inside the diagonal
// blocks.
var errFallback = errors.New("solve: pivot too small for block pivoting")

// analysis is the ordering and symbolic structure of a pattern, cached
// because every shift of one operator shares it.
type analysis struct {
	rowPtr, colIdx []int
	sn             *snodes
	name           string
	fill           float64
}

var (
	cacheMu sync.Mutex
	cache   []*analysis // most recent last, at most cacheSize
)

const cacheSize = 4

func cached(a *linop.CSR) *analysis {
	cacheMu.Lock()
	defer cacheMu.Unlock()
	for _, c := range cache {
		if samePattern(c, a) {
			return c
		}
	}
	return nil
}

func samePattern(c *analysis, a *linop.CSR) bool {
	if len(c.rowPtr) != len(a.RowPtr) || len(c.colIdx) != a.NNZ() {
		return false
	}
	for i, v := range c.rowPtr {
		if a.RowPtr[i] != v {
			return false
		}
	}
	for i, v := range c.colIdx {
		if a.ColIdx[i] != v {
			return false
		}
	}
	return true
}

// ForgetAnalyses empties the cache of orderings and symbolic analyses
// that factorisations of one sparsity pattern share (the last four
// patterns are kept), so that the next factorisation starts from nothing,
// as a benchmark of a first factorisation needs.
func ForgetAnalyses() {
	cacheMu.Lock()
	cache = nil
	cacheMu.Unlock()
}

func remember(an *analysis) {
	cacheMu.Lock()
	defer cacheMu.Unlock()
	if len(cache) == cacheSize {
		cache = cache[1:]
	}
	cache = append(cache, an)
}

// analyseSparse chooses the fill-reducing order (predicted fill) and builds
// the supernodal structure, or takes both from the cache.
func analyseSparse(ctx context.Context, op linop.Operator, a *linop.CSR, grid [2]int) (*analysis, error) {
	if an := cached(a); an != nil {
		return an, nil
	}
	g := symGraph(a)
	// The two candidates are computed side by side, each with its
	// elimination tree and predicted fill.
	names := []string{"", "approximate minimum degree"}
	trees := make([]*elimTree, 2)
	errs := make([]error, 2)
	var wg sync.WaitGroup
	wg.Add(2)
	go func() {
		defer wg.Done()
		q := gridCandidate(op, a, grid)
		names[0] = "nested dissection on the grid"
		if q == nil {
			names[0] = "nested dissection"
			if q, errs[0] = ndGraph(ctx, g); errs[0] != nil {
				return
			}
		}
		trees[0], errs[0] = treeOf(ctx, g, q)
	}()
	go func() {
		defer wg.Done()
		var q []int
		if q, errs[1] = amdGraph(ctx, g); errs[1] == nil {
			trees[1], errs[1] = treeOf(ctx, g, q)
		}
	}()
	wg.Wait()
	best, bestFill := -1, math.Inf(1)
	for i, t := range trees {
		if errs[i] != nil {
			return nil, errs[i]
		}
		if fill, _ := t.counts(); fill < bestFill {
			best, bestFill = i, fill
		}
	}
	sn, err := analyseTree(ctx, g, trees[best])
	if err != nil {
		return nil, err
	}
	an := &analysis{rowPtr: append([]int(nil), a.RowPtr...), colIdx: append([]int(nil), a.ColIdx[:a.NNZ()]...),
		sn: sn, name: names[best], fill: bestFill}
	remember(an)
	return an, nil
}

// gridCandidate is the geometric nested-dissection order when the operator
// lives on a known tensor grid, else nil.
func gridCandidate(op linop.Operator, a *linop.CSR, grid [2]int) []int {
	if grid[0]*grid[1] == a.Rows && grid[0] > 0 {
		return GridOrder(a, grid[0], grid[1])
	}
	if k, ok := op.(*linop.KronSum); ok {
		if q := kronOrder(k); q != nil {
			return q
		}
	}
	if nx, ny, ok := gridOf(op); ok {
		return GridOrder(a, nx, ny)
	}
	return nil
}

// NewSupernodal factors zI − A for a square operator A with a sparse form
// (see Supernodal). It returns errors wrapping ErrSingular (naming z) for a
// singular shift, ctx's error when cancelled, or the memory guard's. It
// panics with ErrShape if A is not square.
func NewSupernodal(ctx context.Context, a linop.Operator, z complex128, opt Options) (*Supernodal, error) {
	r, c := a.Dims()
	if r != c {
		panic(ErrShape)
	}
	csr, err := linop.ToCSR(a)
	if err != nil {
		return nil, err
	}
	return newSupernodal(ctx, a, csr, z, opt)
}

func newSupernodal(ctx context.Context, op linop.Operator, a *linop.CSR, z complex128, opt Options) (*Supernodal, error) {
	an, err := analyseSparse(ctx, op, a, opt.Grid)
	if err != nil {
		return nil, err
	}
	n := a.Rows
	s := &Supernodal{n: n, z: z, a: a, real: imag(z) == 0, Ordering: an.name, Fill: an.fill}
	// ‖M‖∞ and ‖M‖₁ for the tiny-pivot test and the backward errors.
	colSum := make([]float64, n)
	for i := 0; i < n; i++ {
		sum, diag := 0.0, false
		for p := a.RowPtr[i]; p < a.RowPtr[i+1]; p++ {
			j := a.ColIdx[p]
			v := math.Abs(a.Val[p])
			if j == i {
				v = abs1(z - complex(a.Val[p], 0))
				diag = true
			}
			sum += v
			colSum[j] += v
		}
		if !diag {
			sum += abs1(z)
			colSum[i] += abs1(z)
		}
		s.anrm = math.Max(s.anrm, sum)
	}
	for _, v := range colSum {
		s.anrm1 = math.Max(s.anrm1, v)
	}
	tiny := pivotTol * float64(n) * s.anrm
	if s.real {
		s.rf, s.Weak, err = factorSupernodal[float64](ctx, an.sn, a, real(z), tiny, opt.Progress)
	} else {
		s.cf, s.Weak, err = factorSupernodal[complex128](ctx, an.sn, a, z, tiny, opt.Progress)
	}
	if err != nil {
		return nil, err
	}
	return s, nil
}

// bufPool lends front buffers without zeroing them; a buffer is reused for
// any request up to its capacity and at least half of it.
type bufPool[T scalar] struct {
	mu   sync.Mutex
	free [][]T
	// held counts the bytes of all buffers made; with base (the factors)
	// it must stay within the memory guard's limit.
	held, base, elem int64
	what             string
}

func (p *bufPool[T]) get(n int) ([]T, error) {
	p.mu.Lock()
	defer p.mu.Unlock()
	best := -1
	for i, b := range p.free {
		if cap(b) >= n && cap(b) <= 2*n+1024 && (best < 0 || cap(b) < cap(p.free[best])) {
			best = i
		}
	}
	if best >= 0 {
		b := p.free[best]
		p.free[best] = p.free[len(p.free)-1]
		p.free = p.free[:len(p.free)-1]
		return b[:n], nil
	}
	p.held += int64(n) * p.elem
	if need := p.base + p.held; need > memguard.Limit() {
		return nil, memguard.CheckBytes(need, p.what)
	}
	return make([]T, n), nil
}

func (p *bufPool[T]) put(b []T) {
	p.mu.Lock()
	p.free = append(p.free, b[:0])
	p.mu.Unlock()
}

// factorSupernodal runs the numeric factorisation of M = zI − A (z of the
// type T) over the structure sn.
func factorSupernodal[T scalar](ctx context.Context, sn *snodes, a *linop.CSR, z T, tiny float64, progress func(done, total int)) (*snFactor[T], int, error) {
	n := sn.n
	ns := len(sn.rows)
	var elem int64 = memguard.RealBytes
	if _, ok := any(z).(complex128); ok {
		elem = memguard.ComplexBytes
	}
	f := &snFactor[T]{sn: sn, piv: make([]int, n), offU: make([]int, ns+1)}
	var total int64
	var maxFront int64
	for s := 0; s < ns; s++ {
		k := int64(sn.first[s+1] - sn.first[s])
		r := int64(len(sn.rows[s]))
		f.offU[s] = int(total)
		total += k*(k+r) + r*k
		maxFront = max(maxFront, (k+r)*(k+r))
	}
	f.offU[ns] = int(total)
	// Factors, plus fronts and update matrices alive at once (bounded here
	// by four of the largest front; the pool counts what it really holds).
	if err := memguard.CheckBytes((total+4*maxFront)*elem, fmt.Sprintf("sparse LU factors of order %d (%d supernodes)", n, ns)); err != nil {
		return nil, 0, err
	}
	f.data = make([]T, total)
	at := a.Transpose()
	pinv := invPerm(sn.q)
	// Subtrees for the workers.
	workers := runtime.GOMAXPROCS(0)
	firstDesc := make([]int, ns)
	work := make([]float64, ns) // subtree flops
	for s := 0; s < ns; s++ {
		firstDesc[s] = s
		k := float64(sn.first[s+1] - sn.first[s])
		r := float64(len(sn.rows[s]))
		work[s] += 2*k*k*k/3 + 2*k*k*r + 2*k*r*r + (k+r)*(k+r)
		for _, c := range sn.kids[s] {
			firstDesc[s] = min(firstDesc[s], firstDesc[c])
			work[s] += work[c]
		}
	}
	var roots []int
	var totalWork float64
	for s := 0; s < ns; s++ {
		if sn.parent[s] < 0 {
			roots = append(roots, s)
			totalWork += work[s]
		}
	}
	inTop := make([]bool, ns)
	subtrees := append([]int(nil), roots...)
	if workers > 1 {
		for {
			sort.Slice(subtrees, func(i, j int) bool { return work[subtrees[i]] > work[subtrees[j]] })
			big := subtrees[0]
			if work[big] <= totalWork/float64(4*workers) || len(sn.kids[big]) == 0 || len(subtrees) > 64*workers {
				break
			}
			inTop[big] = true
			subtrees = append(subtrees[1:], sn.kids[big]...)
		}
	}
	// Longest processing time first onto the workers.
	sort.Slice(subtrees, func(i, j int) bool { return work[subtrees[i]] > work[subtrees[j]] })
	if workers < 1 || len(subtrees) < 2 {
		workers = 1
	}
	assign := make([][]int, workers)
	load := make([]float64, workers)
	for _, s := range subtrees {
		w := 0
		for i := range load {
			if load[i] < load[w] {
				w = i
			}
		}
		assign[w] = append(assign[w], s)
		load[w] += work[s]
	}
	pool := &bufPool[T]{base: total * elem, elem: elem,
		what: fmt.Sprintf("sparse LU factors and frontal matrices of order %d", n)}
	fronts := make([][]T, ns) // a finished front kept as its update matrix
	var done atomic.Int64
	var progMu sync.Mutex
	var weak atomic.Int64
	var failed atomic.Bool
	run := func(ids func(yield func(int) bool), st *nodeState[T]) error {
		for s := range ids {
			if failed.Load() {
				return nil
			}
			if err := ctx.Err(); err != nil {
				return err
			}
			w, err := st.node(s, f, a, at, pinv, z, tiny, pool, fronts)
			if err != nil {
				return err
			}
			weak.Add(int64(w))
			d := done.Add(int64(sn.first[s+1] - sn.first[s]))
			if progress != nil && s&63 == 0 {
				progMu.Lock()
				progress(int(d), n)
				progMu.Unlock()
			}
		}
		return nil
	}
	errs := make([]error, workers)
	var wg sync.WaitGroup
	for w := 0; w < workers; w++ {
		wg.Add(1)
		go func() {
			defer wg.Done()
			st := newNodeState[T](n)
			st.ws.ctx = ctx
			ids := func(yield func(int) bool) {
				for _, r := range assign[w] {
					for s := firstDesc[r]; s <= r; s++ {
						if !yield(s) {
							return
						}
					}
				}
			}
			if err := run(ids, st); err != nil {
				errs[w] = err
				failed.Store(true)
			}
		}()
	}
	wg.Wait()
	for _, err := range errs {
		if err != nil {
			return nil, 0, err
		}
	}
	st := newNodeState[T](n)
	st.ws.ctx = ctx
	err := run(func(yield func(int) bool) {
		for s := 0; s < ns; s++ {
			if inTop[s] && !yield(s) {
				return
			}
		}
	}, st)
	if err != nil {
		return nil, 0, err
	}
	if progress != nil {
		progress(n, n)
	}
	return f, int(weak.Load()), nil
}

// nodeState is one goroutine's scratch: the global-to-front index map and
// the dense kernels' workspace.
type nodeState[T scalar] struct {
	loc []int
	ws  workspace
	cl  []int
	// the current front: rows 0..k−1 in top, the others in bot; stride fz
	top, bot []T
	k, fz    int
}

func newNodeState[T scalar](n int) *nodeState[T] {
	return &nodeState[T]{loc: make([]int, n)}
}

// node assembles, factors and stores supernode s. The front's first k
// rows (U11 with L11 below its diagonal, and U12) are assembled in place in
// the factors' storage, which starts zeroed; its other rows come from the
// pool, and their trailing block stays there as the update matrix for the
// parent.
func (st *nodeState[T]) node(s int, f *snFactor[T], a, at *linop.CSR, pinv []int, z T, tiny float64, pool *bufPool[T], fronts [][]T) (int, error) {
	sn := f.sn
	c0, c1 := sn.first[s], sn.first[s+1]
	k := c1 - c0
	rows := sn.rows[s]
	r := len(rows)
	fz := k + r
	o := f.offU[s]
	top := f.data[o : o+k*fz]
	bot, err := pool.get(r * fz)
	if err != nil {
		return 0, err
	}
	clear(bot)
	loc := st.loc
	for j := c0; j < c1; j++ {
		loc[j] = j - c0
	}
	for i, g := range rows {
		loc[g] = k + i
	}
	st.top, st.bot, st.k, st.fz = top, bot, k, fz
	st.assemble(c0, c1, a, at, pinv, z, f.sn.q)
	for _, c := range sn.kids[s] {
		st.extendAdd(c, f.sn, fronts[c])
		pool.put(fronts[c])
		fronts[c] = nil
	}
	weak, err := partialLU(top, bot, fz, k, f.piv[c0:c1], tiny, &st.ws)
	if err != nil {
		pool.put(bot)
		return 0, err
	}
	l := f.data[o+k*fz : o+k*fz+r*k]
	for i := 0; i < r; i++ {
		copy(l[i*k:(i+1)*k], bot[i*fz:i*fz+k])
	}
	if r > 0 && sn.parent[s] >= 0 {
		fronts[s] = bot
	} else {
		pool.put(bot)
	}
	return weak, nil
}

// row returns row i of the current front from its column c on.
func (st *nodeState[T]) row(i, c int) []T {
	if i < st.k {
		return st.top[i*st.fz+c : (i+1)*st.fz]
	}
	i -= st.k
	return st.bot[i*st.fz+c : (i+1)*st.fz]
}

// assemble adds the entries of M = zI − A in the supernode's columns (rows
// at or below the block) and rows (columns right of the block).
func (st *nodeState[T]) assemble(c0, c1 int, a, at *linop.CSR, pinv []int, z T, q []int) {
	loc := st.loc
	for j := c0; j < c1; j++ {
		v := q[j]
		lc := j - c0
		for p := at.RowPtr[v]; p < at.RowPtr[v+1]; p++ { // column v of A
			if t := pinv[at.ColIdx[p]]; t >= c0 {
				st.row(loc[t], lc)[0] -= fromReal[T](at.Val[p])
			}
		}
		own := st.row(lc, 0)
		for p := a.RowPtr[v]; p < a.RowPtr[v+1]; p++ { // row v of A
			if t := pinv[a.ColIdx[p]]; t >= c1 {
				own[loc[t]] -= fromReal[T](a.Val[p])
			}
		}
		own[lc] += z
	}
}

// extendAdd adds child c's update matrix (the trailing block of the rows
// it kept from the pool) into the current front.
func (st *nodeState[T]) extendAdd(c int, sn *snodes, cf []T) {
	kc := sn.first[c+1] - sn.first[c]
	rc := sn.rows[c]
	fc := kc + len(rc)
	if cap(st.cl) < len(rc) {
		st.cl = make([]int, len(rc))
	}
	cl := st.cl[:len(rc)]
	for j, g := range rc {
		cl[j] = st.loc[g]
	}
	for i := range rc {
		row := st.row(cl[i], 0)
		src := cf[i*fc+kc : (i+1)*fc]
		for j, v := range src {
			row[cl[j]] += v
		}
	}
}
