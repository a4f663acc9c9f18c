package solve

// rankUpdate sets row −= Σ_p l[p] · u[p*stride : p*stride+len(row)] for
// p = 0..len(l)−1, four rows of u at a time so that row is loaded and
// stored once per four products. It is the inner kernel of the trailing
// updates A22 −= L21 U12 of the dense and multifrontal factorisations.
func rankUpdate(row, l, u []complex128, stride int) {
	m := len(row)
	p := 0
	for ; p+4 <= len(l); p += 4 {
		l0, l1, l2, l3 := l[p], l[p+1], l[p+2], l[p+3]
		if l0 == 0 && l1 == 0 && l2 == 0 && l3 == 0 {
			continue
		}
		u0 := u[p*stride : p*stride+m]
		u1 := u[(p+1)*stride : (p+1)*stride+m]
		u2 := u[(p+2)*stride : (p+2)*stride+m]
		u3 := u[(p+3)*stride : (p+3)*stride+m]
		for j := range row {
			row[j] -= l0*u0[j] + l1*u1[j] + l2*u2[j] + l3*u3[j]
		}
	}
	for ; p < len(l); p++ {
		lp := l[p]
		if lp == 0 {
			continue
		}
		up := u[p*stride : p*stride+m]
		for j := range row {
			row[j] -= lp * up[j]
		}
	}
}

// swapRows exchanges rows i and j (each of length stride) of the row-major
// array a.
func swapRows(a []complex128, stride, i, j int) {
	ri, rj := a[i*stride:(i+1)*stride], a[j*stride:(j+1)*stride]
	for k := range ri {
		ri[k], rj[k] = rj[k], ri[k]
	}
}

// eliminateBelow performs one step of Gaussian elimination on the
// row-major array a (row stride stride) with pivot a[p, p]: for each row
// i = p+1..rows−1 it stores the multiplier l = a[i, p]/a[p, p] in a[i, p] and
// sets a[i, p+1:end] −= l · a[p, p+1:end]. It is the unblocked panel step of
// the dense and multifrontal factorisations.
func eliminateBelow(a []complex128, stride, p, rows, end int) {
	inv := 1 / a[p*stride+p]
	urow := a[p*stride+p+1 : p*stride+end]
	for i := p + 1; i < rows; i++ {
		l := a[i*stride+p] * inv
		a[i*stride+p] = l
		if l == 0 {
			continue
		}
		row := a[i*stride+p+1 : i*stride+end]
		for j, u := range urow {
			row[j] -= l * u
		}
	}
}
