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

// inGamut returns the colour of lightness l and hue h (degrees) with the
// largest chroma up to c that sRGB can show, so that a colour map keeps its
// lightness exactly where the gamut is narrow.
func inGamut(l, c, h float64) Lab {
	ok := func(p Lab) bool {
		r, g, b := p.linearRGB()
		const e = 1e-9
		return r >= -e && r <= 1+e && g >= -e && g <= 1+e && b >= -e && b <= 1+e
	}
	if p := lch(l, c, h); ok(p) {
		return p
	}
	lo, hi := 0.0, c
	for range 40 {
		m := (lo + hi) / 2
		if ok(lch(l, m, h)) {
			lo = m
		} else {
			hi = m
		}
	}
	return lch(l, lo, h)
}

// paletteLab defines the qualitative line colours in OKLCh. The rule: hues
// about 110° apart and alternating dark and light, with OKLab lightness
// 0.1 apart between any two (0.30 to 0.80), so that
// lines stay apart in greyscale and for dichromats (who keep lightness and
// the blue–yellow axis). Order: most distinct first.
var paletteLab = []Lab{
	inGamut(0.40, 0.14, 292), // violet ink
	inGamut(0.70, 0.13, 68),  // ochre
	inGamut(0.50, 0.10, 172), // sea green
	inGamut(0.30, 0.11, 18),  // wine
	inGamut(0.80, 0.12, 112), // citron
	inGamut(0.60, 0.09, 236), // slate blue
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

// Sequential is the colour map for heat maps, built by a rule in OKLCh:
// lightness rises linearly from 0.20 to 0.96; the hue turns steadily from
// 265° to 95° the long way round through red (night blue, plum, rose,
// apricot, cream); the chroma is an arch, 0.05 at the ends and 0.12 in the
// middle, reduced where sRGB cannot show it at that lightness. Its blue–
// yellow coordinate b rises along the whole path, the axis that red–green
// colour-vision deficiencies keep, and lightness alone already orders it.
var Sequential = newColorMap(sequentialStops(33))

func sequentialStops(n int) []Lab {
	out := make([]Lab, n)
	for k := range out {
		t := float64(k) / float64(n-1)
		l := 0.20 + 0.76*t
		h := 265 + 190*t
		c := 0.05 + 0.07*math.Sin(math.Pi*t)
		out[k] = inGamut(l, c, math.Mod(h, 360))
	}
	return out
}

// ContourColors returns n colours for contour levels drawn on paper, from
// the first level to the last: lightness from 0.30 to 0.70 and hue from
// 300° to 60° through red (violet, crimson, amber), so neighbouring levels
// differ in both.
func ContourColors(n int) []string {
	out := make([]string, n)
	for k := range out {
		t := 0.5
		if n > 1 {
			t = float64(k) / float64(n-1)
		}
		out[k] = inGamut(0.30+0.40*t, 0.13, math.Mod(300+120*t, 360)).RGB().Hex()
	}
	return out
}

// contourOnMap returns a contour colour that stands out where the heat map
// shows colour t: the map's lightness moved by 0.45 away from its nearer
// end, and the opposite hue.
func contourOnMap(t float64) string {
	m := Sequential.Lab(t)
	l := m.L - 0.45
	if m.L < 0.55 {
		l = m.L + 0.45
	}
	h := math.Atan2(m.B, m.A)*180/math.Pi + 180
	return inGamut(math.Min(l, 0.97), 0.12, h).RGB().Hex()
}

// MarkOnMap is the colour of markers drawn over a heat map's dark end (the
// eigenvalues on a pseudospectrum): a pale mint that neither end of
// Sequential resembles.
var MarkOnMap = inGamut(0.90, 0.10, 165).RGB().Hex()

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
