package hardening

import (
	"fmt"

	"lipidsvc/chem"
)

// DefaultStartTemperatureC is the oil temperature at which hydrogen is
// admitted when a request does not say: a common start for nickel hardening
// (common practice, no source).
const DefaultStartTemperatureC = 150.0

// FeedInput is the feed of a hydrogen-demand request: its iodine value, or
// its profile (from which the exact iodine value as triacylglycerols is
// computed). Exactly one is given.
type FeedInput struct {
	IodineValue *float64
	Profile     *chem.ProfileInput
}

// IodineValueTargetInput is where a hydrogen-demand batch stops: a final
// iodine value or an iodine-value drop, exactly one.
type IodineValueTargetInput struct {
	IodineValue     *float64
	IodineValueDrop *float64
}

// GasInput is the hydrogen supply as a request gives it. Reference names a
// state ("0c_101.325kpa" by default, … or "custom" with TemperatureC and
// PressureKPa, which go with "custom" only); PurityPercent and LossPercent
// default to DefaultPurityPercent and DefaultLossPercent.
type GasInput struct {
	Reference     string
	TemperatureC  *float64
	PressureKPa   *float64
	PurityPercent *float64
	LossPercent   *float64
}

// HeatInput overrides the heat model's defaults, each nil for its default:
// DefaultReactionEnthalpyKJPerMol, DefaultHeatCapacityInterceptJPerGK and
// DefaultHeatCapacitySlopeJPerGK2 (kJ/(kg·K) and J/(g·K) are the same
// number).
type HeatInput struct {
	ReactionEnthalpyKJPerMol      *float64
	HeatCapacityInterceptKJPerKgK *float64
	HeatCapacitySlopeKJPerKgK2    *float64
}

// HydrogenDemandInput is a hydrogen-demand request in the request's shape.
// Paths in errors and warnings name its fields: "feed" ("iodine_value",
// "profile", …), "target" ("iodine_value", "iodine_value_drop"),
// "iodine_value_basis", "batch_mass_kg", "gas" (…), "heat" (…) and
// "start_temperature_c".
type HydrogenDemandInput struct {
	Feed *FeedInput
	// Target is required.
	Target *IodineValueTargetInput
	// IodineValueBasis names the convention of the final iodine value:
	// "feed" (also "") or "product".
	IodineValueBasis string
	// BatchMassKg is the feed mass of one batch, kg.
	BatchMassKg float64
	Gas         *GasInput
	Heat        *HeatInput
	// StartTemperatureC is the oil temperature when hydrogen is admitted;
	// nil means DefaultStartTemperatureC.
	StartTemperatureC *float64
}

// HydrogenDemandAnswer is the result of [HydrogenDemand]: the calculation,
// the request it was made for with every default filled, and what reading
// the request assumed.
type HydrogenDemandAnswer struct {
	HydrogenResult
	// Request is the resolved request, defaults included.
	Request  HydrogenRequest
	Warnings []chem.Warning
}

// HydrogenDemand resolves a hydrogen-demand request (the feed's profile or
// iodine value, the target, the named conventions and every default) and
// computes it with [HydrogenDemandOf]. Errors are *chem.Error values whose
// paths point into in: KindMalformed for a missing part, two parts that
// exclude each other or an unknown name; otherwise those of the profile and
// of HydrogenDemandOf.
func HydrogenDemand(cat *chem.Catalogue, in HydrogenDemandInput) (*HydrogenDemandAnswer, error) {
	var errs chem.FieldErrors
	var warnings []chem.Warning
	feedIV := 0.0
	switch f := in.Feed; {
	case f == nil || (f.IodineValue == nil) == (f.Profile == nil):
		errs.Malformed("exactly one of iodine_value and profile is required", "feed")
	case f.IodineValue != nil:
		feedIV = *f.IodineValue
	default:
		p, err := cat.ReadProfileAt(f.Profile, "feed", "profile")
		if err != nil {
			return nil, err
		}
		feedIV = chem.IodineValue(p, chem.MaterialTAG)
		warnings = p.Warnings
	}
	var target Target
	switch t := in.Target; {
	case t == nil || (t.IodineValue == nil) == (t.IodineValueDrop == nil):
		errs.Malformed("exactly one of iodine_value and iodine_value_drop is required", "target")
	case t.IodineValue != nil:
		target = FinalIodineValue(*t.IodineValue)
	default:
		target = IodineValueDrop(*t.IodineValueDrop)
	}
	basis, ok := ParseIodineValueBasis(in.IodineValueBasis)
	if !ok {
		errs.Malformed("must be feed or product", "iodine_value_basis")
	}
	start := DefaultStartTemperatureC
	if in.StartTemperatureC != nil {
		start = *in.StartTemperatureC
	}
	req := NewHydrogenRequest(feedIV, target, in.BatchMassKg, start)
	req.Basis = basis
	if g := in.Gas; g != nil {
		req.Gas.Reference = gasReference(g, &errs)
		req.Gas.PurityPercent = valueOr(g.PurityPercent, DefaultPurityPercent)
		req.Gas.LossPercent = valueOr(g.LossPercent, DefaultLossPercent)
	}
	if h := in.Heat; h != nil {
		req.Heat.ReactionEnthalpyKJPerMol = valueOr(h.ReactionEnthalpyKJPerMol, req.Heat.ReactionEnthalpyKJPerMol)
		req.Heat.HeatCapacity.InterceptJPerGK = valueOr(h.HeatCapacityInterceptKJPerKgK, req.Heat.HeatCapacity.InterceptJPerGK)
		req.Heat.HeatCapacity.SlopeJPerGK2 = valueOr(h.HeatCapacitySlopeKJPerKgK2, req.Heat.HeatCapacity.SlopeJPerGK2)
	}
	if err := errs.Err("the hydrogen demand request has problems"); err != nil {
		return nil, err
	}
	res, err := HydrogenDemandOf(req)
	if err != nil {
		return nil, err
	}
	sane, err := heatSense(req, res)
	if err != nil {
		return nil, err
	}
	warnings = append(warnings, sane...)
	return &HydrogenDemandAnswer{HydrogenResult: res, Request: req, Warnings: warnings}, nil
}

// Physical sense of the heat figures. Liquid edible oils have heat
// capacities of about 1.9 to 2.6 kJ/(kg·K) between 20 and 250 °C (the
// default linear fit runs 2.1 to 2.5); nothing that is an oil lies outside
// 1.2 to 4.0, so such a value is refused. Heats of hydrogenation of
// olefinic bonds lie near −105 to −125 kJ/mol (recalled; Rogers et al.
// 1978 show them nearly constant per bond). Edible oils flash near 300 °C
// and a hardening batch runs at 120 to 220 °C; an adiabatic end
// temperature above FlashPointC says the batch cannot be run without
// cooling. Common practice, no source, for the bounds of practice.
const (
	MinHeatCapacityKJPerKgK, MaxHeatCapacityKJPerKgK          = 1.2, 4.0
	TypicalHeatCapacityLowKJPerKgK, TypicalHeatCapacityHighKJ = 1.8, 2.8
	TypicalEnthalpyLowKJPerMol, TypicalEnthalpyHighKJPerMol   = -140.0, -90.0
	FlashPointC                                               = 300.0
)

// Warning codes of the sanity checks.
const (
	// WarnOutsidePractice: an input or result is physically possible but
	// outside the practice of the trade.
	WarnOutsidePractice = "outside_practice"
)

// heatSense refuses heat capacities no oil has and warns about unusual
// enthalpies and end temperatures beyond the flash point.
func heatSense(req HydrogenRequest, res HydrogenResult) ([]chem.Warning, error) {
	var out []chem.Warning
	h := res.Heat
	for _, cp := range []struct {
		v    float64
		at   float64
		what string
	}{{h.HeatCapacityStartJPerGK, req.StartTemperatureC, "start"}, {h.HeatCapacityEndJPerGK, h.AdiabaticFinalTemperatureC, "adiabatic end"}} {
		switch {
		case cp.v < MinHeatCapacityKJPerKgK || cp.v > MaxHeatCapacityKJPerKgK:
			return nil, chem.Errorf(chem.KindInvalid, "the heat capacity at the %s temperature (%.0f °C) is %.3g kJ/(kg·K), which no oil has (%.1f to %.1f)",
				cp.what, cp.at, cp.v, MinHeatCapacityKJPerKgK, MaxHeatCapacityKJPerKgK).
				WithField(fmt.Sprintf("gives %.3g kJ/(kg·K) at %.0f °C; edible oils have about 1.9 to 2.6", cp.v, cp.at), "heat")
		case cp.v < TypicalHeatCapacityLowKJPerKgK || cp.v > TypicalHeatCapacityHighKJ:
			out = append(out, chem.Warning{Code: WarnOutsidePractice, Message: fmt.Sprintf(
				"the heat capacity at the %s temperature is %.3g kJ/(kg·K); edible oils have about 1.9 to 2.6", cp.what, cp.v), Path: []any{"heat"}})
		}
	}
	if e := req.Heat.ReactionEnthalpyKJPerMol; e < TypicalEnthalpyLowKJPerMol || e > TypicalEnthalpyHighKJPerMol {
		out = append(out, chem.Warning{Code: WarnOutsidePractice, Message: fmt.Sprintf(
			"a heat of hydrogenation of %.4g kJ/mol is outside the −90 to −140 kJ/mol of olefinic bonds", e),
			Path: []any{"heat", "reaction_enthalpy_kj_per_mol"}})
	}
	if h.AdiabaticFinalTemperatureC > FlashPointC {
		out = append(out, chem.Warning{Code: WarnOutsidePractice, Message: fmt.Sprintf(
			"without cooling the batch would reach %.0f °C, above the flash point of edible oils (about %.0f °C): the reactor's cooling must remove the heat as it is released",
			h.AdiabaticFinalTemperatureC, FlashPointC), Path: []any{"target"}})
	}
	return out, nil
}

// gasReference reads the reference state of g: a named one, or a custom one
// with its temperature and pressure, which only a custom one may carry.
func gasReference(g *GasInput, errs *chem.FieldErrors) GasReference {
	if g.Reference == "custom" {
		if g.TemperatureC == nil {
			errs.Malformed("required with reference custom", "gas", "temperature_c")
		}
		if g.PressureKPa == nil {
			errs.Malformed("required with reference custom", "gas", "pressure_kpa")
		}
		if g.TemperatureC == nil || g.PressureKPa == nil {
			return GasReference{}
		}
		ref, err := CustomGasReference(*g.TemperatureC+chem.ZeroCelsiusK, *g.PressureKPa*1000)
		if err != nil {
			errs.Invalid("temperature must be above absolute zero and pressure above zero", "gas")
		}
		return ref
	}
	kind, ok := ParseGasReferenceKind(g.Reference)
	if !ok {
		errs.Malformed("not a known reference state", "gas", "reference")
		return GasReference{}
	}
	if g.TemperatureC != nil || g.PressureKPa != nil {
		errs.Malformed("set reference to custom to give a temperature and pressure", "gas", "reference")
	}
	ref, _ := StandardGasReference(kind)
	return ref
}

func valueOr(p *float64, def float64) float64 {
	if p == nil {
		return def
	}
	return *p
}
