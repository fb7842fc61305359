package melting

import (
	"context"
	"math"

	"lipidsvc/chem/internal/roots"
)

// The calibrator: the fits of a temperature shift to SFC points (scan and
// golden section) and to slip melting points (root finding), and the
// error summaries, over any subset of a library's fats.

// calibrator holds the fats of a calibration and a workspace each.
type calibrator struct {
	ctx  context.Context
	fats []calFat
	// work counts component-solves (one equilibrium solution times the
	// mixture's components), the unit of CalibrationWork.
	work float64
	// grid[i] caches fat i's SFC error sum at each shift of the scan
	// (NaN until computed): a fat's errors at a shift do not depend on
	// the other fats, so the leave-one-out fits sum the scan from it.
	grid [][]float64
}

// scanShifts is the number of shifts of the 0.25 K scan over
// ±MaxCalibrationShiftK.
const scanShifts = int(2*MaxCalibrationShiftK/0.25) + 1

// scanShift is the k-th shift of the scan, K.
func scanShift(k int) float64 { return -MaxCalibrationShiftK + 0.25*float64(k) }

// solve is fat cf's SFC at tK with shift s, counted.
func (c *calibrator) solve(cf calFat, tK, s float64) (float64, error) {
	c.work += float64(cf.f.mixture.Len())
	return cf.f.mixture.sfc(cf.f.opt.SolidModel, tK, s, cf.f.opt.MaxIterations, cf.w)
}

type calFat struct {
	f *Fat
	m Measurements
	w *workspace
}

func newCalibrator(ctx context.Context, fats []LibraryFat) *calibrator {
	c := &calibrator{ctx: ctx, fats: make([]calFat, len(fats)), grid: make([][]float64, len(fats))}
	for i, lf := range fats {
		c.fats[i] = calFat{f: lf.Fat, m: lf.Measurements, w: lf.Fat.mixture.newWorkspace()}
		c.grid[i] = make([]float64, scanShifts)
		for k := range c.grid[i] {
			c.grid[i][k] = math.NaN()
		}
	}
	return c
}

// indices lists the fats a step works on: only, or all when only is nil.
func (c *calibrator) indices(only []int) []int {
	if only != nil {
		return only
	}
	all := make([]int, len(c.fats))
	for i := range all {
		all[i] = i
	}
	return all
}

// counts gives the SFC points and the measured slip points of the fats.
func (c *calibrator) counts(only []int) (sfcPoints, slips int) {
	for _, i := range c.indices(only) {
		sfcPoints += len(c.fats[i].m.SFC)
		if c.fats[i].m.HasSlipMeltingPoint {
			slips++
		}
	}
	return sfcPoints, slips
}

func (c *calibrator) hasData(only []int) bool {
	p, s := c.counts(only)
	return p+s > 0
}

// sse is the sum of squared SFC errors at shift s.
func (c *calibrator) sse(s float64, only []int) (float64, error) {
	var sum float64
	for _, i := range c.indices(only) {
		v, err := c.fatSSE(i, s)
		if err != nil {
			return 0, err
		}
		sum += v
	}
	return sum, nil
}

// fatSSE is fat i's sum of squared SFC errors at shift s.
func (c *calibrator) fatSSE(i int, s float64) (float64, error) {
	cf := c.fats[i]
	var sum float64
	for _, pt := range cf.m.SFC {
		v, err := c.solve(cf, pt.TemperatureC+zeroCelsiusK, s)
		if err != nil {
			return 0, err
		}
		sum += (v - pt.SolidFatPercent) * (v - pt.SolidFatPercent)
	}
	return sum, nil
}

// scanSSE is the sum of squared SFC errors at the k-th shift of the scan,
// from the per-fat cache.
func (c *calibrator) scanSSE(k int, only []int) (float64, error) {
	var sum float64
	for _, i := range c.indices(only) {
		v := c.grid[i][k]
		if math.IsNaN(v) {
			var err error
			if v, err = c.fatSSE(i, scanShift(k)); err != nil {
				return 0, err
			}
			c.grid[i][k] = v
		}
		sum += v
	}
	return sum, nil
}

func (c *calibrator) fitShiftToSFC(only []int) (float64, error) {
	best, bestV := 0.0, math.Inf(1)
	for k := 0; k < scanShifts; k++ {
		if err := c.ctx.Err(); err != nil {
			return 0, err
		}
		s := scanShift(k)
		v, err := c.scanSSE(k, only)
		if err != nil {
			return 0, err
		}
		// Ties (measurements no shift can follow) keep the shift nearest 0.
		if v < bestV || (v == bestV && math.Abs(s) < math.Abs(best)) {
			best, bestV = s, v
		}
	}
	// Golden-section refinement on [best − 0.25, best + 0.25].
	lo, hi := math.Max(best-0.25, -MaxCalibrationShiftK), math.Min(best+0.25, MaxCalibrationShiftK)
	const g = 0.6180339887498949
	a, b := hi-g*(hi-lo), lo+g*(hi-lo)
	fa, err := c.sse(a, only)
	if err != nil {
		return 0, err
	}
	fb, err := c.sse(b, only)
	if err != nil {
		return 0, err
	}
	for hi-lo > 1e-6 {
		if fa < fb {
			hi, b, fb = b, a, fa
			a = hi - g*(hi-lo)
			if fa, err = c.sse(a, only); err != nil {
				return 0, err
			}
		} else {
			lo, a, fa = a, b, fb
			b = lo + g*(hi-lo)
			if fb, err = c.sse(b, only); err != nil {
				return 0, err
			}
		}
	}
	// Keep the refined shift only if it is strictly better: on a flat
	// stretch (points no shift changes) the grid's choice, the shift nearest
	// 0, stands.
	s := 0.5 * (lo + hi)
	if v, err := c.sse(s, only); err != nil || !(v < bestV) {
		s = best
	}
	return s, nil
}

// slip is fat i's predicted slip melting point (K) at shift s and
// threshold thr.
func (c *calibrator) slip(i int, s, thr float64) (float64, bool, error) {
	g := *c.fats[i].f
	g.opt.Calibration = Calibration{TemperatureShiftK: s, SlipThresholdPercent: thr}
	g.mixture = c.fats[i].f.mixture.shifted(s)
	w := g.mixture.newWorkspace()
	t, ok, err := g.slipPoint(w, nil, math.NaN())
	c.work += float64(w.solves * g.mixture.Len())
	return t, ok, err
}

// meanSlipError is the mean predicted minus measured slip melting point of
// the fats with one, K, at shift s.
func (c *calibrator) meanSlipError(s, thr float64, only []int) (float64, error) {
	var sum float64
	n := 0
	for _, i := range c.indices(only) {
		cf := c.fats[i]
		if !cf.m.HasSlipMeltingPoint {
			continue
		}
		t, _, err := c.slip(i, s, thr)
		if err != nil {
			return 0, err
		}
		sum += t - (cf.m.SlipMeltingPointC + zeroCelsiusK)
		n++
	}
	return sum / float64(n), nil
}

func (c *calibrator) fitShiftToSlip(thr float64, only []int) (float64, error) {
	lo, hi := -MaxCalibrationShiftK, MaxCalibrationShiftK
	flo, err := c.meanSlipError(lo, thr, only)
	if err != nil {
		return 0, err
	}
	fhi, err := c.meanSlipError(hi, thr, only)
	if err != nil {
		return 0, err
	}
	if flo >= 0 {
		return lo, nil
	}
	if fhi <= 0 {
		return hi, nil
	}
	// The slip melting points rise with the shift; they may step where
	// pooled species cross the threshold, which the search brackets too.
	r, err := roots.Find(roots.Problem{
		F: func(s float64) (float64, float64, error) {
			v, err := c.meanSlipError(s, thr, only)
			return v, math.NaN(), err
		},
		Lo: lo, Hi: hi, FLo: flo, FHi: fhi, Increasing: true, Start: math.NaN(),
		XTol: 1e-6, MaxIter: 200, Check: c.ctx.Err,
	})
	if err != nil {
		return 0, err
	}
	if r.F == 0 {
		return r.X, nil
	}
	return 0.5 * (r.Lo + r.Hi), nil
}

// errors evaluates calibration cal against the measurements of the fats
// listed (nil: all), pooled: for one fat its own errors.
func (c *calibrator) errors(cal Calibration, only []int) (CalibrationError, error) {
	var e CalibrationError
	var sq, slipSq float64
	idx := c.indices(only)
	for _, i := range idx {
		cf := c.fats[i]
		for _, pt := range cf.m.SFC {
			v, err := c.solve(cf, pt.TemperatureC+zeroCelsiusK, cal.TemperatureShiftK)
			if err != nil {
				return e, err
			}
			d := v - pt.SolidFatPercent
			sq += d * d
			e.SFCMaxAbsErrorPercent = math.Max(e.SFCMaxAbsErrorPercent, math.Abs(d))
			e.SFCPoints++
		}
		if cf.m.HasSlipMeltingPoint {
			t, ok, err := c.slip(i, cal.TemperatureShiftK, cal.SlipThresholdPercent)
			if err != nil {
				return e, err
			}
			e.SlipPoints++
			d := math.NaN()
			if ok {
				d = t - zeroCelsiusK - cf.m.SlipMeltingPointC
			}
			slipSq += d * d
			e.SlipErrorK = d
		}
	}
	if e.SFCPoints > 0 {
		e.SFCRMSErrorPercent = math.Sqrt(sq / float64(e.SFCPoints))
	}
	if e.SlipPoints > 0 {
		e.SlipRMSErrorK = math.Sqrt(slipSq / float64(e.SlipPoints))
		if len(idx) > 1 {
			e.SlipErrorK = e.SlipRMSErrorK
		}
	}
	return e, nil
}
