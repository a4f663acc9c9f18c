package spectra

// splitTri is an upper-triangular complex matrix T stored as separate
// row-major real and imaginary parts, for triangular solves whose inner
// loops run on float64 (about three times faster than on complex128).
type splitTri struct {
	n      int
	re, im []float64
	// work vectors
	ar, ai, br, bi []float64
}

func newSplitTri(t []complex128, n int) *splitTri {
	s := &splitTri{n: n, re: make([]float64, n*n), im: make([]float64, n*n)}
	for k, v := range t {
		s.re[k], s.im[k] = real(v), imag(v)
	}
	s.ar, s.ai = make([]float64, n), make([]float64, n)
	s.br, s.bi = make([]float64, n), make([]float64, n)
	return s
}

// share returns a splitTri for the same T with its own work vectors, safe
// to use concurrently with s.
func (s *splitTri) share() *splitTri {
	n := s.n
	return &splitTri{n: n, re: s.re, im: s.im,
		ar: make([]float64, n), ai: make([]float64, n), br: make([]float64, n), bi: make([]float64, n)}
}

// applyInv sets x = ((zI − T)ᴴ(zI − T))⁻¹ x: a forward solve with
// (zI − T)ᴴ followed by a back solve with zI − T. It returns false if
// zI − T has a zero diagonal entry.
func (s *splitTri) applyInv(z complex128, x []complex128) bool {
	n := s.n
	qr, qi := s.ar, s.ai
	for i, v := range x {
		qr[i], qi[i] = real(v), imag(v)
	}
	yr, yi := s.br, s.bi
	zr, zi := real(z), imag(z)
	// (zI − T)ᴴ y = q, column-oriented: y_j = q_j / conj(z − T_jj), then
	// q_i += conj(T_ji) y_j for i > j.
	for j := 0; j < n; j++ {
		dr, di := zr-s.re[j*n+j], -(zi - s.im[j*n+j]) // conj(z − T_jj)
		den := dr*dr + di*di
		if den == 0 {
			return false
		}
		a, b := qr[j], qi[j]
		ur, ui := (a*dr+b*di)/den, (b*dr-a*di)/den
		yr[j], yi[j] = ur, ui
		tr := s.re[j*n+j+1 : j*n+n]
		ti := s.im[j*n+j+1 : j*n+n]
		pr := qr[j+1 : n]
		pi := qi[j+1 : n]
		pi = pi[:len(tr)]
		ti = ti[:len(tr)]
		pr = pr[:len(tr)]
		for i, t1 := range tr {
			t2 := ti[i]
			pr[i] += t1*ur + t2*ui
			pi[i] += t1*ui - t2*ur
		}
	}
	// (zI − T) w = y, row-oriented: w_i = (y_i + Σ_{j>i} T_ij w_j)/(z − T_ii).
	wr, wi := s.ar, s.ai
	for i := n - 1; i >= 0; i-- {
		accr, acci := yr[i], yi[i]
		tr := s.re[i*n+i+1 : i*n+n]
		ti := s.im[i*n+i+1 : i*n+n]
		vr := wr[i+1 : n]
		vi := wi[i+1 : n]
		ti = ti[:len(tr)]
		vr = vr[:len(tr)]
		vi = vi[:len(tr)]
		for j, t1 := range tr {
			t2 := ti[j]
			accr += t1*vr[j] - t2*vi[j]
			acci += t1*vi[j] + t2*vr[j]
		}
		dr, di := zr-s.re[i*n+i], zi-s.im[i*n+i]
		den := dr*dr + di*di
		if den == 0 {
			return false
		}
		wr[i], wi[i] = (accr*dr+acci*di)/den, (acci*dr-accr*di)/den
	}
	for i := range x {
		x[i] = complex(wr[i], wi[i])
	}
	return true
}

// load replaces the stored matrix by t (same order).
func (s *splitTri) load(t []complex128) {
	for k, v := range t {
		s.re[k], s.im[k] = real(v), imag(v)
	}
}
