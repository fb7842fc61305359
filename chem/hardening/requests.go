package hardening

import (
	"context"
	"fmt"
	"math"

	"lipidsvc/chem"
	"lipidsvc/chem/melting"
)

// This file holds the forecast and fit entry points that take a request in
// its own shape (labels, percents and names as a client sends them); see
// demand_input.go for the hydrogen demand. They read the profiles, resolve
// presets and names, apply every rule about inputs that exclude each other,
// fill the defaults and report every error and warning at the path of the
// input it concerns.

// CatalystInput is a catalyst as a request gives it: a preset by name, the
// six parameters, or a preset with some of them overridden. Without a preset
// all six are required.
type CatalystInput struct {
	Preset               string
	LinolenicSelectivity *float64
	LinoleicSelectivity  *float64
	TransShare           *float64
	IsomerisationRate    *float64
	TransCisEquilibrium  *float64
	TransSaturationRate  *float64
}

// value returns the input's value of parameter p, nil when not given.
func (in *CatalystInput) value(p Parameter) *float64 {
	switch p {
	case ParamLinolenicSelectivity:
		return in.LinolenicSelectivity
	case ParamLinoleicSelectivity:
		return in.LinoleicSelectivity
	case ParamTransShare:
		return in.TransShare
	case ParamIsomerisationRate:
		return in.IsomerisationRate
	case ParamTransCisEquilibrium:
		return in.TransCisEquilibrium
	default:
		return in.TransSaturationRate
	}
}

// resolveCatalyst reads a catalyst choice sitting at field; it returns the
// parameters and the preset's name ("" for none). Range checks are the
// forecast's and the fit's (Catalyst.Validate).
func resolveCatalyst(in *CatalystInput, errs *chem.FieldErrors, field string) (Catalyst, string) {
	var c Catalyst
	if in == nil {
		errs.Malformed("a preset or the six parameters are required", field)
		return c, ""
	}
	preset := ""
	if in.Preset != "" {
		p, ok := PresetByName(in.Preset)
		if !ok {
			errs.Malformed("not a known preset; see GET /v1/hardening/presets", field, "preset")
			return c, ""
		}
		c, preset = p.Catalyst, p.Name
	}
	for _, p := range AllParameters() {
		switch v := in.value(p); {
		case v != nil:
			c = c.With(p, *v)
		case preset == "":
			errs.Malformed("required without a preset", field, p.String())
		}
	}
	return c, preset
}

// ForecastTargetInput is where a forecast stops: exactly one of a final
// iodine value, an iodine-value drop, hydrogen taken up (kg per tonne of
// feed) or a slip melting point of the product (°C).
type ForecastTargetInput struct {
	IodineValue        *float64
	IodineValueDrop    *float64
	HydrogenKgPerTonne *float64
	SlipMeltingPointC  *float64
}

// ForecastInput is a hardening forecast in the request's shape. Paths in
// errors and warnings name its fields: "profile", "sn2_profile", "target",
// …, "catalyst", …, "path_points" and "melting", ….
type ForecastInput struct {
	// Profile is the feed; required.
	Profile *chem.ProfileInput
	// Sn2Profile is, optionally, the feed's measured sn-2 composition.
	Sn2Profile *chem.ProfileInput
	Target     *ForecastTargetInput
	Catalyst   *CatalystInput
	// PathPoints is the number of rows of the path table; nil means
	// DefaultPathPoints.
	PathPoints *int
	// Melting holds the melting-model options of a slip-melting-point
	// target, and goes only with one.
	Melting *melting.ModelInput
}

// SlipTarget reports how a slip-melting-point target was met.
type SlipTarget struct {
	// TargetSlipMeltingPointC is the request's target, °C.
	TargetSlipMeltingPointC float64
	// SlipMeltingPointC is the product's, within 0.01 K of the target.
	SlipMeltingPointC float64
	// FeedSlipMeltingPointC is the feed's; NaN when it has none.
	FeedSlipMeltingPointC float64
	// IodineValue is the product's iodine value.
	IodineValue float64
	// Evaluations counts the forecasts of the search.
	Evaluations int
	// Uncertainty is the melting model's typical error for the product's
	// kind of fat; SN2Estimate the sn-2 estimate it used.
	Uncertainty melting.Uncertainty
	SN2Estimate melting.SN2Estimate
}

// ForecastAnswer is the answer of [Forecast].
type ForecastAnswer struct {
	*ForecastResult
	// Preset names the catalyst preset used, "" for explicit parameters.
	Preset string
	// SlipTarget is set for a slip-melting-point target.
	SlipTarget *SlipTarget
	// Warnings are every warning of the request, paths into the input.
	Warnings []chem.Warning
}

// meltingOptionFields are the model options of a forecast's "melting"
// object: a melting warning about one of them keeps its path (under
// "melting"); the others concern the product's acids, not the request's.
var meltingOptionFields = map[any]bool{
	"polymorph": true, "solid_model": true, "distribution": true, "sn2_estimate": true,
	"slip_threshold_percent": true, "calibration": true,
}

// Forecast resolves a forecast request and computes it with [ForecastOf],
// or, for a slip-melting-point target, with [ForecastToSlipMeltingPoint].
// Errors are *chem.Error values whose paths point into in: KindMalformed for
// a missing part, a target given twice or not at all, an unknown preset or
// option name, melting options without a slip target or sn-2 inputs that
// exclude each other; otherwise those of the profiles and the solvers;
// ctx.Err() if ctx ends first.
func Forecast(ctx context.Context, cat *chem.Catalogue, in ForecastInput) (*ForecastAnswer, error) {
	feed, err := cat.ReadProfileAt(in.Profile, "profile")
	if err != nil {
		return nil, err
	}
	var sn2 *chem.Profile
	if in.Sn2Profile != nil {
		if sn2, err = cat.ReadProfileAt(in.Sn2Profile, "sn2_profile"); err != nil {
			return nil, err
		}
	}
	var errs chem.FieldErrors
	var target Target
	slip := false
	if t := in.Target; t != nil {
		n := 0
		for _, c := range []struct {
			v    *float64
			make func(float64) Target
		}{{t.IodineValue, FinalIodineValue}, {t.IodineValueDrop, IodineValueDrop}, {t.HydrogenKgPerTonne, HydrogenKgPerTonne}} {
			if c.v != nil {
				n++
				target = c.make(*c.v)
			}
		}
		if t.SlipMeltingPointC != nil {
			n++
			slip = true
		}
		if n != 1 {
			errs.Malformed("exactly one of iodine_value, iodine_value_drop, hydrogen_kg_per_tonne and slip_melting_point_c is required", "target")
		}
	} else {
		errs.Malformed("exactly one of iodine_value, iodine_value_drop, hydrogen_kg_per_tonne and slip_melting_point_c is required", "target")
	}
	catalyst, preset := resolveCatalyst(in.Catalyst, &errs, "catalyst")
	if in.Melting != nil && !slip {
		errs.Malformed("only with target slip_melting_point_c", "melting")
	}
	if err := errs.Err("the forecast request has problems"); err != nil {
		return nil, err
	}
	req := NewForecastRequest(feed, target, catalyst)
	req.Sn2 = sn2
	if in.PathPoints != nil {
		req.PathPoints = *in.PathPoints
	}
	out := &ForecastAnswer{Preset: preset}
	var meltingWarnings []chem.Warning
	if slip {
		mopt, err := forecastMeltingOptions(in.Melting, sn2 != nil)
		if err != nil {
			return nil, err
		}
		st, err := ForecastToSlipMeltingPoint(ctx, cat, req, *in.Target.SlipMeltingPointC, mopt)
		if err != nil {
			return nil, err
		}
		out.ForecastResult = st.ForecastResult
		out.SlipTarget = &SlipTarget{
			TargetSlipMeltingPointC: st.TargetSlipMeltingPointC,
			SlipMeltingPointC:       st.SlipMeltingPointC,
			FeedSlipMeltingPointC:   st.FeedSlipMeltingPointC,
			IodineValue:             st.FinalIodineValue,
			Evaluations:             st.Evaluations,
			Uncertainty:             st.Uncertainty,
			SN2Estimate:             st.SN2Estimate,
		}
		for _, w := range st.MeltingWarnings {
			if len(w.Path) > 0 && meltingOptionFields[w.Path[0]] {
				w.Path = append([]any{"melting"}, w.Path...)
			} else {
				w.Path = nil
			}
			meltingWarnings = append(meltingWarnings, w)
		}
	} else if out.ForecastResult, err = ForecastOf(ctx, cat, req); err != nil {
		return nil, err
	}
	out.Warnings = append(append(append(feed.Warnings, out.ForecastResult.Warnings...), meltingWarnings...), sn2Warnings(sn2)...)
	out.Warnings = append(out.Warnings, catalystSense(preset, feed, out.ForecastResult)...)
	return out, nil
}

// CopperPracticeDropIV is how far copper catalysts are used to lower the
// iodine value in practice: they serve the selective reduction of
// linolenic acid in soybean and rapeseed oils ("brush hydrogenation", a
// drop of some 10 to 25 units; common practice, no source), not hardening.
const CopperPracticeDropIV = 30.0

// catalystSense warns about a catalyst used far outside its practice.
func catalystSense(preset string, feed *chem.Profile, r *ForecastResult) []chem.Warning {
	if preset != PresetCopper {
		return nil
	}
	drop := chem.IodineValue(feed, chem.MaterialTAG) - r.FinalIodineValue
	if drop <= CopperPracticeDropIV {
		return nil
	}
	return []chem.Warning{{Code: WarnOutsidePractice, Message: fmt.Sprintf(
		"copper catalysts are used to lower linolenic acid with a drop of some 10 to 25 iodine-value units; a drop of %.0f units is far outside their practice, and the preset's parameters were not set for it",
		drop), Path: []any{"catalyst", "preset"}}}
}

func sn2Warnings(sn2 *chem.Profile) []chem.Warning {
	if sn2 == nil {
		return nil
	}
	return sn2.Warnings
}

// forecastMeltingOptions reads the melting options of a slip target. With
// a measured sn-2 composition the hardened sn-2 pools fix sn-2 for the
// melting model, so an estimate or full randomisation beside them would be
// ignored: they are refused.
func forecastMeltingOptions(in *melting.ModelInput, hasSn2 bool) (melting.Options, error) {
	if in != nil && hasSn2 {
		var errs chem.FieldErrors
		const reason = "not with sn2_profile, whose hardened pools fix sn-2"
		if in.Sn2Estimate != "" {
			errs.Malformed(reason, "melting", "sn2_estimate")
		}
		if in.Distribution == "full_random" {
			errs.Malformed(reason, "melting", "distribution")
		}
		if err := errs.Err("the request places sn-2 acids in more than one way"); err != nil {
			return melting.Options{}, err
		}
	}
	opt, err := melting.ResolveModel(in)
	return opt, chem.PrefixError(err, "melting")
}

// FitObservationInput is one observed product: its profile and, when
// measured, its iodine value (per 100 g of product).
type FitObservationInput struct {
	Profile     *chem.ProfileInput
	IodineValue *float64
}

// FitInput is a catalyst fit in the request's shape. Paths in errors and
// warnings name its fields: "feed", "observations", i, "profile" or
// "iodine_value", "initial", …, "free_parameters", i and
// "max_iterations".
type FitInput struct {
	Feed         *chem.ProfileInput
	Observations []FitObservationInput
	// Initial is where the search starts and the value of every parameter
	// not fitted; nil means the nickel_selective preset.
	Initial *CatalystInput
	// FreeParameters names the parameters to fit; nil means
	// DefaultFreeParameters (less those the feed cannot tell).
	FreeParameters []string
	// MaxIterations caps the Gauss–Newton iterations; nil means
	// DefaultFitIterations.
	MaxIterations *int
}

// MaxFitWork caps the work of one fit: iterations × observations × (free
// parameters + 1), a measure of the forecasts a fit may run (each
// Gauss–Newton step forecasts every observation for the residuals and
// again for each parameter's column of the Jacobian). One observation's
// forecast takes about 5 µs on a server core (BenchmarkFit); central
// differences and the restarts from the presets can multiply the count by
// up to about twelve, so a fit at the cap takes at most a second or two,
// well inside the request time limit.
const MaxFitWork = 25000

// fitWorkCap refuses a fit that could run past its share of the service
// before any work is done (KindWorkCap).
func fitWorkCap(in FitInput) error {
	iters := DefaultFitIterations
	if in.MaxIterations != nil && *in.MaxIterations > 0 {
		iters = *in.MaxIterations
	}
	free := len(in.FreeParameters)
	if in.FreeParameters == nil {
		free = len(DefaultFreeParameters())
	}
	work := iters * len(in.Observations) * (free + 1)
	if work <= MaxFitWork {
		return nil
	}
	return chem.Errorf(chem.KindWorkCap, "the fit may run %d iterations × %d observations × %d parameters + 1 = %d forecasts, more than the %d one request may do",
		iters, len(in.Observations), free, work, MaxFitWork).
		WithField(fmt.Sprintf("lower max_iterations to at most %d, or fit fewer parameters or observations at a time", MaxFitWork/max(1, len(in.Observations)*(free+1))), "max_iterations")
}

// FitAnswer is the answer of [Fit].
type FitAnswer struct {
	*FitResult
	// Warnings are every warning of the request, paths into the input.
	Warnings []chem.Warning
}

// WarnIodineValueComputed: an observation came without an iodine value and
// the one computed from its profile was used.
const WarnIodineValueComputed = "iodine_value_computed"

// Fit resolves a fit request and computes it with [FitOf]. An observation
// without an iodine value takes the exact one of its profile, with a
// warning. Errors are *chem.Error values whose paths point into in (a
// problem with a computed iodine value points at the observation's
// profile); ctx.Err() if ctx ends first.
func Fit(ctx context.Context, cat *chem.Catalogue, in FitInput) (*FitAnswer, error) {
	if err := fitWorkCap(in); err != nil {
		return nil, err
	}
	feed, err := cat.ReadProfileAt(in.Feed, "feed")
	if err != nil {
		return nil, err
	}
	warnings := append([]chem.Warning(nil), feed.Warnings...)
	obs := make([]Observation, len(in.Observations))
	for i, o := range in.Observations {
		p, err := cat.ReadProfileAt(o.Profile, "observations", i, "profile")
		if err != nil {
			return nil, err
		}
		warnings = append(warnings, p.Warnings...)
		obs[i] = Observation{Profile: p}
		if o.IodineValue != nil {
			obs[i].IodineValue = *o.IodineValue
			continue
		}
		obs[i].IodineValue, obs[i].IodineValueComputed = chem.IodineValue(p, chem.MaterialTAG), true
		if math.IsNaN(obs[i].IodineValue) {
			continue // FitOf refuses it at the profile
		}
		warnings = append(warnings, chem.Warning{Code: WarnIodineValueComputed,
			Message: fmt.Sprintf("no iodine value given; the profile's exact iodine value %.2f was used", obs[i].IodineValue),
			Path:    []any{"observations", i, "iodine_value"}})
	}
	req := NewFitRequest(feed, obs)
	var errs chem.FieldErrors
	if in.Initial != nil {
		req.Initial, _ = resolveCatalyst(in.Initial, &errs, "initial")
	}
	for i, name := range in.FreeParameters {
		p, ok := ParseParameter(name)
		if !ok {
			errs.Malformed("not a catalyst parameter", "free_parameters", i)
			continue
		}
		req.Free = append(req.Free, p)
	}
	if in.FreeParameters != nil && req.Free == nil {
		req.Free = []Parameter{}
	}
	if in.MaxIterations != nil {
		req.MaxIterations = *in.MaxIterations
	}
	if err := errs.Err("the fit request has problems"); err != nil {
		return nil, err
	}
	res, err := FitOf(ctx, cat, req)
	if err != nil {
		return nil, err
	}
	return &FitAnswer{FitResult: res, Warnings: append(warnings, res.Warnings...)}, nil
}
