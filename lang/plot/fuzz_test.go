package plot

import (
	"bytes"
	"encoding/binary"
	"image/png"
	"math"
	"testing"
)

// FuzzFigure renders figures from arbitrary numbers: rendering must never
// panic, and every SVG it returns must parse and hold no non-finite number.
func FuzzFigure(f *testing.F) {
	f.Add([]byte{}, uint8(0))
	f.Add(binary.LittleEndian.AppendUint64(nil, math.Float64bits(math.NaN())), uint8(3))
	seed := []byte{}
	for _, v := range []float64{0, 1, -1, 1e300, -1e-300, math.Inf(1), 2, 3} {
		seed = binary.LittleEndian.AppendUint64(seed, math.Float64bits(v))
	}
	f.Add(seed, uint8(0xff))
	f.Fuzz(func(t *testing.T, data []byte, flags uint8) {
		var v []float64
		for len(data) >= 8 {
			v = append(v, math.Float64frombits(binary.LittleEndian.Uint64(data)))
			data = data[8:]
		}
		n := len(v) / 2
		xs, ys := v[:n], v[n:2*n]
		fig := &Figure{
			X:               Axis{Log: flags&1 != 0},
			Y:               Axis{Log: flags&2 != 0},
			EqualAspect:     flags&4 != 0,
			DropNonPositive: flags&8 != 0,
			Width:           int(flags) * 3,
			Title:           "fuzz",
		}
		fig.AddLine(xs, ys, "line")
		fig.AddPoints(ys, xs, "points").Marker = Marker(flags % 4)
		fig.AddBand(xs, ys, xs, "band")
		if n > 0 {
			fig.AddHLine(ys[0], "h")
			fig.AddVLine(xs[0], "v")
			fig.AddText(xs[0], ys[0], "t")
		}
		if flags&16 != 0 && n >= 4 && !fig.X.Log && !fig.Y.Log {
			z := [][]float64{xs[:2], ys[:2]}
			fig.AddHeatMap(z, xs[0], xs[1], ys[0], ys[1], "z").Log = flags&32 != 0
			lv := []float64{xs[2], ys[2]}
			fig.AddContours(lv, Contours(z, []float64{0, 1}, []float64{0, 1}, lv), "ε")
		}
		svg, err := fig.SVG()
		if err != nil {
			return
		}
		checkSVG(t, svg)
		if bytes.Contains(svg, []byte("NaN")) || bytes.Contains(svg, []byte("Inf")) {
			t.Fatal("non-finite number in SVG")
		}
		// The raster back end draws whatever the SVG writer drew (at a
		// small size, so that fuzzing keeps its pace).
		small := *fig
		small.Width, small.Height = 200, 150
		pic, err := small.PNG()
		if err != nil {
			t.Fatalf("SVG drawn, PNG not: %v", err)
		}
		if _, err := png.DecodeConfig(bytes.NewReader(pic)); err != nil {
			t.Fatalf("PNG does not decode: %v", err)
		}
	})
}
