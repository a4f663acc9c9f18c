package objects

import (
	"math"
	"strings"
	"testing"

	"semiflow/lang/plot"
	"semiflow/numerics/grid"
	"semiflow/numerics/linop"
)

// 3-D tensor grids: coordinates in the order k = (ix·ny + iy)·nz + iz;
// product trapezoid weights, exact on functions linear in each variable
// over the whole box (Neumann factors keep their end points). Closed form:
// ∫∫∫ xyz over [0,1]×[0,2]×[0,3] = (1/2)(2)(9/2) = 4.5. The solution's
// figure is a heat map of the middle plane along z, named in its title.
func TestTensor3(t *testing.T) {
	gx := interval(t, 0, 1, 5, grid.NeumannEnd, 2)
	gy := interval(t, 0, 2, 6, grid.NeumannEnd, 2)
	gz := interval(t, 0, 3, 7, grid.NeumannEnd, 2)
	g := NewTensor3(gx, gy, gz)
	if g.Dim() != 3 || g.Size() != 5*6*7 {
		t.Fatalf("dim %d, size %d", g.Dim(), g.Size())
	}
	c := g.CoordsAll()
	xs, ys, zs := gx.X1(), gy.X1(), gz.X1()
	for ix := range xs {
		for iy := range ys {
			for iz := range zs {
				k := (ix*len(ys)+iy)*len(zs) + iz
				if c[0][k] != xs[ix] || c[1][k] != ys[iy] || c[2][k] != zs[iz] {
					t.Fatalf("k = %d: (%g, %g, %g)", k, c[0][k], c[1][k], c[2][k])
				}
			}
		}
	}
	w := g.QuadWeights()
	s := 0.0
	for k := range w {
		s += w[k] * c[0][k] * c[1][k] * c[2][k]
	}
	if math.Abs(s-4.5) > 1e-13 {
		t.Errorf("∫∫∫ xyz = %.15g, want 4.5", s)
	}
	lap, err := Laplacian(g)
	if err != nil {
		t.Fatal(err)
	}
	if f := linop.KronFactors(lap.(*linop.KronSum)); len(f) != 3 {
		t.Fatalf("Laplacian has %d factors", len(f))
	}
	u0 := make([]float64, g.Size())
	for k := range u0 {
		u0[k] = math.Cos(math.Pi*c[0][k]) * math.Cos(math.Pi*c[2][k]/3)
	}
	sol := &Solution{S: solve(t, lap, u0, []float64{0.01}), Grid: g, Problem: "u' = A u", Label: "Δ"}
	// The heat map holds u at (x_ix, y_iy) on the plane iz = 3 (0-based).
	hm := sol.Figure().Series[0].(*plot.HeatMap)
	last := sol.S.Values[0]
	for ix := range xs {
		for iy := range ys {
			if got, want := hm.Z[ix][iy], last[(ix*len(ys)+iy)*len(zs)+3]; got != want {
				t.Fatalf("heat map (%d, %d) = %g, want u on the plane iz = 3: %g", ix, iy, got, want)
			}
		}
	}
	svg, _ := sol.MIME()["image/svg+xml"].(string)
	if !strings.Contains(svg, "<rect") || !strings.Contains(svg, "plane z = 1.5 (unknown 4 of 7 along z)") {
		t.Errorf("3-D figure: no heat map of the named middle plane")
	}
}
