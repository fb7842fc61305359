package api

import (
	"net/http"

	"github.com/labstack/echo/v4"

	"lipidsvc/chem"
	"lipidsvc/chem/hardening"
)

// HardeningFeed is the feed, by iodine value or by profile.
type HardeningFeed struct {
	IodineValue *float64     `json:"iodine_value,omitempty"`
	Profile     *ProfileBody `json:"profile,omitempty"`
}

// IodineValueTarget is where hardening stops.
type IodineValueTarget struct {
	IodineValue     *float64 `json:"iodine_value,omitempty"`
	IodineValueDrop *float64 `json:"iodine_value_drop,omitempty"`
}

// GasSupplyBody describes the hydrogen supply.
type GasSupplyBody struct {
	Reference     string   `json:"reference,omitempty"`
	TemperatureC  *float64 `json:"temperature_c,omitempty"`
	PressureKPa   *float64 `json:"pressure_kpa,omitempty"`
	PurityPercent *float64 `json:"purity_percent,omitempty"`
	LossPercent   *float64 `json:"loss_percent,omitempty"`
}

// HeatModelBody holds the thermal parameters.
type HeatModelBody struct {
	ReactionEnthalpyKJPerMol      *float64 `json:"reaction_enthalpy_kj_per_mol,omitempty"`
	HeatCapacityInterceptKJPerKgK *float64 `json:"heat_capacity_intercept_kj_per_kg_k,omitempty"`
	HeatCapacitySlopeKJPerKgK2    *float64 `json:"heat_capacity_slope_kj_per_kg_k2,omitempty"`
}

// HydrogenDemandRequest is the body of POST /v1/hydrogen-demand.
type HydrogenDemandRequest struct {
	Feed              *HardeningFeed     `json:"feed"`
	Target            *IodineValueTarget `json:"target"`
	IodineValueBasis  string             `json:"iodine_value_basis,omitempty"`
	BatchMassKg       float64            `json:"batch_mass_kg"`
	Gas               *GasSupplyBody     `json:"gas,omitempty"`
	Heat              *HeatModelBody     `json:"heat,omitempty"`
	StartTemperatureC *float64           `json:"start_temperature_c,omitempty"`
}

// DefaultStartTemperatureC is the oil temperature at which hydrogen is
// admitted when the request does not say: a common start for nickel
// hardening (common practice, no source).
const DefaultStartTemperatureC = 150.0

// HydrogenAmounts is an amount of pure H2.
type HydrogenAmounts struct {
	Mol      float64 `json:"mol"`
	Kg       float64 `json:"kg"`
	VolumeM3 float64 `json:"volume_m3"`
}

// GasAmounts is the gross supply.
type GasAmounts struct {
	HydrogenMol float64 `json:"hydrogen_mol"`
	HydrogenKg  float64 `json:"hydrogen_kg"`
	GasMol      float64 `json:"gas_mol"`
	GasVolumeM3 float64 `json:"gas_volume_m3"`
}

// IodineValueConvention reads the target in one convention.
type IodineValueConvention struct {
	FinalIodineValueFeedBasis    float64 `json:"final_iodine_value_feed_basis"`
	FinalIodineValueProductBasis float64 `json:"final_iodine_value_product_basis"`
	IodineValueDropFeedBasis     float64 `json:"iodine_value_drop_feed_basis"`
	HydrogenKgPerTonne           float64 `json:"hydrogen_kg_per_tonne"`
	ProductMassGainPercent       float64 `json:"product_mass_gain_percent"`
}

// Conventions holds both iodine-value conventions.
type Conventions struct {
	FeedBasis    IodineValueConvention `json:"feed_basis"`
	ProductBasis IodineValueConvention `json:"product_basis"`
}

// GasReferenceBody is the state volumes are stated at.
type GasReferenceBody struct {
	Reference            string  `json:"reference"`
	TemperatureC         float64 `json:"temperature_c"`
	PressureKPa          float64 `json:"pressure_kpa"`
	MolarVolumeM3PerKmol float64 `json:"molar_volume_m3_per_kmol"`
}

// HeatBody is the heat release.
type HeatBody struct {
	ReleasedKJPerTonne         float64 `json:"released_kj_per_tonne"`
	ReleasedKJ                 float64 `json:"released_kj"`
	ReleasedKWhPerTonne        float64 `json:"released_kwh_per_tonne"`
	ReleasedKWh                float64 `json:"released_kwh"`
	AdiabaticRiseC             float64 `json:"adiabatic_rise_c"`
	AdiabaticFinalTemperatureC float64 `json:"adiabatic_final_temperature_c"`
	MeanRiseCPerIodineValue    float64 `json:"mean_rise_c_per_iodine_value"`
	HeatCapacityStartKJPerKgK  float64 `json:"heat_capacity_start_kj_per_kg_k"`
	HeatCapacityEndKJPerKgK    float64 `json:"heat_capacity_end_kj_per_kg_k"`
}

// HydrogenParameters echoes every parameter used, defaults included.
type HydrogenParameters struct {
	BatchMassKg                   float64 `json:"batch_mass_kg"`
	StartTemperatureC             float64 `json:"start_temperature_c"`
	PurityPercent                 float64 `json:"purity_percent"`
	LossPercent                   float64 `json:"loss_percent"`
	ReactionEnthalpyKJPerMol      float64 `json:"reaction_enthalpy_kj_per_mol"`
	HeatCapacityInterceptKJPerKgK float64 `json:"heat_capacity_intercept_kj_per_kg_k"`
	HeatCapacitySlopeKJPerKgK2    float64 `json:"heat_capacity_slope_kj_per_kg_k2"`
}

// HydrogenDemandResponse is the answer of POST /v1/hydrogen-demand.
type HydrogenDemandResponse struct {
	HydrogenKgPerTonne       float64            `json:"hydrogen_kg_per_tonne"`
	HydrogenKg               float64            `json:"hydrogen_kg"`
	HydrogenVolumeM3PerTonne float64            `json:"hydrogen_volume_m3_per_tonne"`
	HydrogenVolumeM3         float64            `json:"hydrogen_volume_m3"`
	HydrogenMolPerTonne      float64            `json:"hydrogen_mol_per_tonne"`
	HydrogenMol              float64            `json:"hydrogen_mol"`
	HeadlineBasis            string             `json:"headline_basis"`
	FeedIodineValue          float64            `json:"feed_iodine_value"`
	Conventions              Conventions        `json:"conventions"`
	GrossSupplyPerTonne      GasAmounts         `json:"gross_supply_per_tonne"`
	GrossSupply              GasAmounts         `json:"gross_supply"`
	GasReference             GasReferenceBody   `json:"gas_reference"`
	Heat                     HeatBody           `json:"heat"`
	Parameters               HydrogenParameters `json:"parameters"`
	Cautions                 []string           `json:"cautions"`
	Warnings                 []WarningBody      `json:"warnings"`
}

var gasReferences = map[string]hardening.GasReferenceKind{
	"":               hardening.GasRef0C1atm,
	"0c_101.325kpa":  hardening.GasRef0C1atm,
	"0c_100kpa":      hardening.GasRef0C100kPa,
	"15c_101.325kpa": hardening.GasRef15C1atm,
	"20c_101.325kpa": hardening.GasRef20C1atm,
	"60f_14.696psia": hardening.GasRef60F14696psia,
}

var gasReferenceNames = map[hardening.GasReferenceKind]string{
	hardening.GasRef0C1atm:       "0c_101.325kpa",
	hardening.GasRef0C100kPa:     "0c_100kpa",
	hardening.GasRef15C1atm:      "15c_101.325kpa",
	hardening.GasRef20C1atm:      "20c_101.325kpa",
	hardening.GasRef60F14696psia: "60f_14.696psia",
	hardening.GasRefCustom:       "custom",
}

// toGasReference reads the reference state; a custom one needs temperature
// and pressure, and only a custom one may carry them.
func toGasReference(g *GasSupplyBody) (hardening.GasReference, error) {
	if g == nil {
		return hardening.StandardGasReference(hardening.GasRef0C1atm)
	}
	if g.Reference == "custom" {
		var fields []FieldError
		if g.TemperatureC == nil {
			fields = append(fields, FieldError{Pointer: "/gas/temperature_c", Reason: "required with reference custom"})
		}
		if g.PressureKPa == nil {
			fields = append(fields, FieldError{Pointer: "/gas/pressure_kpa", Reason: "required with reference custom"})
		}
		if len(fields) > 0 {
			return hardening.GasReference{}, NewError(KindMalformed, "a custom gas reference needs a temperature and a pressure", fields...)
		}
		ref, err := hardening.CustomGasReference(*g.TemperatureC+chem.ZeroCelsiusK, *g.PressureKPa*1000)
		if err != nil {
			return ref, NewError(KindUnprocessable, "the custom gas reference state is not physical",
				FieldError{Pointer: "/gas", Reason: "temperature must be above absolute zero and pressure above zero"})
		}
		return ref, nil
	}
	kind, ok := gasReferences[g.Reference]
	if !ok {
		return hardening.GasReference{}, NewError(KindMalformed, "unknown gas reference state",
			FieldError{Pointer: "/gas/reference", Reason: "not a known reference state"})
	}
	if g.TemperatureC != nil || g.PressureKPa != nil {
		return hardening.GasReference{}, NewError(KindMalformed, "temperature and pressure go only with reference custom",
			FieldError{Pointer: "/gas/reference", Reason: "set reference to custom to give a temperature and pressure"})
	}
	return hardening.StandardGasReference(kind)
}

var iodineValueBases = map[string]hardening.IodineValueBasis{
	"": hardening.FeedBasis, "feed": hardening.FeedBasis, "product": hardening.ProductBasis,
}

func toIodineValueBasis(s string) (hardening.IodineValueBasis, error) {
	return enumValue(iodineValueBases, s, "/iodine_value_basis", "must be feed or product")
}

// feedIodineValue returns the feed's iodine value, computing it from the
// profile (as triacylglycerols) when one is given.
func feedIodineValue(cat *chem.Catalogue, f *HardeningFeed) (float64, []chem.Warning, error) {
	switch {
	case f == nil || (f.IodineValue == nil && f.Profile == nil) || (f.IodineValue != nil && f.Profile != nil):
		return 0, nil, NewError(KindMalformed, "give the feed as an iodine value or a profile",
			FieldError{Pointer: "/feed", Reason: "exactly one of iodine_value and profile is required"})
	case f.IodineValue != nil:
		return *f.IodineValue, nil, nil
	}
	p, err := toChemProfile(cat, f.Profile, "feed", "profile")
	if err != nil {
		return 0, nil, err
	}
	return chem.IodineValue(p, chem.MaterialTAG), p.Warnings, nil
}

func toHardeningTarget(t *IodineValueTarget) (hardening.Target, error) {
	switch {
	case t == nil || (t.IodineValue == nil) == (t.IodineValueDrop == nil):
		return hardening.Target{}, NewError(KindMalformed, "give the target as a final iodine value or an iodine-value drop",
			FieldError{Pointer: "/target", Reason: "exactly one of iodine_value and iodine_value_drop is required"})
	case t.IodineValue != nil:
		return hardening.FinalIodineValue(*t.IodineValue), nil
	default:
		return hardening.IodineValueDrop(*t.IodineValueDrop), nil
	}
}

func valueOr(p *float64, def float64) float64 {
	if p == nil {
		return def
	}
	return *p
}

// toHydrogenRequest converts the body; percent inputs become fractions.
func toHydrogenRequest(cat *chem.Catalogue, b *HydrogenDemandRequest) (hardening.HydrogenRequest, []chem.Warning, error) {
	feedIV, warnings, err := feedIodineValue(cat, b.Feed)
	if err != nil {
		return hardening.HydrogenRequest{}, nil, err
	}
	target, err := toHardeningTarget(b.Target)
	if err != nil {
		return hardening.HydrogenRequest{}, nil, err
	}
	basis, err := toIodineValueBasis(b.IodineValueBasis)
	if err != nil {
		return hardening.HydrogenRequest{}, nil, err
	}
	ref, err := toGasReference(b.Gas)
	if err != nil {
		return hardening.HydrogenRequest{}, nil, err
	}
	req := hardening.NewHydrogenRequest(feedIV, target, b.BatchMassKg, valueOr(b.StartTemperatureC, DefaultStartTemperatureC))
	req.Basis = basis
	req.Gas.Reference = ref
	if g := b.Gas; g != nil {
		req.Gas.Purity = valueOr(g.PurityPercent, 100*hardening.DefaultPurity) / 100
		req.Gas.LossFraction = valueOr(g.LossPercent, 100*hardening.DefaultLossFraction) / 100
	}
	if h := b.Heat; h != nil {
		req.Heat.ReactionEnthalpyKJPerMol = valueOr(h.ReactionEnthalpyKJPerMol, req.Heat.ReactionEnthalpyKJPerMol)
		req.Heat.HeatCapacity.InterceptJPerGK = valueOr(h.HeatCapacityInterceptKJPerKgK, req.Heat.HeatCapacity.InterceptJPerGK)
		req.Heat.HeatCapacity.SlopeJPerGK2 = valueOr(h.HeatCapacitySlopeKJPerKgK2, req.Heat.HeatCapacity.SlopeJPerGK2)
	}
	return req, warnings, nil
}

// hydrogenPaths are the chem field paths of the hydrogen calculation that
// differ from the request's JSON shape.
var hydrogenPaths = map[string][]any{
	"/gas/loss_fraction": {"gas", "loss_percent"},
	"/gas/purity":        {"gas", "purity_percent"},
	"/heat/heat_capacity/intercept_j_per_g_k": {"heat", "heat_capacity_intercept_kj_per_kg_k"},
	"/heat/heat_capacity/slope_j_per_g_k2":    {"heat", "heat_capacity_slope_kj_per_kg_k2"},
	"/heat/heat_capacity":                     {"heat"},
}

func hydrogenPath(path []any) []any {
	if p, ok := hydrogenPaths[Pointer(path...)]; ok {
		return p
	}
	return path
}

func handleHydrogenDemand(cat *chem.Catalogue, rec Recorder) echo.HandlerFunc {
	return func(c echo.Context) error {
		var body HydrogenDemandRequest
		if err := decodeStrict(c, &body); err != nil {
			return err
		}
		req, warnings, err := toHydrogenRequest(cat, &body)
		if err != nil {
			return err
		}
		res, err := hardening.HydrogenDemand(req)
		if err != nil {
			return mapErrorPaths(err, hydrogenPath)
		}
		rec.Calculation("hydrogen_demand")
		return respond(c, http.StatusOK, fromHydrogenResult(req, res, toWarnings(warnings, "feed", "profile")))
	}
}

func fromConvention(s hardening.Saturation) IodineValueConvention {
	return IodineValueConvention{
		FinalIodineValueFeedBasis:    s.FinalIodineValueFeedBasis,
		FinalIodineValueProductBasis: s.FinalIodineValueProductBasis,
		IodineValueDropFeedBasis:     s.IodineValueDropFeedBasis,
		HydrogenKgPerTonne:           s.HydrogenKgPerTonne,
		ProductMassGainPercent:       100 * s.ProductMassGainFraction,
	}
}

func fromGasAmounts(s hardening.HydrogenSupply) GasAmounts {
	return GasAmounts{HydrogenMol: s.HydrogenMol, HydrogenKg: s.HydrogenKg, GasMol: s.GasMol, GasVolumeM3: s.GasVolumeM3}
}

func fromGasReference(r hardening.GasReference) GasReferenceBody {
	return GasReferenceBody{
		Reference:            gasReferenceNames[r.Kind()],
		TemperatureC:         r.TemperatureK() - chem.ZeroCelsiusK,
		PressureKPa:          r.PressurePa() / 1000,
		MolarVolumeM3PerKmol: 1000 * r.MolarVolumeM3PerMol(),
	}
}

func fromHydrogenResult(req hardening.HydrogenRequest, r hardening.HydrogenResult, warnings []WarningBody) HydrogenDemandResponse {
	return HydrogenDemandResponse{
		HydrogenKgPerTonne:       r.ChemicalPerTonne.Kg,
		HydrogenKg:               r.ChemicalPerBatch.Kg,
		HydrogenVolumeM3PerTonne: r.ChemicalPerTonne.VolumeM3,
		HydrogenVolumeM3:         r.ChemicalPerBatch.VolumeM3,
		HydrogenMolPerTonne:      r.ChemicalPerTonne.Mol,
		HydrogenMol:              r.ChemicalPerBatch.Mol,
		HeadlineBasis:            r.HeadlineBasis.String(),
		FeedIodineValue:          req.FeedIodineValue,
		Conventions: Conventions{
			FeedBasis:    fromConvention(r.FeedBasis),
			ProductBasis: fromConvention(r.ProductBasis),
		},
		GrossSupplyPerTonne: fromGasAmounts(r.GrossPerTonne),
		GrossSupply:         fromGasAmounts(r.GrossPerBatch),
		GasReference:        fromGasReference(r.Gas),
		Heat: HeatBody{
			ReleasedKJPerTonne:         r.Heat.KJPerTonne,
			ReleasedKJ:                 r.Heat.KJPerBatch,
			ReleasedKWhPerTonne:        r.Heat.KWhPerTonne,
			ReleasedKWh:                r.Heat.KWhPerBatch,
			AdiabaticRiseC:             r.Heat.AdiabaticRiseK,
			AdiabaticFinalTemperatureC: r.Heat.AdiabaticFinalTemperatureC,
			MeanRiseCPerIodineValue:    r.Heat.MeanRisePerIodineValueK,
			HeatCapacityStartKJPerKgK:  r.Heat.HeatCapacityStartJPerGK,
			HeatCapacityEndKJPerKgK:    r.Heat.HeatCapacityEndJPerGK,
		},
		Parameters: HydrogenParameters{
			BatchMassKg:                   req.BatchMassKg,
			StartTemperatureC:             req.StartTemperatureC,
			PurityPercent:                 100 * req.Gas.Purity,
			LossPercent:                   100 * req.Gas.LossFraction,
			ReactionEnthalpyKJPerMol:      req.Heat.ReactionEnthalpyKJPerMol,
			HeatCapacityInterceptKJPerKgK: req.Heat.HeatCapacity.InterceptJPerGK,
			HeatCapacitySlopeKJPerKgK2:    req.Heat.HeatCapacity.SlopeJPerGK2,
		},
		Cautions: hardeningCautions,
		Warnings: warnings,
	}
}
