package api

import (
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
	TargetSlipMeltingPointC float64  `json:"target_slip_melting_point_c"`
	SlipMeltingPointC       float64  `json:"slip_melting_point_c"`
	FeedSlipMeltingPointC   *float64 `json:"feed_slip_melting_point_c"`
	IodineValue             float64  `json:"iodine_value"`
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

// ProfileOut is a composition in the profile shape.
type ProfileOut struct {
	Basis string      `json:"basis"`
	Acids []EntryBody `json:"acids"`
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

// toCatalyst resolves a catalyst choice at the JSON pointer path.
func toCatalyst(ch *CatalystChoice, path string) (hardening.Catalyst, *string, error) {
	if ch == nil {
		return hardening.Catalyst{}, nil, NewError(KindMalformed, "the catalyst is missing",
			FieldError{Pointer: path, Reason: "a preset or the six parameters are required"})
	}
	var c hardening.Catalyst
	var preset *string
	if ch.Preset != "" {
		p, ok := hardening.PresetByName(ch.Preset)
		if !ok {
			return c, nil, NewError(KindMalformed, "unknown catalyst preset",
				FieldError{Pointer: path + "/preset", Reason: "not a known preset; see GET /v1/hardening/presets"})
		}
		c = p.Catalyst
		name := p.Name
		preset = &name
	}
	var missing []FieldError
	set := func(dst *float64, v *float64, name string) {
		switch {
		case v != nil:
			*dst = *v
		case preset == nil:
			missing = append(missing, FieldError{Pointer: path + "/" + name, Reason: "required without a preset"})
		}
	}
	set(&c.LinolenicSelectivity, ch.LinolenicSelectivity, "linolenic_selectivity")
	set(&c.LinoleicSelectivity, ch.LinoleicSelectivity, "linoleic_selectivity")
	set(&c.TransShare, ch.TransShare, "trans_share")
	set(&c.IsomerisationRate, ch.IsomerisationRate, "isomerisation_rate")
	set(&c.TransCisEquilibrium, ch.TransCisEquilibrium, "trans_cis_equilibrium")
	set(&c.TransSaturationRate, ch.TransSaturationRate, "trans_saturation_rate")
	if len(missing) > 0 {
		return c, nil, NewError(KindMalformed, "give a preset or all six catalyst parameters", missing...)
	}
	return c, preset, nil
}

func toForecastTarget(t *HardeningTarget) (hardening.Target, error) {
	n := 0
	var tg hardening.Target
	if t != nil {
		if t.IodineValue != nil {
			n++
			tg = hardening.FinalIodineValue(*t.IodineValue)
		}
		if t.IodineValueDrop != nil {
			n++
			tg = hardening.IodineValueDrop(*t.IodineValueDrop)
		}
		if t.HydrogenKgPerTonne != nil {
			n++
			tg = hardening.HydrogenKgPerTonne(*t.HydrogenKgPerTonne)
		}
		if t.SlipMeltingPointC != nil {
			n++
		}
	}
	if n != 1 {
		return tg, NewError(KindMalformed, "give exactly one target",
			FieldError{Pointer: "/target", Reason: "exactly one of iodine_value, iodine_value_drop, hydrogen_kg_per_tonne and slip_melting_point_c is required"})
	}
	return tg, nil
}

// renameFirst returns a path mapper that renames the first element of a
// chem path onto the request's field names.
func renameFirst(renames map[string]string) func([]any) []any {
	return func(path []any) []any {
		if len(path) == 0 {
			return path
		}
		if first, ok := path[0].(string); ok {
			if r, ok := renames[first]; ok {
				return append([]any{r}, path[1:]...)
			}
		}
		return path
	}
}

var forecastPath = renameFirst(map[string]string{"feed": "profile", "sn2": "sn2_profile"})

func handleForecast(cat *chem.Catalogue, rec Recorder) echo.HandlerFunc {
	return func(c echo.Context) error {
		var body ForecastRequest
		if err := decodeStrict(c, &body); err != nil {
			return err
		}
		feed, err := toChemProfile(cat, body.Profile, "profile")
		if err != nil {
			return err
		}
		var sn2 *chem.Profile
		if body.Sn2Profile != nil {
			if sn2, err = toChemProfile(cat, body.Sn2Profile, "sn2_profile"); err != nil {
				return err
			}
		}
		target, err := toForecastTarget(body.Target)
		if err != nil {
			return err
		}
		catalyst, preset, err := toCatalyst(body.Catalyst, "/catalyst")
		if err != nil {
			return err
		}
		req := hardening.NewForecastRequest(feed, target, catalyst)
		req.Sn2 = sn2
		if body.PathPoints != nil {
			req.PathPoints = int(*body.PathPoints)
		}
		var res *hardening.ForecastResult
		var meltingTarget *MeltingTargetBody
		if body.Target.SlipMeltingPointC != nil {
			mb := MeltingRequest{}
			if body.Melting != nil {
				mb.MeltingModel = *body.Melting
				// The hardened sn-2 pools of sn2_profile fix sn-2 for the
				// melting model: an estimate or full randomisation beside
				// them would be ignored, so refuse them.
				fields := refused("not with sn2_profile, whose hardened pools fix sn-2",
					field{body.Sn2Profile != nil && mb.Sn2Estimate != "", "/melting/sn2_estimate"},
					field{body.Sn2Profile != nil && mb.Distribution == "full_random", "/melting/distribution"})
				if len(fields) > 0 {
					return errSn2TwoWays(fields)
				}
			}
			mopt, _, err := toMeltingOptions(cat, &mb, feed, "/melting")
			if err != nil {
				return err
			}
			st, err := hardening.ForecastToSlipMeltingPoint(c.Request().Context(), cat, req, *body.Target.SlipMeltingPointC, mopt)
			if err != nil {
				return mapErrorPaths(err, func(p []any) []any { return forecastPath(meltingPathUnder(p, "melting")) })
			}
			res = st.ForecastResult
			rec.SolverIterations("slip_melting_point_search", st.Evaluations)
			// The melting warnings concern the product, whose acids are not
			// the request's; only those about melting options keep a pointer.
			res.Warnings = append(res.Warnings, mapWarningPaths(st.MeltingWarnings, func(p []any) []any {
				if len(p) > 0 && p[0] == "composition" {
					return meltingPathUnder(p, "melting")
				}
				return nil
			})...)
			meltingTarget = &MeltingTargetBody{
				TargetSlipMeltingPointC: st.TargetSlipMeltingPointC,
				SlipMeltingPointC:       st.SlipMeltingPointC,
				FeedSlipMeltingPointC:   finiteOrNil(st.FeedSlipMeltingPointC),
				IodineValue:             st.FinalIodineValue,
			}
		} else {
			if body.Melting != nil {
				return NewError(KindMalformed, "melting options go only with a slip_melting_point_c target",
					FieldError{Pointer: "/melting", Reason: "only with target slip_melting_point_c"})
			}
			if res, err = hardening.Forecast(c.Request().Context(), cat, req); err != nil {
				return mapErrorPaths(err, forecastPath)
			}
		}
		rec.Calculation("hardening_forecast")
		warnings := append(toWarnings(feed.Warnings, "profile"), toWarnings(mapWarningPaths(res.Warnings, forecastPath))...)
		if sn2 != nil {
			warnings = append(warnings, toWarnings(sn2.Warnings, "sn2_profile")...)
		}
		out := fromForecast(res, preset, warnings)
		out.MeltingTarget = meltingTarget
		return respond(c, http.StatusOK, out)
	}
}

func profileOut(p *chem.Profile) ProfileOut {
	out := ProfileOut{Basis: p.Basis.String(), Acids: make([]EntryBody, len(p.Components))}
	for i, c := range p.Components {
		out.Acids[i] = EntryBody{Acid: c.Acid.ID, Percent: c.Percent}
	}
	return out
}

func fromForecast(r *hardening.ForecastResult, preset *string, warnings []WarningBody) ForecastResponse {
	ref, _ := hardening.StandardGasReference(hardening.GasRef0C1atm)
	out := ForecastResponse{
		IodineValue:       r.FinalIodineValue,
		FeedIodineValue:   r.FeedIodineValue,
		TransPercent:      r.TransPercent,
		SaturatedPercent:  r.SaturatedPercent,
		ProductProfile:    profileOut(r.Product),
		ProductProperties: fromProperties(r.ProductProperties),
		Hydrogen: ForecastHydrogen{
			HydrogenKgPerTonne:       r.Hydrogen.HydrogenKgPerTonne,
			HydrogenMolPerTonne:      r.Hydrogen.HydrogenMolPerTonne,
			HydrogenVolumeM3PerTonne: r.Hydrogen.HydrogenMolPerTonne * ref.MolarVolumeM3PerMol(),
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
		Cautions: hardeningCautions,
		Warnings: warnings,
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
