package spectra

import (
	"context"
	"encoding/json"
	"os"
	"path/filepath"
	"testing"
	"time"

	"gonum.org/v1/gonum/mat"

	"semiflow/numerics/linop"
)

type mixingRef struct {
	Chains []struct {
		Name  string      `json:"name"`
		N     int         `json:"n"`
		Rates [][]float64 `json:"rates"`
		TMix  float64     `json:"t_mix"`
	} `json:"chains"`
}

func rateMatrixOf(t testing.TB, n int, rates [][]float64) *linop.CSR {
	ts := make([]linop.Transition, len(rates))
	for k, r := range rates {
		ts[k] = linop.Transition{From: int(r[0]), To: int(r[1]), Rate: r[2]}
	}
	q, err := linop.RateMatrix(n, ts)
	if err != nil {
		t.Fatal(err)
	}
	return q
}

// Mixing times against scipy.linalg.expm with bisection to relative 1e-10
// (testdata/spectra/make_mixing.py): a reversible 60-state birth–death
// chain and a non-reversible 30-state ring with drift and a chord, each
// to the stated 2⁻²⁰ relative.
func TestMarkovMixingScipy(t *testing.T) {
	b, err := os.ReadFile(filepath.Join("..", "..", "testdata", "spectra", "mixing.json"))
	if err != nil {
		t.Fatal(err)
	}
	var ref mixingRef
	if err := json.Unmarshal(b, &ref); err != nil {
		t.Fatal(err)
	}
	for _, c := range ref.Chains {
		t.Run(c.Name, func(t *testing.T) {
			rep, err := Markov(bg, rateMatrixOf(t, c.N, c.Rates))
			if err != nil {
				t.Fatal(err)
			}
			if e := relDiff(rep.MixingTime, c.TMix); !(e <= 0x1p-20) {
				t.Errorf("t_mix = %.12g, scipy %.12g: relative %.2g > 2⁻²⁰", rep.MixingTime, c.TMix, e)
			} else {
				t.Logf("t_mix = %.12g, scipy %.12g: relative %.2g", rep.MixingTime, c.TMix, e)
			}
		})
	}
}

// markovQueue returns the n-state queue with arrival rate 0.9 and service
// rate 1 as a dense rate matrix.
func markovQueue(n int) *mat.Dense {
	up, down := make([]float64, n-1), make([]float64, n-1)
	for k := range up {
		up[k], down[k] = 0.9, 1
	}
	return birthDeath(up, down)
}

// Markov stops within 0.5 s of a cancellation (500 states; the mixing-time
// search checks the context between matrix products).
func TestMarkovCancel(t *testing.T) {
	q := denseOp{markovQueue(500)}
	ctx, cancel := context.WithCancel(context.Background())
	time.AfterFunc(100*time.Millisecond, cancel)
	start := time.Now()
	_, err := Markov(ctx, q)
	if err == nil {
		t.Skip("finished before the cancellation")
	}
	if err != context.Canceled {
		t.Fatalf("error %v, want context.Canceled", err)
	}
	if d := time.Since(start) - 100*time.Millisecond; d > 500*time.Millisecond {
		t.Errorf("stopped %v after the cancellation", d)
	}
}

// The whole Markov report of a 500-state queue (79 s with a dense
// exponential per bisection step).
func BenchmarkMarkov500(b *testing.B) {
	q := denseOp{markovQueue(500)}
	c0 := cpuSeconds()
	for b.Loop() {
		if _, err := Markov(bg, q); err != nil {
			b.Fatal(err)
		}
	}
	b.ReportMetric((cpuSeconds()-c0)/float64(b.N), "cpu-s/op")
}
