package builtin

import (
	"fmt"
	"math"
	"sort"
	"strings"

	"semiflow/lang/objects"
	"semiflow/lang/plot"
	"semiflow/lang/value"
	"semiflow/numerics/roundoff"
	"semiflow/numerics/spectra"
)

// psAutoPad is the margin added around W(A) when pseudospectrum chooses
// its levels: the largest of the former fixed levels 10⁻¹, 10⁻², 10⁻³, so
// that the default region is the one those levels had.
const psAutoPad = 0.1

// psMaxLevels is the most levels pseudospectrum chooses by itself.
const psMaxLevels = 4

// psChooseLevels chooses the contour levels of a pseudospectrum computed
// without given levels, from its σ_min on the grid: the candidates are
// 1, 2, 5 × 10ᵏ between the smallest σ_min on the grid and the smallest on
// the region's edge (so each level's curves close inside the region), and
// above the rounding floor 30·n·u·max|z| of σ_min; a
// candidate is kept when its curves are seen in the report's figure
// (plot.SeenSpan), and of those kept, up to psMaxLevels spread evenly in
// log ε, powers of ten first. It returns the levels, largest first, and a
// note for the report. ps.Contours is changed.
func psChooseLevels(label string, n int, ps *spectra.Pseudospectra) ([]float64, string) {
	lo, edge := math.Inf(1), math.Inf(1)
	nr, ni := len(ps.Re), len(ps.Im)
	for i := range nr {
		for j := range ni {
			v := ps.At(i, j)
			if !(v > 0) || math.IsInf(v, 0) {
				continue
			}
			lo = math.Min(lo, v)
			if i == 0 || j == 0 || i == nr-1 || j == ni-1 {
				edge = math.Min(edge, v)
			}
		}
	}
	// Below about n·u·(|z| + ‖A‖) a computed σ_min is rounding noise from
	// the Schur form; the region contains W(A), so its farthest corner
	// bounds the numerical radius r(A) ≥ ‖A‖/2. Ten times that floor.
	scale := 0.0
	for _, x := range []float64{ps.Re[0], ps.Re[nr-1]} {
		for _, y := range []float64{ps.Im[0], ps.Im[ni-1]} {
			scale = math.Max(scale, math.Hypot(x, y))
		}
	}
	lo = math.Max(lo, 10*float64(n)*roundoff.Unit*3*scale)
	fallback := []float64{psAutoPad}
	if math.IsInf(lo, 0) || math.IsInf(edge, 0) || !(edge > lo) {
		ps.SetLevels(fallback)
		return fallback, "levels: σ_min on the grid gives no range to choose from; ε = 0.1 drawn (give levels=[…] for others)"
	}
	var cand []float64
	for k := math.Floor(math.Log10(lo)); k <= math.Ceil(math.Log10(edge)) && len(cand) < 60; k++ {
		for _, m := range []float64{5, 2, 1} {
			e := m * math.Pow(10, k)
			if e > lo && e < edge {
				cand = append(cand, e)
			}
		}
	}
	sort.Sort(sort.Reverse(sort.Float64Slice(cand)))
	seen := psSeenLevels(label, n, ps, cand)
	var decades []float64
	for _, e := range seen {
		if m := e / math.Pow(10, math.Round(math.Log10(e))); math.Abs(m-1) < 1e-9 {
			decades = append(decades, e)
		}
	}
	pool := decades
	if len(decades) < 3 {
		pool = seen // too few decades: 1, 2, 5 steps
	}
	levels := spreadLog(pool, psMaxLevels)
	if len(levels) == 0 {
		ps.SetLevels(fallback)
		return fallback, fmt.Sprintf("levels: no level between the smallest σ_min on the grid (%s) and the smallest on its edge (%s) has curves large enough to see; ε = 0.1 drawn (give levels=[…] or a smaller region)",
			value.FormatNum(lo), value.FormatNum(edge))
	}
	// The final figure holds only the chosen levels; a level seen among
	// many is seen among fewer unless the legend moved beside the plot.
	if kept := psSeenLevels(label, n, ps, levels); len(kept) > 0 {
		levels = kept
	}
	ps.SetLevels(levels)
	names := make([]string, len(levels))
	for k, e := range levels {
		names[k] = value.FormatNum(e)
	}
	return levels, fmt.Sprintf("levels ε = %s chosen from σ_min on the grid (between %s, its smallest, and %s, its smallest on the region's edge) so that each is drawn; levels=[…] sets them",
		strings.Join(names, ", "), value.FormatNum(lo), value.FormatNum(edge))
}

// psSeenLevels returns the levels (in their order) whose curves are seen in
// the figure of the report with those levels.
func psSeenLevels(label string, n int, ps *spectra.Pseudospectra, levels []float64) []float64 {
	if len(levels) == 0 {
		return nil
	}
	ps.SetLevels(levels)
	f := objects.PseudoReport(label, n, ps, nil, nil, "").Figure
	unseen, err := f.Unseen()
	if err != nil {
		return nil
	}
	hidden := map[string]bool{}
	for _, u := range unseen {
		hidden[u] = true
	}
	names := plot.FormatLevels(levels)
	var out []float64
	for k, e := range levels {
		if !hidden["ε = "+names[k]] {
			out = append(out, e)
		}
	}
	return out
}

// spreadLog picks at most m of the values (sorted, largest first) spread
// evenly in log: the first, the last and those nearest the even steps
// between them.
func spreadLog(xs []float64, m int) []float64 {
	if len(xs) <= m {
		return append([]float64(nil), xs...)
	}
	a, b := math.Log10(xs[0]), math.Log10(xs[len(xs)-1])
	var out []float64
	used := map[int]bool{}
	for k := 0; k < m; k++ {
		target := a + (b-a)*float64(k)/float64(m-1)
		best := -1
		for i, x := range xs {
			if used[i] {
				continue
			}
			if best < 0 || math.Abs(math.Log10(x)-target) < math.Abs(math.Log10(xs[best])-target) {
				best = i
			}
		}
		used[best] = true
		out = append(out, xs[best])
	}
	sort.Sort(sort.Reverse(sort.Float64Slice(out)))
	return out
}
