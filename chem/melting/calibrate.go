package melting

import (
	"context"
	"fmt"
	"math"

	"lipidsvc/chem"
	"lipidsvc/chem/internal/roots"
)

// Measurements are a fat's measured melting data for [Calibrate].
type Measurements struct {
	// SFC are solid fat contents measured by pulsed NMR (AOCS Cd 16b-93,
	// ISO 8292-1), mass %, at temperatures in [MinTemperatureC,
	// MaxTemperatureC]. Field "sfc_points".
	SFC []SFCPoint
	// SlipMeltingPointC is a measured slip melting point (AOCS Cc 3-25,
	// ISO 6321), used when HasSlipMeltingPoint. Field "slip_melting_point_c".
	SlipMeltingPointC   float64
	HasSlipMeltingPoint bool
}

// CalibrationError summarises how well the model matches the measurements.
type CalibrationError struct {
	// SFCPoints is the number of SFC points compared; the errors are
	// predicted minus measured, in SFC percentage points.
	SFCPoints             int
	SFCRMSErrorPercent    float64
	SFCMaxAbsErrorPercent float64
	// SlipErrorK is predicted minus measured slip melting point, K (zero
	// without a measured slip point; NaN when the model has none). Over
	// several fats it is SlipRMSErrorK.
	SlipErrorK float64
	// SlipPoints counts the measured slip melting points compared, and
	// SlipRMSErrorK is their root-mean-square error, K.
	SlipPoints    int
	SlipRMSErrorK float64
}

// CalibrationReport is the result of [Calibrate].
type CalibrationReport struct {
	// Calibration is the fitted correction; pass it as Options.Calibration.
	Calibration Calibration
	// Before is the uncalibrated model's error, After the calibrated one's.
	Before, After CalibrationError
	Warnings      []chem.Warning
}

// Calibration limits: the slip threshold is fitted within
// [MinCalibratedThresholdPercent, MaxCalibratedThresholdPercent].
const (
	MinCalibratedThresholdPercent = 0.5
	MaxCalibratedThresholdPercent = 15.0
)

// CalibrateProfile fits a correction of the melting model to one fat's
// measurements; it is [CalibrateFats] for a library of one (see there for
// the method). Any calibration already in opt is ignored; the report gives
// the error before and after. Errors are KindInvalid *chem.Error values for
// bad input and the context's error if ctx ends. Measurements the model
// cannot match within the limits are not an error: the parameter stays at
// its limit and a WarnCalibrationLimit warning says so.
func CalibrateProfile(ctx context.Context, p *chem.Profile, opt Options, m Measurements) (*CalibrationReport, error) {
	if err := m.validate(); err != nil {
		return nil, err
	}
	opt.Calibration = Calibration{}
	f, err := Prepare(p, opt)
	if err != nil {
		return nil, err
	}
	lib, err := CalibrateFats(ctx, []LibraryFat{{Fat: f, Measurements: m}})
	if err != nil {
		return nil, err
	}
	return &lib.CalibrationReport, nil
}

// LibraryFat is one fat of a plant's library: prepared without a
// calibration, with its measurements.
type LibraryFat struct {
	Fat          *Fat
	Measurements Measurements
}

// FatFit is how the library's calibration fits one of its fats.
type FatFit struct {
	// Before and After are the fat's errors without and with the library's
	// calibration.
	Before, After CalibrationError
	// LeaveOneOut is the fat's error with the calibration fitted to the
	// other fats alone; LeaveOneOutDefined is false when the others carry
	// no measurement the fit could use.
	LeaveOneOut        CalibrationError
	LeaveOneOutDefined bool
}

// LibraryReport is the result of [CalibrateFats]. Before, After and
// LeaveOneOut (in the embedded report and here) pool every fat's points:
// SFC errors over all SFC points, slip errors as an RMS over the fats with
// a measured slip melting point.
type LibraryReport struct {
	CalibrationReport
	LeaveOneOut CalibrationError
	// LeaveOneOutDefined is false for a library of one fat.
	LeaveOneOutDefined bool
	Fats               []FatFit
	// work is the component-solves the calibration took, for tests.
	work float64
}

// CalibrateFats fits one correction of the melting model shared by every
// fat of a library, each prepared with the same polymorph and solid model
// and no calibration:
//
//   - With SFC points in the library, the temperature shift ΔT (added to
//     every TAG melting point of every fat, within ±MaxCalibrationShiftK)
//     minimises the sum of squared SFC errors over all points: a 0.25 K scan
//     refined by golden-section search. The slip threshold then becomes the
//     mean, over the fats with a measured slip melting point, of the SFC the
//     shifted model predicts at that temperature (clamped to 0.5–15 %); the
//     SFC at the slip point is what a threshold means, and a mean of it is
//     the least-squares threshold for the library.
//   - With only slip melting points, the threshold stays that of the fats'
//     options and ΔT is found by root finding so that the mean predicted
//     minus measured slip melting point is zero (each fat's slip point rises
//     monotonically with ΔT).
//
// With two fats or more the fit is repeated leaving each fat out in turn,
// and the held-out fat's error under the others' calibration is reported:
// the honest estimate of how the calibration does on a fat it has not seen.
//
// A library whose CalibrationWork exceeds MaxCalibrationWork is refused
// with KindWorkCap before any work is done.
func CalibrateFats(ctx context.Context, fats []LibraryFat) (*LibraryReport, error) {
	if len(fats) == 0 {
		return nil, chem.Errorf(chem.KindInvalid, "a calibration needs at least one fat").WithField("required", "fats")
	}
	if err := calibrationWorkCap(fats); err != nil {
		return nil, err
	}
	c := newCalibrator(ctx, fats)
	rep := &LibraryReport{Fats: make([]FatFit, len(fats))}
	base := Calibration{SlipThresholdPercent: fats[0].Fat.opt.SlipThresholdPercent}
	var err error
	if rep.Before, err = c.errors(base, nil); err != nil {
		return nil, err
	}
	cal, warnings, err := c.fit(base, nil)
	if err != nil {
		return nil, err
	}
	rep.Warnings = warnings
	if rep.After, err = c.errors(cal, nil); err != nil {
		return nil, err
	}
	// A model that already matches (RMS error under 0.01 points) has
	// nothing to improve; otherwise a shift that does not lower the error
	// means the model cannot follow the points.
	if rep.Before.SFCPoints > 0 && rep.Before.SFCRMSErrorPercent > 0.01 &&
		!(rep.After.SFCRMSErrorPercent < rep.Before.SFCRMSErrorPercent-1e-9) {
		rep.Warnings = append(rep.Warnings, limitWarning(
			"no temperature shift improves the match with the measured SFC points; the model cannot follow them", "temperature_shift_k"))
	}
	rep.Calibration = cal
	for i := range fats {
		one := []int{i}
		if rep.Fats[i].Before, err = c.errors(base, one); err != nil {
			return nil, err
		}
		if rep.Fats[i].After, err = c.errors(cal, one); err != nil {
			return nil, err
		}
	}
	if len(fats) < 2 {
		rep.work = c.work
		return rep, nil
	}
	// Leave one out: fit on the others, judge on the one.
	var held []heldOut
	for i := range fats {
		others := make([]int, 0, len(fats)-1)
		for j := range fats {
			if j != i {
				others = append(others, j)
			}
		}
		if !c.hasData(others) {
			continue
		}
		loo, _, err := c.fit(base, others)
		if err != nil {
			return nil, err
		}
		e, err := c.errors(loo, []int{i})
		if err != nil {
			return nil, err
		}
		rep.Fats[i].LeaveOneOut, rep.Fats[i].LeaveOneOutDefined = e, true
		held = append(held, heldOut{i, loo})
	}
	if len(held) > 0 {
		rep.LeaveOneOut, rep.LeaveOneOutDefined = c.pooledHeldOut(held, rep.Fats)
	}
	rep.work = c.work
	return rep, nil
}

// calibrationSolvesPerFit bounds the SFC evaluations one fit makes per
// measurement: the 0.25 K scan over ±MaxCalibrationShiftK (121 shifts),
// the golden-section refinement to 1e-6 K (about 30) and the error
// summaries before and after (a few).
const calibrationSolvesPerFit = 160

// MaxCalibrationWork caps the work of one calibration, in component-solves
// (one equilibrium solution of one fat times its number of components).
// A component-solve takes about 8 to 40 ns on a server core depending on
// the solid model, so the cap is 2 to 8 seconds, inside the request time
// limit.
const MaxCalibrationWork = 2e8

// CalibrationWork is the most work CalibrateFats may do for the library,
// in component-solves: calibrationSolvesPerFit × F × Σ_i n_i·(P_i + s_i)
// for F fats with n_i components, P_i SFC points and s_i = 1 for a
// measured slip melting point (the fit on all fats and, for F ≥ 2, the F
// leave-one-out fits, each on all fats but one, together see every
// measurement F times). The scan and the refinement are fixed, so the bound
// holds for SFC data; a library with only slip melting points usually takes
// well under it (the slip search takes 10 to 20 steps), and any calibration
// also stops when its context ends.
func CalibrationWork(fats []LibraryFat) float64 {
	var w float64
	for _, lf := range fats {
		m := lf.Measurements
		per := float64(len(m.SFC))
		if m.HasSlipMeltingPoint {
			per++
		}
		w += float64(lf.Fat.mixture.Len()) * per
	}
	return calibrationSolvesPerFit * float64(max(1, len(fats))) * w
}

// calibrationWorkCap refuses a calibration that could run past its share
// of the service before any work is done (KindWorkCap).
func calibrationWorkCap(fats []LibraryFat) error {
	w := CalibrationWork(fats)
	if w <= MaxCalibrationWork {
		return nil
	}
	var comps int
	for _, lf := range fats {
		comps += lf.Fat.mixture.Len()
	}
	err := chem.Errorf(chem.KindWorkCap,
		"the calibration may take %.3g component-solves (%d fats, %d mixture components in all, every measurement seen once per fit), more than the %.3g one request may do",
		w, len(fats), comps, float64(MaxCalibrationWork))
	if len(fats) > 1 {
		return err.WithField(fmt.Sprintf("calibrate on fewer fats or fewer SFC points per fat at a time (about %.0f %% of this work is allowed)",
			100*MaxCalibrationWork/w), "fats")
	}
	return err.WithField(fmt.Sprintf("give fewer SFC points (about %.0f %% of this work is allowed), or a solid model that pools species",
		100*MaxCalibrationWork/w), "measured", "sfc_points")
}

// heldOut is one leave-one-out fit: the fat left out and the calibration
// fitted without it.
type heldOut struct {
	fat int
	cal Calibration
}

// pooledHeldOut pools the held-out errors like the other pooled errors.
func (c *calibrator) pooledHeldOut(held []heldOut, fits []FatFit) (CalibrationError, bool) {
	var e CalibrationError
	var sq, slipSq float64
	for _, h := range held {
		f := fits[h.fat].LeaveOneOut
		sq += f.SFCRMSErrorPercent * f.SFCRMSErrorPercent * float64(f.SFCPoints)
		e.SFCPoints += f.SFCPoints
		e.SFCMaxAbsErrorPercent = math.Max(e.SFCMaxAbsErrorPercent, f.SFCMaxAbsErrorPercent)
		if f.SlipPoints > 0 && !math.IsNaN(f.SlipErrorK) {
			slipSq += f.SlipErrorK * f.SlipErrorK
			e.SlipPoints++
		}
	}
	if e.SFCPoints > 0 {
		e.SFCRMSErrorPercent = math.Sqrt(sq / float64(e.SFCPoints))
	}
	if e.SlipPoints > 0 {
		e.SlipRMSErrorK = math.Sqrt(slipSq / float64(e.SlipPoints))
		e.SlipErrorK = e.SlipRMSErrorK
	}
	return e, true
}

// fit fits the calibration on the fats listed (nil: all).
func (c *calibrator) fit(base Calibration, only []int) (Calibration, []chem.Warning, error) {
	cal := base
	var warnings []chem.Warning
	var err error
	sfcPoints, slips := c.counts(only)
	switch {
	case sfcPoints > 0:
		if cal.TemperatureShiftK, err = c.fitShiftToSFC(only); err != nil {
			return cal, nil, err
		}
		if slips > 0 {
			var sum float64
			for _, i := range c.indices(only) {
				cf := c.fats[i]
				if !cf.m.HasSlipMeltingPoint {
					continue
				}
				v, err := c.solve(cf, cf.m.SlipMeltingPointC+zeroCelsiusK, cal.TemperatureShiftK)
				if err != nil {
					return cal, nil, err
				}
				sum += v
			}
			v := sum / float64(slips)
			cal.SlipThresholdPercent = math.Min(math.Max(v, MinCalibratedThresholdPercent), MaxCalibratedThresholdPercent)
			if cal.SlipThresholdPercent != v {
				warnings = append(warnings, limitWarning(fmt.Sprintf(
					"the calibrated model has %.3g %% solid at the measured slip melting point; the threshold was limited to %.3g %%",
					v, cal.SlipThresholdPercent), "slip_threshold_percent"))
			}
		}
	default:
		if cal.TemperatureShiftK, err = c.fitShiftToSlip(cal.SlipThresholdPercent, only); err != nil {
			return cal, nil, err
		}
	}
	if math.Abs(cal.TemperatureShiftK) >= MaxCalibrationShiftK-1e-9 {
		warnings = append(warnings, limitWarning(fmt.Sprintf(
			"the temperature shift reached its limit of %+.3g K; the model cannot match these measurements well", cal.TemperatureShiftK),
			"temperature_shift_k"))
	}
	return cal, warnings, nil
}

// limitWarning concerns a fitted calibration parameter, part of the answer
// rather than of the request, so it carries no path.
func limitWarning(msg, _ string) chem.Warning {
	return chem.Warning{Code: WarnCalibrationLimit, Message: msg}
}

func (m Measurements) validate() error {
	var bad chem.FieldErrors
	if len(m.SFC) == 0 && !m.HasSlipMeltingPoint {
		bad.Invalid("give SFC points, a slip melting point or both", "measured")
	}
	if len(m.SFC) > MaxTemperatures {
		bad.Invalid(fmt.Sprintf("at most %d points", MaxTemperatures), "measured", "sfc_points")
	}
	for i, pt := range m.SFC {
		if !inTemperatureRange(pt.TemperatureC) {
			bad.Invalid(fmt.Sprintf("temperature must be from %g to %g °C", MinTemperatureC, MaxTemperatureC), "measured", "sfc_points", i, "temperature_c")
		}
		if !(pt.SolidFatPercent >= 0 && pt.SolidFatPercent <= 100) {
			bad.Invalid("SFC must be from 0 to 100 %", "measured", "sfc_points", i, "solid_fat_percent")
		}
	}
	if m.HasSlipMeltingPoint && !inTemperatureRange(m.SlipMeltingPointC) {
		bad.Invalid(fmt.Sprintf("must be from %g to %g °C", MinTemperatureC, MaxTemperatureC), "measured", "slip_melting_point_c")
	}
	if err := bad.Err(""); err != nil {
		return err
	}
	return nil
}

// calibrator holds the fats of a calibration and a workspace each.
type calibrator struct {
	ctx  context.Context
	fats []calFat
	// work counts component-solves (one equilibrium solution times the
	// mixture's components), the unit of calibrationWork.
	work float64
}

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
	c := &calibrator{ctx: ctx, fats: make([]calFat, len(fats))}
	for i, lf := range fats {
		c.fats[i] = calFat{f: lf.Fat, m: lf.Measurements, w: lf.Fat.mixture.newWorkspace()}
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
		cf := c.fats[i]
		for _, pt := range cf.m.SFC {
			v, err := c.solve(cf, pt.TemperatureC+zeroCelsiusK, s)
			if err != nil {
				return 0, err
			}
			sum += (v - pt.SolidFatPercent) * (v - pt.SolidFatPercent)
		}
	}
	return sum, nil
}

func (c *calibrator) fitShiftToSFC(only []int) (float64, error) {
	best, bestV := 0.0, math.Inf(1)
	for s := -MaxCalibrationShiftK; s <= MaxCalibrationShiftK+1e-9; s += 0.25 {
		if err := c.ctx.Err(); err != nil {
			return 0, err
		}
		v, err := c.sse(s, only)
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

// Compare states how the prepared fat, calibration included, matches
// measurements (predicted minus measured), by the same measures Calibrate
// reports before and after fitting.
func (f *Fat) Compare(m Measurements) (CalibrationError, error) {
	if err := m.validate(); err != nil {
		return CalibrationError{}, err
	}
	c := newCalibrator(context.Background(), []LibraryFat{{Fat: f, Measurements: m}})
	return c.errors(Calibration{SlipThresholdPercent: f.opt.slipThreshold()}, nil)
}

// shifted returns a copy of m with every melting point raised by s.
func (m *Mixture) shifted(s float64) *Mixture {
	if s == 0 {
		return m
	}
	out := &Mixture{}
	for f := 0; f+1 < len(m.famOff); f++ {
		for i := m.famOff[f]; i < m.famOff[f+1]; i++ {
			out.add(m.z[i], m.mass[i], m.tm[i]+s, m.a[i]*chem.GasConstant/1000, i == m.famOff[f])
		}
	}
	out.endFamilies()
	return out
}
