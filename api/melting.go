package api

import (
	"context"

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

// MeltingRequest is the body of POST /v1/melting.
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

// CalibrateRequest is the body of POST /v1/melting/calibrate.
type CalibrateRequest struct {
	Profile              *ProfileBody         `json:"profile"`
	Sn2Profile           *ProfileBody         `json:"sn2_profile,omitempty"`
	Distribution         string               `json:"distribution,omitempty"`
	Sn2Estimate          string               `json:"sn2_estimate,omitempty"`
	Sn2EnrichmentFactors []EnrichmentFactor   `json:"sn2_enrichment_factors,omitempty"`
	Polymorph            string               `json:"polymorph,omitempty"`
	SolidModel           string               `json:"solid_model,omitempty"`
	SlipThresholdPercent *float64             `json:"slip_threshold_percent,omitempty"`
	Measured             *MeltingMeasurements `json:"measured,omitempty"`
	Fats                 []CalibrationFatBody `json:"fats,omitempty"`
}

// MeltingError compares predictions with measurements.
type MeltingError struct {
	SFCPoints             int      `json:"sfc_points"`
	SFCRMSErrorPercent    *float64 `json:"sfc_rms_error_percent"`
	SFCMaxAbsErrorPercent *float64 `json:"sfc_max_abs_error_percent"`
	SlipErrorK            *float64 `json:"slip_error_k"`
	SlipPoints            int      `json:"slip_points"`
}

// CalibrationFatBody is one fat of a calibration library.
type CalibrationFatBody struct {
	Profile              *ProfileBody         `json:"profile"`
	Sn2Profile           *ProfileBody         `json:"sn2_profile,omitempty"`
	Distribution         string               `json:"distribution,omitempty"`
	Sn2Estimate          string               `json:"sn2_estimate,omitempty"`
	Sn2EnrichmentFactors []EnrichmentFactor   `json:"sn2_enrichment_factors,omitempty"`
	Measured             *MeltingMeasurements `json:"measured"`
}

// FatFitBody is how a library's calibration fits one of its fats.
type FatFitBody struct {
	Before      MeltingError  `json:"before"`
	After       MeltingError  `json:"after"`
	LeaveOneOut *MeltingError `json:"leave_one_out"`
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
	Sn2Automatic          bool               `json:"sn2_automatic"`
	FatClass              string             `json:"fat_class"`
	PoolFloorMoleFraction float64            `json:"pool_floor_mole_fraction"`
	SlipThresholdPercent  float64            `json:"slip_threshold_percent"`
	Calibration           MeltingCalibration `json:"calibration"`
}

// UncertaintyBody is the typical error of a melting estimate for its kind
// of fat.
type UncertaintyBody struct {
	FatClass          string  `json:"fat_class"`
	SlipMeltingPointK float64 `json:"slip_melting_point_k"`
	SFCPoints         float64 `json:"sfc_points"`
	ValidationFats    int     `json:"validation_fats"`
	Calibrated        bool    `json:"calibrated"`
}

// fromUncertainty converts the science's figure.
func fromUncertainty(u melting.Uncertainty) UncertaintyBody {
	return UncertaintyBody{FatClass: u.Class.String(), SlipMeltingPointK: round(u.SlipMeltingPointK, decimalsMelting),
		SFCPoints: round(u.SFCPoints, decimalsMelting), ValidationFats: u.Fats, Calibrated: u.Calibrated}
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
	Uncertainty          UncertaintyBody   `json:"uncertainty"`
	Assumptions          []string          `json:"assumptions"`
	Comparison           *MeltingError     `json:"comparison,omitempty"`
	Provenance           *Provenance       `json:"provenance,omitempty"`
	Warnings             []WarningBody     `json:"warnings"`
}

// CalibrateResponse is the answer of POST /v1/melting/calibrate.
type CalibrateResponse struct {
	Calibration MeltingCalibration `json:"calibration"`
	Before      MeltingError       `json:"before"`
	After       MeltingError       `json:"after"`
	LeaveOneOut *MeltingError      `json:"leave_one_out,omitempty"`
	Fats        []FatFitBody       `json:"fats,omitempty"`
	Provenance  *Provenance        `json:"provenance,omitempty"`
	Warnings    []WarningBody      `json:"warnings"`
}

// input copies the model options into the science's shape.
func (m *MeltingModel) input() *melting.ModelInput {
	in := &melting.ModelInput{
		Polymorph: m.Polymorph, SolidModel: m.SolidModel, Distribution: m.Distribution,
		Sn2Estimate: m.Sn2Estimate, SlipThresholdPercent: m.SlipThresholdPercent,
	}
	if m.Calibration != nil {
		in.Calibration = &melting.Calibration{
			TemperatureShiftK:    m.Calibration.TemperatureShiftK,
			SlipThresholdPercent: m.Calibration.SlipThresholdPercent,
		}
	}
	return in
}

func factorsInput(fs []EnrichmentFactor) []melting.EnrichmentFactor {
	if fs == nil {
		return nil
	}
	out := make([]melting.EnrichmentFactor, len(fs))
	for i, f := range fs {
		out[i] = melting.EnrichmentFactor(f)
	}
	return out
}

func (m *MeltingMeasurements) input() *melting.MeasuredInput {
	if m == nil {
		return nil
	}
	in := &melting.MeasuredInput{SlipMeltingPointC: m.SlipMeltingPointC}
	for _, p := range m.SFCPoints {
		in.SFCPoints = append(in.SFCPoints, melting.SFCPoint(p))
	}
	return in
}

// input copies the request into the science's shape.
func (b *MeltingRequest) input() melting.MeltingInput {
	in := melting.MeltingInput{
		Profile:              b.Profile.input(),
		Sn2Profile:           b.Sn2Profile.input(),
		ModelInput:           *b.MeltingModel.input(),
		Sn2EnrichmentFactors: factorsInput(b.Sn2EnrichmentFactors),
		TemperaturesC:        b.TemperaturesC,
		MainSpeciesCount:     intPtr(b.MainSpeciesCount),
		Measured:             b.Measured.input(),
	}
	if b.Triacylglycerols != nil {
		in.Triacylglycerols = make([]melting.TAGEntry, len(b.Triacylglycerols))
		for i, t := range b.Triacylglycerols {
			in.Triacylglycerols[i] = melting.TAGEntry(t)
		}
	}
	return in
}

// input copies the request into the science's shape.
func (b *CalibrateRequest) input() melting.CalibrationInput {
	in := melting.CalibrationInput{
		CalibrationFat: melting.CalibrationFat{
			Profile: b.Profile.input(), Sn2Profile: b.Sn2Profile.input(),
			Distribution: b.Distribution, Sn2Estimate: b.Sn2Estimate,
			Sn2EnrichmentFactors: factorsInput(b.Sn2EnrichmentFactors),
			Measured:             b.Measured.input(),
		},
		Polymorph: b.Polymorph, SolidModel: b.SolidModel,
		SlipThresholdPercent: b.SlipThresholdPercent,
	}
	if b.Fats != nil {
		in.Fats = make([]melting.CalibrationFat, len(b.Fats))
		for i, f := range b.Fats {
			in.Fats[i] = melting.CalibrationFat{
				Profile: f.Profile.input(), Sn2Profile: f.Sn2Profile.input(),
				Distribution: f.Distribution, Sn2Estimate: f.Sn2Estimate,
				Sn2EnrichmentFactors: factorsInput(f.Sn2EnrichmentFactors),
				Measured:             f.Measured.input(),
			}
		}
	}
	return in
}

// fromMeltingError converts a comparison with measurements; the slip error
// is null without a measured slip melting point or when the model has none.
func fromMeltingError(e melting.CalibrationError) MeltingError {
	out := MeltingError{SFCPoints: e.SFCPoints, SlipPoints: e.SlipPoints}
	if e.SFCPoints > 0 {
		out.SFCRMSErrorPercent = roundPtr(finiteOrNil(e.SFCRMSErrorPercent), decimalsMelting)
		out.SFCMaxAbsErrorPercent = roundPtr(finiteOrNil(e.SFCMaxAbsErrorPercent), decimalsMelting)
	}
	if e.SlipPoints > 0 {
		out.SlipErrorK = roundPtr(finiteOrNil(e.SlipErrorK), decimalsMelting)
	}
	return out
}

func runMelting(cat *chem.Catalogue, rec Recorder) operation {
	return func(ctx context.Context, b []byte) (traced, error) {
		var body MeltingRequest
		if err := decodeBytes(b, &body); err != nil {
			return nil, err
		}
		res, err := melting.MeltContext(ctx, cat, body.input())
		if err != nil {
			return nil, err
		}
		rec.Calculation("melting")
		out := fromMelting(res)
		return &out, nil
	}
}

func runCalibrate(cat *chem.Catalogue, rec Recorder) operation {
	return func(ctx context.Context, b []byte) (traced, error) {
		var body CalibrateRequest
		if err := decodeBytes(b, &body); err != nil {
			return nil, err
		}
		rep, err := melting.Calibrate(ctx, cat, body.input())
		if err != nil {
			return nil, err
		}
		rec.Calculation("melting_calibration")
		out := CalibrateResponse{
			Calibration: MeltingCalibration{
				TemperatureShiftK:    rep.Calibration.TemperatureShiftK,
				SlipThresholdPercent: rep.Calibration.SlipThresholdPercent,
			},
			Before:   fromMeltingError(rep.Before),
			After:    fromMeltingError(rep.After),
			Warnings: toWarnings(rep.Warnings),
		}
		if rep.Library {
			if rep.LeaveOneOutDefined {
				loo := fromMeltingError(rep.LeaveOneOut)
				out.LeaveOneOut = &loo
			}
			out.Fats = make([]FatFitBody, len(rep.Fats))
			for i, f := range rep.Fats {
				out.Fats[i] = FatFitBody{Before: fromMeltingError(f.Before), After: fromMeltingError(f.After)}
				if f.LeaveOneOutDefined {
					loo := fromMeltingError(f.LeaveOneOut)
					out.Fats[i].LeaveOneOut = &loo
				}
			}
		}
		return &out, nil
	}
}

// fromMelting converts an answer.
func fromMelting(a *melting.MeltingAnswer) MeltingResponse {
	r := a.Result
	out := MeltingResponse{
		SolidFatAt37CPercent: round(r.SFCAt37CPercent, decimalsMelting),
		SpeciesCount:         r.SpeciesCount,
		ComponentCount:       r.ComponentCount,
		PooledSpecies:        r.PooledSpecies,
		PooledMassPercent:    round(r.PooledMassPercent, decimalsValue),
		MeasuredOverrides:    r.MeasuredOverrides,
		Assumptions:          r.Assumptions,
		Parameters: MeltingParameters{
			Polymorph:             r.Parameters.Polymorph.String(),
			SolidModel:            r.Parameters.SolidModel.String(),
			Distribution:          r.Parameters.Distribution.String(),
			PoolFloorMoleFraction: r.Parameters.PoolFloorMoleFraction,
			SlipThresholdPercent:  r.Parameters.SlipThresholdPercent,
			Sn2Automatic:          r.Parameters.SN2Chosen,
			FatClass:              r.Parameters.Class.String(),
			Calibration: MeltingCalibration{
				TemperatureShiftK:    r.Parameters.Calibration.TemperatureShiftK,
				SlipThresholdPercent: r.Parameters.Calibration.SlipThresholdPercent,
			},
		},
		Uncertainty: fromUncertainty(r.Uncertainty),
		Warnings:    toWarnings(a.Warnings),
	}
	if r.SlipMeltingPointDefined {
		out.SlipMeltingPointC = optional(round(r.SlipMeltingPointC, decimalsMelting))
	}
	if r.ClearPointDefined {
		out.ClearPointC = optional(round(r.ClearPointC, decimalsMelting))
	}
	if r.Parameters.SN2Estimate != 0 {
		s := r.Parameters.SN2Estimate.String()
		out.Parameters.Sn2Estimate = &s
	}
	for _, p := range r.Curve {
		out.Curve = append(out.Curve, SFCPoint{TemperatureC: p.TemperatureC, SolidFatPercent: round(p.SolidFatPercent, decimalsMelting)})
	}
	for _, p := range r.ReportingPoints {
		out.ReportingPoints = append(out.ReportingPoints, SFCPoint{TemperatureC: p.TemperatureC, SolidFatPercent: round(p.SolidFatPercent, decimalsMelting)})
	}
	for _, s := range r.MainSpecies {
		out.MainSpecies = append(out.MainSpecies, MainSpecies{
			TAG: s.Label, ShortName: s.ShortName,
			MolePercent: round(s.MolePercent, decimalsValue), MassPercent: round(s.MassPercent, decimalsValue),
			MeltingPointC: roundPtr(finiteOrNil(s.MeltingPointC), decimalsMelting), MeltingPointMeasured: s.MeltingPointMeasured,
		})
	}
	if cmp := a.Comparison; cmp != nil {
		e := fromMeltingError(cmp.CalibrationError)
		out.Comparison = &e
	}
	return out
}
