package melting

import (
	"context"
	"fmt"
	"math"

	"lipidsvc/chem"
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
