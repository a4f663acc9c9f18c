package linop

import (
	"errors"
	"math"
	"math/rand/v2"
	"testing"

	"gonum.org/v1/gonum/floats"
	"gonum.org/v1/gonum/mat"
	"semiflow/numerics/memguard"
)

func randDense(rng *rand.Rand, r, c int) *mat.Dense {
	m := mat.NewDense(r, c, nil)
	for i := 0; i < r; i++ {
		for j := 0; j < c; j++ {
			m.Set(i, j, rng.NormFloat64())
		}
	}
	return m
}

func randSparse(rng *rand.Rand, r, c, nnz int) *CSR {
	var is, js []int
	var vs []float64
	for k := 0; k < nnz; k++ {
		is = append(is, rng.IntN(r))
		js = append(js, rng.IntN(c))
		vs = append(vs, rng.NormFloat64())
	}
	return NewCSRFromTriplets(r, c, is, js, vs)
}

func randVec(rng *rand.Rand, n int) []float64 {
	x := make([]float64, n)
	for i := range x {
		x[i] = rng.NormFloat64()
	}
	return x
}

// checkAgainst compares Apply and ApplyT of a with the dense reference m
// (the reference is computed by gonum's mat.Dense products).
func checkAgainst(t *testing.T, name string, a Operator, m *mat.Dense) {
	t.Helper()
	rng := rand.New(rand.NewPCG(7, 8))
	r, c := m.Dims()
	if ar, ac := a.Dims(); ar != r || ac != c {
		t.Fatalf("%s: Dims (%d,%d), want (%d,%d)", name, ar, ac, r, c)
	}
	x := randVec(rng, c)
	got := make([]float64, r)
	a.Apply(got, x)
	var want mat.VecDense
	want.MulVec(m, mat.NewVecDense(c, x))
	if d := floats.Distance(got, want.RawVector().Data, math.Inf(1)); d > 1e-12*(1+mat.Norm(m, math.Inf(1))) {
		t.Errorf("%s: Apply differs from dense product by %g", name, d)
	}
	y := randVec(rng, r)
	gotT := make([]float64, c)
	a.ApplyT(gotT, y)
	var wantT mat.VecDense
	wantT.MulVec(m.T(), mat.NewVecDense(r, y))
	if d := floats.Distance(gotT, wantT.RawVector().Data, math.Inf(1)); d > 1e-12*(1+mat.Norm(m, 1)) {
		t.Errorf("%s: ApplyT differs from dense product by %g", name, d)
	}
	if s, ok := a.(Sparser); ok {
		sp, err := s.ToCSR()
		if errors.Is(err, ErrNotSparse) {
			// No sparse form for this instance (e.g. a dense weight).
		} else if err != nil {
			t.Errorf("%s: ToCSR: %v", name, err)
		} else {
			if err := sp.Validate(); err != nil {
				t.Errorf("%s: ToCSR invalid: %v", name, err)
			}
			d, _ := sp.ToDense()
			if !mat.EqualApprox(d, m, 1e-12) {
				t.Errorf("%s: ToCSR differs from reference", name)
			}
		}
	}
	d, err := ToDense(a)
	if err != nil || !mat.EqualApprox(d, m, 1e-12) {
		t.Errorf("%s: ToDense differs from reference (err %v)", name, err)
	}
	if n, ok := NormInf(a); ok && math.Abs(n-mat.Norm(m, math.Inf(1))) > 1e-12*n {
		t.Errorf("%s: NormInf %g, want %g", name, n, mat.Norm(m, math.Inf(1)))
	}
	if n, ok := Norm1(a); ok && math.Abs(n-mat.Norm(m, 1)) > 1e-12*n {
		t.Errorf("%s: Norm1 %g, want %g", name, n, mat.Norm(m, 1))
	}
}

func TestTripletsSumDuplicates(t *testing.T) {
	a := NewCSRFromTriplets(2, 3, []int{1, 0, 1, 1}, []int{2, 0, 2, 0}, []float64{1, 2, 3, 4})
	if err := a.Validate(); err != nil {
		t.Fatal(err)
	}
	want := mat.NewDense(2, 3, []float64{2, 0, 0, 4, 0, 4})
	d, _ := a.ToDense()
	if !mat.Equal(d, want) || a.NNZ() != 3 {
		t.Errorf("got %v nnz %d, want %v nnz 3", mat.Formatted(d), a.NNZ(), mat.Formatted(want))
	}
}

func TestOperatorsAgainstDense(t *testing.T) {
	rng := rand.New(rand.NewPCG(1, 2))
	dx := randDense(rng, 5, 5)
	sy := randSparse(rng, 4, 4, 9)
	syd, _ := sy.ToDense()
	rect := randSparse(rng, 6, 5, 14)
	rectd, _ := rect.ToDense()
	diag := &Diag{D: randVec(rng, 5)}
	diagd, _ := diag.ToDense()

	checkAgainst(t, "Dense", NewDense(dx), dx)
	checkAgainst(t, "CSR", rect, rectd)

	// Kronecker sum: reference X ⊗ I + I ⊗ Y from gonum's mat.Dense.Kronecker.
	var kx, ky, ks mat.Dense
	kx.Kronecker(dx, eye(4))
	ky.Kronecker(eye(5), syd)
	ks.Add(&kx, &ky)
	checkAgainst(t, "KronSum(Dense,CSR)", NewKronSum(NewDense(dx), sy), &ks)
	dxs := CSRFromDense(dx, 0)
	checkAgainst(t, "KronSum(CSR,CSR)", NewKronSum(dxs, sy), &ks)

	var sum mat.Dense
	sum.Add(dx, diagd)
	sum.Add(&sum, diagd)
	checkAgainst(t, "Sum", &Sum{Terms: []Operator{dxs, diag, diag}}, &sum)

	var sc mat.Dense
	sc.Scale(-2.5, dx)
	checkAgainst(t, "Scaled", &Scaled{Alpha: -2.5, A: dxs}, &sc)

	var pr mat.Dense
	pr.Mul(rectd, dx)
	pr.Mul(&pr, diagd)
	checkAgainst(t, "Product", &Product{Factors: []Operator{rect, dxs, diag}}, &pr)
	checkAgainst(t, "Product(dense)", &Product{Factors: []Operator{rect, NewDense(dx), diag}}, &pr)
	checkAgainst(t, "Diag", diag, diagd)
	checkAgainst(t, "Adjoint(nil)", &Adjoint{A: rect}, mat.DenseCopyOf(rectd.T()))
	// Dense-only parts: the dense forms of sums, products and Kronecker
	// sums must not need a sparse form.
	checkAgainst(t, "KronSum(Dense,Dense)", NewKronSum(NewDense(dx), NewDense(syd)), &ks)
	checkAgainst(t, "Scaled(Dense)", &Scaled{Alpha: -2.5, A: NewDense(dx)}, &sc)
	checkAgainst(t, "Sum(Dense)", &Sum{Terms: []Operator{NewDense(dx), diag, diag}}, &sum)
}

func eye(n int) *mat.Dense {
	m := mat.NewDense(n, n, nil)
	for i := 0; i < n; i++ {
		m.Set(i, i, 1)
	}
	return m
}

// The weighted adjoint satisfies ⟨A x, y⟩_W = ⟨x, A* y⟩_W (definition).
func TestWeightedAdjoint(t *testing.T) {
	rng := rand.New(rand.NewPCG(3, 4))
	n := 6
	a := NewDense(randDense(rng, n, n))
	dw, err := NewDiagWeight([]float64{1, 2, 3, 0.5, 7, 0.1})
	if err != nil {
		t.Fatal(err)
	}
	b := randDense(rng, n, n)
	var spd mat.SymDense
	spd.SymOuterK(1, b)
	for i := 0; i < n; i++ {
		spd.SetSym(i, i, spd.At(i, i)+1)
	}
	sw, err := NewSPDWeight(&spd)
	if err != nil {
		t.Fatal(err)
	}
	for _, w := range []Weight{dw, sw} {
		adj := &Adjoint{A: a, W: w}
		x, y := randVec(rng, n), randVec(rng, n)
		ax := make([]float64, n)
		asy := make([]float64, n)
		a.Apply(ax, x)
		adj.Apply(asy, y)
		l, r := w.Inner(ax, y), w.Inner(x, asy)
		if math.Abs(l-r) > 1e-12*(math.Abs(l)+1) {
			t.Errorf("%T: ⟨Ax,y⟩ = %g, ⟨x,A*y⟩ = %g", w, l, r)
		}
		// ApplyT is the Euclidean transpose of Apply.
		ad, _ := ToDense(adj)
		ref := make([]float64, n)
		adj.ApplyT(ref, x)
		var want mat.VecDense
		want.MulVec(ad.T(), mat.NewVecDense(n, x))
		if d := floats.Distance(ref, want.RawVector().Data, math.Inf(1)); d > 1e-10 {
			t.Errorf("%T: Adjoint.ApplyT off by %g", w, d)
		}
		// ‖x‖_W = ‖R x‖₂ and (Mul, Solve) are inverse.
		rx := make([]float64, n)
		w.Factor(rx, x, false)
		if math.Abs(floats.Norm(rx, 2)-w.Norm(x)) > 1e-12*w.Norm(x) {
			t.Errorf("%T: Norm differs from ‖Rx‖", w)
		}
		wx, back := make([]float64, n), make([]float64, n)
		w.Mul(wx, x)
		w.Solve(back, wx)
		if d := floats.Distance(back, x, math.Inf(1)); d > 1e-10 {
			t.Errorf("%T: Solve(Mul x) off by %g", w, d)
		}
		// Similarity R A R⁻¹ has the same W-norm: ‖R A R⁻¹ (R x)‖₂ = ‖A x‖_W.
		s := &Similarity{A: a, W: w}
		sx := make([]float64, n)
		s.Apply(sx, rx)
		if math.Abs(floats.Norm(sx, 2)-w.Norm(ax)) > 1e-10*w.Norm(ax) {
			t.Errorf("%T: Similarity does not preserve the W-norm", w)
		}
		sd, _ := ToDense(s)
		checkAgainst(t, "Similarity", s, sd)
		// Reference for the weighted adjoint's dense form: W⁻¹ Aᵀ W by gonum.
		wd := mat.NewDense(n, n, nil)
		e := make([]float64, n)
		col := make([]float64, n)
		for j := 0; j < n; j++ {
			e[j] = 1
			w.Mul(col, e)
			e[j] = 0
			wd.SetCol(j, col)
		}
		var wref, winv mat.Dense
		if err := winv.Inverse(wd); err != nil {
			t.Fatal(err)
		}
		wref.Product(&winv, a.Mat().T(), wd)
		checkAgainst(t, "Adjoint(weighted)", adj, &wref)
	}
	dwd := &Adjoint{A: CSRFromDense(a.Mat(), 0), W: dw}
	ref, _ := ToDense(&Adjoint{A: a, W: dw})
	checkAgainst(t, "Adjoint(diag weight, CSR)", dwd, ref)
	if _, err := NewDiagWeight([]float64{1, 0}); !errors.Is(err, ErrNotPositive) {
		t.Errorf("zero weight accepted: %v", err)
	}
}

func TestShapePanics(t *testing.T) {
	a := Identity(3)
	for name, f := range map[string]func(){
		"Apply":   func() { a.Apply(make([]float64, 3), make([]float64, 2)) },
		"KronSum": func() { NewKronSum(NewCSRFromTriplets(2, 3, nil, nil, nil), a) },
		"Sum":     func() { (&Sum{Terms: []Operator{a, Identity(2)}}).Dims() },
		"Product": func() { (&Product{Factors: []Operator{a, Identity(2)}}).Dims() },
	} {
		func() {
			defer func() {
				if r := recover(); r != ErrShape {
					t.Errorf("%s: recovered %v, want ErrShape", name, r)
				}
			}()
			f()
		}()
	}
}

func TestToDenseGuard(t *testing.T) {
	old := memguard.SetLimit(1 << 20)
	defer memguard.SetLimit(old)
	big := &Diag{D: make([]float64, 1000)} // 8 MB dense
	if _, err := ToDense(big); !errors.Is(err, memguard.ErrTooLarge) {
		t.Errorf("ToDense beyond the limit: %v", err)
	}
}

func TestParallelApply(t *testing.T) {
	rng := rand.New(rand.NewPCG(5, 6))
	n := 20000
	a := randSparse(rng, n, n, 5*n)
	x := randVec(rng, n)
	got := make([]float64, n)
	want := make([]float64, n)
	a.Apply(got, x)
	a.applyRows(want, x, 0, n)
	if !floats.Equal(got, want) {
		t.Error("parallel CSR product differs from the serial one")
	}
	tr := a.Transpose()
	a.ApplyT(got, x)
	tr.Apply(want, x)
	if d := floats.Distance(got, want, math.Inf(1)); d > 1e-12 {
		t.Errorf("ApplyT differs from the transpose's Apply by %g", d)
	}
}
