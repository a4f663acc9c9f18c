package plot

import "math"

// NiceTicks returns the multiples of a "nice" step s ∈ {1, 2, 5}·10ᵏ that lie
// in [lo, hi], choosing the smallest such s with (hi − lo)/s ≤ target, so that
// about target intervals (at least two ticks for target ≥ 1) are produced.
// Ticks within s·1e−9 of zero are exactly 0. If lo ≥ hi, or either is not
// finite, or target < 1, or the range is too narrow for the precision of its
// magnitude, it returns nil and 0.
func NiceTicks(lo, hi float64, target int) (ticks []float64, step float64) {
	if !(lo < hi) || math.IsInf(lo, 0) || math.IsInf(hi, 0) || target < 1 {
		return nil, 0
	}
	raw := (hi - lo) / float64(target)
	if raw == 0 || math.IsInf(raw, 0) {
		return nil, 0
	}
	mag := math.Pow(10, math.Floor(math.Log10(raw)))
	for _, f := range []float64{1, 2, 5, 10} {
		step = f * mag
		if step >= raw*(1-1e-12) {
			break
		}
	}
	k0 := math.Ceil(lo/step - 1e-9)
	k1 := math.Floor(hi/step + 1e-9)
	if k1-k0 > float64(2*target+2) || k0+1 == k0 { // range too narrow for its magnitude
		return nil, 0
	}
	for i := 0; k0+float64(i) <= k1; i++ {
		v := (k0 + float64(i)) * step
		if math.Abs(v) < step*1e-9 {
			v = 0
		}
		ticks = append(ticks, v)
	}
	return ticks, step
}

// LogTicks returns ticks for a logarithmic axis on [lo, hi], 0 < lo < hi.
// Majors are the decades 10ᵏ in the range, every stride-th decade with stride
// the smallest of 1, 2, 3, 5, 10, 20, 50, … giving at most target majors; with
// stride 1 the minors are j·10ᵏ, j = 2…9, otherwise the skipped decades. When
// fewer than two decades lie in the range, the majors are {1, 2, 5}·10ᵏ, and
// when fewer than two of those do, the majors are NiceTicks(lo, hi, target)
// and there are no minors. Invalid input gives nil slices.
func LogTicks(lo, hi float64, target int) (major, minor []float64) {
	if !(lo > 0 && lo < hi) || math.IsInf(hi, 0) || target < 1 {
		return nil, nil
	}
	l0, l1 := math.Log10(lo), math.Log10(hi)
	d0 := int(math.Ceil(l0 - 1e-9))
	d1 := int(math.Floor(l1 + 1e-9))
	in := func(v float64) bool { return v >= lo*(1-1e-9) && v <= hi*(1+1e-9) }
	if n := d1 - d0 + 1; n >= 2 {
		stride := 1
		for _, s := range []int{1, 2, 3, 5, 10, 20, 50, 100, 200, 500} {
			stride = s
			if (n+s-1)/s <= target {
				break
			}
		}
		for d := d0; d <= d1; d++ {
			v := math.Pow(10, float64(d))
			if d%stride == 0 {
				major = append(major, v)
			} else if stride <= 10 {
				minor = append(minor, v)
			}
		}
		if len(major) < 2 { // alignment left a single major: fall back to stride 1 on the ends
			major = []float64{math.Pow(10, float64(d0)), math.Pow(10, float64(d1))}
		}
		if stride == 1 {
			for d := d0 - 1; d <= d1; d++ {
				for j := 2; j <= 9; j++ {
					if v := float64(j) * math.Pow(10, float64(d)); in(v) {
						minor = append(minor, v)
					}
				}
			}
		}
		return major, minor
	}
	for d := int(math.Floor(l0)); d <= int(math.Ceil(l1)); d++ {
		for _, j := range []float64{1, 2, 5} {
			if v := j * math.Pow(10, float64(d)); in(v) {
				major = append(major, v)
			}
		}
	}
	if len(major) >= 2 {
		for d := int(math.Floor(l0)); d <= int(math.Ceil(l1)); d++ {
			for _, j := range []float64{3, 4, 6, 7, 8, 9} {
				if v := j * math.Pow(10, float64(d)); in(v) {
					minor = append(minor, v)
				}
			}
		}
		return major, minor
	}
	major, _ = NiceTicks(lo, hi, target)
	return major, nil
}
