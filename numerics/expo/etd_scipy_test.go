package expo

import (
	"context"
	"encoding/json"
	"math"
	"os"
	"path/filepath"
	"testing"
)

// etdRef is testdata/expo/etd_ref.json, written by
// testdata/expo/make_etd_ref.py: scipy's solve_ivp (Radau, rtol 1e-12,
// atol 1e-14, analytic sparse Jacobian) on semilinear reaction–diffusion
// problems.
type etdRef struct {
	Cases map[string]struct {
		N      int         `json:"n"`
		D      float64     `json:"D"`
		U0     []float64   `json:"u0"`
		Switch float64     `json:"switch"`
		GAmp   float64     `json:"g_amp"`
		Times  []float64   `json:"times"`
		Values [][]float64 `json:"values"`
	} `json:"cases"`
}

func loadETDRef(t *testing.T) *etdRef {
	b, err := os.ReadFile(filepath.Join("..", "..", "testdata", "expo", "etd_ref.json"))
	if err != nil {
		t.Fatal(err)
	}
	var r etdRef
	if err := json.Unmarshal(b, &r); err != nil {
		t.Fatal(err)
	}
	return &r
}

// scipyTol is the allowance for the reference's own error (rtol 1e-12 on
// solutions of size ≤ 2).
const scipyTol = 1e-10

func TestETDRK4AgainstScipy(t *testing.T) {
	ref := loadETDRef(t)
	t.Run("allen_cahn", func(t *testing.T) {
		// scipy solve_ivp Radau (etd_ref.json): u_t = D u_xx + u − u³.
		c := ref.Cases["allen_cahn"]
		L, _ := etdLaplacian(c.N, c.D)
		N := func(_ float64, u, dst []float64) {
			for i, v := range u {
				dst[i] = v - v*v*v
			}
		}
		for _, tol := range []float64{1e-6, 1e-8} {
			s, st, err := ETDRK4(context.Background(), L, N, c.U0, c.Times, StepControl{}, Options{Tol: tol, Crosscheck: true})
			if err != nil {
				t.Fatal(err)
			}
			checkAgainstRef(t, s, c.Values, st.Scale)
			if !s.TolMet {
				t.Errorf("tol %g: %s", tol, s.Shortfall)
			}
			if cc := s.Cross; cc == nil || cc.Skipped != "" || cc.MaxDiff > s.MaxErrEst()+cc.ErrEst {
				t.Errorf("cross-check %+v against estimate %.3g", cc, s.MaxErrEst())
			}
			t.Logf("tol %g: %s; estimate %.3g", tol, s.Reason, s.MaxErrEst())
		}
	})
	t.Run("fisher_switch", func(t *testing.T) {
		// scipy solve_ivp Radau restarted at the switch (etd_ref.json):
		// u_t = D u_xx + u(1 − u) + 2 sin(πx)·[t < 1], u0 = 0.
		c := ref.Cases["fisher_switch"]
		L, x := etdLaplacian(c.N, c.D)
		N := func(tt float64, u, dst []float64) {
			for i, v := range u {
				dst[i] = v * (1 - v)
				if tt < c.Switch {
					dst[i] += c.GAmp * math.Sin(math.Pi*x[i])
				}
			}
		}
		u0 := make([]float64, c.N)
		s, st, err := ETDRK4(context.Background(), L, N, u0, c.Times, StepControl{Breaks: []float64{c.Switch}}, Options{Tol: 1e-8, Crosscheck: true})
		if err != nil {
			t.Fatal(err)
		}
		checkAgainstRef(t, s, c.Values, st.Scale)
		if !s.TolMet {
			t.Errorf("%s", s.Shortfall)
		}
		if cc := s.Cross; cc == nil || cc.Skipped != "" || cc.MaxDiff > s.MaxErrEst()+cc.ErrEst {
			t.Errorf("cross-check %+v against estimate %.3g", cc, s.MaxErrEst())
		}
		t.Logf("%s; estimate %.3g", s.Reason, s.MaxErrEst())
	})
}

// checkAgainstRef: |ours − scipy| ≤ estimate + scipy's allowance, and the
// estimate no more than 1000 times the difference (or the rounding level).
func checkAgainstRef(t *testing.T, s *Solution, want [][]float64, scale float64) {
	t.Helper()
	for i := range s.Times {
		d := maxAbsDiff(s.Values[i], want[i])
		if d > s.ErrEst[i]+scipyTol*scale {
			t.Errorf("t=%g: difference from scipy %.3g exceeds the estimate %.3g", s.Times[i], d, s.ErrEst[i])
		}
		if s.ErrEst[i] > 1000*math.Max(d, scipyTol*scale) {
			t.Errorf("t=%g: estimate %.3g is more than 1000 times the difference %.3g", s.Times[i], s.ErrEst[i], d)
		}
	}
}
