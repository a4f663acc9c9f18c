package plot

import (
	"bytes"
	"encoding/base64"
	"fmt"
	"image"
	"image/color"
	"image/png"
	"math"
	"strings"
)

const (
	inkColor   = "#222222"
	frameColor = "#555555"
	gridColor  = "#e4e4e4"
	refColor   = "#555555"
	noteColor  = "#777777"
)

func (r *renderer) printf(format string, a ...any) { fmt.Fprintf(&r.b, format, a...) }

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

func (r *renderer) draw() {
	f := r.f
	title := f.Title
	if title == "" {
		title = "Figure"
	}
	r.printf(`<svg xmlns="http://www.w3.org/2000/svg" xmlns:xlink="http://www.w3.org/1999/xlink" width="%s" height="%s" viewBox="0 0 %s %s" role="img" font-family="%s">`+"\n",
		num(r.W), num(r.H), num(r.W), num(r.H), FontFamily)
	r.printf("<title>%s</title>\n", escape(title))
	r.printf("<desc>%s</desc>\n", escape(r.describe()))
	p := r.plot
	r.printf(`<defs><clipPath id="%s-plot"><rect x="%s" y="%s" width="%s" height="%s"/></clipPath>`,
		r.id, num(p.x0), num(p.y0), num(p.x1-p.x0), num(p.y1-p.y0))
	if r.heat != nil {
		r.printf(`<linearGradient id="%s-cbar" x1="0" y1="1" x2="0" y2="0">`, r.id)
		for k := 0; k <= 16; k++ {
			t := float64(k) / 16
			r.printf(`<stop offset="%s" stop-color="%s"/>`, num(t), Sequential.At(t).Hex())
		}
		r.printf(`</linearGradient>`)
	}
	r.printf("</defs>\n")
	r.printf(`<rect width="100%%" height="100%%" fill="#ffffff"/>` + "\n")
	if !f.NoGrid {
		r.drawGrid()
	}
	r.printf(`<g clip-path="url(#%s-plot)">`+"\n", r.id)
	for _, s := range f.Series {
		if h, ok := s.(*HeatMap); ok {
			r.drawHeat(h)
		}
	}
	colour := 0
	next := func(c string) string {
		if c != "" {
			return escape(c)
		}
		colour++
		return seriesColor("", colour-1)
	}
	var legend []legendEntry
	for _, s := range f.Series {
		switch s := s.(type) {
		case *Band:
			c := next(s.Color)
			op := s.Opacity
			if op <= 0 {
				op = 0.22
			}
			r.drawBand(s, c, op)
			if s.Label != "" {
				legend = append(legend, legendEntry{kind: 'b', color: c, opacity: op, label: s.Label})
			}
		case *ContourSet:
			name := s.Name
			if name == "" {
				name = "level"
			}
			wd := s.Width
			if wd <= 0 {
				wd = 1.3
			}
			for k, lv := range s.Levels {
				if !finite(lv) {
					continue
				}
				c := ""
				if k < len(s.Colors) {
					c = s.Colors[k]
				}
				c = next(c)
				r.drawContour(s.Lines[k], c, wd)
				legend = append(legend, legendEntry{kind: 'l', color: c, width: wd, label: name + " = " + FormatValue(lv)})
			}
		case *Line:
			c := next(s.Color)
			wd := s.Width
			if wd <= 0 {
				wd = 1.5
			}
			r.drawLine(s, c, wd)
			if s.Label != "" {
				legend = append(legend, legendEntry{kind: 'l', color: c, width: wd, dash: s.Dash, label: s.Label})
			}
		case *Points:
			c := next(s.Color)
			sz := s.Size
			if sz <= 0 {
				sz = 3.5
			}
			r.drawPoints(s, c, sz)
			if s.Label != "" {
				legend = append(legend, legendEntry{kind: 'p', color: c, marker: s.Marker, label: s.Label})
			}
		case *HLine:
			c := refColor
			if s.Color != "" {
				c = escape(s.Color)
			}
			if y, ok := r.ys.px(s.Y); ok {
				r.printf(`<path d="M%s,%s H%s" fill="none" stroke="%s" stroke-width="1.2"%s/>`+"\n", num(p.x0), num(y), num(p.x1), c, dashAttr(s.Dash))
				r.segs = append(r.segs, [2]point{{p.x0, y}, {p.x1, y}})
			}
			if s.Label != "" {
				legend = append(legend, legendEntry{kind: 'l', color: c, width: 1.2, dash: s.Dash, label: s.Label})
			}
		case *VLine:
			c := refColor
			if s.Color != "" {
				c = escape(s.Color)
			}
			if x, ok := r.xs.px(s.X); ok {
				r.printf(`<path d="M%s,%s V%s" fill="none" stroke="%s" stroke-width="1.2"%s/>`+"\n", num(x), num(p.y0), num(p.y1), c, dashAttr(s.Dash))
				r.segs = append(r.segs, [2]point{{x, p.y0}, {x, p.y1}})
			}
			if s.Label != "" {
				legend = append(legend, legendEntry{kind: 'l', color: c, width: 1.2, dash: s.Dash, label: s.Label})
			}
		}
	}
	for _, s := range f.Series {
		if t, ok := s.(*Text); ok {
			r.drawText(t)
		}
	}
	r.printf("</g>\n")
	r.printf(`<rect x="%s" y="%s" width="%s" height="%s" fill="none" stroke="%s"/>`+"\n",
		num(p.x0), num(p.y0), num(p.x1-p.x0), num(p.y1-p.y0), frameColor)
	r.drawAxes()
	if r.heat != nil {
		r.drawColourBar()
	}
	if f.Legend != LegendNone && len(legend) > 0 {
		r.drawLegend(legend)
	}
	r.drawLabels()
	r.printf("</svg>\n")
}

// describe summarises the figure for the SVG <desc> element.
func (r *renderer) describe() string {
	count := map[string]int{}
	var order []string
	for _, s := range r.f.Series {
		name := strings.ToLower(strings.TrimPrefix(fmt.Sprintf("%T", s), "*plot."))
		if count[name] == 0 {
			order = append(order, name)
		}
		count[name]++
	}
	var parts []string
	for _, n := range order {
		parts = append(parts, fmt.Sprintf("%d %s", count[n], n))
	}
	d := "Figure with " + strings.Join(parts, ", ")
	if len(parts) == 0 {
		d = "Empty figure"
	}
	d += fmt.Sprintf("; x from %s to %s, y from %s to %s", FormatValue(r.xs.lo), FormatValue(r.xs.hi), FormatValue(r.ys.lo), FormatValue(r.ys.hi))
	if t := r.notes.text(); t != "" {
		d += "; " + t
	}
	return d + "."
}

func dashAttr(d Dash) string {
	if a := d.array(); a != "" {
		return ` stroke-dasharray="` + a + `"`
	}
	return ""
}

func (r *renderer) drawGrid() {
	p := r.plot
	var b []byte
	for _, v := range r.xt.major {
		if x, ok := r.xs.px(v); ok && x > p.x0+0.5 && x < p.x1-0.5 {
			b = fmt.Appendf(b, "M%s,%sV%s", num(x), num(p.y0), num(p.y1))
		}
	}
	for _, v := range r.yt.major {
		if y, ok := r.ys.px(v); ok && y > p.y0+0.5 && y < p.y1-0.5 {
			b = fmt.Appendf(b, "M%s,%sH%s", num(p.x0), num(y), num(p.x1))
		}
	}
	if len(b) > 0 {
		r.printf(`<path d="%s" stroke="%s" stroke-width="1" fill="none"/>`+"\n", b, gridColor)
	}
}

// pixels transforms data points to px, splitting at undrawable points.
func (r *renderer) pixels(xs, ys []float64) [][]point {
	var out [][]point
	var cur []point
	for k := range xs {
		x, okx := r.xs.px(xs[k])
		y, oky := r.ys.px(ys[k])
		if !okx || !oky {
			if len(cur) > 0 {
				out = append(out, cur)
			}
			cur = nil
			continue
		}
		cur = append(cur, point{x, y})
	}
	if len(cur) > 0 {
		out = append(out, cur)
	}
	return out
}

func (r *renderer) strokes(parts [][]point) [][]point {
	view := r.plot.inflate(4)
	var out [][]point
	for _, pl := range parts {
		for _, c := range clipPolyline(view, pl) {
			for k := 0; k+1 < len(c); k++ {
				r.segs = append(r.segs, [2]point{c[k], c[k+1]})
			}
			out = append(out, c)
		}
	}
	return out
}

func (r *renderer) drawLine(s *Line, c string, wd float64) {
	parts := r.strokes(r.pixels(s.X, s.Y))
	var lines, dots [][]point
	for _, pl := range parts {
		if len(pl) == 1 {
			dots = append(dots, pl)
		} else {
			lines = append(lines, pl)
		}
	}
	if len(lines) > 0 {
		r.printf(`<path d="%s" fill="none" stroke="%s" stroke-width="%s" stroke-linejoin="round" stroke-linecap="round"%s/>`+"\n",
			path(lines, false), c, num(wd), dashAttr(s.Dash))
	}
	for _, d := range dots { // an isolated point of a line: a dot of the line's width
		r.printf(`<circle cx="%s" cy="%s" r="%s" fill="%s"/>`+"\n", num(d[0].x), num(d[0].y), num(math.Max(wd, 1.5)), c)
		r.marks = append(r.marks, d[0])
	}
}

func (r *renderer) drawContour(lines []Polyline, c string, wd float64) {
	var all [][]point
	for _, pl := range lines {
		all = append(all, r.strokes(r.pixels(pl.X, pl.Y))...)
	}
	if len(all) > 0 {
		r.printf(`<path d="%s" fill="none" stroke="%s" stroke-width="%s" stroke-linejoin="round"/>`+"\n", path(all, false), c, num(wd))
	}
}

func (r *renderer) drawBand(s *Band, c string, op float64) {
	view := r.plot.inflate(4)
	var polys [][]point
	// Split at any index where x, lower or upper is undrawable.
	start := 0
	flush := func(end int) {
		if end-start < 2 {
			return
		}
		up := r.pixels(s.X[start:end], s.Upper[start:end])
		lo := r.pixels(s.X[start:end], s.Lower[start:end])
		if len(up) != 1 || len(lo) != 1 {
			return
		}
		poly := append([]point(nil), up[0]...)
		for k := len(lo[0]) - 1; k >= 0; k-- {
			poly = append(poly, lo[0][k])
		}
		if cp := clipPolygon(view, poly); len(cp) >= 3 {
			polys = append(polys, cp)
			for k := range cp {
				r.segs = append(r.segs, [2]point{cp[k], cp[(k+1)%len(cp)]})
			}
		}
	}
	for k := range s.X {
		_, a := r.xs.px(s.X[k])
		_, b := r.ys.px(s.Lower[k])
		_, d := r.ys.px(s.Upper[k])
		if !a || !b || !d {
			flush(k)
			start = k + 1
		}
	}
	flush(len(s.X))
	if len(polys) > 0 {
		r.printf(`<path d="%s" fill="%s" fill-opacity="%s" stroke="none"/>`+"\n", path(polys, true), c, num(op))
	}
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

func (r *renderer) drawPoints(s *Points, c string, sz float64) {
	view := r.plot.inflate(sz + 1)
	var b []byte
	for _, pl := range r.pixels(s.X, s.Y) {
		for _, q := range pl {
			if !view.contains(q.x, q.y) {
				continue
			}
			r.marks = append(r.marks, q)
			b = markerPath(b, s.Marker, q.x, q.y, sz)
		}
	}
	if len(b) == 0 {
		return
	}
	if s.Marker == Cross {
		r.printf(`<path d="%s" fill="none" stroke="%s" stroke-width="1.6"/>`+"\n", b, c)
	} else {
		r.printf(`<path d="%s" fill="%s" fill-opacity="0.85" stroke="%s" stroke-width="0.8"/>`+"\n", b, c, c)
	}
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

func (r *renderer) drawText(t *Text) {
	x, okx := r.xs.px(t.X)
	y, oky := r.ys.px(t.Y)
	if !okx || !oky || t.S == "" {
		return
	}
	c := inkColor
	if t.Color != "" {
		c = escape(t.Color)
	}
	sz := t.Size
	if sz <= 0 {
		sz = 11
	}
	r.printf(`<text x="%s" y="%s" font-size="%s" fill="%s" text-anchor="%s">%s</text>`+"\n",
		num(x), num(y), num(sz), c, anchorName(t.Anchor), escape(t.S))
}

// drawHeat draws h as rectangles (merging runs of equal colour along y) or,
// for more than RectCells cells, as one PNG image.
func (r *renderer) drawHeat(h *HeatMap) {
	nx := len(h.Z)
	if nx == 0 || len(h.Z[0]) == 0 || !finite(h.X0) || !finite(h.X1) || !finite(h.Y0) || !finite(h.Y1) {
		return
	}
	ny := len(h.Z[0])
	cs := r.cbar
	if h != r.heat {
		cs = r.heatScale(h)
	}
	colourAt := func(i, j int) (RGB, bool) {
		v := h.Z[i][j]
		t, ok := cs.t(v)
		if !ok {
			return RGB{}, false
		}
		return Sequential.quick(t), true
	}
	dx, dy := (h.X1-h.X0)/float64(nx), (h.Y1-h.Y0)/float64(ny)
	xp := func(i int) float64 { v, _ := r.xs.px(h.X0 + float64(i)*dx); return v }
	yp := func(j int) float64 { v, _ := r.ys.px(h.Y0 + float64(j)*dy); return v }
	if nx*ny > RectCells {
		img := image.NewNRGBA(image.Rect(0, 0, nx, ny))
		for i := 0; i < nx; i++ {
			for j := 0; j < ny; j++ {
				if c, ok := colourAt(i, j); ok {
					col, row := i, ny-1-j // x grows to the right, y upwards
					if xp(nx) < xp(0) {
						col = nx - 1 - i
					}
					if yp(ny) > yp(0) {
						row = j
					}
					img.SetNRGBA(col, row, color.NRGBA{c.R, c.G, c.B, 255})
				}
			}
		}
		var buf bytes.Buffer
		if err := png.Encode(&buf, img); err != nil {
			return
		}
		x0, x1 := math.Min(xp(0), xp(nx)), math.Max(xp(0), xp(nx))
		y0, y1 := math.Min(yp(0), yp(ny)), math.Max(yp(0), yp(ny))
		r.printf(`<image x="%s" y="%s" width="%s" height="%s" preserveAspectRatio="none" style="image-rendering:pixelated" xlink:href="data:image/png;base64,%s"/>`+"\n",
			num(x0), num(y0), num(x1-x0), num(y1-y0), base64.StdEncoding.EncodeToString(buf.Bytes()))
		return
	}
	r.printf(`<g shape-rendering="crispEdges">`)
	for i := 0; i < nx; i++ {
		x0, x1 := math.Min(xp(i), xp(i+1)), math.Max(xp(i), xp(i+1))
		for j := 0; j < ny; {
			c, ok := colourAt(i, j)
			k := j + 1
			for ; ok && k < ny; k++ {
				if c2, ok2 := colourAt(i, k); !ok2 || c2 != c {
					break
				}
			}
			if ok {
				y0, y1 := math.Min(yp(j), yp(k)), math.Max(yp(j), yp(k))
				r.printf(`<rect x="%s" y="%s" width="%s" height="%s" fill="%s"/>`, num(x0), num(y0), num(x1-x0+0.4), num(y1-y0+0.4), c.Hex())
			}
			j = k
		}
	}
	r.printf("</g>\n")
}

func (r *renderer) drawAxes() {
	p := r.plot
	var b []byte
	for _, v := range r.xt.major {
		if x, ok := r.xs.px(v); ok {
			b = fmt.Appendf(b, "M%s,%sv%s", num(x), num(p.y1), num(tickLen))
		}
	}
	for _, v := range r.xt.minor {
		if x, ok := r.xs.px(v); ok && x >= p.x0-0.01 && x <= p.x1+0.01 {
			b = fmt.Appendf(b, "M%s,%sv%s", num(x), num(p.y1), num(minorLen))
		}
	}
	for _, v := range r.yt.major {
		if y, ok := r.ys.px(v); ok {
			b = fmt.Appendf(b, "M%s,%sh%s", num(p.x0), num(y), num(-tickLen))
		}
	}
	for _, v := range r.yt.minor {
		if y, ok := r.ys.px(v); ok && y >= p.y0-0.01 && y <= p.y1+0.01 {
			b = fmt.Appendf(b, "M%s,%sh%s", num(p.x0), num(y), num(-minorLen))
		}
	}
	if len(b) > 0 {
		r.printf(`<path d="%s" stroke="%s" stroke-width="1" fill="none"/>`+"\n", b, frameColor)
	}
	r.printf(`<g font-size="%s" fill="%s">`+"\n", num(tickSize), inkColor)
	for k, v := range r.xt.major {
		if x, ok := r.xs.px(v); ok && r.xt.labels[k].mant != "" {
			r.printf(`<text x="%s" y="%s" text-anchor="middle">%s</text>`+"\n", num(x), num(p.y1+tickLen+3+tickSize), r.xt.labels[k].svg())
		}
	}
	for k, v := range r.yt.major {
		if y, ok := r.ys.px(v); ok && r.yt.labels[k].mant != "" {
			r.printf(`<text x="%s" y="%s" text-anchor="end">%s</text>`+"\n", num(p.x0-tickLen-3), num(y+0.36*tickSize), r.yt.labels[k].svg())
		}
	}
	r.printf("</g>\n")
}

func (r *renderer) drawColourBar() {
	p := r.plot
	x0 := p.x1 + 14
	const w = 14.0
	r.printf(`<rect x="%s" y="%s" width="%s" height="%s" fill="url(#%s-cbar)" stroke="%s"/>`+"\n",
		num(x0), num(p.y0), num(w), num(p.y1-p.y0), r.id, frameColor)
	s := newScale(r.cbar.log, r.cbar.lo, r.cbar.hi, p.y1, p.y0)
	var b []byte
	for _, v := range r.cbt.major {
		if y, ok := s.px(v); ok {
			b = fmt.Appendf(b, "M%s,%sh%s", num(x0+w), num(y), num(tickLen))
		}
	}
	for _, v := range r.cbt.minor {
		if y, ok := s.px(v); ok && y >= p.y0 && y <= p.y1 {
			b = fmt.Appendf(b, "M%s,%sh%s", num(x0+w), num(y), num(minorLen))
		}
	}
	if len(b) > 0 {
		r.printf(`<path d="%s" stroke="%s" fill="none"/>`+"\n", b, frameColor)
	}
	r.printf(`<g font-size="%s" fill="%s">`+"\n", num(tickSize), inkColor)
	for k, v := range r.cbt.major {
		if y, ok := s.px(v); ok && r.cbt.labels[k].mant != "" {
			r.printf(`<text x="%s" y="%s">%s</text>`+"\n", num(x0+w+tickLen+3), num(y+0.36*tickSize), r.cbt.labels[k].svg())
		}
	}
	r.printf("</g>\n")
	if r.heat.Label != "" {
		x := x0 + w + tickLen + 3 + maxWidth(r.cbt.labels, tickSize) + 8 + labelSize*0.8
		yc := (p.y0 + p.y1) / 2
		t := shorten(r.heat.Label, p.y1-p.y0, labelSize)
		r.printf(`<text x="%s" y="%s" font-size="%s" fill="%s" text-anchor="middle" transform="rotate(-90 %s %s)">%s</text>`+"\n",
			num(x), num(yc), num(labelSize), inkColor, num(x), num(yc), escape(t))
	}
}

func (r *renderer) drawLabels() {
	p := r.plot
	f := r.f
	for k, line := range r.title {
		r.printf(`<text x="%s" y="%s" font-size="%s" fill="%s" text-anchor="middle">%s</text>`+"\n",
			num(r.W/2), num(12+titleSize+float64(k)*(titleSize+4)), num(titleSize), inkColor, escape(line))
	}
	ybase := p.y1 + tickLen + 3 + tickSize
	if f.X.Label != "" {
		ybase += 6 + labelSize
		t := shorten(f.X.Label, p.x1-p.x0, labelSize)
		r.printf(`<text x="%s" y="%s" font-size="%s" fill="%s" text-anchor="middle">%s</text>`+"\n",
			num((p.x0+p.x1)/2), num(ybase), num(labelSize), inkColor, escape(t))
	}
	if f.Y.Label != "" {
		x := 8 + labelSize*0.8
		yc := (p.y0 + p.y1) / 2
		t := shorten(f.Y.Label, p.y1-p.y0, labelSize)
		r.printf(`<text x="%s" y="%s" font-size="%s" fill="%s" text-anchor="middle" transform="rotate(-90 %s %s)">%s</text>`+"\n",
			num(x), num(yc), num(labelSize), inkColor, num(x), num(yc), escape(t))
	}
	if t := r.notes.text(); t != "" {
		t = shorten(t, r.W-16, noteSize)
		r.printf(`<text x="8" y="%s" font-size="%s" fill="%s">%s</text>`+"\n", num(r.H-6), num(noteSize), noteColor, escape(t))
	}
}

type legendEntry struct {
	kind    byte // 'l' line, 'p' points, 'b' band
	color   string
	width   float64
	dash    Dash
	marker  Marker
	opacity float64
	label   string
}

// drawLegend places the legend box in the requested corner, or in the corner
// whose box meets the fewest data segments and markers.
func (r *renderer) drawLegend(es []legendEntry) {
	p := r.plot
	const pad, row, sw = 6.0, 16.0, 22.0
	maxText := p.x1 - p.x0 - 8 - 3*pad - sw
	maxRows := int((p.y1 - p.y0 - 8 - 2*pad) / row)
	if maxRows < 1 || maxText < 20 {
		return
	}
	var extra int
	if len(es) > maxRows {
		extra = len(es) - (maxRows - 1)
		es = es[:maxRows-1]
	}
	tw := 0.0
	for k := range es {
		es[k].label = shorten(es[k].label, maxText, legendSize)
		tw = math.Max(tw, TextWidth(es[k].label, legendSize))
	}
	more := ""
	if extra > 0 {
		more = shorten(fmt.Sprintf("… %d more", extra), maxText+sw+pad, legendSize)
		tw = math.Max(tw, TextWidth(more, legendSize)-sw-pad)
	}
	rows := len(es)
	if extra > 0 {
		rows++
	}
	bw, bh := 3*pad+sw+tw, 2*pad+float64(rows)*row
	corners := map[LegendPlace]rect{
		LegendTopRight:    {p.x1 - 4 - bw, p.y0 + 4, p.x1 - 4, p.y0 + 4 + bh},
		LegendTopLeft:     {p.x0 + 4, p.y0 + 4, p.x0 + 4 + bw, p.y0 + 4 + bh},
		LegendBottomRight: {p.x1 - 4 - bw, p.y1 - 4 - bh, p.x1 - 4, p.y1 - 4},
		LegendBottomLeft:  {p.x0 + 4, p.y1 - 4 - bh, p.x0 + 4 + bw, p.y1 - 4},
	}
	place := r.f.Legend
	if _, ok := corners[place]; !ok {
		best := -1
		for _, c := range []LegendPlace{LegendTopRight, LegendTopLeft, LegendBottomRight, LegendBottomLeft} {
			if n := r.overlap(corners[c].inflate(3)); best < 0 || n < best {
				best, place = n, c
			}
		}
	}
	bx := corners[place]
	r.legend = bx
	r.printf(`<g font-size="%s" fill="%s">`+"\n", num(legendSize), inkColor)
	r.printf(`<rect x="%s" y="%s" width="%s" height="%s" fill="#ffffff" fill-opacity="0.9" stroke="#bbbbbb"/>`+"\n",
		num(bx.x0), num(bx.y0), num(bw), num(bh))
	for k, e := range es {
		yc := bx.y0 + pad + (float64(k)+0.5)*row
		x0 := bx.x0 + pad
		switch e.kind {
		case 'b':
			r.printf(`<rect x="%s" y="%s" width="%s" height="10" fill="%s" fill-opacity="%s"/>`, num(x0), num(yc-5), num(sw), e.color, num(math.Max(e.opacity, 0.3)))
		case 'p':
			var m []byte
			m = markerPath(m, e.marker, x0+sw/2, yc, 3.5)
			if e.marker == Cross {
				r.printf(`<path d="%s" fill="none" stroke="%s" stroke-width="1.6"/>`, m, e.color)
			} else {
				r.printf(`<path d="%s" fill="%s" stroke="%s" stroke-width="0.8"/>`, m, e.color, e.color)
			}
		default:
			if l, ok := lightness(e.color); ok && l > 0.9 { // a light line would vanish on the white box
				r.printf(`<path d="M%s,%sh%s" stroke="#777777" stroke-width="%s"/>`, num(x0), num(yc), num(sw), num(math.Min(e.width, 4)+2))
			}
			r.printf(`<path d="M%s,%sh%s" stroke="%s" stroke-width="%s"%s/>`, num(x0), num(yc), num(sw), e.color, num(math.Min(e.width, 4)), dashAttr(e.dash))
		}
		r.printf(`<text x="%s" y="%s">%s</text>`+"\n", num(x0+sw+pad), num(yc+0.36*legendSize), escape(e.label))
	}
	if extra > 0 {
		yc := bx.y0 + pad + (float64(len(es))+0.5)*row
		r.printf(`<text x="%s" y="%s">%s</text>`+"\n", num(bx.x0+pad), num(yc+0.36*legendSize), escape(more))
	}
	r.printf("</g>\n")
}

// overlap counts the data segments and markers meeting the box b.
func (r *renderer) overlap(b rect) int {
	n := 0
	for _, s := range r.segs {
		if _, _, ok := clipSegment(b, s[0], s[1]); ok {
			n++
		}
	}
	for _, m := range r.marks {
		if b.contains(m.x, m.y) {
			n++
		}
	}
	return n
}
