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
	// without a measured slip point; NaN when the model has none).
	SlipErrorK float64
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
// measurements:
//
//   - With SFC points, the temperature shift ΔT (added to every TAG melting
//     point, within ±MaxCalibrationShiftK) minimises the sum of squared SFC
//     errors: a 0.25 K scan refined by golden-section search. If a slip
//     melting point is also given, the slip threshold becomes the SFC the
//     shifted model predicts at that temperature (clamped to 0.5–15 %).
//   - With only a slip melting point, the threshold stays that of opt and ΔT
//     is found by root finding so that the predicted slip melting point
//     equals the measured one (the slip point rises monotonically with ΔT).
//
// Any calibration already in opt is ignored; the report gives the error
// before and after. Errors are KindInvalid *chem.Error values for bad input
// and the context's error if ctx ends. Measurements the model cannot match
// within the limits are not an error: the parameter stays at its limit and
// a WarnCalibrationLimit warning says so.
func CalibrateProfile(ctx context.Context, p *chem.Profile, opt Options, m Measurements) (*CalibrationReport, error) {
	if err := m.validate(); err != nil {
		return nil, err
	}
	opt.Calibration = Calibration{}
	f, err := Prepare(p, opt)
	if err != nil {
		return nil, err
	}
	c := &calibrator{ctx: ctx, f: f, m: m, w: f.mixture.newWorkspace()}
	rep := &CalibrationReport{}
	base := Calibration{SlipThresholdPercent: f.opt.SlipThresholdPercent}
	if rep.Before, err = c.errors(base); err != nil {
		return nil, err
	}
	cal := base
	switch {
	case len(m.SFC) > 0:
		if cal.TemperatureShiftK, err = c.fitShiftToSFC(); err != nil {
			return nil, err
		}
		if m.HasSlipMeltingPoint {
			v, err := f.mixture.sfc(f.opt.SolidModel, m.SlipMeltingPointC+zeroCelsiusK, cal.TemperatureShiftK, f.opt.MaxIterations, c.w)
			if err != nil {
				return nil, err
			}
			cal.SlipThresholdPercent = math.Min(math.Max(v, MinCalibratedThresholdPercent), MaxCalibratedThresholdPercent)
			if cal.SlipThresholdPercent != v {
				rep.Warnings = append(rep.Warnings, limitWarning(fmt.Sprintf(
					"the calibrated model has %.3g %% solid at the measured slip melting point; the threshold was limited to %.3g %%",
					v, cal.SlipThresholdPercent), "slip_threshold_percent"))
			}
		}
	default:
		if cal.TemperatureShiftK, err = c.fitShiftToSlip(cal.SlipThresholdPercent); err != nil {
			return nil, err
		}
	}
	if math.Abs(cal.TemperatureShiftK) >= MaxCalibrationShiftK-1e-9 {
		rep.Warnings = append(rep.Warnings, limitWarning(fmt.Sprintf(
			"the temperature shift reached its limit of %+.3g K; the model cannot match these measurements well", cal.TemperatureShiftK),
			"temperature_shift_k"))
	}
	if rep.After, err = c.errors(cal); err != nil {
		return nil, err
	}
	// The threshold is always returned (fitted, or the one the shift was
	// fitted with), so the calibration means the same wherever it is used.
	// A model that already matches (RMS error under 0.01 points) has
	// nothing to improve; otherwise a shift that does not lower the error
	// means the model cannot follow the points.
	if len(m.SFC) > 0 && rep.Before.SFCRMSErrorPercent > 0.01 &&
		!(rep.After.SFCRMSErrorPercent < rep.Before.SFCRMSErrorPercent-1e-9) {
		rep.Warnings = append(rep.Warnings, limitWarning(
			"no temperature shift improves the match with the measured SFC points; the model cannot follow them", "temperature_shift_k"))
	}
	rep.Calibration = cal
	return rep, nil
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

type calibrator struct {
	ctx context.Context
	f   *Fat
	m   Measurements
	w   *workspace
}

// sse is the sum of squared SFC errors at shift s.
func (c *calibrator) sse(s float64) (float64, error) {
	var sum float64
	for _, pt := range c.m.SFC {
		v, err := c.f.mixture.sfc(c.f.opt.SolidModel, pt.TemperatureC+zeroCelsiusK, s, c.f.opt.MaxIterations, c.w)
		if err != nil {
			return 0, err
		}
		sum += (v - pt.SolidFatPercent) * (v - pt.SolidFatPercent)
	}
	return sum, nil
}

func (c *calibrator) fitShiftToSFC() (float64, error) {
	best, bestV := 0.0, math.Inf(1)
	for s := -MaxCalibrationShiftK; s <= MaxCalibrationShiftK+1e-9; s += 0.25 {
		if err := c.ctx.Err(); err != nil {
			return 0, err
		}
		v, err := c.sse(s)
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
	fa, err := c.sse(a)
	if err != nil {
		return 0, err
	}
	fb, err := c.sse(b)
	if err != nil {
		return 0, err
	}
	for hi-lo > 1e-6 {
		if fa < fb {
			hi, b, fb = b, a, fa
			a = hi - g*(hi-lo)
			if fa, err = c.sse(a); err != nil {
				return 0, err
			}
		} else {
			lo, a, fa = a, b, fb
			b = lo + g*(hi-lo)
			if fb, err = c.sse(b); err != nil {
				return 0, err
			}
		}
	}
	// Keep the refined shift only if it is strictly better: on a flat
	// stretch (points no shift changes) the grid's choice, the shift nearest
	// 0, stands.
	s := 0.5 * (lo + hi)
	if v, err := c.sse(s); err != nil || !(v < bestV) {
		s = best
	}
	return s, nil
}

// slip is the predicted slip melting point (K) at shift s and threshold thr.
func (c *calibrator) slip(s, thr float64) (float64, bool, error) {
	g := *c.f
	g.opt.Calibration = Calibration{TemperatureShiftK: s, SlipThresholdPercent: thr}
	g.mixture = c.f.mixture.shifted(s)
	return g.slipPoint(g.mixture.newWorkspace(), nil, math.NaN())
}

func (c *calibrator) fitShiftToSlip(thr float64) (float64, error) {
	target := c.m.SlipMeltingPointC + zeroCelsiusK
	lo, hi := -MaxCalibrationShiftK, MaxCalibrationShiftK
	flo, _, err := c.slip(lo, thr)
	if err != nil {
		return 0, err
	}
	fhi, _, err := c.slip(hi, thr)
	if err != nil {
		return 0, err
	}
	if target <= flo {
		return lo, nil
	}
	if target >= fhi {
		return hi, nil
	}
	// The slip melting point rises with the shift; it may step where
	// pooled species cross the threshold, which the search brackets too.
	r, err := roots.Find(roots.Problem{
		F: func(s float64) (float64, float64, error) {
			v, _, err := c.slip(s, thr)
			return v - target, math.NaN(), err
		},
		Lo: lo, Hi: hi, FLo: flo - target, FHi: fhi - target, Increasing: true, Start: math.NaN(),
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

// errors evaluates the model with calibration cal against the measurements.
func (c *calibrator) errors(cal Calibration) (CalibrationError, error) {
	var e CalibrationError
	var sq float64
	for _, pt := range c.m.SFC {
		v, err := c.f.mixture.sfc(c.f.opt.SolidModel, pt.TemperatureC+zeroCelsiusK, cal.TemperatureShiftK, c.f.opt.MaxIterations, c.w)
		if err != nil {
			return e, err
		}
		d := v - pt.SolidFatPercent
		sq += d * d
		e.SFCMaxAbsErrorPercent = math.Max(e.SFCMaxAbsErrorPercent, math.Abs(d))
		e.SFCPoints++
	}
	if e.SFCPoints > 0 {
		e.SFCRMSErrorPercent = math.Sqrt(sq / float64(e.SFCPoints))
	}
	if c.m.HasSlipMeltingPoint {
		t, ok, err := c.slip(cal.TemperatureShiftK, cal.SlipThresholdPercent)
		if err != nil {
			return e, err
		}
		e.SlipErrorK = math.NaN()
		if ok {
			e.SlipErrorK = t - zeroCelsiusK - c.m.SlipMeltingPointC
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
	c := &calibrator{ctx: context.Background(), f: f, m: m, w: f.mixture.newWorkspace()}
	return c.errors(Calibration{SlipThresholdPercent: f.opt.slipThreshold()})
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
