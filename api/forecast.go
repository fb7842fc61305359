package api

import (
	"context"
	"net/http"

	"github.com/labstack/echo/v4"

	"lipidsvc/chem"
	"lipidsvc/chem/hardening"
)

// CatalystParameters are the six kinetic parameters.
type CatalystParameters struct {
	LinolenicSelectivity float64 `json:"linolenic_selectivity"`
	LinoleicSelectivity  float64 `json:"linoleic_selectivity"`
	TransShare           float64 `json:"trans_share"`
	IsomerisationRate    float64 `json:"isomerisation_rate"`
	TransCisEquilibrium  float64 `json:"trans_cis_equilibrium"`
	TransSaturationRate  float64 `json:"trans_saturation_rate"`
}

// CatalystChoice is a preset, explicit parameters, or a preset with
// overrides.
type CatalystChoice struct {
	Preset               string   `json:"preset,omitempty"`
	LinolenicSelectivity *float64 `json:"linolenic_selectivity,omitempty"`
	LinoleicSelectivity  *float64 `json:"linoleic_selectivity,omitempty"`
	TransShare           *float64 `json:"trans_share,omitempty"`
	IsomerisationRate    *float64 `json:"isomerisation_rate,omitempty"`
	TransCisEquilibrium  *float64 `json:"trans_cis_equilibrium,omitempty"`
	TransSaturationRate  *float64 `json:"trans_saturation_rate,omitempty"`
}

// HardeningTarget is where a forecast stops.
type HardeningTarget struct {
	IodineValue        *float64 `json:"iodine_value,omitempty"`
	IodineValueDrop    *float64 `json:"iodine_value_drop,omitempty"`
	HydrogenKgPerTonne *float64 `json:"hydrogen_kg_per_tonne,omitempty"`
	SlipMeltingPointC  *float64 `json:"slip_melting_point_c,omitempty"`
}

// MeltingTargetBody reports a slip-melting-point target.
type MeltingTargetBody struct {
	TargetSlipMeltingPointC float64         `json:"target_slip_melting_point_c"`
	SlipMeltingPointC       float64         `json:"slip_melting_point_c"`
	FeedSlipMeltingPointC   *float64        `json:"feed_slip_melting_point_c"`
	IodineValue             float64         `json:"iodine_value"`
	Sn2Estimate             string          `json:"sn2_estimate"`
	Uncertainty             UncertaintyBody `json:"uncertainty"`
}

// ForecastRequest is the body of POST /v1/hardening/forecast.
type ForecastRequest struct {
	Profile    *ProfileBody     `json:"profile"`
	Sn2Profile *ProfileBody     `json:"sn2_profile,omitempty"`
	Target     *HardeningTarget `json:"target"`
	Catalyst   *CatalystChoice  `json:"catalyst"`
	PathPoints *Integer         `json:"path_points,omitempty"`
	Melting    *MeltingModel    `json:"melting,omitempty"`
}

// ForecastPoint is one row of the path table.
type ForecastPoint struct {
	IodineValue        float64            `json:"iodine_value"`
	TransPercent       float64            `json:"trans_percent"`
	SaturatedPercent   float64            `json:"saturated_percent"`
	HydrogenKgPerTonne float64            `json:"hydrogen_kg_per_tonne"`
	PathVariable       float64            `json:"path_variable"`
	Composition        map[string]float64 `json:"composition"`
}

// ForecastHydrogen is the hydrogen taken up per tonne of feed.
type ForecastHydrogen struct {
	HydrogenKgPerTonne       float64 `json:"hydrogen_kg_per_tonne"`
	HydrogenMolPerTonne      float64 `json:"hydrogen_mol_per_tonne"`
	HydrogenVolumeM3PerTonne float64 `json:"hydrogen_volume_m3_per_tonne"`
	IodineValueDropFeedBasis float64 `json:"iodine_value_drop_feed_basis"`
	ProductMassGainPercent   float64 `json:"product_mass_gain_percent"`
}

// ForecastFlags are the regulatory readings.
type ForecastFlags struct {
	TransAboveLimit                 bool    `json:"trans_above_limit"`
	TransLimitPercent               float64 `json:"trans_limit_percent"`
	PartiallyHydrogenated           bool    `json:"partially_hydrogenated"`
	FullyHydrogenatedMaxIodineValue float64 `json:"fully_hydrogenated_max_iodine_value"`
}

// CatalystUsed echoes the catalyst of a forecast.
type CatalystUsed struct {
	Preset     *string            `json:"preset"`
	Parameters CatalystParameters `json:"parameters"`
}

// ForecastResponse is the answer of POST /v1/hardening/forecast.
type ForecastResponse struct {
	IodineValue        float64            `json:"iodine_value"`
	FeedIodineValue    float64            `json:"feed_iodine_value"`
	TransPercent       float64            `json:"trans_percent"`
	SaturatedPercent   float64            `json:"saturated_percent"`
	ProductProfile     ProfileOut         `json:"product_profile"`
	ProductProperties  PropertiesResponse `json:"product_properties"`
	Sn2ProductProfile  *ProfileOut        `json:"sn2_product_profile,omitempty"`
	Sn13ProductProfile *ProfileOut        `json:"sn13_product_profile,omitempty"`
	Hydrogen           ForecastHydrogen   `json:"hydrogen"`
	Path               []ForecastPoint    `json:"path"`
	MeltingTarget      *MeltingTargetBody `json:"melting_target,omitempty"`
	Flags              ForecastFlags      `json:"flags"`
	Catalyst           CatalystUsed       `json:"catalyst"`
	Cautions           []string           `json:"cautions"`
	Provenance         *Provenance        `json:"provenance,omitempty"`
	Warnings           []WarningBody      `json:"warnings"`
}

// PresetBody is one catalyst preset.
type PresetBody struct {
	Name       string             `json:"name"`
	Title      string             `json:"title"`
	Conditions string             `json:"conditions"`
	Basis      string             `json:"basis"`
	Parameters CatalystParameters `json:"parameters"`
}

// PresetList is the answer of GET /v1/hardening/presets.
type PresetList struct {
	Presets []PresetBody `json:"presets"`
}

func fromCatalyst(c hardening.Catalyst) CatalystParameters {
	return CatalystParameters{
		LinolenicSelectivity: c.LinolenicSelectivity,
		LinoleicSelectivity:  c.LinoleicSelectivity,
		TransShare:           c.TransShare,
		IsomerisationRate:    c.IsomerisationRate,
		TransCisEquilibrium:  c.TransCisEquilibrium,
		TransSaturationRate:  c.TransSaturationRate,
	}
}

// input copies a catalyst choice into the science's shape.
func (ch *CatalystChoice) input() *hardening.CatalystInput {
	return (*hardening.CatalystInput)(ch)
}

// input copies the request into the science's shape.
func (b *ForecastRequest) input() hardening.ForecastInput {
	in := hardening.ForecastInput{
		Profile:    b.Profile.input(),
		Sn2Profile: b.Sn2Profile.input(),
		Catalyst:   b.Catalyst.input(),
		PathPoints: intPtr(b.PathPoints),
	}
	if t := b.Target; t != nil {
		in.Target = (*hardening.ForecastTargetInput)(t)
	}
	if m := b.Melting; m != nil {
		in.Melting = m.input()
	}
	return in
}

func runForecast(cat *chem.Catalogue, rec Recorder) operation {
	return func(ctx context.Context, b []byte) (traced, error) {
		var body ForecastRequest
		if err := decodeBytes(b, &body); err != nil {
			return nil, err
		}
		res, err := hardening.Forecast(ctx, cat, body.input())
		if err != nil {
			return nil, err
		}
		if res.SlipTarget != nil {
			rec.SolverIterations("slip_melting_point_search", res.SlipTarget.Evaluations)
		}
		rec.Calculation("hardening_forecast")
		out := fromForecast(res)
		return &out, nil
	}
}

func fromForecast(a *hardening.ForecastAnswer) ForecastResponse {
	r := a.ForecastResult
	var preset *string
	if a.Preset != "" {
		preset = &a.Preset
	}
	out := ForecastResponse{
		IodineValue:       r.FinalIodineValue,
		FeedIodineValue:   r.FeedIodineValue,
		TransPercent:      round(r.TransPercent, decimalsSum),
		SaturatedPercent:  round(r.SaturatedPercent, decimalsSum),
		ProductProfile:    profileOut(r.Product),
		ProductProperties: fromProperties(r.ProductProperties),
		Hydrogen: ForecastHydrogen{
			HydrogenKgPerTonne:       r.Hydrogen.HydrogenKgPerTonne,
			HydrogenMolPerTonne:      r.Hydrogen.HydrogenMolPerTonne,
			HydrogenVolumeM3PerTonne: r.HydrogenVolumeM3PerTonne,
			IodineValueDropFeedBasis: r.Hydrogen.IodineValueDropFeedBasis,
			ProductMassGainPercent:   100 * r.Hydrogen.ProductMassGainFraction,
		},
		Path: make([]ForecastPoint, len(r.Path)),
		Flags: ForecastFlags{
			TransAboveLimit:                 r.Flags.TransAboveLimit,
			TransLimitPercent:               hardening.TransLimitPercent,
			PartiallyHydrogenated:           r.Flags.PartiallyHydrogenated,
			FullyHydrogenatedMaxIodineValue: hardening.FullyHydrogenatedMaxIodineValue,
		},
		Catalyst: CatalystUsed{Preset: preset, Parameters: fromCatalyst(r.Catalyst)},
		Cautions: hardening.Cautions(),
		Warnings: toWarnings(a.Warnings),
	}
	if st := a.SlipTarget; st != nil {
		out.MeltingTarget = &MeltingTargetBody{
			TargetSlipMeltingPointC: st.TargetSlipMeltingPointC,
			SlipMeltingPointC:       round(st.SlipMeltingPointC, decimalsMelting),
			FeedSlipMeltingPointC:   roundPtr(finiteOrNil(st.FeedSlipMeltingPointC), decimalsMelting),
			IodineValue:             st.IodineValue,
			Sn2Estimate:             st.SN2Estimate.String(),
			Uncertainty:             fromUncertainty(st.Uncertainty),
		}
	}
	if r.Sn2Product != nil {
		sn2 := profileOut(r.Sn2Product)
		out.Sn2ProductProfile = &sn2
	}
	if r.Sn13Product != nil {
		sn13 := profileOut(r.Sn13Product)
		out.Sn13ProductProfile = &sn13
	}
	for i, p := range r.Path {
		comp := make(map[string]float64, len(r.Acids))
		for j, a := range r.Acids {
			comp[a.ID] = p.Percent[j]
		}
		out.Path[i] = ForecastPoint{
			IodineValue:        p.IodineValue,
			TransPercent:       p.TransPercent,
			SaturatedPercent:   p.SaturatedPercent,
			HydrogenKgPerTonne: p.HydrogenKgPerTonne,
			PathVariable:       p.PathVariable,
			Composition:        comp,
		}
	}
	return out
}

// handlePresets serves the catalyst presets, built once.
func handlePresets() echo.HandlerFunc {
	var list PresetList
	for _, p := range hardening.Presets() {
		list.Presets = append(list.Presets, PresetBody{
			Name: p.Name, Title: p.Title, Conditions: p.Conditions, Basis: p.Basis,
			Parameters: fromCatalyst(p.Catalyst),
		})
	}
	return func(c echo.Context) error {
		return respond(c, http.StatusOK, list)
	}
}
