package api

import (
	"context"

	"lipidsvc/chem"
)

// PropertiesRequest is the body of POST /v1/properties.
type PropertiesRequest struct {
	Profile  *ProfileBody  `json:"profile"`
	Material string        `json:"material,omitempty"`
	Measured *MeasuredBody `json:"measured,omitempty"`
	// Nutrition asks for the nutrition-label figures.
	Nutrition *NutritionBody `json:"nutrition,omitempty"`
}

// NutritionBody asks for the nutrition-label figures: the fat content of
// the food and the conversion factor (by food class, given, or from the
// composition).
type NutritionBody struct {
	FatGPer100gFood  *float64 `json:"fat_g_per_100g_food,omitempty"`
	FoodClass        string   `json:"food_class,omitempty"`
	ConversionFactor *float64 `json:"conversion_factor,omitempty"`
}

// NutritionResult is the nutrition-label figures of a profile.
type NutritionResult struct {
	// ConversionFactor is g fatty acids per g fat; its source is
	// "composition", "food_class" or "given".
	ConversionFactor       float64           `json:"conversion_factor"`
	ConversionFactorSource string            `json:"conversion_factor_source"`
	FoodClass              *FoodClassBody    `json:"food_class,omitempty"`
	FatGPer100gFood        *float64          `json:"fat_g_per_100g_food,omitempty"`
	Per100gFat             LabelFiguresBody  `json:"per_100g_fat"`
	Per100gFood            *LabelFiguresBody `json:"per_100g_food,omitempty"`
	EPADHAMgPerGFat        float64           `json:"epa_dha_mg_per_g_fat"`
	EPADHAAsTAGMgPerGFat   float64           `json:"epa_dha_as_triacylglycerols_mg_per_g_fat"`
}

// FoodClassBody is the food class whose conversion factor was used.
type FoodClassBody struct {
	ID     string  `json:"id"`
	Name   string  `json:"name"`
	Factor float64 `json:"factor"`
}

// LabelFiguresBody is the label's fatty-acid figures in grams.
type LabelFiguresBody struct {
	TotalFattyAcidsG  float64 `json:"total_fatty_acids_g"`
	SaturatedG        float64 `json:"saturated_g"`
	MonounsaturatedG  float64 `json:"monounsaturated_g"`
	PolyunsaturatedG  float64 `json:"polyunsaturated_g"`
	TransG            float64 `json:"trans_g"`
	Trans181G         float64 `json:"trans_18_1_g"`
	Trans182G         float64 `json:"trans_18_2_g"`
	Trans183G         float64 `json:"trans_18_3_g"`
	TransOtherG       float64 `json:"trans_other_chains_g"`
	OtherUnsaturatedG float64 `json:"other_unsaturated_g"`
	N3G               float64 `json:"n3_g"`
	N6G               float64 `json:"n6_g"`
	EPAG              float64 `json:"epa_g"`
	DHAG              float64 `json:"dha_g"`
}

// MeasuredBody is the laboratory's measured iodine and saponification
// values, to check the composition against.
type MeasuredBody struct {
	IodineValue                  *float64 `json:"iodine_value,omitempty"`
	SaponificationValue          *float64 `json:"saponification_value,omitempty"`
	IodineValueTolerance         *float64 `json:"iodine_value_tolerance,omitempty"`
	SaponificationValueTolerance *float64 `json:"saponification_value_tolerance,omitempty"`
}

// CheckBody is a measured value against the calculated one.
type CheckBody struct {
	Measured   float64 `json:"measured"`
	Calculated float64 `json:"calculated"`
	Difference float64 `json:"difference"`
	Tolerance  float64 `json:"tolerance"`
	Agrees     bool    `json:"agrees"`
}

// MeasuredComparison holds the checks of the measured values sent.
type MeasuredComparison struct {
	IodineValue         *CheckBody `json:"iodine_value,omitempty"`
	SaponificationValue *CheckBody `json:"saponification_value,omitempty"`
}

// PropertiesResponse is the answer of POST /v1/properties. Its figures are
// rounded to their reporting precision (figures.go).
type PropertiesResponse struct {
	Material                string              `json:"material"`
	Basis                   string              `json:"basis"`
	IodineValue             float64             `json:"iodine_value"`
	AOCS                    AOCSIodineValue     `json:"aocs_cd_1c_85"`
	SaponificationValue     float64             `json:"saponification_value"`
	MeanMolarMass           MeanMolarMass       `json:"mean_molar_mass"`
	MeanDoubleBondsPerChain float64             `json:"mean_double_bonds_per_chain"`
	UnidentifiedPercent     float64             `json:"unidentified_percent"`
	Sums                    CompositionSums     `json:"sums"`
	Indices                 IndicesBody         `json:"indices"`
	Acids                   []AcidResultBody    `json:"acids"`
	MeasuredComparison      *MeasuredComparison `json:"measured_comparison,omitempty"`
	Nutrition               *NutritionResult    `json:"nutrition,omitempty"`
	Provenance              *Provenance         `json:"provenance,omitempty"`
	Warnings                []WarningBody       `json:"warnings"`
}

// AOCSIodineValue is the AOCS Cd 1c-85 calculated iodine value.
type AOCSIodineValue struct {
	Applies     bool     `json:"applies"`
	FactorSet   *string  `json:"factor_set"`
	IodineValue *float64 `json:"iodine_value"`
	Note        string   `json:"note"`
}

// MeanMolarMass holds mole-average molar masses, g/mol.
type MeanMolarMass struct {
	AcidGPerMol            float64 `json:"acid_g_per_mol"`
	MethylEsterGPerMol     float64 `json:"methyl_ester_g_per_mol"`
	TriacylglycerolGPerMol float64 `json:"triacylglycerol_g_per_mol"`
}

// CompositionSums are the labelling sums, percent of identified acids.
type CompositionSums struct {
	SaturatedPercent               float64  `json:"saturated_percent"`
	MonounsaturatedPercent         float64  `json:"monounsaturated_percent"`
	PolyunsaturatedPercent         float64  `json:"polyunsaturated_percent"`
	TransPercent                   float64  `json:"trans_percent"`
	OtherUnsaturatedPercent        float64  `json:"other_unsaturated_percent"`
	N3Percent                      float64  `json:"n3_percent"`
	N6Percent                      float64  `json:"n6_percent"`
	N9Percent                      float64  `json:"n9_percent"`
	N6ToN3Ratio                    *float64 `json:"n6_to_n3_ratio"`
	PolyunsaturatedToSaturatedRate *float64 `json:"polyunsaturated_to_saturated_ratio"`
}

// IndicesBody holds the stability and nutritional indices.
type IndicesBody struct {
	CalculatedOxidizability float64  `json:"calculated_oxidizability"`
	CoxOutsidePercent       float64  `json:"calculated_oxidizability_outside_percent"`
	AllylicPositions        float64  `json:"allylic_position_equivalent"`
	BisAllylicPositions     float64  `json:"bis_allylic_position_equivalent"`
	AtherogenicIndex        *float64 `json:"atherogenic_index"`
	ThrombogenicIndex       *float64 `json:"thrombogenic_index"`
}

// AcidResultBody is one acid's line.
type AcidResultBody struct {
	Acid                        string   `json:"acid"`
	Label                       string   `json:"label"`
	Percent                     float64  `json:"percent"`
	MolePercent                 float64  `json:"mole_percent"`
	FAMEWeightPercent           float64  `json:"fame_weight_percent"`
	IodineValueContribution     float64  `json:"iodine_value_contribution"`
	AOCSIodineValueContribution *float64 `json:"aocs_iodine_value_contribution"`
}

// input copies the request into the science's shape.
func (r *PropertiesRequest) input() chem.PropertiesInput {
	in := chem.PropertiesInput{Profile: r.Profile.input(), Material: r.Material}
	if m := r.Measured; m != nil {
		in.Measured = &chem.MeasuredInput{IodineValue: m.IodineValue, SaponificationValue: m.SaponificationValue,
			IodineValueTolerance: m.IodineValueTolerance, SaponificationValueTolerance: m.SaponificationValueTolerance}
	}
	if n := r.Nutrition; n != nil {
		in.Nutrition = &chem.NutritionInput{FatGPer100gFood: n.FatGPer100gFood, FoodClass: n.FoodClass, ConversionFactor: n.ConversionFactor}
	}
	return in
}

func runProperties(cat *chem.Catalogue, rec Recorder) operation {
	return func(ctx context.Context, b []byte) (traced, error) {
		var req PropertiesRequest
		if err := decodeBytes(b, &req); err != nil {
			return nil, err
		}
		props, err := chem.ComputeProperties(cat, req.input())
		if err != nil {
			return nil, err
		}
		rec.Calculation("properties")
		out := fromProperties(props)
		return &out, nil
	}
}

func optional(v float64) *float64 { return &v }

func acidLabel(a *chem.FattyAcid) string {
	if a.CommonName != "" {
		return a.CommonName
	}
	return a.SystematicName
}

func fromProperties(p chem.Properties) PropertiesResponse {
	const v, m, sum, line = decimalsValue, decimalsMolarMass, decimalsSum, decimalsLine
	out := PropertiesResponse{
		Material:            p.Material.String(),
		Basis:               p.Basis.String(),
		IodineValue:         round(p.IodineValue, v),
		SaponificationValue: round(p.SaponificationValue, v),
		MeanMolarMass: MeanMolarMass{
			AcidGPerMol:            round(p.MeanAcidMolarMass, m),
			MethylEsterGPerMol:     round(p.MeanMethylEsterMolarMass, m),
			TriacylglycerolGPerMol: round(p.MeanTAGMolarMass, m),
		},
		MeanDoubleBondsPerChain: round(p.MeanDoubleBondsPerChain, decimalsIndex),
		UnidentifiedPercent:     round(p.UnidentifiedPercent, sum),
		Sums: CompositionSums{
			SaturatedPercent:               round(p.Sums.Saturated, sum),
			MonounsaturatedPercent:         round(p.Sums.Monounsaturated, sum),
			PolyunsaturatedPercent:         round(p.Sums.Polyunsaturated, sum),
			TransPercent:                   round(p.Sums.Trans, sum),
			OtherUnsaturatedPercent:        round(p.Sums.OtherUnsaturated, sum),
			N3Percent:                      round(p.Sums.N3, sum),
			N6Percent:                      round(p.Sums.N6, sum),
			N9Percent:                      round(p.Sums.N9, sum),
			N6ToN3Ratio:                    roundPtr(p.Sums.N6ToN3, decimalsRatio),
			PolyunsaturatedToSaturatedRate: roundPtr(p.Sums.PToS, decimalsRatio),
		},
		Indices: IndicesBody{
			CalculatedOxidizability: round(p.Indices.Cox, decimalsRatio),
			CoxOutsidePercent:       round(p.Indices.CoxOutsidePercent, decimalsRatio),
			AllylicPositions:        round(p.Indices.AllylicPositionEquivalent, decimalsSum),
			BisAllylicPositions:     round(p.Indices.BisAllylicPositionEquivalent, decimalsSum),
			AtherogenicIndex:        roundPtr(p.Indices.Atherogenic, decimalsIndex),
			ThrombogenicIndex:       roundPtr(p.Indices.Thrombogenic, decimalsIndex),
		},
		Acids:    make([]AcidResultBody, len(p.Acids)),
		Warnings: toWarnings(p.Warnings),
	}
	out.AOCS = AOCSIodineValue{Applies: p.AOCSApplies, Note: p.AOCSNote}
	if p.AOCSApplies {
		set := p.AOCSFactorSet
		out.AOCS.FactorSet = &set
		out.AOCS.IodineValue = optional(round(p.IodineValueAOCS, v))
	}
	if p.IodineValueCheck != nil || p.SaponificationValueCheck != nil {
		out.MeasuredComparison = &MeasuredComparison{
			IodineValue:         fromCheck(p.IodineValueCheck),
			SaponificationValue: fromCheck(p.SaponificationValueCheck),
		}
	}
	if n := p.Nutrition; n != nil {
		out.Nutrition = fromNutrition(n)
	}
	for i, a := range p.Acids {
		r := AcidResultBody{
			Acid:                    a.Acid.ID,
			Label:                   acidLabel(a.Acid),
			Percent:                 round(a.Percent, line),
			MolePercent:             round(a.MolePercent, line),
			FAMEWeightPercent:       round(a.FAMEWeightPercent, line),
			IodineValueContribution: round(a.IodineValue, v),
		}
		if a.CountedByAOCS {
			r.AOCSIodineValueContribution = optional(round(a.IodineValueAOCS, v))
		}
		out.Acids[i] = r
	}
	return out
}

// fromNutrition converts the label figures.
func fromNutrition(n *chem.Nutrition) *NutritionResult {
	out := &NutritionResult{
		ConversionFactor:       round(n.Factor, decimalsFactor),
		ConversionFactorSource: n.FactorSource,
		FatGPer100gFood:        n.FatGPer100gFood,
		Per100gFat:             fromLabelFigures(n.PerFat),
		EPADHAMgPerGFat:        round(n.EPADHAPerGFat, decimalsMgPerG),
		EPADHAAsTAGMgPerGFat:   round(n.EPADHAAsTAGPerGFat, decimalsMgPerG),
	}
	if f := n.FoodClass; f != nil {
		out.FoodClass = &FoodClassBody{ID: f.ID, Name: f.Name, Factor: f.Factor}
	}
	if n.PerFood != nil {
		f := fromLabelFigures(*n.PerFood)
		out.Per100gFood = &f
	}
	return out
}

func fromLabelFigures(f chem.LabelFigures) LabelFiguresBody {
	const g = decimalsGrams
	return LabelFiguresBody{
		TotalFattyAcidsG: round(f.TotalFattyAcids, g), SaturatedG: round(f.Saturated, g),
		MonounsaturatedG: round(f.Monounsaturated, g), PolyunsaturatedG: round(f.Polyunsaturated, g),
		TransG: round(f.Trans, g), Trans181G: round(f.Trans181, g), Trans182G: round(f.Trans182, g),
		Trans183G: round(f.Trans183, g), TransOtherG: round(f.TransOther, g),
		OtherUnsaturatedG: round(f.OtherUnsaturated, g), N3G: round(f.N3, g), N6G: round(f.N6, g),
		EPAG: round(f.EPA, g), DHAG: round(f.DHA, g),
	}
}

// fromCheck converts one check, nil for none.
func fromCheck(c *chem.Check) *CheckBody {
	if c == nil {
		return nil
	}
	return &CheckBody{Measured: c.Measured, Calculated: round(c.Calculated, decimalsValue),
		Difference: round(c.Difference, decimalsValue), Tolerance: c.Tolerance, Agrees: c.Agrees}
}
