package api

import (
	"fmt"
	"net/http"

	"github.com/labstack/echo/v4"

	"lipidsvc/chem"
	"lipidsvc/chem/melting"
)

// EnrichmentFactor is one acid's relative sn-2 preference.
type EnrichmentFactor struct {
	Acid   string  `json:"acid"`
	Factor float64 `json:"factor"`
}

// MeltingCalibration is a fitted correction of the melting model.
type MeltingCalibration struct {
	TemperatureShiftK    float64 `json:"temperature_shift_k"`
	SlipThresholdPercent float64 `json:"slip_threshold_percent"`
}

// SFCPoint is one point of an SFC curve.
type SFCPoint struct {
	TemperatureC    float64 `json:"temperature_c"`
	SolidFatPercent float64 `json:"solid_fat_percent"`
}

// MeltingMeasurements are measured melting data of the same fat.
type MeltingMeasurements struct {
	SFCPoints         []SFCPoint `json:"sfc_points,omitempty"`
	SlipMeltingPointC *float64   `json:"slip_melting_point_c,omitempty"`
}

// MeltingModel are the melting-model options every melting calculation
// takes, /v1/melting and a forecast's slip-melting-point target alike.
type MeltingModel struct {
	Polymorph            string              `json:"polymorph,omitempty"`
	SolidModel           string              `json:"solid_model,omitempty"`
	Distribution         string              `json:"distribution,omitempty"`
	Sn2Estimate          string              `json:"sn2_estimate,omitempty"`
	SlipThresholdPercent *float64            `json:"slip_threshold_percent,omitempty"`
	Calibration          *MeltingCalibration `json:"calibration,omitempty"`
}

// TAGEntry is one TAG species of a fat given by its TAG composition.
type TAGEntry struct {
	SN1         string  `json:"sn1"`
	SN2         string  `json:"sn2"`
	SN3         string  `json:"sn3"`
	MolePercent float64 `json:"mole_percent"`
}

// MeltingRequest is the body of POST /v1/melting (and, with measured
// required, of POST /v1/melting/calibrate).
type MeltingRequest struct {
	Profile          *ProfileBody `json:"profile"`
	Triacylglycerols []TAGEntry   `json:"triacylglycerols,omitempty"`
	Sn2Profile       *ProfileBody `json:"sn2_profile,omitempty"`
	MeltingModel
	Sn2EnrichmentFactors []EnrichmentFactor   `json:"sn2_enrichment_factors,omitempty"`
	TemperaturesC        []float64            `json:"temperatures_c,omitempty"`
	MainSpeciesCount     *Integer             `json:"main_species_count,omitempty"`
	Measured             *MeltingMeasurements `json:"measured,omitempty"`
}

// MeltingError compares predictions with measurements.
type MeltingError struct {
	SFCPoints             int      `json:"sfc_points"`
	SFCRMSErrorPercent    *float64 `json:"sfc_rms_error_percent"`
	SFCMaxAbsErrorPercent *float64 `json:"sfc_max_abs_error_percent"`
	SlipErrorK            *float64 `json:"slip_error_k"`
}

// MainSpecies is one of the largest TAG species.
type MainSpecies struct {
	TAG                  string   `json:"tag"`
	ShortName            string   `json:"short_name"`
	MolePercent          float64  `json:"mole_percent"`
	MassPercent          float64  `json:"mass_percent"`
	MeltingPointC        *float64 `json:"melting_point_c"`
	MeltingPointMeasured bool     `json:"melting_point_measured"`
}

// MeltingParameters echoes what the result was computed with.
type MeltingParameters struct {
	Polymorph             string             `json:"polymorph"`
	SolidModel            string             `json:"solid_model"`
	Distribution          string             `json:"distribution"`
	Sn2Estimate           *string            `json:"sn2_estimate"`
	PoolFloorMoleFraction float64            `json:"pool_floor_mole_fraction"`
	SlipThresholdPercent  float64            `json:"slip_threshold_percent"`
	Calibration           MeltingCalibration `json:"calibration"`
}

// MeltingResponse is the answer of POST /v1/melting.
type MeltingResponse struct {
	SlipMeltingPointC    *float64          `json:"slip_melting_point_c"`
	ClearPointC          *float64          `json:"clear_point_c"`
	SolidFatAt37CPercent float64           `json:"solid_fat_at_37c_percent"`
	Curve                []SFCPoint        `json:"curve"`
	ReportingPoints      []SFCPoint        `json:"reporting_points"`
	MainSpecies          []MainSpecies     `json:"main_species"`
	SpeciesCount         int               `json:"species_count"`
	ComponentCount       int               `json:"component_count"`
	PooledSpecies        int               `json:"pooled_species"`
	PooledMassPercent    float64           `json:"pooled_mass_percent"`
	MeasuredOverrides    int               `json:"measured_overrides"`
	Parameters           MeltingParameters `json:"parameters"`
	Assumptions          []string          `json:"assumptions"`
	Comparison           *MeltingError     `json:"comparison,omitempty"`
	Warnings             []WarningBody     `json:"warnings"`
}

// CalibrateResponse is the answer of POST /v1/melting/calibrate.
type CalibrateResponse struct {
	Calibration MeltingCalibration `json:"calibration"`
	Before      MeltingError       `json:"before"`
	After       MeltingError       `json:"after"`
	Warnings    []WarningBody      `json:"warnings"`
}

// The option names of the API. An absent option maps to the zero value,
// which the melting package reads as its documented default, so defaults
// live in one place.
var (
	polymorphs = map[string]melting.Polymorph{
		"": 0, "alpha": melting.Alpha, "beta_prime": melting.BetaPrime, "beta": melting.Beta,
	}
	solidModels = map[string]melting.SolidModel{
		"":                        0,
		"solid_solution_families": melting.SolidSolutionFamilies,
		"multiple_pure_solids":    melting.MultiplePureSolids,
		"ideal_solid_solution":    melting.IdealSolidSolution,
	}
	distributions = map[string]melting.Distribution{
		"": 0, "sn13_random_sn2_random": melting.Positional, "full_random": melting.FullRandom,
	}
	sn2Estimates = map[string]melting.SN2Estimate{
		"": 0, "seed_oil_rule": melting.SN2SeedOil, "palm_rule": melting.SN2Palm,
	}
)

// meltingPath maps the melting package's field paths onto the request
// body; paths to settings the API does not expose (the pooling floor) map to
// none.
func meltingPath(path []any) []any {
	if len(path) >= 2 && path[0] == "composition" {
		switch path[1] {
		case "distribution", "sn2_estimate", "sn2_profile", "sn2_enrichment_factors":
			return path[1:]
		case "pool_floor_mole_fraction":
			return nil
		}
	}
	if len(path) >= 1 && path[0] == "acids" {
		return append([]any{"profile"}, path...)
	}
	if len(path) >= 1 && path[0] == "measurements" {
		return []any{"measured"}
	}
	if len(path) >= 1 && path[0] == "sfc_points" {
		p := append([]any{"measured"}, path...)
		if len(p) == 4 && p[3] == "sfc_percent" {
			p[3] = "solid_fat_percent"
		}
		return p
	}
	if len(path) == 1 && path[0] == "slip_melting_point_c" {
		return []any{"measured", "slip_melting_point_c"}
	}
	return path
}

// meltingPathUnder maps melting option paths under a prefix (the
// forecast's "melting" object); other paths are left alone.
func meltingPathUnder(path []any, prefix string) []any {
	if len(path) > 0 {
		switch path[0] {
		case "polymorph", "solid_model", "slip_threshold_percent", "calibration", "composition":
			p := meltingPath(path)
			if len(p) > 0 && p[0] == "sn2_profile" {
				// The sn-2 composition is the request's own, not a melting option.
				return p
			}
			return append([]any{prefix}, p...)
		}
	}
	return path
}

// field is one request field, by its pointer, and whether the client gave
// it.
type field struct {
	given bool
	ptr   string
}

// refused lists the given fields, each refused with reason.
func refused(reason string, fields ...field) []FieldError {
	var out []FieldError
	for _, f := range fields {
		if f.given {
			out = append(out, FieldError{Pointer: f.ptr, Reason: reason})
		}
	}
	return out
}

// errSn2TwoWays refuses fields that place sn-2 acids beside another way of
// doing so.
func errSn2TwoWays(fields []FieldError) error {
	return NewError(KindMalformed, "the request places sn-2 acids in more than one way", fields...)
}

// toMeltingOptions converts the melting options shared by /v1/melting, the
// calibration and the hardening forecast's melting target.
func toMeltingOptions(cat *chem.Catalogue, b *MeltingRequest, profile *chem.Profile, prefix string) (melting.Options, []WarningBody, error) {
	var opt melting.Options
	var warnings []WarningBody
	var err error
	if opt.Polymorph, err = enumValue(polymorphs, b.Polymorph, prefix+"/polymorph", "must be alpha, beta_prime or beta"); err != nil {
		return opt, nil, err
	}
	if opt.SolidModel, err = enumValue(solidModels, b.SolidModel, prefix+"/solid_model",
		"must be solid_solution_families, multiple_pure_solids or ideal_solid_solution"); err != nil {
		return opt, nil, err
	}
	if opt.Composition.Distribution, err = enumValue(distributions, b.Distribution, prefix+"/distribution",
		"must be sn13_random_sn2_random or full_random"); err != nil {
		return opt, nil, err
	}
	if opt.Composition.SN2, err = enumValue(sn2Estimates, b.Sn2Estimate, prefix+"/sn2_estimate",
		"must be seed_oil_rule or palm_rule"); err != nil {
		return opt, nil, err
	}
	if b.Sn2Profile != nil && b.Sn2EnrichmentFactors != nil {
		return opt, nil, NewError(KindMalformed, "give an sn-2 profile or enrichment factors, not both",
			FieldError{Pointer: prefix + "/sn2_enrichment_factors", Reason: "not with sn2_profile"})
	}
	// Every way of placing acids at sn-2 excludes the others, and the full
	// random distribution uses none: refuse a combination rather than let
	// one input silently win. (sn2_profile and the factors sit at the top
	// of the body; only the options can sit under a prefix.)
	var sn2Fields []FieldError
	if opt.Composition.Distribution == melting.FullRandom {
		sn2Fields = refused("not with full_random, which places every acid at random",
			field{b.Sn2Estimate != "", prefix + "/sn2_estimate"},
			field{b.Sn2Profile != nil, "/sn2_profile"},
			field{b.Sn2EnrichmentFactors != nil, "/sn2_enrichment_factors"})
	} else {
		sn2Fields = refused("not with sn2_profile or sn2_enrichment_factors, which fix sn-2 themselves",
			field{b.Sn2Estimate != "" && (b.Sn2Profile != nil || b.Sn2EnrichmentFactors != nil), prefix + "/sn2_estimate"})
	}
	if len(sn2Fields) > 0 {
		return opt, nil, errSn2TwoWays(sn2Fields)
	}
	if b.Sn2Profile != nil {
		sn2, err := toChemProfile(cat, b.Sn2Profile, "sn2_profile")
		if err != nil {
			return opt, nil, err
		}
		opt.Composition.SN2 = melting.SN2Supplied
		opt.Composition.SN2Profile = sn2
		warnings = append(warnings, toWarnings(sn2.Warnings, "sn2_profile")...)
	}
	if b.Sn2EnrichmentFactors != nil {
		factors := make([]float64, len(profile.Components))
		seen := make(map[*chem.FattyAcid]int, len(b.Sn2EnrichmentFactors))
		for i, f := range b.Sn2EnrichmentFactors {
			ptr := Pointer("sn2_enrichment_factors", i, "acid")
			r, err := cat.Resolve(f.Acid)
			switch {
			case err != nil:
				ce, _ := chem.AsError(err)
				return opt, nil, NewError(KindUnprocessable, "unknown acid in the enrichment factors",
					FieldError{Pointer: ptr, Reason: ce.Message, Suggestions: ce.Suggestions})
			case r.Acid == nil:
				return opt, nil, NewError(KindUnprocessable, "an enrichment factor needs an identified acid",
					FieldError{Pointer: ptr, Reason: "an unidentified remainder has no sn-2 preference"})
			}
			if j, dup := seen[r.Acid]; dup {
				return opt, nil, NewError(KindMalformed, "two enrichment factors name the same acid",
					FieldError{Pointer: ptr, Reason: fmt.Sprintf("%s already has a factor at sn2_enrichment_factors/%d", r.Acid.ID, j)})
			}
			seen[r.Acid] = i
			if r.Assumption != "" {
				warnings = append(warnings, WarningBody{Code: chem.WarnAssumedIsomer, Message: r.Assumption, Pointer: ptr})
			}
			found := false
			for j, c := range profile.Components {
				if c.Acid == r.Acid {
					factors[j], found = f.Factor, true
				}
			}
			if !found {
				return opt, nil, NewError(KindUnprocessable, "an enrichment factor names an acid the profile does not have",
					FieldError{Pointer: ptr, Reason: fmt.Sprintf("%s is not in the profile", r.Acid.ID)})
			}
		}
		opt.Composition.SN2 = melting.SN2Enrichment
		opt.Composition.EnrichmentFactors = factors
	}
	opt.TemperaturesC = b.TemperaturesC
	if b.SlipThresholdPercent != nil {
		opt.SlipThresholdPercent = *b.SlipThresholdPercent
	}
	if b.Calibration != nil {
		opt.Calibration = melting.Calibration{
			TemperatureShiftK:    b.Calibration.TemperatureShiftK,
			SlipThresholdPercent: b.Calibration.SlipThresholdPercent,
		}
	}
	if b.MainSpeciesCount != nil {
		opt.MainSpecies = int(*b.MainSpeciesCount)
	}
	return opt, warnings, nil
}

func toMeasurements(m *MeltingMeasurements) melting.Measurements {
	var out melting.Measurements
	if m == nil {
		return out
	}
	for _, p := range m.SFCPoints {
		out.SFC = append(out.SFC, melting.SFCPoint{TemperatureC: p.TemperatureC, SFCPercent: p.SolidFatPercent})
	}
	if m.SlipMeltingPointC != nil {
		out.SlipMeltingPointC, out.HasSlipMeltingPoint = *m.SlipMeltingPointC, true
	}
	return out
}

// fromMeltingError converts a comparison with measurements; the slip error
// is null without a measured slip melting point or when the model has none.
func fromMeltingError(e melting.CalibrationError, hasSlip bool) MeltingError {
	out := MeltingError{SFCPoints: e.SFCPoints}
	if e.SFCPoints > 0 {
		out.SFCRMSErrorPercent = finiteOrNil(e.SFCRMSErrorPercent)
		out.SFCMaxAbsErrorPercent = finiteOrNil(e.SFCMaxAbsErrorPercent)
	}
	if hasSlip {
		out.SlipErrorK = finiteOrNil(e.SlipErrorK)
	}
	return out
}

// toTAGAmounts resolves the labels of an explicit TAG composition.
func toTAGAmounts(cat *chem.Catalogue, tags []TAGEntry) ([]melting.TAGAmount, []WarningBody, error) {
	out := make([]melting.TAGAmount, len(tags))
	warnings := []WarningBody{}
	bad := NewError(KindUnprocessable, "the TAG composition has labels that name no known acid")
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
				bad.Fields = append(bad.Fields, FieldError{Pointer: Pointer("triacylglycerols", i, pos.field), Reason: ce.Message, Suggestions: ce.Suggestions})
			case r.Acid == nil:
				bad.Fields = append(bad.Fields, FieldError{Pointer: Pointer("triacylglycerols", i, pos.field), Reason: "an unidentified acid cannot be part of a TAG species"})
			default:
				*pos.dst = r.Acid
				if r.Assumption != "" {
					warnings = append(warnings, WarningBody{Code: chem.WarnAssumedIsomer, Message: r.Assumption,
						Pointer: Pointer("triacylglycerols", i, pos.field)})
				}
			}
		}
	}
	if len(bad.Fields) > 0 {
		return nil, nil, bad
	}
	return out, warnings, nil
}

// prepareFat builds the fat from a profile or from an explicit TAG
// composition, whichever the request gives.
func prepareFat(cat *chem.Catalogue, body *MeltingRequest) (*melting.Fat, []WarningBody, error) {
	if (body.Profile == nil) == (body.Triacylglycerols == nil) {
		return nil, nil, NewError(KindMalformed, "give the fat as a profile or as triacylglycerols",
			FieldError{Pointer: "", Reason: "exactly one of profile and triacylglycerols is required"})
	}
	if body.Triacylglycerols != nil {
		fields := refused("does not apply to a TAG composition (triacylglycerols)",
			field{body.Distribution != "", "/distribution"}, field{body.Sn2Estimate != "", "/sn2_estimate"},
			field{body.Sn2Profile != nil, "/sn2_profile"}, field{body.Sn2EnrichmentFactors != nil, "/sn2_enrichment_factors"})
		if len(fields) > 0 {
			return nil, nil, NewError(KindMalformed, "distribution and sn-2 options do not apply to a TAG composition", fields...)
		}
		tags, tagWarnings, err := toTAGAmounts(cat, body.Triacylglycerols)
		if err != nil {
			return nil, nil, err
		}
		opt, warnings, err := toMeltingOptions(cat, body, nil, "")
		if err != nil {
			return nil, nil, err
		}
		fat, err := melting.PrepareTAGs(tags, opt, chem.DefaultSumTolerance)
		if err != nil {
			return nil, nil, mapErrorPaths(err, tagsPath)
		}
		return fat, append(tagWarnings, warnings...), nil
	}
	p, err := toChemProfile(cat, body.Profile, "profile")
	if err != nil {
		return nil, nil, err
	}
	opt, warnings, err := toMeltingOptions(cat, body, p, "")
	if err != nil {
		return nil, nil, err
	}
	fat, err := melting.Prepare(p, opt)
	if err != nil {
		return nil, nil, mapErrorPaths(err, meltingPath)
	}
	return fat, append(toWarnings(p.Warnings, "profile"), warnings...), nil
}

// tagsPath maps the explicit-TAG paths ("tags", i, …) onto the request.
func tagsPath(path []any) []any {
	if len(path) > 0 && path[0] == "tags" {
		return append([]any{"triacylglycerols"}, path[1:]...)
	}
	if len(path) > 0 && path[0] == "acids" {
		return []any{"triacylglycerols"}
	}
	return meltingPath(path)
}

func handleMelting(cat *chem.Catalogue, rec Recorder) echo.HandlerFunc {
	return func(c echo.Context) error {
		var body MeltingRequest
		if err := decodeStrict(c, &body); err != nil {
			return err
		}
		fat, warnings, err := prepareFat(cat, &body)
		if err != nil {
			return err
		}
		res, err := fat.Melt()
		if err != nil {
			return mapErrorPaths(err, meltingPath)
		}
		paths := meltingPath
		if body.Triacylglycerols != nil {
			paths = tagsPath
		}
		out := fromMelting(res, warnings, paths)
		if body.Measured != nil {
			cmp, err := fat.Compare(toMeasurements(body.Measured))
			if err != nil {
				return mapErrorPaths(err, meltingPath)
			}
			e := fromMeltingError(cmp, body.Measured.SlipMeltingPointC != nil)
			out.Comparison = &e
		}
		rec.Calculation("melting")
		return respond(c, http.StatusOK, out)
	}
}

func handleCalibrate(cat *chem.Catalogue, rec Recorder) echo.HandlerFunc {
	return func(c echo.Context) error {
		var body MeltingRequest
		if err := decodeStrict(c, &body); err != nil {
			return err
		}
		if body.Measured == nil {
			return NewError(KindMalformed, "measurements are required", FieldError{Pointer: "/measured", Reason: "required"})
		}
		if body.Triacylglycerols != nil {
			return NewError(KindMalformed, "calibration takes a fatty-acid profile",
				FieldError{Pointer: "/triacylglycerols", Reason: "give the fat as profile"})
		}
		// Options that shape only a curve, or a calibration to start from,
		// do not apply to fitting one: refuse them rather than ignore them.
		var fields []FieldError
		if body.TemperaturesC != nil {
			fields = append(fields, FieldError{Pointer: "/temperatures_c", Reason: "not used by a calibration"})
		}
		if body.MainSpeciesCount != nil {
			fields = append(fields, FieldError{Pointer: "/main_species_count", Reason: "not used by a calibration"})
		}
		if body.Calibration != nil {
			fields = append(fields, FieldError{Pointer: "/calibration", Reason: "a calibration is fitted from scratch; leave it out"})
		}
		if len(fields) > 0 {
			return NewError(KindMalformed, "the request has options a calibration does not use", fields...)
		}
		p, err := toChemProfile(cat, body.Profile, "profile")
		if err != nil {
			return err
		}
		opt, warnings, err := toMeltingOptions(cat, &body, p, "")
		if err != nil {
			return err
		}
		rep, err := melting.Calibrate(c.Request().Context(), p, opt, toMeasurements(body.Measured))
		if err != nil {
			return mapErrorPaths(err, meltingPath)
		}
		rec.Calculation("melting_calibration")
		hasSlip := body.Measured.SlipMeltingPointC != nil
		before, after := fromMeltingError(rep.Before, hasSlip), fromMeltingError(rep.After, hasSlip)
		return respond(c, http.StatusOK, CalibrateResponse{
			Calibration: MeltingCalibration{
				TemperatureShiftK:    rep.Calibration.TemperatureShiftK,
				SlipThresholdPercent: rep.Calibration.SlipThresholdPercent,
			},
			Before:   before,
			After:    after,
			Warnings: append(append(toWarnings(p.Warnings, "profile"), warnings...), toWarnings(mapWarningPaths(rep.Warnings, meltingPath))...),
		})
	}
}

// fromMelting converts a result; paths maps the melting package's paths
// onto the request (a profile's or an explicit TAG list's).
func fromMelting(r *melting.Result, warnings []WarningBody, paths func([]any) []any) MeltingResponse {
	out := MeltingResponse{
		SolidFatAt37CPercent: r.SFCAt37CPercent,
		SpeciesCount:         r.SpeciesCount,
		ComponentCount:       r.ComponentCount,
		PooledSpecies:        r.PooledSpecies,
		PooledMassPercent:    r.PooledMassPercent,
		MeasuredOverrides:    r.MeasuredOverrides,
		Assumptions:          r.Assumptions,
		Parameters: MeltingParameters{
			Polymorph:             r.Parameters.Polymorph.String(),
			SolidModel:            r.Parameters.SolidModel.String(),
			Distribution:          r.Parameters.Distribution.String(),
			PoolFloorMoleFraction: r.Parameters.PoolFloorMoleFraction,
			SlipThresholdPercent:  r.Parameters.SlipThresholdPercent,
			Calibration: MeltingCalibration{
				TemperatureShiftK:    r.Parameters.Calibration.TemperatureShiftK,
				SlipThresholdPercent: r.Parameters.Calibration.SlipThresholdPercent,
			},
		},
		Warnings: append(warnings, toWarnings(mapWarningPaths(r.Warnings, paths))...),
	}
	if r.SlipMeltingPointDefined {
		out.SlipMeltingPointC = optional(r.SlipMeltingPointC)
	}
	if r.ClearPointC >= melting.MinTemperatureC {
		out.ClearPointC = optional(r.ClearPointC)
	} else {
		out.Warnings = append(out.Warnings, WarningBody{Code: "clear_point_below_range", Message: fmt.Sprintf(
			"the fat is still liquid at %g °C, the bottom of the model's range; no clear point is reported", melting.MinTemperatureC)})
	}
	if r.Parameters.SN2Estimate != 0 {
		s := r.Parameters.SN2Estimate.String()
		out.Parameters.Sn2Estimate = &s
	}
	for _, p := range r.Curve {
		out.Curve = append(out.Curve, SFCPoint{p.TemperatureC, p.SFCPercent})
	}
	for _, p := range r.ReportingPoints {
		out.ReportingPoints = append(out.ReportingPoints, SFCPoint{p.TemperatureC, p.SFCPercent})
	}
	for _, s := range r.MainSpecies {
		out.MainSpecies = append(out.MainSpecies, MainSpecies{
			TAG: s.Label, ShortName: s.ShortName, MolePercent: s.MolePercent, MassPercent: s.MassPercent,
			MeltingPointC: finiteOrNil(s.MeltingPointC), MeltingPointMeasured: s.MeltingPointMeasured,
		})
	}
	return out
}
