package plot

import (
	"math"
	"testing"
)

func BenchmarkContours400(b *testing.B) {
	z, xs, ys := circleField(400, 1.6)
	levels := []float64{0.01, 0.1, 0.5, 1, 2}
	for b.Loop() {
		Contours(z, xs, ys, levels)
	}
}

func BenchmarkLine10k(b *testing.B) {
	x, y := make([]float64, 10000), make([]float64, 10000)
	for i := range x {
		x[i] = float64(i) / 100
		y[i] = math.Exp(-x[i]/10) * (1 + math.Sin(x[i]))
	}
	f := &Figure{Y: Axis{Log: true}, DropNonPositive: true}
	f.AddLine(x, y, "curve")
	for b.Loop() {
		if _, err := f.SVG(); err != nil {
			b.Fatal(err)
		}
	}
}

func BenchmarkHeatMap300(b *testing.B) {
	f := heatFigure(300, 300)
	for b.Loop() {
		if _, err := f.SVG(); err != nil {
			b.Fatal(err)
		}
	}
}
