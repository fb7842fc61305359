package melting

import "math"

// breakpoint is one candidate component of the eutectic scan.
type breakpoint struct {
	r float64 // z_i / x_i,sat
	i int32
}

// sfcEutectic solves the multiple-pure-solids model exactly (see
// eutecticLiquid) and returns the SFC, mass %.
func (m *Mixture) sfcEutectic(tK, shiftK float64, w *workspace) float64 {
	// A component at or above its melting point (x_sat ≥ 1) is dissolved at
	// the solution: were it saturated, its term alone would make the sum
	// ≥ 1 with L < z_i. It needs no exponential and stays out of the sort.
	inv := 1 / tK
	cand := w.cand[:0]
	var rmax float64
	for i, a := range m.a {
		tm := m.tm[i] + shiftK
		if tK >= tm {
			continue
		}
		var s float64
		if shiftK == 0 {
			s = fastExp(m.c[i] - a*inv)
		} else {
			s = fastExp(a/tm - a*inv)
		}
		r := math.Inf(1)
		if s > 0 {
			r = m.z[i] / s
		}
		w.s[i] = s
		cand = append(cand, breakpoint{r, int32(i)})
		rmax = math.Max(rmax, r)
	}
	w.cand = cand
	if rmax <= 1 {
		return 0
	}
	liquid := eutecticLiquid(cand, m.z, w.s)
	var solidMass float64
	for _, b := range cand {
		if b.r > liquid {
			if s := m.z[b.i] - liquid*w.s[b.i]; s > 0 {
				solidMass += s * m.mass[b.i]
			}
		}
	}
	// Rounding can put an all-solid fat a few ulps above 100 %.
	return math.Min(100, 100*solidMass/m.totalMass)
}

// eutecticLiquid returns the liquid fraction L solving
// Σ min(z_i/L, x_i,sat) = 1. On the interval between two consecutive
// breakpoints r = z/x_sat the sum is Z/L + S (Z the mole fractions of the
// dissolved components, S the solubilities of the saturated ones), so
// L = Z/(1 − S) exactly once the interval is known. The interval is found
// by ordering the breakpoints around pivots (three-way partition, as in
// quicksort): the sum is decreasing in L, so its value at a pivot tells on
// which side the root lies, and only that side is ordered further. This
// yields the same interval as a full sort in linear expected time.
// Components not in cand (at or above their melting point) are dissolved.
func eutecticLiquid(cand []breakpoint, z, s []float64) float64 {
	dissolved := 1.0 // Σ z of components known to be dissolved, less those in cand
	for _, b := range cand {
		dissolved -= z[b.i]
	}
	saturated := 0.0 // Σ x_sat of components known to be saturated
	lo, hi := 0, len(cand)
	for lo < hi {
		p := cand[lo+(hi-lo)/2].r
		// Three-way partition of cand[lo:hi]: < p | == p | > p.
		lt, i, gt := lo, lo, hi
		for i < gt {
			switch r := cand[i].r; {
			case r < p:
				cand[lt], cand[i] = cand[i], cand[lt]
				lt++
				i++
			case r > p:
				gt--
				cand[gt], cand[i] = cand[i], cand[gt]
			default:
				i++
			}
		}
		var zLow, sHigh, sMid float64
		for _, b := range cand[lo:gt] {
			zLow += z[b.i]
		}
		for _, b := range cand[lt:gt] {
			sMid += s[b.i]
		}
		for _, b := range cand[gt:hi] {
			sHigh += s[b.i]
		}
		// Value of the sum at L = p, with the components at p dissolved
		// (the sum is continuous there).
		if (dissolved+zLow)/p+saturated+sHigh >= 1 {
			dissolved += zLow // the root is at or above p
			lo = gt
		} else {
			saturated += sHigh + sMid // the root is below p
			hi = lt
		}
	}
	if saturated >= 1 || dissolved <= 0 {
		return 0
	}
	return math.Min(dissolved/(1-saturated), 1)
}
