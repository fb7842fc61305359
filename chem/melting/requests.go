package melting

import (
	"context"
	"fmt"

	"lipidsvc/chem"
)

// This file holds the entry points that take a request in its own shape
// (labels, percents and option names as a client sends them): [Melt],
// [Calibrate] and, for callers that nest the model options in a request of
// their own, [ResolveModel]. They read the labels, apply every rule about
// which inputs exclude each other, fill the defaults and report every
// error and warning at the path of the input it concerns, so that any
// caller, HTTP or not, gets the same checks.

// ModelInput holds the melting-model options every melting calculation
// takes, by their contract names. An empty string or a nil pointer means
// the documented default.
type ModelInput struct {
	// Polymorph: "alpha", "beta_prime" (default) or "beta".
	Polymorph string
	// SolidModel: "solid_solution_families" (default),
	// "multiple_pure_solids" or "ideal_solid_solution".
	SolidModel string
	// Distribution: "sn13_random_sn2_random" (default) or "full_random".
	Distribution string
	// Sn2Estimate: "automatic" (default: the rule of the fat's class),
	// "seed_oil_rule", "palm_rule", "lauric_rule", "lard_rule", "tallow_rule", "milk_fat_rule" or
	// "hardened_rule".
	Sn2Estimate string
	// SlipThresholdPercent: the SFC at which the slip melting point is
	// read, mass %; nil means DefaultSlipThresholdPercent.
	SlipThresholdPercent *float64
	// Calibration from [Calibrate]; nil means none.
	Calibration *Calibration
}

// EnrichmentFactor is one acid's relative preference for sn-2 (field
// "sn2_enrichment_factors" of a request).
type EnrichmentFactor struct {
	// Acid is a label as a laboratory writes it.
	Acid string
	// Factor is E_i ≥ 0 of b_i ∝ E_i·x_i.
	Factor float64
}

// TAGEntry is one TAG species of a fat given by its TAG composition: the
// acid labels at sn-1, sn-2 and sn-3 (sn-1 and sn-3 interchangeable) and its
// share of all TAG molecules, mol %.
type TAGEntry struct {
	SN1, SN2, SN3 string
	MolePercent   float64
}

// MeasuredInput are measured melting data of the fat (field "measured"):
// pulsed-NMR SFC points and/or a slip melting point.
type MeasuredInput struct {
	SFCPoints         []SFCPoint
	SlipMeltingPointC *float64
}

// MeltingInput is a melting request in its own shape. The fat is given as
// Profile or as Triacylglycerols, exactly one. Paths in errors and
// warnings name its fields: "profile", "triacylglycerols", i, "sn1", …,
// "sn2_profile", "polymorph", "solid_model", "distribution",
// "sn2_estimate", "slip_threshold_percent", "calibration", …,
// "sn2_enrichment_factors", i, "acid", "temperatures_c", i,
// "main_species_count", "measured", ….
type MeltingInput struct {
	Profile          *chem.ProfileInput
	Triacylglycerols []TAGEntry
	// Sn2Profile is a measured sn-2 composition (pancreatic lipase
	// analysis); its acids must all be in Profile.
	Sn2Profile *chem.ProfileInput
	ModelInput
	// Sn2EnrichmentFactors place acids at sn-2 by relative preference;
	// acids not listed get 0.
	Sn2EnrichmentFactors []EnrichmentFactor
	// TemperaturesC of the curve; nil means DefaultTemperaturesC.
	TemperaturesC []float64
	// MainSpeciesCount is how many species to list; nil means
	// DefaultMainSpecies.
	MainSpeciesCount *int
	// Measured, when given, is compared with the prediction.
	Measured *MeasuredInput
}

// Comparison is a prediction held against measurements.
type Comparison struct {
	CalibrationError
	// HasSlipMeltingPoint says whether a slip melting point was measured,
	// so whether SlipErrorK means anything.
	HasSlipMeltingPoint bool
}

// MeltingAnswer is the answer of [Melt].
type MeltingAnswer struct {
	*Result
	// Comparison is nil unless the input had measurements.
	Comparison *Comparison
	// Warnings are every warning of the request, reading the profile and
	// the options included, with paths into the input. (Result.Warnings
	// holds the model's alone.)
	Warnings []chem.Warning
}

// CalibrationFat is one fat of a calibration: its profile, how its acids
// sit on glycerol, and its measurements (required).
type CalibrationFat struct {
	Profile              *chem.ProfileInput
	Sn2Profile           *chem.ProfileInput
	Distribution         string
	Sn2Estimate          string
	Sn2EnrichmentFactors []EnrichmentFactor
	Measured             *MeasuredInput
}

// CalibrationInput is a calibration request in its own shape: one fat (the
// fields of the embedded CalibrationFat) or a library of fats (Fats),
// exactly one, and the model options shared by all.
type CalibrationInput struct {
	CalibrationFat
	Fats                 []CalibrationFat
	Polymorph            string
	SolidModel           string
	SlipThresholdPercent *float64
}

// MaxCalibrationFats is the most fats one calibration takes.
const MaxCalibrationFats = 50

// CalibrationAnswer is the answer of [Calibrate].
type CalibrationAnswer struct {
	*LibraryReport
	// HasSlipMeltingPoint reports, per fat, whether it had a measured slip
	// melting point (for one fat: the only entry).
	HasSlipMeltingPoint []bool
	// Library reports that the request was a library (Fats).
	Library bool
	// Warnings are every warning of the request, paths into the input.
	Warnings []chem.Warning
}

// WarnClearPointBelowRange: the fat is still liquid at MinTemperatureC, so
// no clear point is reported.
const WarnClearPointBelowRange = "clear_point_below_range"

// Option names of the contract, each with its zero value for "".
var (
	polymorphNames    = map[string]Polymorph{"": 0, "alpha": Alpha, "beta_prime": BetaPrime, "beta": Beta}
	solidModelNames   = map[string]SolidModel{"": 0, "solid_solution_families": SolidSolutionFamilies, "multiple_pure_solids": MultiplePureSolids, "ideal_solid_solution": IdealSolidSolution}
	distributionNames = map[string]Distribution{"": 0, "sn13_random_sn2_random": Positional, "full_random": FullRandom}
	sn2EstimateNames  = map[string]SN2Estimate{"": 0, "automatic": SN2Automatic, "seed_oil_rule": SN2SeedOil, "palm_rule": SN2Palm,
		"lauric_rule": SN2Lauric, "lard_rule": SN2Lard, "tallow_rule": SN2Tallow, "milk_fat_rule": SN2MilkFat, "hardened_rule": SN2Hardened}
)

// named reads an option name through its table, recording a malformed
// field when it is unknown.
func named[T any](names map[string]T, s string, errs *chem.FieldErrors, reason string, path ...any) T {
	v, ok := names[s]
	if !ok {
		errs.Malformed(reason, path...)
	}
	return v
}

// ResolveModel reads the model options of in into Options, refusing an
// sn-2 estimate beside the full random distribution, which places every
// acid at random. Errors are KindMalformed *chem.Error values with paths
// relative to in; the numeric options are checked too (KindInvalid), so a
// caller that prepares fats later meets no option error then. A nil in is
// the defaults.
func ResolveModel(in *ModelInput) (Options, error) {
	var errs chem.FieldErrors
	opt := modelOptions(in, &errs)
	if in != nil {
		refuseSn2Conflicts(&errs, opt.Composition.Distribution == FullRandom, in.Sn2Estimate != "", false, false)
	}
	if err := errs.Err("the melting options have problems"); err != nil {
		return Options{}, err
	}
	if err := opt.Validate(); err != nil {
		return Options{}, err
	}
	return opt, nil
}

// modelOptions converts the option names; unknown ones are recorded.
func modelOptions(in *ModelInput, errs *chem.FieldErrors) Options {
	var opt Options
	if in == nil {
		return opt
	}
	opt.Polymorph = named(polymorphNames, in.Polymorph, errs, "must be alpha, beta_prime or beta", "polymorph")
	opt.SolidModel = named(solidModelNames, in.SolidModel, errs,
		"must be solid_solution_families, multiple_pure_solids or ideal_solid_solution", "solid_model")
	opt.Composition.Distribution = named(distributionNames, in.Distribution, errs,
		"must be sn13_random_sn2_random or full_random", "distribution")
	opt.Composition.SN2 = named(sn2EstimateNames, in.Sn2Estimate, errs,
		"must be automatic, seed_oil_rule, palm_rule, lauric_rule, lard_rule, tallow_rule, milk_fat_rule or hardened_rule", "sn2_estimate")
	if in.SlipThresholdPercent != nil {
		opt.SlipThresholdPercent = *in.SlipThresholdPercent
	}
	if in.Calibration != nil {
		opt.Calibration = *in.Calibration
	}
	return opt
}

// refuseSn2Conflicts records the inputs that place sn-2 acids beside
// another way of doing so: every way excludes the others, and the full
// random distribution uses none. A combination is refused rather than
// letting one input silently win.
func refuseSn2Conflicts(errs *chem.FieldErrors, fullRandom, estimate, profile, factors bool) {
	if fullRandom {
		const reason = "not with full_random, which places every acid at random"
		for _, f := range []struct {
			given bool
			name  string
		}{{estimate, "sn2_estimate"}, {profile, "sn2_profile"}, {factors, "sn2_enrichment_factors"}} {
			if f.given {
				errs.Malformed(reason, f.name)
			}
		}
		return
	}
	if estimate && (profile || factors) {
		errs.Malformed("not with sn2_profile or sn2_enrichment_factors, which fix sn-2 themselves", "sn2_estimate")
	}
}

// sn2Inputs are the parts of a request that place acids at sn-2.
type sn2Inputs struct {
	estimate string
	profile  *chem.ProfileInput
	factors  []EnrichmentFactor
}

// profileOptions resolves the model and sn-2 inputs of a fat given by its
// profile p. It returns the options and the warnings of reading them.
func profileOptions(cat *chem.Catalogue, p *chem.Profile, model *ModelInput, sn2 sn2Inputs) (Options, []chem.Warning, error) {
	var errs chem.FieldErrors
	opt := modelOptions(model, &errs)
	if sn2.profile != nil && sn2.factors != nil {
		errs.Malformed("not with sn2_profile", "sn2_enrichment_factors")
		return opt, nil, errs.Err("give an sn-2 profile or enrichment factors, not both")
	}
	refuseSn2Conflicts(&errs, opt.Composition.Distribution == FullRandom, sn2.estimate != "", sn2.profile != nil, sn2.factors != nil)
	if err := errs.Err("the request places sn-2 acids in more than one way"); err != nil {
		return opt, nil, err
	}
	var warnings []chem.Warning
	if sn2.profile != nil {
		sp, err := cat.ReadProfileAt(sn2.profile, "sn2_profile")
		if err != nil {
			return opt, nil, err
		}
		opt.Composition.SN2, opt.Composition.SN2Profile = SN2Supplied, sp
		warnings = append(warnings, sp.Warnings...)
	}
	if sn2.factors != nil {
		factors, w, err := enrichmentFactors(cat, p, sn2.factors)
		if err != nil {
			return opt, nil, err
		}
		opt.Composition.SN2, opt.Composition.EnrichmentFactors = SN2Enrichment, factors
		warnings = append(warnings, w...)
	}
	return opt, warnings, nil
}

// enrichmentFactors reads the factor list into factors aligned with the
// profile's components (acids not listed get 0).
func enrichmentFactors(cat *chem.Catalogue, p *chem.Profile, list []EnrichmentFactor) ([]float64, []chem.Warning, error) {
	factors := make([]float64, len(p.Components))
	var errs chem.FieldErrors
	var warnings []chem.Warning
	seen := make(map[*chem.FattyAcid]int, len(list))
	for i, f := range list {
		path := []any{"sn2_enrichment_factors", i, "acid"}
		if !(f.Factor >= 0 && f.Factor <= maxEnrichmentFactor) {
			errs.Invalid(fmt.Sprintf("must be a number from 0 to %g", float64(maxEnrichmentFactor)), "sn2_enrichment_factors", i, "factor")
		}
		r, err := cat.Resolve(f.Acid)
		switch {
		case err != nil:
			ce, _ := chem.AsError(err)
			errs.AddSuggested(chem.KindInvalid, ce.Message, ce.Suggestions, path...)
			continue
		case r.Acid == nil:
			errs.Invalid("an unidentified remainder has no sn-2 preference", path...)
			continue
		}
		if j, dup := seen[r.Acid]; dup {
			errs.Malformed(fmt.Sprintf("%s already has a factor at sn2_enrichment_factors/%d", r.Acid.ID, j), path...)
			continue
		}
		seen[r.Acid] = i
		if r.Assumption != "" {
			warnings = append(warnings, chem.Warning{Code: chem.WarnAssumedIsomer, Message: r.Assumption, Path: path})
		}
		found := false
		for j, c := range p.Components {
			if c.Acid == r.Acid {
				factors[j], found = f.Factor, true
			}
		}
		if !found {
			errs.Invalid(fmt.Sprintf("%s is not in the profile", r.Acid.ID), path...)
		}
	}
	if err := errs.Err("the enrichment factors have problems"); err != nil {
		return nil, nil, err
	}
	return factors, warnings, nil
}

// maxEnrichmentFactor bounds an enrichment factor; far beyond any published
// sn-2 preference, it keeps the filling arithmetic well scaled.
const maxEnrichmentFactor = 1000

// tagAmounts reads the labels of a TAG composition.
func tagAmounts(cat *chem.Catalogue, tags []TAGEntry) ([]TAGAmount, []chem.Warning, error) {
	out := make([]TAGAmount, len(tags))
	var errs chem.FieldErrors
	var warnings []chem.Warning
	for i, t := range tags {
		out[i].MolePercent = t.MolePercent
		for _, pos := range []struct {
			label string
			dst   **chem.FattyAcid
			field string
		}{{t.SN1, &out[i].Outer1, "sn1"}, {t.SN2, &out[i].Middle, "sn2"}, {t.SN3, &out[i].Outer2, "sn3"}} {
			r, err := cat.Resolve(pos.label)
			switch {
			case err != nil:
				ce, _ := chem.AsError(err)
				errs.AddSuggested(chem.KindInvalid, ce.Message, ce.Suggestions, "triacylglycerols", i, pos.field)
			case r.Acid == nil:
				errs.Invalid("an unidentified acid cannot be part of a TAG species", "triacylglycerols", i, pos.field)
			default:
				*pos.dst = r.Acid
				if r.Assumption != "" {
					warnings = append(warnings, chem.Warning{Code: chem.WarnAssumedIsomer, Message: r.Assumption,
						Path: []any{"triacylglycerols", i, pos.field}})
				}
			}
		}
	}
	if err := errs.Err("the TAG composition has labels that name no known acid"); err != nil {
		return nil, nil, err
	}
	return out, warnings, nil
}

// prepareInput builds the fat of a melting request, from its profile or
// its TAG composition, with the warnings of reading the request.
func prepareInput(cat *chem.Catalogue, in *MeltingInput) (*Fat, []chem.Warning, error) {
	if (in.Profile == nil) == (in.Triacylglycerols == nil) {
		return nil, nil, chem.Errorf(chem.KindMalformed, "give the fat as a profile or as triacylglycerols").
			WithField("exactly one of profile and triacylglycerols is required")
	}
	extras := func(opt *Options) {
		opt.TemperaturesC = in.TemperaturesC
		if in.MainSpeciesCount != nil {
			opt.MainSpecies = *in.MainSpeciesCount
		}
	}
	if in.Triacylglycerols != nil {
		var errs chem.FieldErrors
		const reason = "does not apply to a TAG composition (triacylglycerols)"
		for _, f := range []struct {
			given bool
			name  string
		}{{in.Distribution != "", "distribution"}, {in.Sn2Estimate != "", "sn2_estimate"},
			{in.Sn2Profile != nil, "sn2_profile"}, {in.Sn2EnrichmentFactors != nil, "sn2_enrichment_factors"}} {
			if f.given {
				errs.Malformed(reason, f.name)
			}
		}
		if err := errs.Err("distribution and sn-2 options do not apply to a TAG composition"); err != nil {
			return nil, nil, err
		}
		tags, warnings, err := tagAmounts(cat, in.Triacylglycerols)
		if err != nil {
			return nil, nil, err
		}
		opt := modelOptions(&in.ModelInput, &errs)
		if err := errs.Err("the melting options have problems"); err != nil {
			return nil, nil, err
		}
		extras(&opt)
		fat, err := PrepareTAGs(tags, opt, chem.DefaultSumTolerance)
		return fat, warnings, err
	}
	p, err := cat.ReadProfileAt(in.Profile, "profile")
	if err != nil {
		return nil, nil, err
	}
	opt, warnings, err := profileOptions(cat, p, &in.ModelInput,
		sn2Inputs{estimate: in.Sn2Estimate, profile: in.Sn2Profile, factors: in.Sn2EnrichmentFactors})
	if err != nil {
		return nil, nil, err
	}
	extras(&opt)
	fat, err := Prepare(p, opt)
	if err != nil {
		return nil, nil, err
	}
	return fat, append(p.Warnings, warnings...), nil
}

// measurements converts the measured input.
func (m *MeasuredInput) measurements() Measurements {
	var out Measurements
	if m == nil {
		return out
	}
	out.SFC = m.SFCPoints
	if m.SlipMeltingPointC != nil {
		out.SlipMeltingPointC, out.HasSlipMeltingPoint = *m.SlipMeltingPointC, true
	}
	return out
}

// Melt computes the melting behaviour of the fat of a request: its SFC
// curve, slip melting point and clear point, its main TAG species, and,
// when the request has measurements, the comparison with them. Errors are
// *chem.Error values whose paths point into in: KindMalformed for a
// request of the wrong shape (no fat or two, unknown option names, sn-2
// inputs that exclude each other), KindInvalid for labels, profiles and
// numbers that break a rule, KindNoConvergence if a solver hits its cap.
func Melt(cat *chem.Catalogue, in MeltingInput) (*MeltingAnswer, error) {
	return MeltContext(context.Background(), cat, in)
}

// MeltContext is Melt that stops with ctx's error once ctx ends.
func MeltContext(ctx context.Context, cat *chem.Catalogue, in MeltingInput) (*MeltingAnswer, error) {
	fat, warnings, err := prepareInput(cat, &in)
	if err != nil {
		return nil, err
	}
	res, err := fat.MeltContext(ctx)
	if err != nil {
		return nil, err
	}
	out := &MeltingAnswer{Result: res, Warnings: append(warnings, res.Warnings...)}
	if !res.ClearPointDefined {
		out.Warnings = append(out.Warnings, chem.Warning{Code: WarnClearPointBelowRange, Message: fmt.Sprintf(
			"the fat is still liquid at %g °C, the bottom of the model's range; no clear point is reported", MinTemperatureC)})
	}
	if in.Measured != nil {
		m := in.Measured.measurements()
		cmp, err := fat.Compare(m)
		if err != nil {
			return nil, err
		}
		out.Comparison = &Comparison{CalibrationError: cmp, HasSlipMeltingPoint: m.HasSlipMeltingPoint}
	}
	if out.Warnings == nil {
		out.Warnings = []chem.Warning{}
	}
	return out, nil
}
