package plot

import (
	"fmt"
	"math"
)

// RGB is an sRGB colour with 8-bit channels.
type RGB struct{ R, G, B uint8 }

// Hex returns the colour as "#rrggbb".
func (c RGB) Hex() string { return fmt.Sprintf("#%02x%02x%02x", c.R, c.G, c.B) }

// Lab is a colour in the OKLab space of B. Ottosson (2020): L is perceived
// lightness in [0, 1], a and b the green–red and blue–yellow opponent axes.
type Lab struct{ L, A, B float64 }

func srgbToLinear(c float64) float64 {
	if c <= 0.04045 {
		return c / 12.92
	}
	return math.Pow((c+0.055)/1.055, 2.4)
}

func linearToSRGB(c float64) float64 {
	if c <= 0.0031308 {
		return 12.92 * c
	}
	return 1.055*math.Pow(c, 1/2.4) - 0.055
}

// ToLab converts c to OKLab (sRGB transfer curve of IEC 61966-2-1, then the
// two matrices of Ottosson 2020).
func (c RGB) ToLab() Lab {
	r := srgbToLinear(float64(c.R) / 255)
	g := srgbToLinear(float64(c.G) / 255)
	b := srgbToLinear(float64(c.B) / 255)
	l := math.Cbrt(0.4122214708*r + 0.5363325363*g + 0.0514459929*b)
	m := math.Cbrt(0.2119034982*r + 0.6806995451*g + 0.1073969566*b)
	s := math.Cbrt(0.0883024619*r + 0.2817188376*g + 0.6299787005*b)
	return Lab{
		L: 0.2104542553*l + 0.7936177850*m - 0.0040720468*s,
		A: 1.9779984951*l - 2.4285922050*m + 0.4505937099*s,
		B: 0.0259040371*l + 0.7827717662*m - 0.8086757660*s,
	}
}

// linearRGB returns the linear-light sRGB components of p, possibly outside
// [0, 1] when p is out of the sRGB gamut.
func (p Lab) linearRGB() (r, g, b float64) {
	l := p.L + 0.3963377774*p.A + 0.2158037573*p.B
	m := p.L - 0.1055613458*p.A - 0.0638541728*p.B
	s := p.L - 0.0894841775*p.A - 1.2914855480*p.B
	l, m, s = l*l*l, m*m*m, s*s*s
	r = 4.0767416621*l - 3.3077115913*m + 0.2309699292*s
	g = -1.2684380046*l + 2.6097574011*m - 0.3413193965*s
	b = -0.0041960863*l - 0.7034186147*m + 1.7076147010*s
	return r, g, b
}

// RGB converts p to sRGB, clipping each channel to [0, 1].
func (p Lab) RGB() RGB {
	r, g, b := p.linearRGB()
	q := func(v float64) uint8 {
		v = linearToSRGB(math.Min(1, math.Max(0, v)))
		return uint8(math.Round(v * 255))
	}
	return RGB{q(r), q(g), q(b)}
}

// lch builds an OKLab colour from lightness, chroma and hue in degrees.
func lch(l, c, h float64) Lab {
	s, co := math.Sincos(h * math.Pi / 180)
	return Lab{l, c * co, c * s}
}

// paletteLab defines the qualitative palette in OKLCh. Hues alternate between
// the blue–yellow axis, which all common colour-vision deficiencies keep, and
// lightness steps of at least 0.08 separate every pair, so the colours stay
// distinct in greyscale and for dichromats. Order: most distinct first.
var paletteLab = []Lab{
	lch(0.45, 0.15, 262), // blue
	lch(0.72, 0.15, 62),  // orange
	lch(0.30, 0.09, 330), // plum
	lch(0.62, 0.10, 190), // teal
	lch(0.82, 0.15, 95),  // straw
	lch(0.53, 0.15, 25),  // brick
}

// Palette is the qualitative colour cycle given to series without a colour.
var Palette = func() []RGB {
	out := make([]RGB, len(paletteLab))
	for i, p := range paletteLab {
		out[i] = p.RGB()
	}
	return out
}()

// ColorMap is a sequential colour map: a piecewise-linear path through control
// points in OKLab, so equal steps of the parameter give nearly equal perceived
// steps of colour.
type ColorMap struct {
	stops []Lab
	table []RGB // At sampled at lutSize points, built on first use
}

const lutSize = 1024

// Sequential is the colour map for heat maps: from deep indigo through blue and
// teal to pale yellow, with OKLab lightness rising monotonically from 0.22 to
// 0.94, so order is readable in greyscale.
var Sequential = newColorMap([]Lab{
	lch(0.22, 0.10, 290),
	lch(0.40, 0.13, 262),
	lch(0.58, 0.09, 205),
	lch(0.76, 0.13, 140),
	lch(0.94, 0.12, 102),
})

func newColorMap(stops []Lab) ColorMap {
	m := ColorMap{stops: stops}
	m.table = make([]RGB, lutSize)
	for k := range m.table {
		m.table[k] = m.Lab(float64(k) / (lutSize - 1)).RGB()
	}
	return m
}

// quick returns the colour at t from the table (to within 1/2046 in t).
func (m ColorMap) quick(t float64) RGB {
	if !(t > 0) {
		return m.table[0]
	}
	return m.table[int(math.Min(t, 1)*(lutSize-1)+0.5)]
}

// Lab returns the map's colour at t ∈ [0, 1] in OKLab (t is clamped; NaN gives
// the start).
func (m ColorMap) Lab(t float64) Lab {
	if !(t > 0) {
		return m.stops[0]
	}
	if t >= 1 {
		return m.stops[len(m.stops)-1]
	}
	x := t * float64(len(m.stops)-1)
	k := int(x)
	f := x - float64(k)
	a, b := m.stops[k], m.stops[k+1]
	return Lab{a.L + f*(b.L-a.L), a.A + f*(b.A-a.A), a.B + f*(b.B-a.B)}
}

// At returns the map's colour at t ∈ [0, 1] as sRGB.
func (m ColorMap) At(t float64) RGB { return m.Lab(t).RGB() }

// seriesColor returns c, or the palette colour for index k when c is empty.
func seriesColor(c string, k int) string {
	if c != "" {
		return c
	}
	return Palette[k%len(Palette)].Hex()
}

// lightness returns the OKLab lightness of a "#rrggbb" colour, or ok = false
// for any other colour syntax.
func lightness(c string) (float64, bool) {
	var r, g, b uint8
	if len(c) != 7 || c[0] != '#' {
		return 0, false
	}
	if _, err := fmt.Sscanf(c, "#%02x%02x%02x", &r, &g, &b); err != nil {
		return 0, false
	}
	return RGB{r, g, b}.ToLab().L, true
}
