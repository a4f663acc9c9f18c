package plot

import (
	"math"
	"strconv"
)

// pixelLimit bounds pixel coordinates before clipping, so that data far
// outside the axis limits (up to ±MaxFloat64) never overflow. A segment is
// distorted by the bound only where an end lies more than 1e9 px away.
const pixelLimit = 1e9

func clampPx(v float64) float64 {
	if v > pixelLimit {
		return pixelLimit
	}
	if v < -pixelLimit {
		return -pixelLimit
	}
	return v
}

// scale maps data values on one axis to pixels: lo ↦ p0, hi ↦ p1, linearly
// in v or in log₁₀ v.
type scale struct {
	log      bool
	lo, hi   float64 // data limits
	tlo, thi float64 // transformed limits
	p0, p1   float64
}

func newScale(log bool, lo, hi, p0, p1 float64) scale {
	s := scale{log: log, lo: lo, hi: hi, tlo: lo, thi: hi, p0: p0, p1: p1}
	if log {
		s.tlo, s.thi = math.Log10(lo), math.Log10(hi)
	}
	return s
}

// px returns the pixel coordinate of v and whether v is drawable (finite and,
// on a log scale, positive).
func (s scale) px(v float64) (float64, bool) {
	if !finite(v) || (s.log && v <= 0) {
		return 0, false
	}
	t := v
	if s.log {
		t = math.Log10(v)
	}
	r := t/(s.thi-s.tlo) - s.tlo/(s.thi-s.tlo)
	p := s.p0 + r*(s.p1-s.p0)
	if math.IsNaN(p) {
		return 0, false
	}
	return clampPx(p), true
}

type rect struct{ x0, y0, x1, y1 float64 }

func (r rect) inflate(d float64) rect { return rect{r.x0 - d, r.y0 - d, r.x1 + d, r.y1 + d} }

func (r rect) contains(x, y float64) bool {
	return x >= r.x0 && x <= r.x1 && y >= r.y0 && y <= r.y1
}

// clipSegment clips the segment from a to b to r by the Liang–Barsky method
// (Liang & Barsky, ACM TOG 1984). It returns the parameters t0 ≤ t1 of the
// visible part, and false if none is visible.
func clipSegment(r rect, a, b point) (t0, t1 float64, ok bool) {
	t0, t1 = 0, 1
	dx, dy := b.x-a.x, b.y-a.y
	for _, c := range [4][2]float64{
		{-dx, a.x - r.x0}, {dx, r.x1 - a.x}, {-dy, a.y - r.y0}, {dy, r.y1 - a.y},
	} {
		p, q := c[0], c[1]
		if p == 0 {
			if q < 0 {
				return 0, 0, false
			}
			continue
		}
		t := q / p
		if p < 0 {
			if t > t1 {
				return 0, 0, false
			}
			t0 = math.Max(t0, t)
		} else {
			if t < t0 {
				return 0, 0, false
			}
			t1 = math.Min(t1, t)
		}
	}
	return t0, t1, true
}

func lerp(a, b point, t float64) point { return point{a.x + t*(b.x-a.x), a.y + t*(b.y-a.y)} }

// clipPolyline returns the parts of the polyline pts visible in r.
func clipPolyline(r rect, pts []point) [][]point {
	var out [][]point
	var cur []point
	flush := func() {
		if len(cur) >= 2 {
			out = append(out, cur)
		}
		cur = nil
	}
	if len(pts) == 1 && r.contains(pts[0].x, pts[0].y) {
		return [][]point{pts}
	}
	for k := 0; k+1 < len(pts); k++ {
		t0, t1, ok := clipSegment(r, pts[k], pts[k+1])
		if !ok {
			flush()
			continue
		}
		if len(cur) == 0 || t0 > 0 {
			flush()
			cur = append(cur, lerp(pts[k], pts[k+1], t0))
		}
		cur = append(cur, lerp(pts[k], pts[k+1], t1))
		if t1 < 1 {
			flush()
		}
	}
	flush()
	return out
}

// clipPolygon clips the polygon pts to r by the Sutherland–Hodgman method
// (Sutherland & Hodgman, CACM 1974).
func clipPolygon(r rect, pts []point) []point {
	type edge struct {
		in  func(p point) bool
		cut func(a, b point) point
	}
	edges := []edge{
		{func(p point) bool { return p.x >= r.x0 }, func(a, b point) point { return lerp(a, b, (r.x0-a.x)/(b.x-a.x)) }},
		{func(p point) bool { return p.x <= r.x1 }, func(a, b point) point { return lerp(a, b, (r.x1-a.x)/(b.x-a.x)) }},
		{func(p point) bool { return p.y >= r.y0 }, func(a, b point) point { return lerp(a, b, (r.y0-a.y)/(b.y-a.y)) }},
		{func(p point) bool { return p.y <= r.y1 }, func(a, b point) point { return lerp(a, b, (r.y1-a.y)/(b.y-a.y)) }},
	}
	for _, e := range edges {
		if len(pts) == 0 {
			return nil
		}
		var next []point
		prev := pts[len(pts)-1]
		for _, p := range pts {
			switch {
			case e.in(p) && !e.in(prev):
				next = append(next, e.cut(prev, p), p)
			case e.in(p):
				next = append(next, p)
			case e.in(prev):
				next = append(next, e.cut(prev, p))
			}
			prev = p
		}
		pts = next
	}
	return pts
}

// appendNum appends v with at most two decimals, trailing zeros removed and −0
// written as 0. Non-finite values, which callers exclude, are written as 0 so
// that no NaN can reach the file.
func appendNum(b []byte, v float64) []byte {
	if !finite(v) {
		return append(b, '0')
	}
	n := len(b)
	b = strconv.AppendFloat(b, v, 'f', 2, 64)
	for b[len(b)-1] == '0' {
		b = b[:len(b)-1]
	}
	if b[len(b)-1] == '.' {
		b = b[:len(b)-1]
	}
	if string(b[n:]) == "-0" {
		b = append(b[:n], '0')
	}
	return b
}

func num(v float64) string { return string(appendNum(nil, v)) }
