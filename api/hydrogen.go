package api

import (
	"context"

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
	Provenance               *Provenance        `json:"provenance,omitempty"`
	Warnings                 []WarningBody      `json:"warnings"`
}

// input copies the request into the science's shape.
func (b *HydrogenDemandRequest) input() hardening.HydrogenDemandInput {
	in := hardening.HydrogenDemandInput{
		IodineValueBasis:  b.IodineValueBasis,
		BatchMassKg:       b.BatchMassKg,
		StartTemperatureC: b.StartTemperatureC,
	}
	if f := b.Feed; f != nil {
		in.Feed = &hardening.FeedInput{IodineValue: f.IodineValue, Profile: f.Profile.input()}
	}
	if t := b.Target; t != nil {
		in.Target = &hardening.IodineValueTargetInput{IodineValue: t.IodineValue, IodineValueDrop: t.IodineValueDrop}
	}
	if g := b.Gas; g != nil {
		in.Gas = (*hardening.GasInput)(g)
	}
	if h := b.Heat; h != nil {
		in.Heat = (*hardening.HeatInput)(h)
	}
	return in
}

func runHydrogenDemand(cat *chem.Catalogue, rec Recorder) operation {
	return func(ctx context.Context, b []byte) (traced, error) {
		var body HydrogenDemandRequest
		if err := decodeBytes(b, &body); err != nil {
			return nil, err
		}
		res, err := hardening.HydrogenDemand(cat, body.input())
		if err != nil {
			return nil, err
		}
		rec.Calculation("hydrogen_demand")
		out := fromHydrogenResult(res)
		return &out, nil
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
		Reference:            r.Kind().String(),
		TemperatureC:         r.TemperatureK() - chem.ZeroCelsiusK,
		PressureKPa:          r.PressurePa() / 1000,
		MolarVolumeM3PerKmol: 1000 * r.MolarVolumeM3PerMol(),
	}
}

func fromHydrogenResult(a *hardening.HydrogenDemandAnswer) HydrogenDemandResponse {
	r, req := a.HydrogenResult, a.Request
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
			PurityPercent:                 req.Gas.PurityPercent,
			LossPercent:                   req.Gas.LossPercent,
			ReactionEnthalpyKJPerMol:      req.Heat.ReactionEnthalpyKJPerMol,
			HeatCapacityInterceptKJPerKgK: req.Heat.HeatCapacity.InterceptJPerGK,
			HeatCapacitySlopeKJPerKgK2:    req.Heat.HeatCapacity.SlopeJPerGK2,
		},
		Cautions: hardening.Cautions(),
		Warnings: toWarnings(a.Warnings),
	}
}
