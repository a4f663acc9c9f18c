package plot

import "fmt"

// Default figure size in px.
const (
	DefaultWidth  = 640
	DefaultHeight = 420
)

// Axis describes one axis of a Figure.
type Axis struct {
	Label string
	// Log selects a base-10 logarithmic scale.
	Log bool
	// Min and Max are explicit limits, used when Min < Max; otherwise the
	// limits are the data range widened by 3% of its span on each side (of the
	// span of log₁₀ of the data on a logarithmic axis). Explicit limits
	// narrower than 1e−9 of their magnitude are widened like a single value.
	// Data outside explicit limits on the other axis do not count towards
	// the data range.
	Min, Max float64
}

// LegendPlace says where the legend box goes.
type LegendPlace int

const (
	// LegendAuto puts the legend in the inner corner of the plot area that
	// covers the fewest data points (ties: top right, top left, bottom right,
	// bottom left).
	LegendAuto LegendPlace = iota
	LegendNone
	LegendTopRight
	LegendTopLeft
	LegendBottomRight
	LegendBottomLeft
)

// Figure is a two-dimensional figure. The zero value, with series added, is
// a 640×420 px figure with automatic limits, grid lines and an automatic
// legend.
type Figure struct {
	Width, Height int // px; 0 selects DefaultWidth, DefaultHeight
	Title         string
	X, Y          Axis
	// EqualAspect makes one unit along x as long as one unit along y, by
	// widening whichever range is short (for the complex plane). It applies
	// only when both axes are linear; explicit limits may be widened.
	EqualAspect bool
	// NoGrid turns off the grid lines at major ticks.
	NoGrid bool
	Legend LegendPlace
	// DropNonPositive drops non-positive data on a logarithmic axis (counted
	// in Notes) instead of failing.
	DropNonPositive bool

	Series []Series
}

// Series is one layer of a figure: *Line, *Points, *Band, *ContourSet,
// *HeatMap, *HLine, *VLine or *Text. Layers are drawn in order, except that
// heat maps are drawn first.
type Series interface{ series() }

// Dash is a line pattern.
type Dash int

const (
	Solid Dash = iota
	Dashed
	Dotted
	DashDot
)

func (d Dash) array() string {
	switch d {
	case Dashed:
		return "6 4"
	case Dotted:
		return "1.5 3"
	case DashDot:
		return "7 3 1.5 3"
	}
	return ""
}

// Marker is a marker shape for Points.
type Marker int

const (
	Circle Marker = iota
	Square
	Diamond
	Cross
)

// Line is a polyline through (X[k], Y[k]); a non-finite or (on a log axis)
// dropped point breaks the line.
type Line struct {
	X, Y  []float64
	Label string // legend entry; empty for none
	Color string // SVG colour; empty for the next palette colour
	Dash  Dash
	Width float64 // stroke width in px; 0 means 1.5
}

// Points draws a marker at each (X[k], Y[k]).
type Points struct {
	X, Y   []float64
	Label  string
	Color  string
	Marker Marker
	Size   float64 // marker radius in px; 0 means 3.5
	// Halo rings each marker in the paper colour, so that it shows on any
	// background (eigenvalues on a heat map).
	Halo bool
}

// Band fills the region between the curves (X[k], Lower[k]) and
// (X[k], Upper[k]), for bounds and confidence regions.
type Band struct {
	X, Lower, Upper []float64
	Label           string
	Color           string
	Opacity         float64 // fill opacity; 0 means 0.22
}

// ContourSet draws level curves, typically from Contours: Lines[k] are the
// curves at level Levels[k]. Each level gets its own colour (ContourColors,
// or on a heat map a colour set against the map there) and the legend entry
// "Name = value", all values of the set in one format (FormatLevels). A
// level whose curves in the plot span less than SeenSpan px gets no legend
// entry; a note under the figure names it instead.
type ContourSet struct {
	Levels []float64
	Lines  [][]Polyline
	Name   string   // symbol for the legend, e.g. "ε"; empty means "level"
	Colors []string // per level; missing entries take the palette
	Width  float64  // stroke width in px; 0 means 1.3
}

// HeatMap colours the rectangle [X0, X1]×[Y0, Y1], divided into len(Z)×len(Z[0])
// equal cells, cell (i, j) coloured by Z[i][j] (i along x, j along y; the
// value belongs to the cell centred at X0 + (i+½)(X1−X0)/len(Z)) through
// the Sequential colour map, with a colour bar at the right of the plot.
// Non-finite cells (and non-positive ones on a log scale) are left blank.
// Grids of at most RectCells cells are drawn as rectangles, larger ones as one
// embedded PNG image. Heat maps require linear axes.
type HeatMap struct {
	Z              [][]float64
	X0, X1, Y0, Y1 float64
	Label          string // colour bar title
	Log            bool   // logarithmic colour scale
	// Min and Max fix the colour scale when Min < Max; otherwise it spans the
	// data (values outside are clamped to the ends).
	Min, Max float64
}

// RectCells is the largest heat map drawn as SVG rectangles.
const RectCells = 1600

// HLine is a horizontal reference line y = Y across the plot.
type HLine struct {
	Y     float64
	Label string
	Color string // empty means dark grey
	Dash  Dash
}

// VLine is a vertical reference line x = X across the plot (for example the
// imaginary axis, X = 0).
type VLine struct {
	X     float64
	Label string
	Color string
	Dash  Dash
}

// Anchor is the horizontal alignment of a Text.
type Anchor int

const (
	AnchorStart Anchor = iota
	AnchorMiddle
	AnchorEnd
)

// Text writes S at the data point (X, Y), its baseline through the point. The
// point counts towards the automatic axis limits.
type Text struct {
	X, Y   float64
	S      string
	Anchor Anchor
	Color  string
	Size   float64 // font size in px; 0 means 11
}

func (*Line) series()       {}
func (*Points) series()     {}
func (*Band) series()       {}
func (*ContourSet) series() {}
func (*HeatMap) series()    {}
func (*HLine) series()      {}
func (*VLine) series()      {}
func (*Text) series()       {}

// Add appends series to the figure.
func (f *Figure) Add(s ...Series) { f.Series = append(f.Series, s...) }

// AddLine adds a line through (x[k], y[k]) and returns it for further settings.
// It panics with ErrShape if len(x) != len(y).
func (f *Figure) AddLine(x, y []float64, label string) *Line {
	if len(x) != len(y) {
		panic(ErrShape)
	}
	l := &Line{X: x, Y: y, Label: label}
	f.Add(l)
	return l
}

// AddPoints adds markers at (x[k], y[k]). It panics with ErrShape if
// len(x) != len(y).
func (f *Figure) AddPoints(x, y []float64, label string) *Points {
	if len(x) != len(y) {
		panic(ErrShape)
	}
	p := &Points{X: x, Y: y, Label: label}
	f.Add(p)
	return p
}

// AddBand adds the region between lower and upper over x. It panics with
// ErrShape unless the three slices have equal lengths.
func (f *Figure) AddBand(x, lower, upper []float64, label string) *Band {
	if len(x) != len(lower) || len(x) != len(upper) {
		panic(ErrShape)
	}
	b := &Band{X: x, Lower: lower, Upper: upper, Label: label}
	f.Add(b)
	return b
}

// AddContours adds level curves lines[k] at levels[k] with legend entries
// "name = level". It panics with ErrShape if len(lines) != len(levels).
func (f *Figure) AddContours(levels []float64, lines [][]Polyline, name string) *ContourSet {
	if len(levels) != len(lines) {
		panic(ErrShape)
	}
	c := &ContourSet{Levels: levels, Lines: lines, Name: name}
	f.Add(c)
	return c
}

// AddHeatMap adds a heat map of z over [x0, x1]×[y0, y1]. It panics with
// ErrShape if the rows of z differ in length.
func (f *Figure) AddHeatMap(z [][]float64, x0, x1, y0, y1 float64, label string) *HeatMap {
	checkGrid(z)
	h := &HeatMap{Z: z, X0: x0, X1: x1, Y0: y0, Y1: y1, Label: label}
	f.Add(h)
	return h
}

// AddHeatMapGrid adds a heat map of samples z[i][j] = f(xs[i], ys[j]) on an
// equally spaced grid, each sample at the centre of its cell, so that
// contours traced from the same samples lie where the colours say. It panics
// with ErrShape if len(z) != len(xs), a row of z differs from len(ys), or
// either grid has fewer than two points.
func (f *Figure) AddHeatMapGrid(z [][]float64, xs, ys []float64, label string) *HeatMap {
	if len(z) != len(xs) || len(xs) < 2 || len(ys) < 2 {
		panic(ErrShape)
	}
	for i := range z {
		if len(z[i]) != len(ys) {
			panic(ErrShape)
		}
	}
	hx := (xs[len(xs)-1] - xs[0]) / float64(len(xs)-1) / 2
	hy := (ys[len(ys)-1] - ys[0]) / float64(len(ys)-1) / 2
	return f.AddHeatMap(z, xs[0]-hx, xs[len(xs)-1]+hx, ys[0]-hy, ys[len(ys)-1]+hy, label)
}

// AddHLine adds the horizontal reference line at y.
func (f *Figure) AddHLine(y float64, label string) *HLine {
	h := &HLine{Y: y, Label: label, Dash: Dashed}
	f.Add(h)
	return h
}

// AddVLine adds the vertical reference line at x.
func (f *Figure) AddVLine(x float64, label string) *VLine {
	v := &VLine{X: x, Label: label, Dash: Dashed}
	f.Add(v)
	return v
}

// AddText adds the annotation s at (x, y).
func (f *Figure) AddText(x, y float64, s string) *Text {
	t := &Text{X: x, Y: y, S: s}
	f.Add(t)
	return t
}

func checkGrid(z [][]float64) {
	for i := range z {
		if len(z[i]) != len(z[0]) {
			panic(ErrShape)
		}
	}
}

// checkShapes panics with ErrShape for any series with inconsistent lengths.
func (f *Figure) checkShapes() {
	for _, s := range f.Series {
		switch s := s.(type) {
		case *Line:
			if len(s.X) != len(s.Y) {
				panic(fmt.Errorf("%w: line %q has %d x and %d y values", ErrShape, s.Label, len(s.X), len(s.Y)))
			}
		case *Points:
			if len(s.X) != len(s.Y) {
				panic(fmt.Errorf("%w: points %q have %d x and %d y values", ErrShape, s.Label, len(s.X), len(s.Y)))
			}
		case *Band:
			if len(s.X) != len(s.Lower) || len(s.X) != len(s.Upper) {
				panic(fmt.Errorf("%w: band %q has %d x, %d lower, %d upper values", ErrShape, s.Label, len(s.X), len(s.Lower), len(s.Upper)))
			}
		case *ContourSet:
			if len(s.Levels) != len(s.Lines) {
				panic(fmt.Errorf("%w: %d contour levels and %d sets of lines", ErrShape, len(s.Levels), len(s.Lines)))
			}
			for _, ls := range s.Lines {
				for _, pl := range ls {
					if len(pl.X) != len(pl.Y) {
						panic(fmt.Errorf("%w: contour polyline with %d x and %d y values", ErrShape, len(pl.X), len(pl.Y)))
					}
				}
			}
		case *HeatMap:
			checkGrid(s.Z)
		}
	}
}
