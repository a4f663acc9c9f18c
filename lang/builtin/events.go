package builtin

import (
	"fmt"
	"math"
	"sort"

	"semiflow/lang/eval"
	"semiflow/lang/objects"
	"semiflow/lang/plot"
	"semiflow/lang/value"
	"semiflow/numerics/memguard"
)

// eventFamily: the first time a quantity of the solution reaches a level.
var eventFamily = []*Builtin{
	{
		Name: "crossing",
		Params: []value.Param{
			req("sol", "the evolution: a solution of propagate (constant, time-dependent or piecewise-constant A, with or without forcing or a nonlinear term), searched over [0, its last output time T]"),
			req("g", "the quantity watched: a function of the state vector u returning a number, e.g. u -> u[37] or u -> norm(u - p)"),
			req("level", "the level c that g(u(t)) crosses"),
			opt("direction", value.Str("either"), `"up" (g rises through c), "down" (g falls through c) or "either"`),
			opt("samples", value.Num(100), "equal intervals of [0, T] at which g is sampled first (the solution's own output times are added)"),
			opt("tol", value.Num(1e-9), "the width asked of the final bracket around the crossing time, relative to T"),
		},
		Doc: "The first time t* in [0, T] at which g(u(t)) crosses the level c in the direction asked, with its accuracy. " +
			"g is sampled at equally spaced times and at the solution's output times; where g comes within its local change of the level without crossing (a crossing and return between two samples is possible there), the intervals around are halved, up to 4·samples more samples. " +
			"The first interval where g − c changes sign is then narrowed by the Illinois variant of regula falsi, each trial time evaluated by propagating again from the interval's left sample (the solution's dense output), to a bracket of width tol·T. " +
			"The accuracy is the bracket's width plus the effect of the states' own error: the change of g when u is perturbed by its error estimate, divided by the slope of g − c across the bracket. " +
			"Without a crossing the result says so, with the value of g nearest the level and where it was seen; a crossing and return within less than the narrowest spacing, or where g stays farther from the level than its sampled change, can be missed, and the result says which spacing was used. " +
			"Parts: time (nan without a crossing), error, crossed, value, nearest, nearest_time, samples, spacing; columns t and g (the samples).",
		Examples: []Example{
			{`x = crossing(propagate({-2}, [1], 3), u -> u[0], 0.1, direction="down"); abs(x.time - log(10)/2) <= x.error`, "true"},
			{`crossing(propagate({-1}, [1], 1), u -> u[0], 0.1).crossed`, "false"},
		},
		Impl: crossingImpl,
	},
}

// maxRefineRounds bounds the rounds of halving near the level.
const maxRefineRounds = 40

// illinoisMaxIter bounds the root refinement's evaluations.
const illinoisMaxIter = 200

// sample is g at one time, with the state there and its error estimate.
type sample struct {
	t, phi float64 // phi = g(u(t)) − c
	u      []float64
	est    float64
}

func crossingImpl(c *eval.Call) (value.Value, error) {
	s, err := argSolution(c, 0)
	if err != nil {
		return nil, err
	}
	fl, ok := s.Flow.(flow)
	if !ok || fl == nil {
		return nil, value.ValueErrorf("crossing: this solution cannot be evaluated between its output times (a complex problem is not restartable yet); give a real problem, or split it into real and imaginary parts with blocks")
	}
	gv, err := c.Arg(1)
	if err != nil {
		return nil, err
	}
	g, ok := gv.(value.Callable)
	if !ok {
		return nil, value.TypeErrorf("crossing: g must be a function of the state vector returning a number, e.g. u -> u[0], not %s", value.TypeName(gv))
	}
	level, err := argReal(c, 2)
	if err != nil {
		return nil, err
	}
	if math.IsNaN(level) || math.IsInf(level, 0) {
		return nil, value.ValueErrorf("crossing: the level must be a finite number, not %s", value.FormatNum(level))
	}
	dir, err := argChoice(c, 3, "either", "up", "down")
	if err != nil {
		return nil, err
	}
	nSamples, err := argInt(c, 4)
	if err != nil {
		return nil, err
	}
	if nSamples < 1 || nSamples > 100000 {
		return nil, value.ValueErrorf("crossing: samples must be between 1 and 100000, not %d", nSamples)
	}
	ttol, err := argReal(c, 5)
	if err != nil {
		return nil, err
	}
	if !(ttol > 0 && ttol < 1) {
		return nil, value.ValueErrorf("crossing: tol must lie in (0, 1), not %s", value.FormatNum(ttol))
	}
	T := 0.0
	for _, t := range s.S.Times {
		T = math.Max(T, t)
	}
	if !(T > 0) {
		return nil, value.ValueErrorf("crossing: the solution reaches no time after 0; propagate up to the last time to search, e.g. propagate(A, u0, 10)")
	}
	u0 := fl.start()
	n := len(u0)
	maxSamples := 5*nSamples + len(s.S.Times) + 2
	if err := memguard.Vectors(maxSamples, n, memguard.RealBytes, "states at the samples of crossing"); err != nil {
		return nil, err
	}
	stateTol := s.S.Tol
	evals := 0
	evalG := func(t float64, u []float64) (float64, error) {
		evals++
		r, err := c.Apply(g, value.RealVec(append([]float64(nil), u...)))
		if err != nil {
			return 0, err
		}
		x, ok := r.(value.Num)
		if !ok {
			return 0, value.TypeErrorf("crossing: g must return a number; at t = %s it returned %s", value.FormatNum(t), value.TypeName(r))
		}
		if math.IsNaN(float64(x)) {
			return 0, value.ValueErrorf("crossing: g returned nan at t = %s", value.FormatNum(t))
		}
		return float64(x) - level, nil
	}
	// at advances from sample a to time t.
	at := func(a sample, t float64) (sample, error) {
		u, e, err := fl.advance(c, a.t, a.u, t, stateTol)
		if err != nil {
			return sample{}, err
		}
		if k := firstNonFinite(u); k >= 0 {
			return sample{}, value.ValueErrorf("crossing: the solution is not finite at t = %s", value.FormatNum(t))
		}
		phi, err := evalG(t, u)
		return sample{t: t, phi: phi, u: u, est: a.est + e}, err
	}

	// The first samples: equal spacing and the solution's output times
	// (whose stored states restart the march, with their own estimates).
	known := map[float64]int{}
	for i, t := range s.S.Times {
		known[t] = i
	}
	grid := []float64{0}
	for k := 1; k <= nSamples; k++ {
		grid = append(grid, T*float64(k)/float64(nSamples))
	}
	for t := range known {
		grid = append(grid, t)
	}
	sort.Float64s(grid)
	var smp []sample
	for _, t := range grid {
		if len(smp) > 0 && t <= smp[len(smp)-1].t {
			continue
		}
		var x sample
		if i, ok := known[t]; ok {
			x = sample{t: t, u: s.S.Values[i], est: s.S.ErrEst[i]}
			if x.phi, err = evalG(t, x.u); err != nil {
				return nil, err
			}
		} else if len(smp) == 0 {
			x = sample{t: 0, u: u0}
			if x.phi, err = evalG(0, u0); err != nil {
				return nil, err
			}
		} else if x, err = at(smp[len(smp)-1], t); err != nil {
			return nil, err
		}
		smp = append(smp, x)
	}

	crosses := func(a, b float64) bool {
		up := a < 0 && b >= 0
		down := a > 0 && b <= 0
		switch dir {
		case "up":
			return up
		case "down":
			return down
		}
		return up || down
	}
	first := func() int {
		for i := 0; i+1 < len(smp); i++ {
			if crosses(smp[i].phi, smp[i+1].phi) {
				return i
			}
		}
		return -1
	}
	// towards says whether sample i is a sampled extremum of g − c on the
	// side of the level, turned towards it (a crossing and return could
	// lie next to it), and close: within the local change of g.
	towards := func(i int) bool {
		p := smp[i].phi
		if p == 0 {
			return false
		}
		ext, change := true, 0.0
		for _, j := range []int{i - 1, i + 1} {
			if j < 0 || j >= len(smp) {
				continue
			}
			q := smp[j].phi
			change = math.Max(change, math.Abs(p-q))
			if (p < 0 && q > p) || (p > 0 && q < p) || (p < 0) != (q < 0) {
				ext = false
			}
		}
		if !ext {
			return false
		}
		switch {
		case dir == "up" && p > 0, dir == "down" && p < 0:
			return false
		}
		return math.Abs(p) <= change
	}
	minWidth := T * math.Ldexp(1, -30)
	budget := 4 * nSamples
	added := 0
	for round := 0; round < maxRefineRounds && added < budget; round++ {
		if err := c.Ctx.Err(); err != nil {
			return nil, err
		}
		stop := first()
		if stop < 0 {
			stop = len(smp) - 1
		}
		var split []int // intervals [i, i+1] to halve
		for i := 0; i <= stop && i < len(smp); i++ {
			if towards(i) {
				for _, j := range []int{i - 1, i} {
					if j >= 0 && j+1 < len(smp) && smp[j+1].t-smp[j].t > minWidth && (len(split) == 0 || split[len(split)-1] != j) {
						split = append(split, j)
					}
				}
			}
		}
		if len(split) == 0 {
			break
		}
		var next []sample
		last := 0
		for _, j := range split {
			if added >= budget {
				break
			}
			next = append(next, smp[last:j+1]...)
			m, err := at(smp[j], (smp[j].t+smp[j+1].t)/2)
			if err != nil {
				return nil, err
			}
			next = append(next, m)
			added++
			last = j + 1
		}
		smp = append(next, smp[last:]...)
	}
	spacing := math.Inf(1)
	for i := 0; i+1 < len(smp); i++ {
		spacing = math.Min(spacing, smp[i+1].t-smp[i].t)
	}

	k := first()
	res := &objects.Analysis{Kind: "crossing", Columns: []string{"t", "g"}}
	for _, x := range smp {
		res.Rows = append(res.Rows, []value.Value{value.Num(x.t), value.Num(x.phi + level)})
	}
	what := map[string]string{"up": "rises through", "down": "falls through", "either": "crosses"}[dir]
	res.Title = fmt.Sprintf("First time g(u(t)) %s the level %s in [0, %s]", what, value.FormatNum(level), value.FormatNum(T))
	sampling := fmt.Sprintf("g sampled at %d times (%d equal intervals, the solution's output times, %d added where g came within its local change of the level); narrowest spacing %s", len(smp), nSamples, added, g3(spacing))
	res.Method = sampling + "; the sign change refined by the Illinois method, each trial time by " + fl.how()
	res.Notes = append(res.Notes, fmt.Sprintf("a crossing and return within less than %s, or where g stays farther from the level than its sampled change, can be missed; more samples (samples=) narrow that", g3(spacing)))
	if smp[0].phi == 0 || (dir == "up" && smp[0].phi > 0) || (dir == "down" && smp[0].phi < 0) {
		res.Notes = append(res.Notes, fmt.Sprintf("g(u0) = %s is already on the far side of the level at t = 0; that is not counted as a crossing", value.FormatNum(smp[0].phi+level)))
	}
	// The value nearest the level.
	near := 0
	for i, x := range smp {
		if math.Abs(x.phi) < math.Abs(smp[near].phi) {
			near = i
		}
	}
	if k < 0 {
		res.Facts = []objects.Fact{
			{Label: "crossing", Value: fmt.Sprintf("none in [0, %s]", value.FormatNum(T))},
			{Label: "nearest value of g", Value: fmt.Sprintf("%s at t = %s (level %s)", value.FormatNum(smp[near].phi+level), value.FormatNum(smp[near].t), value.FormatNum(level))},
			{Label: "samples", Value: fmt.Sprint(len(smp))},
		}
		res.Accuracy = "no crossing found at the samples; see the note on what sampling can miss"
		res.Named = []objects.Named{
			{Name: "time", X: value.Num(math.NaN())}, {Name: "error", X: value.Num(math.NaN())},
			{Name: "crossed", X: value.Bool(false)}, {Name: "value", X: value.Num(math.NaN())},
			{Name: "nearest", X: value.Num(smp[near].phi + level)}, {Name: "nearest_time", X: value.Num(smp[near].t)},
			{Name: "samples", X: value.Num(float64(len(smp)))}, {Name: "spacing", X: value.Num(spacing)},
		}
		res.Figure = crossingFigure(smp, level, math.NaN())
		return res, nil
	}

	// Illinois (regula falsi whose end kept twice in a row has its value
	// halved for the next secant), on [a, b], each trial from the left
	// sample.
	left := smp[k]
	a, b := smp[k], smp[k+1]
	wa, wb := a.phi, b.phi // the secant's working values
	side := 0
	target := ttol * T
	for it := 0; it < illinoisMaxIter && b.t-a.t > target; it++ {
		if err := c.Ctx.Err(); err != nil {
			return nil, err
		}
		t := b.t - wb*(b.t-a.t)/(wb-wa)
		if !(t > a.t && t < b.t) {
			t = (a.t + b.t) / 2
		}
		// Trial times keep a quarter of the target from the ends, so the
		// bracket falls below the target.
		t = math.Min(math.Max(t, a.t+target/4), b.t-target/4)
		m, err := at(left, t)
		if err != nil {
			return nil, err
		}
		if crosses(a.phi, m.phi) { // the crossing lies in [a, m]
			b, wb = m, m.phi
			if side == -1 {
				wa /= 2
			}
			side = -1
		} else {
			a, wa = m, m.phi
			if side == +1 {
				wb /= 2
			}
			side = +1
		}
	}
	// The crossing time: the secant's zero in the final bracket.
	slope := (b.phi - a.phi) / (b.t - a.t)
	tstar := a.t - a.phi/slope
	if !(tstar >= a.t && tstar <= b.t) {
		tstar = (a.t + b.t) / 2
	}
	width := b.t - a.t
	// The states' error: the change of g when the state at the nearer end
	// is perturbed by its error estimate (all entries up, all down, and
	// alternating), divided by the slope.
	end := a
	if math.Abs(b.phi) < math.Abs(a.phi) {
		end = b
	}
	dg := 0.0
	if end.est > 0 {
		for _, pat := range []func(i int) float64{
			func(int) float64 { return 1 }, func(int) float64 { return -1 },
			func(i int) float64 { return float64(1 - 2*(i%2)) },
		} {
			p := make([]float64, n)
			for i := range p {
				p[i] = end.u[i] + end.est*pat(i)
			}
			q, err := evalG(end.t, p)
			if err != nil {
				return nil, err
			}
			dg = math.Max(dg, math.Abs(q-end.phi))
		}
	}
	terr := width
	if dg > 0 {
		terr += dg / math.Abs(slope)
	}
	gstar := end.phi + level
	res.Facts = []objects.Fact{
		{Label: "crossing time", Value: value.FormatNum(tstar) + " ± " + g3(terr)},
		{Label: "g there", Value: value.FormatNum(gstar) + fmt.Sprintf(" at t = %s (level %s)", value.FormatNum(end.t), value.FormatNum(level))},
		{Label: "bracket", Value: fmt.Sprintf("[%s, %s], width %s", value.FormatNum(a.t), value.FormatNum(b.t), g3(width))},
		{Label: "samples", Value: fmt.Sprintf("%d, and %d evaluations of g in all", len(smp), evals)},
	}
	res.Accuracy = fmt.Sprintf("± %s: the bracket's width %s plus %s, the change of g (%s) under the states' error estimate (%s) over the slope of g (%s)",
		g3(terr), g3(width), g3(terr-width), g3(dg), g3(end.est), g3(slope))
	res.Named = []objects.Named{
		{Name: "time", X: value.Num(tstar)}, {Name: "error", X: value.Num(terr)},
		{Name: "crossed", X: value.Bool(true)}, {Name: "value", X: value.Num(gstar)},
		{Name: "nearest", X: value.Num(gstar)}, {Name: "nearest_time", X: value.Num(end.t)},
		{Name: "samples", X: value.Num(float64(len(smp)))}, {Name: "spacing", X: value.Num(spacing)},
	}
	res.Figure = crossingFigure(smp, level, tstar)
	return res, nil
}

// crossingFigure draws the samples of g against t, the level and the
// crossing time (when there is one).
func crossingFigure(smp []sample, level, tstar float64) *plot.Figure {
	f := &plot.Figure{Title: "The quantity g(u(t)) and the level"}
	f.X.Label, f.Y.Label = "t", "g(u(t))"
	ts, gs := make([]float64, len(smp)), make([]float64, len(smp))
	for i, x := range smp {
		ts[i], gs[i] = x.t, x.phi+level
	}
	f.AddLine(ts, gs, "g at the samples")
	f.AddHLine(level, "level "+plot.FormatValue(level))
	if !math.IsNaN(tstar) {
		f.AddPoints([]float64{tstar}, []float64{level}, "crossing at t = "+plot.FormatValue(tstar))
	}
	return f
}

// g3 formats a number to three significant digits.
func g3(x float64) string {
	if x == 0 {
		return "0"
	}
	return fmt.Sprintf("%.3g", x)
}
