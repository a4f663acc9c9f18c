package plot

import (
	"fmt"
	"image"
	"image/color"
	"math"
	"strings"
)

// The figure's own colours: warm paper, a soft ink, and a frame that only
// draws the two data axes.
const (
	paperColor = "#ffffff"
	inkColor   = "#23262e"
	frameColor = "#5c6270"
	gridColor  = "#e9ebef"
	refColor   = "#5c6270"
	noteColor  = "#6e7380"
	keyRule    = "#c9ccd3"
)

// draw paints the laid-out figure on c. It also records, for legend
// placement, the data segments and markers in px.
func (r *renderer) draw(c canvas) {
	f := r.f
	p := r.plot
	r.segs, r.marks, r.unseen = nil, nil, nil
	c.begin(r)
	if !f.NoGrid {
		r.drawGrid(c)
	}
	c.clip(true)
	for _, s := range f.Series {
		if h, ok := s.(*HeatMap); ok {
			r.drawHeat(c, h)
		}
	}
	colour := 0
	next := func(col string) string {
		if col != "" {
			return col
		}
		colour++
		return seriesColor("", colour-1)
	}
	var legend []legendEntry
	for _, s := range f.Series {
		switch s := s.(type) {
		case *Band:
			col := next(s.Color)
			op := s.Opacity
			if op <= 0 {
				op = 0.22
			}
			r.drawBand(c, s, col, op)
			if s.Label != "" {
				legend = append(legend, legendEntry{kind: 'b', color: col, opacity: op, label: s.Label})
			}
		case *ContourSet:
			name := s.Name
			if name == "" {
				name = "level"
			}
			wd := s.Width
			if wd <= 0 {
				wd = 1.6
			}
			cols := ContourColors(len(s.Levels))
			names := FormatLevels(s.Levels)
			for k, lv := range s.Levels {
				if !finite(lv) {
					continue
				}
				col := cols[k]
				if t, ok := r.cbar.t(lv); ok && r.heat != nil {
					col = contourOnMap(t) // drawn on the heat map: against its colour there
				}
				if k < len(s.Colors) && s.Colors[k] != "" {
					col = s.Colors[k]
				}
				if !r.drawContour(c, s.Lines[k], col, wd) {
					r.unseen = append(r.unseen, name+" = "+names[k])
					continue
				}
				legend = append(legend, legendEntry{kind: 'l', color: col, width: wd, label: name + " = " + names[k]})
			}
		case *Line:
			col := next(s.Color)
			wd := s.Width
			if wd <= 0 {
				wd = 1.8
			}
			r.drawLine(c, s, col, wd)
			if s.Label != "" {
				legend = append(legend, legendEntry{kind: 'l', color: col, width: wd, dash: s.Dash, label: s.Label})
			}
		case *Points:
			col := next(s.Color)
			sz := s.Size
			if sz <= 0 {
				sz = 3.5
			}
			r.drawPoints(c, s, col, sz)
			if s.Label != "" {
				legend = append(legend, legendEntry{kind: 'p', color: col, marker: s.Marker, label: s.Label})
			}
		case *HLine:
			col := refColor
			if s.Color != "" {
				col = s.Color
			}
			if y, ok := r.ys.px(s.Y); ok {
				c.stroke([][]point{{{p.x0, y}, {p.x1, y}}}, false, strokeStyle{color: col, width: 1.2, dash: s.Dash})
				r.segs = append(r.segs, [2]point{{p.x0, y}, {p.x1, y}})
			}
			if s.Label != "" {
				legend = append(legend, legendEntry{kind: 'l', color: col, width: 1.2, dash: s.Dash, label: s.Label})
			}
		case *VLine:
			col := refColor
			if s.Color != "" {
				col = s.Color
			}
			if x, ok := r.xs.px(s.X); ok {
				c.stroke([][]point{{{x, p.y0}, {x, p.y1}}}, false, strokeStyle{color: col, width: 1.2, dash: s.Dash})
				r.segs = append(r.segs, [2]point{{x, p.y0}, {x, p.y1}})
			}
			if s.Label != "" {
				legend = append(legend, legendEntry{kind: 'l', color: col, width: 1.2, dash: s.Dash, label: s.Label})
			}
		}
	}
	for _, s := range f.Series {
		if t, ok := s.(*Text); ok {
			r.drawText(c, t)
		}
	}
	c.clip(false)
	// Only the two data axes are ruled; the plot area stays open at the top
	// and right.
	c.stroke([][]point{{{p.x0, p.y0}, {p.x0, p.y1}, {p.x1, p.y1}}}, false, strokeStyle{color: frameColor, width: 1})
	r.drawAxes(c)
	if r.heat != nil {
		r.drawColourBar(c)
	}
	r.entries = legend
	if f.Legend != LegendNone && len(legend) > 0 {
		r.drawLegend(c, legend)
	}
	r.drawLabels(c)
	c.end()
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

func (r *renderer) drawGrid(c canvas) {
	p := r.plot
	var lines [][]point
	for _, v := range r.xt.major {
		if x, ok := r.xs.px(v); ok && x > p.x0+0.5 && x < p.x1-0.5 {
			lines = append(lines, []point{{x, p.y0}, {x, p.y1}})
		}
	}
	for _, v := range r.yt.major {
		if y, ok := r.ys.px(v); ok && y > p.y0+0.5 && y < p.y1-0.5 {
			lines = append(lines, []point{{p.x0, y}, {p.x1, y}})
		}
	}
	c.stroke(lines, false, strokeStyle{color: gridColor, width: 1})
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

func (r *renderer) drawLine(c canvas, s *Line, col string, wd float64) {
	parts := r.strokes(r.pixels(s.X, s.Y))
	var lines [][]point
	for _, pl := range parts {
		if len(pl) == 1 { // an isolated point of a line: a dot of the line's width
			c.dot(pl[0], math.Max(wd, 1.5), col)
			r.marks = append(r.marks, pl[0])
		} else {
			lines = append(lines, pl)
		}
	}
	c.stroke(lines, false, strokeStyle{color: col, width: wd, dash: s.Dash, round: true})
}

// SeenSpan is the least extent in px, across or along, of the visible
// curves of a contour level for it to count as seen: a level whose curves
// are smaller hides under a marker (an ε-pseudospectrum of a small ε
// around an eigenvalue).
const SeenSpan = 16.0

// drawContour strokes the level curves and reports whether the part of
// them in the plot spans at least SeenSpan px.
func (r *renderer) drawContour(c canvas, lines []Polyline, col string, wd float64) bool {
	var all [][]point
	for _, pl := range lines {
		all = append(all, r.strokes(r.pixels(pl.X, pl.Y))...)
	}
	c.stroke(all, false, strokeStyle{color: col, width: wd, round: true})
	for _, pl := range all { // each curve on its own: two specks are not one curve
		lo, hi := point{math.Inf(1), math.Inf(1)}, point{math.Inf(-1), math.Inf(-1)}
		for _, q := range pl {
			if r.plot.contains(q.x, q.y) {
				lo.x, lo.y = math.Min(lo.x, q.x), math.Min(lo.y, q.y)
				hi.x, hi.y = math.Max(hi.x, q.x), math.Max(hi.y, q.y)
			}
		}
		if hi.x-lo.x >= SeenSpan || hi.y-lo.y >= SeenSpan {
			return true
		}
	}
	return false
}

func (r *renderer) drawBand(c canvas, s *Band, col string, op float64) {
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
	c.fill(polys, col, op)
}

func (r *renderer) drawPoints(c canvas, s *Points, col string, sz float64) {
	view := r.plot.inflate(sz + 1)
	var pts []point
	for _, pl := range r.pixels(s.X, s.Y) {
		for _, q := range pl {
			if view.contains(q.x, q.y) {
				pts = append(pts, q)
			}
		}
	}
	r.marks = append(r.marks, pts...)
	if s.Halo && s.Marker == Cross {
		var arms [][]point
		for _, q := range pts {
			arms = append(arms, []point{{q.x - sz, q.y - sz}, {q.x + sz, q.y + sz}}, []point{{q.x - sz, q.y + sz}, {q.x + sz, q.y - sz}})
		}
		c.stroke(arms, false, strokeStyle{color: paperColor, width: 4.4, round: true})
	} else if s.Halo {
		c.markers(s.Marker, pts, sz+1.6, paperColor)
	}
	c.markers(s.Marker, pts, sz, col)
}

func (r *renderer) drawText(c canvas, t *Text) {
	x, okx := r.xs.px(t.X)
	y, oky := r.ys.px(t.Y)
	if !okx || !oky || t.S == "" {
		return
	}
	col := inkColor
	if t.Color != "" {
		col = t.Color
	}
	sz := t.Size
	if sz <= 0 {
		sz = 11
	}
	c.text(x, y, textLabel(t.S), textStyle{size: sz, color: col, anchor: t.Anchor})
}

// drawHeat draws h as rectangles (merging runs of equal colour along y) or,
// for more than RectCells cells, as one image.
func (r *renderer) drawHeat(c canvas, h *HeatMap) {
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
		t, ok := cs.t(h.Z[i][j])
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
				if col, ok := colourAt(i, j); ok {
					x, y := i, ny-1-j // x grows to the right, y upwards
					if xp(nx) < xp(0) {
						x = nx - 1 - i
					}
					if yp(ny) > yp(0) {
						y = j
					}
					img.SetNRGBA(x, y, color.NRGBA{col.R, col.G, col.B, 255})
				}
			}
		}
		c.image(img, rect{math.Min(xp(0), xp(nx)), math.Min(yp(0), yp(ny)), math.Max(xp(0), xp(nx)), math.Max(yp(0), yp(ny))})
		return
	}
	var cells []cell
	for i := 0; i < nx; i++ {
		x0, x1 := math.Min(xp(i), xp(i+1)), math.Max(xp(i), xp(i+1))
		for j := 0; j < ny; {
			col, ok := colourAt(i, j)
			k := j + 1
			for ; ok && k < ny; k++ {
				if c2, ok2 := colourAt(i, k); !ok2 || c2 != col {
					break
				}
			}
			if ok {
				cells = append(cells, cell{rect{x0, math.Min(yp(j), yp(k)), x1, math.Max(yp(j), yp(k))}, col})
			}
			j = k
		}
	}
	c.cells(cells)
}

func (r *renderer) drawAxes(c canvas) {
	p := r.plot
	var ticks [][]point
	for _, v := range r.xt.major {
		if x, ok := r.xs.px(v); ok {
			ticks = append(ticks, []point{{x, p.y1}, {x, p.y1 + tickLen}})
		}
	}
	for _, v := range r.xt.minor {
		if x, ok := r.xs.px(v); ok && x >= p.x0-0.01 && x <= p.x1+0.01 {
			ticks = append(ticks, []point{{x, p.y1}, {x, p.y1 + minorLen}})
		}
	}
	for _, v := range r.yt.major {
		if y, ok := r.ys.px(v); ok {
			ticks = append(ticks, []point{{p.x0, y}, {p.x0 - tickLen, y}})
		}
	}
	for _, v := range r.yt.minor {
		if y, ok := r.ys.px(v); ok && y >= p.y0-0.01 && y <= p.y1+0.01 {
			ticks = append(ticks, []point{{p.x0, y}, {p.x0 - minorLen, y}})
		}
	}
	c.stroke(ticks, false, strokeStyle{color: frameColor, width: 1})
	for k, v := range r.xt.major {
		if x, ok := r.xs.px(v); ok && r.xt.labels[k].mant != "" {
			c.text(x, p.y1+tickLen+3+tickSize, r.xt.labels[k], textStyle{size: tickSize, color: inkColor, anchor: AnchorMiddle})
		}
	}
	for k, v := range r.yt.major {
		if y, ok := r.ys.px(v); ok && r.yt.labels[k].mant != "" {
			c.text(p.x0-tickLen-3, y+0.36*tickSize, r.yt.labels[k], textStyle{size: tickSize, color: inkColor, anchor: AnchorEnd})
		}
	}
}

// colourBarWidth is the width of the colour bar in px.
const colourBarWidth = 14.0

func (r *renderer) drawColourBar(c canvas) {
	p := r.plot
	x0 := p.x1 + 14
	const w = colourBarWidth
	bar := rect{x0, p.y0, x0 + w, p.y1}
	c.colourBar(bar)
	c.box(bar, "", 1, frameColor)
	s := newScale(r.cbar.log, r.cbar.lo, r.cbar.hi, p.y1, p.y0)
	var ticks [][]point
	for _, v := range r.cbt.major {
		if y, ok := s.px(v); ok {
			ticks = append(ticks, []point{{x0 + w, y}, {x0 + w + tickLen, y}})
		}
	}
	for _, v := range r.cbt.minor {
		if y, ok := s.px(v); ok && y >= p.y0 && y <= p.y1 {
			ticks = append(ticks, []point{{x0 + w, y}, {x0 + w + minorLen, y}})
		}
	}
	c.stroke(ticks, false, strokeStyle{color: frameColor, width: 1})
	for k, v := range r.cbt.major {
		if y, ok := s.px(v); ok && r.cbt.labels[k].mant != "" {
			c.text(x0+w+tickLen+3, y+0.36*tickSize, r.cbt.labels[k], textStyle{size: tickSize, color: inkColor})
		}
	}
	if r.heat.Label != "" {
		x := x0 + w + tickLen + 3 + maxWidth(r.cbt.labels, tickSize) + 8 + labelSize*0.8
		yc := (p.y0 + p.y1) / 2
		t := shorten(r.heat.Label, p.y1-p.y0, labelSize)
		c.text(x, yc, textLabel(t), textStyle{size: labelSize, color: inkColor, anchor: AnchorMiddle, vertical: true})
	}
}

func (r *renderer) drawLabels(c canvas) {
	p := r.plot
	f := r.f
	for k, line := range r.title {
		c.text(r.W/2, 12+titleSize+float64(k)*(titleSize+4), textLabel(line), textStyle{size: titleSize, color: inkColor, anchor: AnchorMiddle})
	}
	ybase := p.y1 + tickLen + 3 + tickSize
	if f.X.Label != "" {
		ybase += 6 + labelSize
		t := shorten(f.X.Label, p.x1-p.x0, labelSize)
		c.text((p.x0+p.x1)/2, ybase, textLabel(t), textStyle{size: labelSize, color: inkColor, anchor: AnchorMiddle})
	}
	if f.Y.Label != "" {
		t := shorten(f.Y.Label, p.y1-p.y0, labelSize)
		c.text(8+labelSize*0.8, (p.y0+p.y1)/2, textLabel(t), textStyle{size: labelSize, color: inkColor, anchor: AnchorMiddle, vertical: true})
	}
	if t := r.noteText(); t != "" {
		t = shorten(t, r.W-16, noteSize)
		c.text(8, r.H-6, label{mant: t}, textStyle{size: noteSize, color: noteColor})
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

// Legend geometry in px: padding, row height, swatch length.
const (
	keyPad = 6.0
	keyRow = 16.0
	keySw  = 22.0
)

// legendSize returns the legend's width and height for the entries, the
// entries that fit (labels shortened) and how many were left out.
func (r *renderer) legendSize(es []legendEntry, maxText float64, maxRows int) (w, h float64, shown []legendEntry, more string) {
	es = append([]legendEntry(nil), es...)
	extra := 0
	if len(es) > maxRows {
		extra = len(es) - (maxRows - 1)
		es = es[:maxRows-1]
	}
	tw := 0.0
	for k := range es {
		es[k].label = shorten(es[k].label, maxText, legendSize)
		tw = math.Max(tw, TextWidth(es[k].label, legendSize))
	}
	rows := len(es)
	if extra > 0 {
		more = shorten(fmt.Sprintf("… %d more", extra), maxText+keySw+keyPad, legendSize)
		tw = math.Max(tw, TextWidth(more, legendSize)-keySw-keyPad)
		rows++
	}
	return 3*keyPad + keySw + tw, 2*keyPad + float64(rows)*keyRow, es, more
}

// legendCorners are the four inner corners, in the order ties are broken.
var legendCorners = []LegendPlace{LegendTopLeft, LegendTopRight, LegendBottomLeft, LegendBottomRight}

func (r *renderer) cornerBox(place LegendPlace, bw, bh float64) rect {
	p := r.plot
	switch place {
	case LegendTopRight:
		return rect{p.x1 - 4 - bw, p.y0 + 4, p.x1 - 4, p.y0 + 4 + bh}
	case LegendBottomRight:
		return rect{p.x1 - 4 - bw, p.y1 - 4 - bh, p.x1 - 4, p.y1 - 4}
	case LegendBottomLeft:
		return rect{p.x0 + 4, p.y1 - 4 - bh, p.x0 + 4 + bw, p.y1 - 4}
	}
	return rect{p.x0 + 4, p.y0 + 4, p.x0 + 4 + bw, p.y0 + 4 + bh}
}

// drawLegend writes the legend: in the requested corner; with LegendAuto in
// the first inner corner it leaves every data segment and marker clear of,
// or, when no corner is clear, beside the plot in the margin the layout kept
// for it (r.outside).
func (r *renderer) drawLegend(c canvas, es []legendEntry) {
	p := r.plot
	var bx rect
	var shown []legendEntry
	var more string
	if r.outside > 0 {
		x0 := p.x1 + 10
		if r.heat != nil {
			x0 = r.cbarRight + 10
		}
		maxRows := int((r.H - p.y0 - 8) / keyRow)
		var bw, bh float64
		bw, bh, shown, more = r.legendSize(es, r.outside-3*keyPad-keySw-10, max(maxRows, 1))
		bx = rect{x0, p.y0, x0 + bw, p.y0 + bh}
	} else {
		maxText := p.x1 - p.x0 - 8 - 3*keyPad - keySw
		maxRows := int((p.y1 - p.y0 - 8 - 2*keyPad) / keyRow)
		if maxRows < 1 || maxText < 20 {
			return
		}
		var bw, bh float64
		bw, bh, shown, more = r.legendSize(es, maxText, maxRows)
		place := r.f.Legend
		if place == LegendAuto {
			place = r.emptiestCorner(bw, bh)
		}
		bx = r.cornerBox(place, bw, bh)
	}
	r.legend = bx
	// Our key: a paper-coloured panel with a thin rule on its left edge only.
	c.box(bx, paperColor, 0.92, "")
	c.stroke([][]point{{{bx.x0, bx.y0 + 2}, {bx.x0, bx.y1 - 2}}}, false, strokeStyle{color: keyRule, width: 2})
	for k, e := range shown {
		yc := bx.y0 + keyPad + (float64(k)+0.5)*keyRow
		x0 := bx.x0 + keyPad
		switch e.kind {
		case 'b':
			c.box(rect{x0, yc - 5, x0 + keySw, yc + 5}, e.color, math.Max(e.opacity, 0.3), "")
		case 'p':
			c.markers(e.marker, []point{{x0 + keySw/2, yc}}, 3.5, e.color)
		default:
			if l, ok := lightness(e.color); ok && l > 0.9 { // a light line would vanish on the panel
				c.stroke([][]point{{{x0, yc}, {x0 + keySw, yc}}}, false, strokeStyle{color: "#777777", width: math.Min(e.width, 4) + 2})
			}
			c.stroke([][]point{{{x0, yc}, {x0 + keySw, yc}}}, false, strokeStyle{color: e.color, width: math.Min(e.width, 4), dash: e.dash})
		}
		c.text(x0+keySw+keyPad, yc+0.36*legendSize, textLabel(e.label), textStyle{size: legendSize, color: inkColor})
	}
	if more != "" {
		yc := bx.y0 + keyPad + (float64(len(shown))+0.5)*keyRow
		c.text(bx.x0+keyPad, yc+0.36*legendSize, label{mant: more}, textStyle{size: legendSize, color: inkColor})
	}
}

// emptiestCorner returns the first inner corner whose legend box of the
// given size meets the fewest data segments and markers.
func (r *renderer) emptiestCorner(bw, bh float64) LegendPlace {
	best, place := -1, LegendTopLeft
	for _, c := range legendCorners {
		if n := r.overlap(r.cornerBox(c, bw, bh).inflate(3)); best < 0 || n < best {
			best, place = n, c
		}
	}
	return place
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

// noteText is the line under the figure: skipped data, and contour levels
// not seen in the plot.
func (r *renderer) noteText() string {
	t := r.notes.text()
	if len(r.unseen) > 0 {
		if t != "" {
			t += "; "
		}
		t += strings.Join(r.unseen, ", ") + ": too small to see or outside the plot, not in the legend"
	}
	return t
}
