package builtin_test

import (
	"encoding/json"
	"fmt"
	"math"
	"math/cmplx"
	"os"
	"strings"
	"testing"

	"semiflow/lang/objects"
	"semiflow/lang/run"
	"semiflow/lang/value"
)

// TestComplexPropagateAgainstScipy propagates u0 under complex matrices
// (a random 40×40 one and the complex convection–diffusion operator of
// testdata/complex/make_complex.py) by each method and compares with
// scipy.linalg.expm(tA) u0, the matrices expm written by that script; the
// error estimate (of the moduli) must bound the error.
func TestComplexPropagateAgainstScipy(t *testing.T) {
	data, err := os.ReadFile("../../testdata/complex/complex_ref.json")
	if err != nil {
		t.Fatal(err)
	}
	type refC struct{ Re, Im []float64 }
	var f struct {
		Cases []struct {
			Name  string
			N     int
			A     refC
			Times []float64
			Expm  []refC
		}
	}
	if err := json.Unmarshal(data, &f); err != nil {
		t.Fatal(err)
	}
	for _, c := range f.Cases {
		if c.N < 30 {
			continue
		}
		t.Run(c.Name, func(t *testing.T) {
			n := c.N
			var lit strings.Builder
			lit.WriteString("{")
			for i := 0; i < n; i++ {
				if i > 0 {
					lit.WriteString(" | ")
				}
				for j := 0; j < n; j++ {
					if j > 0 {
						lit.WriteString(", ")
					}
					fmt.Fprintf(&lit, "%.17g + %.17g * 1i", c.A.Re[i*n+j], c.A.Im[i*n+j])
				}
			}
			lit.WriteString("}")
			u0 := make([]complex128, n)
			for k := range u0 {
				u0[k] = complex(1, float64(k)/float64(n))
			}
			s := run.NewSession()
			exec(t, s, "A = operator("+lit.String()+")")
			exec(t, s, "u0 = 1 + 1i * (0 .. "+fmt.Sprint(n-1)+") / "+fmt.Sprint(n))
			want := make([][]complex128, len(c.Times))
			for k := range c.Times {
				want[k] = make([]complex128, n)
				for i := 0; i < n; i++ {
					for j := 0; j < n; j++ {
						want[k][i] += complex(c.Expm[k].Re[i*n+j], c.Expm[k].Im[i*n+j]) * u0[j]
					}
				}
			}
			times := strings.Trim(strings.Join(strings.Fields(fmt.Sprint(c.Times)), ", "), "[]")
			for _, m := range []string{"auto", "dense", "taylor", "krylov"} {
				exec(t, s, `sol = propagate(A, u0, [`+times+`], method="`+m+`")`)
				sol := lookup[*objects.Solution](t, s, "sol")
				if !sol.Complex {
					t.Fatalf("%s: the solution is not complex", m)
				}
				for k := range c.Times {
					got := sol.Index(k).(*value.Vec)
					if !got.IsComplex() || got.Len() != n {
						t.Fatalf("%s: sol[%d] is %s", m, k, value.TypeName(got))
					}
					e, scale := 0.0, 0.0
					for i := range got.C {
						e = math.Max(e, cmplx.Abs(got.C[i]-want[k][i]))
						scale = math.Max(scale, cmplx.Abs(want[k][i]))
					}
					if e > 1e-7*scale {
						t.Errorf("%s, t = %g: error %.3g against scipy (‖u‖∞ = %.3g)", m, c.Times[k], e, scale)
					}
					// scipy's own rounding, about 1e-15 relative, is allowed for.
					if e > sol.S.ErrEst[k]+1e-14*scale {
						t.Errorf("%s, t = %g: error %.3g exceeds the estimate %.3g", m, c.Times[k], e, sol.S.ErrEst[k])
					}
				}
			}
		})
	}
}
