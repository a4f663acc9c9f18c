package plot

import (
	"bytes"
	"encoding/base64"
	"fmt"
	"image"
	"image/png"
)

// canvas is what a laid-out figure is drawn on. The renderer decides every
// position, colour and width (in CSS px of the figure); a canvas only turns
// those primitives into one output format: svgCanvas writes SVG elements,
// rasterCanvas paints pixels. Both receive the same calls in the same order,
// so the SVG and the PNG of a figure show the same thing.
type canvas interface {
	// begin starts the figure: size, title, description and background.
	begin(r *renderer)
	// clip restricts what follows to the plot area (on = true) or lifts it.
	clip(on bool)
	// stroke draws the polylines (closed ones return to their start).
	stroke(lines [][]point, closed bool, st strokeStyle)
	// fill paints the polygons with colour c at the given opacity.
	fill(polys [][]point, c string, opacity float64)
	// box fills the rectangle (empty fill for none) and outlines it (empty
	// stroke for none).
	box(b rect, fill string, fillOpacity float64, stroke string)
	// dot fills a disc.
	dot(p point, radius float64, c string)
	// markers draws the marker m of radius size at each point.
	markers(m Marker, pts []point, size float64, c string)
	// cells fills axis-aligned rectangles with hard edges (a small heat map).
	cells(cs []cell)
	// image draws img stretched over b without smoothing (a large heat map);
	// row 0 of img is the top of b.
	image(img *image.NRGBA, b rect)
	// colourBar fills b with the Sequential map, its start at the bottom.
	colourBar(b rect)
	// text writes l with its baseline at y, anchored at x, or turned a
	// quarter anticlockwise (reading upwards) about (x, y) when vertical.
	text(x, y float64, l label, st textStyle)
	end()
}

// strokeStyle is how a line is drawn.
type strokeStyle struct {
	color string
	width float64
	dash  Dash
	round bool // round joins and caps
}

// textStyle is how a text is set.
type textStyle struct {
	size     float64
	color    string
	anchor   Anchor
	vertical bool
}

// cell is one rectangle of a heat map.
type cell struct {
	b rect
	c RGB
}

// svgCanvas writes SVG elements with every coordinate at two decimals.
type svgCanvas struct {
	b  bytes.Buffer
	id string
}

func (s *svgCanvas) printf(format string, a ...any) { fmt.Fprintf(&s.b, format, a...) }

// path returns SVG path data for the polylines.
func path(lines [][]point, closed bool) string {
	var b []byte
	for _, pl := range lines {
		for k, p := range pl {
			if k == 0 {
				b = append(b, 'M')
			} else {
				b = append(b, ' ')
			}
			b = appendNum(b, p.x)
			b = append(b, ',')
			b = appendNum(b, p.y)
		}
		if closed {
			b = append(b, 'Z')
		}
	}
	return string(b)
}

func (s *svgCanvas) begin(r *renderer) {
	s.id = r.id
	s.printf(`<svg xmlns="http://www.w3.org/2000/svg" xmlns:xlink="http://www.w3.org/1999/xlink" width="%s" height="%s" viewBox="0 0 %s %s" role="img" font-family="%s">`+"\n",
		num(r.W), num(r.H), num(r.W), num(r.H), FontFamily)
	s.printf("<title>%s</title>\n", escape(r.f.Caption()))
	s.printf("<desc>%s</desc>\n", escape(r.describe()))
	p := r.plot
	s.printf(`<defs><clipPath id="%s-plot"><rect x="%s" y="%s" width="%s" height="%s"/></clipPath>`,
		r.id, num(p.x0), num(p.y0), num(p.x1-p.x0), num(p.y1-p.y0))
	if r.heat != nil {
		s.printf(`<linearGradient id="%s-cbar" x1="0" y1="1" x2="0" y2="0">`, r.id)
		for k := 0; k <= 16; k++ {
			t := float64(k) / 16
			s.printf(`<stop offset="%s" stop-color="%s"/>`, num(t), Sequential.At(t).Hex())
		}
		s.printf(`</linearGradient>`)
	}
	s.printf("</defs>\n")
	s.printf(`<rect width="100%%" height="100%%" fill="%s"/>`+"\n", paperColor)
}

func (s *svgCanvas) clip(on bool) {
	if on {
		s.printf(`<g clip-path="url(#%s-plot)">`+"\n", s.id)
	} else {
		s.printf("</g>\n")
	}
}

func (s *svgCanvas) stroke(lines [][]point, closed bool, st strokeStyle) {
	if len(lines) == 0 {
		return
	}
	round := ""
	if st.round {
		round = ` stroke-linejoin="round" stroke-linecap="round"`
	}
	s.printf(`<path d="%s" fill="none" stroke="%s" stroke-width="%s"%s%s/>`+"\n",
		path(lines, closed), escape(st.color), num(st.width), round, dashAttr(st.dash))
}

func (s *svgCanvas) fill(polys [][]point, c string, opacity float64) {
	if len(polys) == 0 {
		return
	}
	op := ""
	if opacity < 1 {
		op = ` fill-opacity="` + num(opacity) + `"`
	}
	s.printf(`<path d="%s" fill="%s"%s stroke="none"/>`+"\n", path(polys, true), escape(c), op)
}

func (s *svgCanvas) box(b rect, fill string, fillOpacity float64, stroke string) {
	f := "none"
	if fill != "" {
		f = escape(fill)
		if fillOpacity < 1 {
			f += `" fill-opacity="` + num(fillOpacity)
		}
	}
	st := ""
	if stroke != "" {
		st = ` stroke="` + escape(stroke) + `"`
	}
	s.printf(`<rect x="%s" y="%s" width="%s" height="%s" fill="%s"%s/>`+"\n",
		num(b.x0), num(b.y0), num(b.x1-b.x0), num(b.y1-b.y0), f, st)
}

func (s *svgCanvas) dot(p point, radius float64, c string) {
	s.printf(`<circle cx="%s" cy="%s" r="%s" fill="%s"/>`+"\n", num(p.x), num(p.y), num(radius), escape(c))
}

func markerPath(b []byte, m Marker, x, y, s float64) []byte {
	n := func(v float64) string { return num(v) }
	switch m {
	case Square:
		s *= 0.9
		return fmt.Appendf(b, "M%s,%sh%sv%sh%sZ", n(x-s), n(y-s), n(2*s), n(2*s), n(-2*s))
	case Diamond:
		s *= 1.25
		return fmt.Appendf(b, "M%s,%sl%s,%sl%s,%sl%s,%sZ", n(x), n(y-s), n(s), n(s), n(-s), n(s), n(-s), n(-s))
	case Cross:
		return fmt.Appendf(b, "M%s,%sl%s,%sm0,%sl%s,%s", n(x-s), n(y-s), n(2*s), n(2*s), n(-2*s), n(-2*s), n(2*s))
	default:
		return fmt.Appendf(b, "M%s,%sa%s,%s 0 1,0 %s,0a%s,%s 0 1,0 %s,0", n(x-s), n(y), n(s), n(s), n(2*s), n(s), n(s), n(-2*s))
	}
}

func (s *svgCanvas) markers(m Marker, pts []point, size float64, c string) {
	var b []byte
	for _, q := range pts {
		b = markerPath(b, m, q.x, q.y, size)
	}
	if len(b) == 0 {
		return
	}
	c = escape(c)
	if m == Cross {
		s.printf(`<path d="%s" fill="none" stroke="%s" stroke-width="1.6"/>`+"\n", b, c)
	} else {
		s.printf(`<path d="%s" fill="%s" fill-opacity="0.85" stroke="%s" stroke-width="0.8"/>`+"\n", b, c, c)
	}
}

func (s *svgCanvas) cells(cs []cell) {
	s.printf(`<g shape-rendering="crispEdges">`)
	for _, c := range cs {
		// 0.4 px of overlap hides the seams some renderers leave between cells.
		s.printf(`<rect x="%s" y="%s" width="%s" height="%s" fill="%s"/>`,
			num(c.b.x0), num(c.b.y0), num(c.b.x1-c.b.x0+0.4), num(c.b.y1-c.b.y0+0.4), c.c.Hex())
	}
	s.printf("</g>\n")
}

func (s *svgCanvas) image(img *image.NRGBA, b rect) {
	var buf bytes.Buffer
	if err := png.Encode(&buf, img); err != nil {
		return
	}
	s.printf(`<image x="%s" y="%s" width="%s" height="%s" preserveAspectRatio="none" style="image-rendering:pixelated" xlink:href="data:image/png;base64,%s"/>`+"\n",
		num(b.x0), num(b.y0), num(b.x1-b.x0), num(b.y1-b.y0), base64.StdEncoding.EncodeToString(buf.Bytes()))
}

func (s *svgCanvas) colourBar(b rect) {
	s.printf(`<rect x="%s" y="%s" width="%s" height="%s" fill="url(#%s-cbar)"/>`+"\n",
		num(b.x0), num(b.y0), num(b.x1-b.x0), num(b.y1-b.y0), s.id)
}

func (s *svgCanvas) text(x, y float64, l label, st textStyle) {
	size := ""
	if st.size > 0 {
		size = ` font-size="` + num(st.size) + `"`
	}
	anchor := ""
	if st.anchor != AnchorStart {
		anchor = ` text-anchor="` + anchorName(st.anchor) + `"`
	}
	turn := ""
	if st.vertical {
		turn = fmt.Sprintf(` transform="rotate(-90 %s %s)"`, num(x), num(y))
	}
	s.printf(`<text x="%s" y="%s"%s fill="%s"%s%s>%s</text>`+"\n", num(x), num(y), size, escape(st.color), anchor, turn, l.svg())
}

func (s *svgCanvas) end() { s.printf("</svg>\n") }

func dashAttr(d Dash) string {
	if a := d.array(); a != "" {
		return ` stroke-dasharray="` + a + `"`
	}
	return ""
}

func anchorName(a Anchor) string {
	switch a {
	case AnchorMiddle:
		return "middle"
	case AnchorEnd:
		return "end"
	}
	return "start"
}
