package plot

import (
	"bytes"
	"encoding/binary"
	"fmt"
	"hash/fnv"
	"io"
	"math"
	"strings"
)

// Notes reports data the figure could not draw.
type Notes struct {
	NonFinite   int // NaN or ±Inf coordinates or heat map cells, skipped
	NonPositive int // non-positive values on a logarithmic axis or colour scale, dropped
}

func (n Notes) text() string {
	var parts []string
	if n.NonFinite > 0 {
		parts = append(parts, fmt.Sprintf("%d non-finite value%s skipped", n.NonFinite, plural(n.NonFinite)))
	}
	if n.NonPositive > 0 {
		parts = append(parts, fmt.Sprintf("%d non-positive value%s dropped (log scale)", n.NonPositive, plural(n.NonPositive)))
	}
	return strings.Join(parts, "; ")
}

func plural(n int) string {
	if n == 1 {
		return ""
	}
	return "s"
}

// Font sizes and spacing in px.
const (
	titleSize  = 15.0
	labelSize  = 13.0
	tickSize   = 11.0
	legendSize = 11.0
	noteSize   = 10.0
	tickLen    = 5.0
	minorLen   = 3.0
)

// SVG renders the figure as a standalone SVG document. See WriteSVG.
func (f *Figure) SVG() ([]byte, error) {
	var b bytes.Buffer
	_, err := f.WriteSVG(&b)
	if err != nil {
		return nil, err
	}
	return b.Bytes(), nil
}

// WriteSVG writes the figure as a standalone SVG document to w and reports the
// data it skipped. It returns an error, and writes nothing, when a logarithmic
// axis has non-positive data and DropNonPositive is false, when an explicit
// log-axis limit is not positive, or when a heat map is placed on a
// logarithmic axis. It panics with ErrShape if a series has inconsistent
// lengths.
func (f *Figure) WriteSVG(w io.Writer) (Notes, error) {
	r, err := f.render()
	if err != nil {
		return Notes{}, err
	}
	var c svgCanvas
	r.draw(&c)
	_, err = w.Write(c.b.Bytes())
	return r.notes, err
}

// Unseen lays the figure out and returns the contour levels whose curves
// would not be seen in it (each "name = level", as the note under the
// figure writes them): curves spanning less than SeenSpan px, or outside
// the plot. It returns the error WriteSVG would.
func (f *Figure) Unseen() ([]string, error) {
	r, err := f.render()
	if err != nil {
		return nil, err
	}
	r.draw(nullCanvas{})
	return append([]string(nil), r.unseen...), nil
}

// Caption is the figure's short title for a reader: its Title, or "Figure".
func (f *Figure) Caption() string {
	if t := strings.Join(strings.Fields(f.Title), " "); t != "" {
		return t
	}
	return "Figure"
}

// render checks the figure, lays it out and places its legend: with
// LegendAuto, in an inner corner that leaves the data clear, or beside the
// plot when there is none (a heat map fills every corner). A first pass
// draws on nothing, to learn where the data lie and which contour levels
// show.
func (f *Figure) render() (*renderer, error) {
	f.checkShapes()
	r, err := f.prepare()
	if err != nil {
		return nil, err
	}
	r.draw(nullCanvas{})
	again := len(r.unseen) > 0 // the note under the plot needs room
	if f.Legend == LegendAuto && len(r.entries) > 0 {
		p := r.plot
		bw, bh, _, _ := r.legendSize(r.entries, p.x1-p.x0-8-3*keyPad-keySw, max(int((p.y1-p.y0-8-2*keyPad)/keyRow), 1))
		if r.heat != nil || r.overlap(r.cornerBox(r.emptiestCorner(bw, bh), bw, bh).inflate(3)) > 0 {
			bw, _, _, _ = r.legendSize(r.entries, math.Min(0.3*r.W, 200), 1000)
			if w0, h0 := r.fullSize(); w0-bw-10 >= 0.55*w0 { // else too narrow a figure to give the legend a margin
				r.outside = bw + 10
				r.W, r.H = w0, h0 // a heat map fitted to its data shrinks the figure again
				again = true
			}
		}
	}
	if again {
		r.layout(&r.bx, &r.by)
	}
	return r, nil
}

// renderer holds one rendering of a figure.
type renderer struct {
	f      *Figure
	notes  Notes
	id     string
	W, H   float64
	plot   rect
	xs, ys scale
	xt, yt axisTicks
	title  []string
	heat   *HeatMap // the heat map whose colour bar is drawn
	cbar   colourScale
	cbt    axisTicks
	segs   [][2]point // data segments in px, for legend placement
	marks  []point    // data markers in px
	legend rect       // where the legend box went

	entries   []legendEntry // the legend, as the last drawing found it
	unseen    []string      // contour levels with no curve in the plot
	outside   float64       // px kept right of the plot (and colour bar) for the legend; 0 for a legend inside
	cbarRight float64       // right end of the colour bar's labels in px
	bx, by    bounds        // the data ranges, kept for a second layout
}

type axisTicks struct {
	major  []float64
	minor  []float64
	labels []label
}

// colourScale maps heat map values to [0, 1].
type colourScale struct {
	log    bool
	lo, hi float64
}

func (c colourScale) t(v float64) (float64, bool) {
	if !finite(v) || (c.log && v <= 0) {
		return 0, false
	}
	if c.log {
		return clamp01((math.Log10(v) - math.Log10(c.lo)) / (math.Log10(c.hi) - math.Log10(c.lo))), true
	}
	return clamp01((v - c.lo) / (c.hi - c.lo)), true
}

func clamp01(t float64) float64 { return math.Min(1, math.Max(0, t)) }

// bounds accumulates the data range on one axis.
type bounds struct {
	log         bool
	lo, hi      float64
	n           int
	nonPos      int
	firstNonPos float64
}

func newBounds(log bool) bounds { return bounds{log: log, lo: math.Inf(1), hi: math.Inf(-1)} }

// valid reports whether v can be drawn on this axis, counting failures.
func (b *bounds) valid(v float64, notes *Notes) bool {
	if !finite(v) {
		notes.NonFinite++
		return false
	}
	if b.log && v <= 0 {
		if b.nonPos == 0 {
			b.firstNonPos = v
		}
		b.nonPos++
		return false
	}
	return true
}

func (b *bounds) add(v float64) {
	b.lo, b.hi = math.Min(b.lo, v), math.Max(b.hi, v)
	b.n++
}

// limits returns the axis limits from explicit values or the data range.
func (b *bounds) limits(ax Axis, margin float64) (lo, hi float64) {
	if ax.Min < ax.Max && finite(ax.Min) && finite(ax.Max) {
		if lo, hi := ax.Min, ax.Max; hi-lo > math.Max(math.Abs(lo/2+hi/2)*1e-9, 1e-300) {
			return lo, hi
		}
		return autoRange(ax.Min, ax.Max, true, b.log, 0) // too narrow to draw: widened
	}
	return autoRange(b.lo, b.hi, b.n > 0, b.log, margin)
}

// autoRange widens [lo, hi] by margin·span on each side (in log₁₀ on a log
// scale), gives a zero-width range a width of its own, and bounds the result
// to ±1e300 (to [1e−300, 1e300] on a log scale) so that spans stay finite.
func autoRange(lo, hi float64, any, log bool, margin float64) (float64, float64) {
	if !any {
		if log {
			return 1, 10
		}
		return 0, 1
	}
	if log {
		lo, hi = math.Log10(lo), math.Log10(hi)
	} else {
		lo, hi = math.Max(lo, -1e300), math.Min(hi, 1e300)
	}
	mid := lo/2 + hi/2
	span := hi - lo
	if span <= math.Max(math.Abs(mid)*1e-9, 1e-300) {
		half := math.Max(math.Abs(mid)*0.1, 1e-300)
		if mid == 0 {
			half = 1
		}
		if log {
			half = 0.5
		}
		lo, hi = mid-half, mid+half
	} else {
		lo, hi = lo-margin*span, hi+margin*span
	}
	if log {
		return math.Pow(10, math.Max(lo, -300)), math.Pow(10, math.Min(hi, 300))
	}
	return math.Max(lo, -1e300), math.Min(hi, 1e300)
}

// prepare collects the data ranges and lays the figure out.
func (f *Figure) prepare() (*renderer, error) {
	r := &renderer{f: f}
	r.W, r.H = r.fullSize()
	for _, ax := range []struct {
		a    Axis
		name string
	}{{f.X, "x"}, {f.Y, "y"}} {
		if ax.a.Log && ax.a.Min < ax.a.Max && ax.a.Min <= 0 {
			return nil, fmt.Errorf("plot: logarithmic %s axis has the non-positive lower limit %s", ax.name, FormatValue(ax.a.Min))
		}
	}
	bx, by := newBounds(f.X.Log), newBounds(f.Y.Log)
	// Data outside an explicit limit on one axis do not widen the other:
	// a time range chosen for x fits y to the curve within it.
	within := func(v float64, ax Axis) bool {
		return !(ax.Min < ax.Max) || (v >= ax.Min && v <= ax.Max)
	}
	pt := func(x, y float64) {
		okx := bx.valid(x, &r.notes)
		if oky := by.valid(y, &r.notes); okx && oky && within(x, f.X) && within(y, f.Y) {
			bx.add(x)
			by.add(y)
		}
	}
	for _, s := range f.Series {
		switch s := s.(type) {
		case *Line:
			for k := range s.X {
				pt(s.X[k], s.Y[k])
			}
		case *Points:
			for k := range s.X {
				pt(s.X[k], s.Y[k])
			}
		case *Band:
			for k := range s.X {
				pt(s.X[k], s.Lower[k])
				pt(s.X[k], s.Upper[k])
			}
		case *ContourSet:
			for _, ls := range s.Lines {
				for _, pl := range ls {
					for k := range pl.X {
						pt(pl.X[k], pl.Y[k])
					}
				}
			}
		case *HeatMap:
			if f.X.Log || f.Y.Log {
				return nil, fmt.Errorf("plot: a heat map needs linear axes")
			}
			if len(s.Z) > 0 && len(s.Z[0]) > 0 && finite(s.X0) && finite(s.X1) && finite(s.Y0) && finite(s.Y1) {
				bx.add(s.X0)
				bx.add(s.X1)
				by.add(s.Y0)
				by.add(s.Y1)
			}
			if r.heat == nil {
				r.heat = s
			}
			for _, row := range s.Z {
				for _, v := range row {
					if !finite(v) {
						r.notes.NonFinite++
					} else if s.Log && v <= 0 {
						r.notes.NonPositive++
					}
				}
			}
		case *HLine:
			if by.valid(s.Y, &r.notes) {
				by.add(s.Y)
			}
		case *VLine:
			if bx.valid(s.X, &r.notes) {
				bx.add(s.X)
			}
		case *Text:
			pt(s.X, s.Y)
		}
	}
	for _, b := range []struct {
		b    *bounds
		name string
	}{{&bx, "x"}, {&by, "y"}} {
		if b.b.nonPos == 0 {
			continue
		}
		if !f.DropNonPositive {
			return nil, fmt.Errorf("plot: %d non-positive value%s (first %s) on the logarithmic %s axis; set DropNonPositive to drop them",
				b.b.nonPos, plural(b.b.nonPos), FormatValue(b.b.firstNonPos), b.name)
		}
		r.notes.NonPositive += b.b.nonPos
	}
	if r.heat != nil {
		r.cbar = r.heatScale(r.heat)
	}
	r.id = f.hashID()
	r.bx, r.by = bx, by
	r.layout(&r.bx, &r.by)
	return r, nil
}

// fullSize is the figure's size in px before any fitting to its data.
func (r *renderer) fullSize() (w, h float64) {
	w, h = float64(r.f.Width), float64(r.f.Height)
	if r.f.Width <= 0 {
		w = DefaultWidth
	}
	if r.f.Height <= 0 {
		h = DefaultHeight
	}
	return math.Max(w, 120), math.Max(h, 90)
}

// heatScale returns the colour scale of h and counts its undrawable cells.
func (r *renderer) heatScale(h *HeatMap) colourScale {
	c := colourScale{log: h.Log}
	if h.Min < h.Max && finite(h.Min) && finite(h.Max) && (!h.Log || h.Min > 0) {
		c.lo, c.hi = h.Min, h.Max
		return c
	}
	b := newBounds(h.Log)
	for _, row := range h.Z {
		for _, v := range row {
			if finite(v) && (!h.Log || v > 0) {
				b.add(v)
			}
		}
	}
	c.lo, c.hi = autoRange(b.lo, b.hi, b.n > 0, h.Log, 0)
	return c
}

// layout sizes the margins from the text they hold and computes the scales
// and ticks. Margins only grow, so the loop settles in a few rounds.
func (r *renderer) layout(bx, by *bounds) {
	f := r.f
	top := 18.0
	if f.Title != "" {
		r.title = wrapText(f.Title, r.W-24, titleSize, 2)
		top = 12 + float64(len(r.title))*(titleSize+4) + 6
	}
	bottom := tickLen + 3 + tickSize + 8
	if f.X.Label != "" {
		bottom += labelSize + 6
	}
	if r.noteText() != "" {
		bottom += noteSize + 4
	}
	margin := 0.03
	if r.heat != nil { // a heat map fills the plot
		margin = 0
	}
	left, right := 40.0, 20.0
	cbarW := 0.0
	for round := 0; round < 6; round++ {
		pw := math.Max(r.W-left-right-cbarW-r.outside, 20)
		ph := math.Max(r.H-top-bottom, 20)
		r.plot = rect{left, top, left + pw, top + ph}
		xlo, xhi := bx.limits(f.X, margin)
		ylo, yhi := by.limits(f.Y, margin)
		if f.EqualAspect && !f.X.Log && !f.Y.Log && r.heat != nil {
			// A heat map fills its plot: the figure shrinks to the data's
			// aspect instead of widening a range into blank bands, unless
			// that would leave under 40% of the width or height.
			ux, uy := (xhi-xlo)/pw, (yhi-ylo)/ph
			if ux > uy && (yhi-ylo)/ux >= 0.4*ph {
				r.H -= ph - (yhi-ylo)/ux
				ph = (yhi - ylo) / ux
			} else if uy > ux && (xhi-xlo)/uy >= 0.4*pw {
				r.W -= pw - (xhi-xlo)/uy
				pw = (xhi - xlo) / uy
			}
			r.plot = rect{left, top, left + pw, top + ph}
		}
		if f.EqualAspect && !f.X.Log && !f.Y.Log {
			ux, uy := (xhi-xlo)/pw, (yhi-ylo)/ph
			if ux > uy {
				m, h := ylo/2+yhi/2, ux*ph/2
				ylo, yhi = m-h, m+h
			} else {
				m, h := xlo/2+xhi/2, uy*pw/2
				xlo, xhi = m-h, m+h
			}
		}
		r.xs = newScale(f.X.Log, xlo, xhi, r.plot.x0, r.plot.x1)
		r.ys = newScale(f.Y.Log, ylo, yhi, r.plot.y1, r.plot.y0)
		r.yt = fitTicks(f.Y.Log, ylo, yhi, ph, 45, func(l []label, spacing float64) bool {
			return spacing >= tickSize+5
		})
		r.xt = fitTicks(f.X.Log, xlo, xhi, pw, 60, func(l []label, spacing float64) bool {
			for k := 0; k+1 < len(l); k++ {
				if (l[k].width(tickSize)+l[k+1].width(tickSize))/2+10 > spacing {
					return false
				}
			}
			return true
		})
		needL := 8 + maxWidth(r.yt.labels, tickSize) + tickLen + 4
		if f.Y.Label != "" {
			needL += labelSize + 8
		}
		if len(r.xt.labels) > 0 && r.xt.labels[0].mant != "" {
			if p, ok := r.xs.px(r.xt.major[0]); ok {
				needL = math.Max(needL, r.xt.labels[0].width(tickSize)/2-(p-r.plot.x0)+6)
			}
		}
		needR := 14.0
		if n := len(r.xt.labels); n > 0 {
			if p, ok := r.xs.px(r.xt.major[n-1]); ok {
				needR = math.Max(needR, r.xt.labels[n-1].width(tickSize)/2-(r.plot.x1-p)+6)
			}
		}
		needCbar := 0.0
		if r.heat != nil {
			r.cbt = fitTicks(r.cbar.log, r.cbar.lo, r.cbar.hi, ph, 45, func(l []label, spacing float64) bool {
				return spacing >= tickSize+5
			})
			needCbar = 14 + 14 + tickLen + 3 + maxWidth(r.cbt.labels, tickSize)
			if r.heat.Label != "" {
				needCbar += 8 + labelSize
			}
			needR = math.Max(needR-6, 8)
		}
		r.cbarRight = r.plot.x1 + cbarW
		if needL <= left && needR <= right && needCbar <= cbarW {
			break
		}
		left, right, cbarW = math.Max(left, needL), math.Max(right, needR), math.Max(cbarW, needCbar)
	}
}

func maxWidth(ls []label, size float64) float64 {
	w := 0.0
	for _, l := range ls {
		w = math.Max(w, l.width(size))
	}
	return w
}

// fitTicks chooses about length/per ticks for [lo, hi] drawn over length px, reducing their
// number until fits accepts the labels at their smallest spacing in px. When
// even the sparsest ticks collide, it keeps them and labels only every s-th,
// for the smallest s that fits (at least the first tick stays labelled).
func fitTicks(log bool, lo, hi, length, per float64, fits func([]label, float64) bool) axisTicks {
	s := newScale(log, lo, hi, 0, length)
	spacing := func(major []float64, labels []label) float64 {
		sp := math.Inf(1)
		last := math.NaN()
		for k, v := range major {
			if labels[k].mant == "" {
				continue
			}
			p, _ := s.px(v)
			if !math.IsNaN(last) {
				sp = math.Min(sp, math.Abs(p-last))
			}
			last = p
		}
		return sp
	}
	var best axisTicks
	for target := int(math.Max(2, math.Min(12, length/per))); target >= 1; target-- {
		var at axisTicks
		if log {
			at.major, at.minor = LogTicks(lo, hi, target)
			at.labels = logLabels(at.major)
		} else {
			var step float64
			at.major, step = NiceTicks(lo, hi, target)
			at.labels = linearLabels(at.major, step)
		}
		if len(at.major) < 2 {
			if best.major == nil {
				best = at
			}
			break
		}
		best = at
		if fits(labelled(at.labels), spacing(at.major, at.labels)) {
			return at
		}
	}
	if len(best.major) < 2 {
		return best
	}
	full := best.labels
	for stride := 2; stride < len(full); stride++ {
		thin := make([]label, len(full))
		for k := 0; k < len(full); k += stride {
			thin[k] = full[k]
		}
		if fits(labelled(thin), spacing(best.major, thin)) {
			best.labels = thin
			return best
		}
	}
	best.labels = make([]label, len(full))
	best.labels[0] = full[0]
	return best
}

// labelled returns the non-empty labels.
func labelled(ls []label) []label {
	var out []label
	for _, l := range ls {
		if l.mant != "" {
			out = append(out, l)
		}
	}
	return out
}

// hashID derives an identifier prefix from the figure's content, so that
// several figures inlined in one HTML page do not share clip-path or gradient
// ids, while the same figure always gives the same file.
func (f *Figure) hashID() string {
	h := fnv.New64a()
	var buf []byte
	fl := func(vs ...float64) {
		buf = buf[:0]
		for _, v := range vs {
			buf = binary.LittleEndian.AppendUint64(buf, math.Float64bits(v))
		}
		h.Write(buf)
	}
	fmt.Fprintf(h, "%d|%d|%q|%q|%q|%d", f.Width, f.Height, f.Title, f.X.Label, f.Y.Label, len(f.Series))
	for _, s := range f.Series {
		switch s := s.(type) {
		case *Line:
			fl(s.X...)
			fl(s.Y...)
		case *Points:
			fl(s.X...)
			fl(s.Y...)
		case *Band:
			fl(s.X...)
			fl(s.Upper...)
		case *ContourSet:
			fl(s.Levels...)
		case *HeatMap:
			fl(s.X0, s.X1, s.Y0, s.Y1)
			for _, row := range s.Z {
				fl(row...)
			}
		}
		fmt.Fprintf(h, "%T;", s)
	}
	return fmt.Sprintf("sf%08x", h.Sum64()&0xffffffff)
}
