package install

import (
	"bytes"
	"fmt"
	"image"
	"image/color"
	"image/png"
	"math"
	"strings"
)

// The logo: a deep-teal rounded square with a decaying amber curve
// y = e^{-3x}·cos(4πx)-like envelope — the norm of a semigroup settling
// down — drawn over a faint horizontal axis.

var (
	logoBG    = color.NRGBA{0x12, 0x4e, 0x5c, 0xff}
	logoCurve = color.NRGBA{0xf2, 0xa5, 0x3a, 0xff}
	logoAxis  = color.NRGBA{0x9c, 0xc7, 0xcf, 0xff}
)

// curve is the drawn function on [0,1], with values in [0,1] (1 at the top).
func curve(x float64) float64 {
	return 0.5 + 0.38*math.Exp(-3.2*x)*math.Cos(3.5*math.Pi*x)
}

// LogoPNG renders the logo as an n×n PNG.
func LogoPNG(n int) []byte {
	img := image.NewNRGBA(image.Rect(0, 0, n, n))
	s := float64(n)
	r := 0.18 * s // corner radius
	margin := 0.16 * s
	width := 0.075 * s
	const sub = 4 // supersampling per axis
	for py := 0; py < n; py++ {
		for px := 0; px < n; px++ {
			var bg, fg, ax int
			for sy := 0; sy < sub; sy++ {
				for sx := 0; sx < sub; sx++ {
					x := float64(px) + (float64(sx)+0.5)/sub
					y := float64(py) + (float64(sy)+0.5)/sub
					if !inRoundedSquare(x, y, s, r) {
						continue
					}
					bg++
					u := (x - margin) / (s - 2*margin)
					if u >= 0 && u <= 1 {
						cy := margin + (1-curve(u))*(s-2*margin)
						if math.Abs(y-cy) < width/2*math.Sqrt(1+slope(u, s, margin)) {
							fg++
							continue
						}
					}
					if math.Abs(y-s/2) < 0.02*s+0.3 && x > margin && x < s-margin {
						ax++
					}
				}
			}
			tot := float64(sub * sub)
			a := float64(bg) / tot
			if a == 0 {
				continue
			}
			mix := func(c0, c1, c2 uint8) uint8 {
				b := float64(bg - fg - ax)
				v := (b*float64(c0) + float64(fg)*float64(c1) + float64(ax)*float64(c2)) / float64(bg)
				return uint8(math.Round(v))
			}
			img.SetNRGBA(px, py, color.NRGBA{
				R: mix(logoBG.R, logoCurve.R, logoAxis.R),
				G: mix(logoBG.G, logoCurve.G, logoAxis.G),
				B: mix(logoBG.B, logoCurve.B, logoAxis.B),
				A: uint8(math.Round(255 * a)),
			})
		}
	}
	var buf bytes.Buffer
	if err := png.Encode(&buf, img); err != nil {
		panic(err) // encoding an in-memory image cannot fail
	}
	return buf.Bytes()
}

// slope returns (dy/dx)² of the drawn curve in pixels, to keep the stroke
// width even on steep parts.
func slope(u, s, margin float64) float64 {
	const h = 1e-4
	d := (curve(u+h) - curve(u-h)) / (2 * h)
	return d * d
}

func inRoundedSquare(x, y, s, r float64) bool {
	cx := math.Min(math.Max(x, r), s-r)
	cy := math.Min(math.Max(y, r), s-r)
	return (x-cx)*(x-cx)+(y-cy)*(y-cy) <= r*r
}

// LogoSVG returns the logo as an SVG document on a 64×64 canvas.
func LogoSVG() string {
	const s, margin = 64.0, 0.16 * 64
	var pts []string
	for i := 0; i <= 64; i++ {
		u := float64(i) / 64
		pts = append(pts, fmt.Sprintf("%.2f,%.2f", margin+u*(s-2*margin), margin+(1-curve(u))*(s-2*margin)))
	}
	hex := func(c color.NRGBA) string { return fmt.Sprintf("#%02x%02x%02x", c.R, c.G, c.B) }
	return fmt.Sprintf(`<svg xmlns="http://www.w3.org/2000/svg" width="64" height="64" viewBox="0 0 64 64">
<rect width="64" height="64" rx="11.5" fill="%s"/>
<line x1="%.2f" y1="32" x2="%.2f" y2="32" stroke="%s" stroke-width="2.5"/>
<polyline points="%s" fill="none" stroke="%s" stroke-width="4.8" stroke-linecap="round" stroke-linejoin="round"/>
</svg>
`, hex(logoBG), margin, s-margin, hex(logoAxis), strings.Join(pts, " "), hex(logoCurve))
}
