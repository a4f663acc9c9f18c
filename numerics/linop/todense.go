package linop

import (
	"fmt"

	"gonum.org/v1/gonum/mat"
	"semiflow/numerics/memguard"
)

// ToDense returns X ⊗ I + I ⊗ Y as a dense matrix, or an error from the
// memory guard.
func (k *KronSum) ToDense() (*mat.Dense, error) {
	nx, ny := k.sizes()
	if err := memguard.DenseReal(nx*ny, nx*ny); err != nil {
		return nil, err
	}
	if s, err := k.ToCSR(); err == nil {
		return s.ToDense()
	}
	x, err := ToDense(k.X)
	if err != nil {
		return nil, err
	}
	y, err := ToDense(k.Y)
	if err != nil {
		return nil, err
	}
	if nx == 0 || ny == 0 {
		return &mat.Dense{}, nil
	}
	m := mat.NewDense(nx*ny, nx*ny, nil)
	for ix := 0; ix < nx; ix++ {
		for jx := 0; jx < nx; jx++ {
			if v := x.At(ix, jx); v != 0 {
				for iy := 0; iy < ny; iy++ {
					m.Set(ix*ny+iy, jx*ny+iy, v)
				}
			}
		}
		for iy := 0; iy < ny; iy++ {
			for jy := 0; jy < ny; jy++ {
				if v := y.At(iy, jy); v != 0 {
					m.Set(ix*ny+iy, ix*ny+jy, m.At(ix*ny+iy, ix*ny+jy)+v)
				}
			}
		}
	}
	return m, nil
}

// ToDense returns the sum as a dense matrix, or an error from the memory guard.
func (s *Sum) ToDense() (*mat.Dense, error) {
	r, c := s.Dims()
	if err := memguard.DenseReal(r, c); err != nil {
		return nil, err
	}
	acc, err := ToDense(s.Terms[0])
	if err != nil {
		return nil, err
	}
	acc = mat.DenseCopyOf(acc)
	for _, t := range s.Terms[1:] {
		d, err := ToDense(t)
		if err != nil {
			return nil, err
		}
		acc.Add(acc, d)
	}
	return acc, nil
}

// ToDense returns α A as a dense matrix, or an error from the memory guard.
func (s *Scaled) ToDense() (*mat.Dense, error) {
	d, err := ToDense(s.A)
	if err != nil {
		return nil, err
	}
	var out mat.Dense
	out.Scale(s.Alpha, d)
	return &out, nil
}

// ToDense returns the product as a dense matrix (multiplied right to left),
// or an error from the memory guard.
func (p *Product) ToDense() (*mat.Dense, error) {
	r, c := p.Dims()
	if err := memguard.DenseReal(r, c); err != nil {
		return nil, err
	}
	acc, err := ToDense(p.Factors[len(p.Factors)-1])
	if err != nil {
		return nil, err
	}
	for k := len(p.Factors) - 2; k >= 0; k-- {
		f, err := ToDense(p.Factors[k])
		if err != nil {
			return nil, err
		}
		var m mat.Dense
		m.Mul(f, acc)
		acc = &m
	}
	return acc, nil
}

// ToDense returns W⁻¹ Aᵀ W as a dense matrix, or an error from the memory
// guard.
func (a *Adjoint) ToDense() (*mat.Dense, error) {
	r, c := a.Dims()
	if err := memguard.DenseReal(r, c); err != nil {
		return nil, err
	}
	d, err := ToDense(a.A)
	if err != nil {
		return nil, err
	}
	t := mat.DenseCopyOf(d.T())
	if a.W == nil || r == 0 {
		return t, nil
	}
	// Columns: W⁻¹ Aᵀ (W e_j) = W⁻¹ Aᵀ w_j; with M = Aᵀ, compute M W then W⁻¹ (M W).
	n := r
	col := make([]float64, n)
	out := make([]float64, n)
	mw := mat.NewDense(n, n, nil)
	row := make([]float64, n)
	for i := 0; i < n; i++ { // (M W)_i· = (W M_i·ᵀ)ᵀ since W is symmetric
		mat.Row(row, i, t)
		a.W.Mul(out, row)
		mw.SetRow(i, out)
	}
	res := mat.NewDense(n, n, nil)
	for j := 0; j < n; j++ {
		mat.Col(col, j, mw)
		a.W.Solve(out, col)
		res.SetCol(j, out)
	}
	return res, nil
}

// ToCSR returns R A R⁻¹ in CSR form when W is a DiagWeight and A has a
// sparse form: entries a_ij √w_i / √w_j.
func (s *Similarity) ToCSR() (*CSR, error) {
	w, ok := s.W.(*DiagWeight)
	if !ok {
		return nil, fmt.Errorf("%w (similarity by a %T)", ErrNotSparse, s.W)
	}
	s.Dims()
	m, err := ToCSR(s.A)
	if err != nil {
		return nil, err
	}
	m = m.Clone()
	for i := 0; i < m.Rows; i++ {
		for p := m.RowPtr[i]; p < m.RowPtr[i+1]; p++ {
			m.Val[p] *= w.s[i] / w.s[m.ColIdx[p]]
		}
	}
	return m, nil
}
