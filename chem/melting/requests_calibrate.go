package melting

import (
	"context"
	"fmt"

	"lipidsvc/chem"
)

// Calibration requests: one fat or a library, read and prepared without a
// calibration, then fitted.

// Calibrate fits the model's calibration to the measurements of one fat
// or of a library of fats; see [CalibrateFats] for the method. Errors are
// as for [Melt], plus KindMalformed when the measurements are missing or
// the request gives neither one fat nor a library, or both, and the
// context's error if ctx ends. Paths of a library's fats are under
// "fats", i.
func Calibrate(ctx context.Context, cat *chem.Catalogue, in CalibrationInput) (*CalibrationAnswer, error) {
	single := in.Profile != nil || in.Measured != nil || in.Sn2Profile != nil || in.Sn2EnrichmentFactors != nil ||
		in.Distribution != "" || in.Sn2Estimate != ""
	if single == (in.Fats != nil) {
		return nil, chem.Errorf(chem.KindMalformed, "give one fat (profile and measured) or a library (fats)").
			WithField("exactly one of profile and fats is required")
	}
	fats, prefix := []CalibrationFat{in.CalibrationFat}, func(int) []any { return nil }
	if !single {
		if len(in.Fats) == 0 || len(in.Fats) > MaxCalibrationFats {
			return nil, chem.Errorf(chem.KindMalformed, "a library holds 1 to %d fats", MaxCalibrationFats).
				WithField(fmt.Sprintf("give 1 to %d fats", MaxCalibrationFats), "fats")
		}
		fats, prefix = in.Fats, func(i int) []any { return []any{"fats", i} }
	}
	ans := &CalibrationAnswer{Library: !single}
	lib := make([]LibraryFat, len(fats))
	for i, cf := range fats {
		fat, m, warnings, err := prepareCalibrationFat(cat, &cf, in)
		if err != nil {
			return nil, chem.PrefixError(err, prefix(i)...)
		}
		lib[i] = LibraryFat{Fat: fat, Measurements: m}
		ans.HasSlipMeltingPoint = append(ans.HasSlipMeltingPoint, m.HasSlipMeltingPoint)
		ans.Warnings = append(ans.Warnings, chem.PrefixWarnings(warnings, prefix(i)...)...)
	}
	rep, err := CalibrateFats(ctx, lib)
	if err != nil {
		return nil, err
	}
	ans.LibraryReport = rep
	ans.Warnings = append(ans.Warnings, rep.Warnings...)
	return ans, nil
}

// prepareCalibrationFat reads one fat of a calibration and prepares it
// without a calibration.
func prepareCalibrationFat(cat *chem.Catalogue, cf *CalibrationFat, in CalibrationInput) (*Fat, Measurements, []chem.Warning, error) {
	if cf.Measured == nil {
		return nil, Measurements{}, nil, chem.Errorf(chem.KindMalformed, "measurements are required").WithField("required", "measured")
	}
	p, err := cat.ReadProfileAt(cf.Profile, "profile")
	if err != nil {
		return nil, Measurements{}, nil, err
	}
	model := ModelInput{Polymorph: in.Polymorph, SolidModel: in.SolidModel, Distribution: cf.Distribution,
		Sn2Estimate: cf.Sn2Estimate, SlipThresholdPercent: in.SlipThresholdPercent}
	opt, warnings, err := profileOptions(cat, p, &model,
		sn2Inputs{estimate: cf.Sn2Estimate, profile: cf.Sn2Profile, factors: cf.Sn2EnrichmentFactors})
	if err != nil {
		return nil, Measurements{}, nil, err
	}
	m := cf.Measured.measurements()
	if err := m.validate(); err != nil {
		return nil, Measurements{}, nil, err
	}
	fat, err := Prepare(p, opt)
	if err != nil {
		return nil, Measurements{}, nil, err
	}
	return fat, m, append(append([]chem.Warning{}, p.Warnings...), warnings...), nil
}
