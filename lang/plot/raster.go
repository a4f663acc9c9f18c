package plot

import (
	"bytes"
	"image"
	"image/color"
	"image/draw"
	"image/png"
	"io"
	"math"
	"strconv"
	"strings"
	"sync"

	xdraw "golang.org/x/image/draw"
	"golang.org/x/image/font"
	"golang.org/x/image/font/gofont/goregular"
	"golang.org/x/image/font/opentype"
	fx "golang.org/x/image/math/fixed"
	"golang.org/x/image/vector"
)

// PixelDensity is the number of PNG pixels per px of the figure: a 640×420
// figure becomes a 1280×840 image, sharp on high-density screens when shown
// at its px size.
const PixelDensity = 2

// PNG renders the figure as a PNG image. See WritePNG.
func (f *Figure) PNG() ([]byte, error) {
	var b bytes.Buffer
	if _, err := f.WritePNG(&b); err != nil {
		return nil, err
	}
	return b.Bytes(), nil
}

// WritePNG writes the figure as a PNG image of PixelDensity pixels per px
// to w: the same layout, colours and text as WriteSVG, painted by our
// rasteriser (golang.org/x/image/vector, anti-aliased by exact area
// coverage) with the embedded Go Regular font, so the image looks the same
// on every machine. Errors and panics are those of WriteSVG.
func (f *Figure) WritePNG(w io.Writer) (Notes, error) {
	r, err := f.render()
	if err != nil {
		return Notes{}, err
	}
	c := newRaster(r.W, r.H, PixelDensity)
	r.draw(c)
	enc := png.Encoder{CompressionLevel: png.BestSpeed}
	if err := enc.Encode(w, c.img); err != nil {
		return r.notes, err
	}
	return r.notes, nil
}

// rasterCanvas paints a figure into an RGBA image, k pixels per px.
type rasterCanvas struct {
	img   *image.RGBA
	k     float64
	clipR image.Rectangle // current clip in pixels
	full  image.Rectangle
	plot  image.Rectangle
	z     vector.Rasterizer
	faces map[float64]font.Face // by size in pixels
}

func newRaster(w, h float64, k int) *rasterCanvas {
	b := image.Rect(0, 0, int(math.Ceil(w*float64(k))), int(math.Ceil(h*float64(k))))
	return &rasterCanvas{img: image.NewRGBA(b), k: float64(k), clipR: b, full: b}
}

func (c *rasterCanvas) begin(r *renderer) {
	draw.Draw(c.img, c.full, image.NewUniform(parseColour(paperColor, 1)), image.Point{}, draw.Src)
	p := r.plot
	c.plot = image.Rect(int(math.Floor(p.x0*c.k)), int(math.Floor(p.y0*c.k)), int(math.Ceil(p.x1*c.k)), int(math.Ceil(p.y1*c.k))).Intersect(c.full)
}

func (c *rasterCanvas) clip(on bool) {
	if on {
		c.clipR = c.plot
	} else {
		c.clipR = c.full
	}
}

func (c *rasterCanvas) end() {}

// paint fills the union of the polygons (in px) with col. Every polygon is
// oriented the same way before it is added, so overlapping pieces of one
// stroke add up instead of cancelling.
func (c *rasterCanvas) paint(polys [][]point, col color.Color) {
	lo, hi := point{math.Inf(1), math.Inf(1)}, point{math.Inf(-1), math.Inf(-1)}
	for _, pl := range polys {
		for _, q := range pl {
			lo.x, lo.y = math.Min(lo.x, q.x*c.k), math.Min(lo.y, q.y*c.k)
			hi.x, hi.y = math.Max(hi.x, q.x*c.k), math.Max(hi.y, q.y*c.k)
		}
	}
	if !(lo.x <= hi.x) {
		return
	}
	bb := image.Rect(int(math.Floor(lo.x))-1, int(math.Floor(lo.y))-1, int(math.Ceil(hi.x))+1, int(math.Ceil(hi.y))+1).Intersect(c.clipR)
	if bb.Empty() {
		return
	}
	c.z.Reset(bb.Dx(), bb.Dy())
	ox, oy := float64(bb.Min.X), float64(bb.Min.Y)
	for _, pl := range polys {
		if len(pl) < 3 {
			continue
		}
		rev := signedArea(pl) < 0
		for i := range pl {
			q := pl[i]
			if rev {
				q = pl[len(pl)-1-i]
			}
			x, y := float32(q.x*c.k-ox), float32(q.y*c.k-oy)
			if i == 0 {
				c.z.MoveTo(x, y)
			} else {
				c.z.LineTo(x, y)
			}
		}
		c.z.ClosePath()
	}
	c.z.DrawOp = draw.Over
	c.z.Draw(c.img, bb, image.NewUniform(col), image.Point{})
}

func signedArea(pl []point) float64 {
	a := 0.0
	for i := range pl {
		j := (i + 1) % len(pl)
		a += pl[i].x*pl[j].y - pl[j].x*pl[i].y
	}
	return a / 2
}

// disc returns a polygon through n points on the circle about p.
func disc(p point, radius float64, n int) []point {
	out := make([]point, n)
	for i := range out {
		s, co := math.Sincos(2 * math.Pi * float64(i) / float64(n))
		out[i] = point{p.x + radius*co, p.y + radius*s}
	}
	return out
}

// discSides is the number of sides of a disc of the given radius in px,
// enough that the polygon differs from the circle by under 0.05 device pixel.
func (c *rasterCanvas) discSides(radius float64) int {
	n := int(math.Ceil(math.Pi / math.Sqrt(0.1/(radius*c.k+1e-9))))
	return min(max(n, 8), 64)
}

// outline turns a polyline into polygons covering its stroke: a rectangle
// per segment, a disc at each inner vertex (a round join) and, for round
// caps, at the two ends (otherwise the ends are cut square at the vertex).
func (c *rasterCanvas) outline(pl []point, closed bool, st strokeStyle) [][]point {
	h := st.width / 2
	var out [][]point
	if closed && len(pl) > 2 {
		pl = append(append([]point(nil), pl...), pl[0])
	}
	n := len(pl)
	for i := 0; i+1 < n; i++ {
		a, b := pl[i], pl[i+1]
		dx, dy := b.x-a.x, b.y-a.y
		l := math.Hypot(dx, dy)
		if l == 0 {
			continue
		}
		nx, ny := -dy/l*h, dx/l*h
		out = append(out, []point{{a.x + nx, a.y + ny}, {b.x + nx, b.y + ny}, {b.x - nx, b.y - ny}, {a.x - nx, a.y - ny}})
	}
	sides := c.discSides(h)
	for i, q := range pl {
		interior := i > 0 && i+1 < n
		if st.round || interior {
			out = append(out, disc(q, h, sides))
		}
	}
	return out
}

// dashes splits a polyline into the drawn pieces of the pattern d, lengths
// in px as in SVG (not scaled with the line width).
func dashes(pl []point, d Dash) [][]point {
	pattern := dashLengths(d)
	if pattern == nil {
		return [][]point{pl}
	}
	var out [][]point
	var cur []point
	k, left, on := 0, pattern[0], true
	for i := 0; i+1 < len(pl); i++ {
		a, b := pl[i], pl[i+1]
		l := math.Hypot(b.x-a.x, b.y-a.y)
		pos := 0.0
		for l-pos > left {
			pos += left
			q := lerp(a, b, pos/l)
			if on {
				cur = append(cur, q)
				if len(cur) == 1 {
					cur = append([]point{a}, cur...)
				}
				out = append(out, cur)
				cur = nil
			} else {
				cur = []point{q}
			}
			on = !on
			k = (k + 1) % len(pattern)
			left = pattern[k]
		}
		left -= l - pos
		if on {
			if len(cur) == 0 {
				cur = append(cur, lerp(a, b, pos/l))
			}
			cur = append(cur, b)
		}
	}
	if on && len(cur) >= 2 {
		out = append(out, cur)
	}
	return out
}

// dashLengths parses Dash.array (the SVG dash pattern), nil for solid.
func dashLengths(d Dash) []float64 {
	f := strings.Fields(d.array())
	if len(f) == 0 {
		return nil
	}
	out := make([]float64, len(f))
	for i, s := range f {
		out[i], _ = strconv.ParseFloat(s, 64)
	}
	return out
}

func (c *rasterCanvas) stroke(lines [][]point, closed bool, st strokeStyle) {
	col := parseColour(st.color, 1)
	var polys [][]point
	for _, pl := range lines {
		if closed && len(pl) > 2 {
			pl = append(append([]point(nil), pl...), pl[0])
		}
		var own [][]point
		for _, piece := range dashes(pl, st.dash) {
			own = append(own, c.outline(piece, false, st)...)
		}
		if len(lines) > 1 && straight(pl) {
			// Ticks and grid lines: one mask each, the size of the line,
			// not one the size of all of them (strokes are opaque, so
			// painting them apart changes no pixel).
			c.paint(own, col)
			continue
		}
		polys = append(polys, own...)
	}
	c.paint(polys, col)
}

// straight reports whether pl is a single horizontal or vertical segment.
func straight(pl []point) bool {
	return len(pl) == 2 && (pl[0].x == pl[1].x || pl[0].y == pl[1].y)
}

func (c *rasterCanvas) fill(polys [][]point, col string, opacity float64) {
	// One mask for all polygons: coverage saturates where they overlap, so
	// overlaps keep one opacity, as SVG's nonzero fill of one path does.
	c.paint(polys, parseColour(col, opacity))
}

func (c *rasterCanvas) box(b rect, fill string, fillOpacity float64, stroke string) {
	if fill != "" {
		c.paint([][]point{{{b.x0, b.y0}, {b.x1, b.y0}, {b.x1, b.y1}, {b.x0, b.y1}}}, parseColour(fill, fillOpacity))
	}
	if stroke != "" {
		c.stroke([][]point{{{b.x0, b.y0}, {b.x1, b.y0}, {b.x1, b.y1}, {b.x0, b.y1}}}, true, strokeStyle{color: stroke, width: 1})
	}
}

func (c *rasterCanvas) dot(p point, radius float64, col string) {
	c.paint([][]point{disc(p, radius, c.discSides(radius))}, parseColour(col, 1))
}

func (c *rasterCanvas) markers(m Marker, pts []point, size float64, col string) {
	if len(pts) == 0 {
		return
	}
	var polys [][]point
	if m == Cross {
		for _, q := range pts {
			s := size
			polys = append(polys, c.outline([]point{{q.x - s, q.y - s}, {q.x + s, q.y + s}}, false, strokeStyle{width: 1.6})...)
			polys = append(polys, c.outline([]point{{q.x - s, q.y + s}, {q.x + s, q.y - s}}, false, strokeStyle{width: 1.6})...)
		}
		c.paint(polys, parseColour(col, 1))
		return
	}
	for _, q := range pts {
		polys = append(polys, markerShape(m, q, size+0.4)) // the 0.8 px outline of the SVG marker
	}
	c.paint(polys, parseColour(col, 0.85))
}

// markerShape is the outline of marker m centred at q.
func markerShape(m Marker, q point, s float64) []point {
	switch m {
	case Square:
		s *= 0.9
		return []point{{q.x - s, q.y - s}, {q.x + s, q.y - s}, {q.x + s, q.y + s}, {q.x - s, q.y + s}}
	case Diamond:
		s *= 1.25
		return []point{{q.x, q.y - s}, {q.x + s, q.y}, {q.x, q.y + s}, {q.x - s, q.y}}
	}
	return disc(q, s, 20)
}

func (c *rasterCanvas) cells(cs []cell) {
	for _, e := range cs {
		r := image.Rect(int(math.Round(e.b.x0*c.k)), int(math.Round(e.b.y0*c.k)), int(math.Round(e.b.x1*c.k)), int(math.Round(e.b.y1*c.k))).Intersect(c.clipR)
		draw.Draw(c.img, r, image.NewUniform(color.RGBA{e.c.R, e.c.G, e.c.B, 255}), image.Point{}, draw.Src)
	}
}

func (c *rasterCanvas) image(img *image.NRGBA, b rect) {
	r := image.Rect(int(math.Round(b.x0*c.k)), int(math.Round(b.y0*c.k)), int(math.Round(b.x1*c.k)), int(math.Round(b.y1*c.k)))
	if r.Empty() {
		return
	}
	dst := c.img.SubImage(c.clipR).(*image.RGBA)
	xdraw.NearestNeighbor.Scale(dst, r, img, img.Bounds(), draw.Over, nil)
}

func (c *rasterCanvas) colourBar(b rect) {
	r := image.Rect(int(math.Round(b.x0*c.k)), int(math.Round(b.y0*c.k)), int(math.Round(b.x1*c.k)), int(math.Round(b.y1*c.k))).Intersect(c.clipR)
	for y := r.Min.Y; y < r.Max.Y; y++ {
		t := 1 - (float64(y-r.Min.Y)+0.5)/float64(r.Dy())
		col := Sequential.At(t)
		draw.Draw(c.img, image.Rect(r.Min.X, y, r.Max.X, y+1), image.NewUniform(color.RGBA{col.R, col.G, col.B, 255}), image.Point{}, draw.Src)
	}
}

// The embedded font: Go Regular (BSD licence), parsed once; the parsed font
// is safe for concurrent use, its faces are not, so each canvas keeps its
// own.
var (
	fontOnce sync.Once
	fontData *opentype.Font
)

// faceAt returns the canvas's face of Go Regular at px pixels.
func (c *rasterCanvas) faceAt(px float64) font.Face {
	fontOnce.Do(func() {
		f, err := opentype.Parse(goregular.TTF)
		if err != nil {
			panic("plot: the embedded Go Regular font does not parse: " + err.Error())
		}
		fontData = f
	})
	if f, ok := c.faces[px]; ok {
		return f
	}
	f, err := opentype.NewFace(fontData, &opentype.FaceOptions{Size: px, DPI: 72, Hinting: font.HintingNone})
	if err != nil {
		panic("plot: no face of Go Regular at " + strconv.FormatFloat(px, 'g', -1, 64) + " px: " + err.Error())
	}
	if c.faces == nil {
		c.faces = map[float64]font.Face{}
	}
	c.faces[px] = f
	return f
}

// glyphSubstitutes stand in for characters Go Regular lacks.
var glyphSubstitutes = strings.NewReplacer("‖", "||", "⊕", "+", "∈", "in", "↦", "->", "ᵀ", "T", "⁻", "-")

// run is a piece of text at one size and baseline offset.
type textRun struct {
	s    string
	size float64 // px
	rise float64 // px above the baseline
}

func runsOf(l label, size float64) []textRun {
	if l.parts != nil {
		var rs []textRun
		for _, p := range l.parts {
			if p.sub {
				rs = append(rs, textRun{glyphSubstitutes.Replace(p.s), 0.7 * size, -subDrop * size})
			} else {
				rs = append(rs, textRun{glyphSubstitutes.Replace(p.s), size, 0})
			}
		}
		return rs
	}
	rs := []textRun{{glyphSubstitutes.Replace(l.mant), size, 0}}
	if l.exp != "" {
		rs = append(rs, textRun{glyphSubstitutes.Replace(l.exp), 0.7 * size, 0.45 * size})
	}
	return rs
}

func (c *rasterCanvas) text(x, y float64, l label, st textStyle) {
	runs := runsOf(l, st.size)
	full := 0.0
	for _, r := range runs {
		full += float64(font.MeasureString(c.faceAt(r.size*c.k), r.s)) / 64
	}
	off := 0.0 // from the start of the text to its anchor, in pixels
	switch st.anchor {
	case AnchorMiddle:
		off = full / 2
	case AnchorEnd:
		off = full
	}
	col := image.NewUniform(parseColour(st.color, 1))
	dst := c.img.SubImage(c.clipR).(*image.RGBA)
	if !st.vertical {
		pen := x*c.k - off
		for _, r := range runs {
			d := font.Drawer{Dst: dst, Src: col, Face: c.faceAt(r.size * c.k), Dot: fx.Point26_6{X: fx.Int26_6(pen * 64), Y: fx.Int26_6((y - r.rise) * c.k * 64)}}
			d.DrawString(r.s)
			pen = float64(d.Dot.X) / 64
		}
		return
	}
	// Vertical text: set it horizontally in a scratch image, then turn it a
	// quarter anticlockwise onto the figure, its baseline through (x, y).
	asc, desc := st.size*c.k*1.1, st.size*c.k*0.35
	tw, th := int(math.Ceil(full))+4, int(math.Ceil(asc+desc))
	scratch := image.NewRGBA(image.Rect(0, 0, tw, th))
	pen := 2.0
	for _, r := range runs {
		d := font.Drawer{Dst: scratch, Src: col, Face: c.faceAt(r.size * c.k), Dot: fx.Point26_6{X: fx.Int26_6(pen * 64), Y: fx.Int26_6((asc - r.rise*c.k) * 64)}}
		d.DrawString(r.s)
		pen = float64(d.Dot.X) / 64
	}
	// Scratch pixel (u, v) goes to (v, tw−1−u) of rot: along the text becomes
	// upwards, downwards in the text becomes rightwards.
	rot := image.NewRGBA(image.Rect(0, 0, th, tw))
	for u := 0; u < tw; u++ {
		for v := 0; v < th; v++ {
			rot.SetRGBA(v, tw-1-u, scratch.RGBAAt(u, v))
		}
	}
	// The baseline (v = asc) lands on x, the anchor (u = 2 + off) on y.
	ox := int(math.Round(x*c.k - asc))
	oy := int(math.Round(y*c.k - float64(tw-1) + 2 + off))
	draw.Draw(dst, image.Rect(ox, oy, ox+th, oy+tw), rot, image.Point{}, draw.Over)
}

// parseColour reads the colour syntaxes figures use ("#rgb", "#rrggbb", a
// few names); anything else is the ink colour. opacity scales alpha.
func parseColour(s string, opacity float64) color.NRGBA {
	a := uint8(math.Round(255 * math.Min(1, math.Max(0, opacity))))
	s = strings.ToLower(strings.TrimSpace(s))
	if c, ok := namedColours[s]; ok {
		s = c
	}
	hex := func(t string) (uint8, bool) {
		v, err := strconv.ParseUint(t, 16, 8)
		return uint8(v), err == nil
	}
	switch {
	case len(s) == 7 && s[0] == '#':
		r, ok1 := hex(s[1:3])
		g, ok2 := hex(s[3:5])
		b, ok3 := hex(s[5:7])
		if ok1 && ok2 && ok3 {
			return color.NRGBA{r, g, b, a}
		}
	case len(s) == 4 && s[0] == '#':
		r, ok1 := hex(s[1:2] + s[1:2])
		g, ok2 := hex(s[2:3] + s[2:3])
		b, ok3 := hex(s[3:4] + s[3:4])
		if ok1 && ok2 && ok3 {
			return color.NRGBA{r, g, b, a}
		}
	}
	return color.NRGBA{0x23, 0x26, 0x2e, a}
}

var namedColours = map[string]string{
	"black": "#000000", "white": "#ffffff", "grey": "#808080", "gray": "#808080",
	"red": "#ff0000", "green": "#008000", "blue": "#0000ff", "none": "#ffffff",
}

// nullCanvas draws nothing: a layout pass that only records where the data
// lie.
type nullCanvas struct{}

func (nullCanvas) begin(*renderer)                          {}
func (nullCanvas) clip(bool)                                {}
func (nullCanvas) stroke([][]point, bool, strokeStyle)      {}
func (nullCanvas) fill([][]point, string, float64)          {}
func (nullCanvas) box(rect, string, float64, string)        {}
func (nullCanvas) dot(point, float64, string)               {}
func (nullCanvas) markers(Marker, []point, float64, string) {}
func (nullCanvas) cells([]cell)                             {}
func (nullCanvas) image(*image.NRGBA, rect)                 {}
func (nullCanvas) colourBar(rect)                           {}
func (nullCanvas) text(float64, float64, label, textStyle)  {}
func (nullCanvas) end()                                     {}
