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
