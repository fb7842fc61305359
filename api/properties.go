package api

import (
	"fmt"
	"net/http"

	"github.com/labstack/echo/v4"

	"lipidsvc/chem"
)

// PropertiesRequest is the body of POST /v1/properties.
type PropertiesRequest struct {
	Profile  *ProfileBody `json:"profile"`
	Material string       `json:"material,omitempty"`
}

// PropertiesResponse is the answer of POST /v1/properties.
type PropertiesResponse struct {
	Material                string           `json:"material"`
	Basis                   string           `json:"basis"`
	IodineValue             float64          `json:"iodine_value"`
	AOCS                    AOCSIodineValue  `json:"aocs_cd_1c_85"`
	SaponificationValue     float64          `json:"saponification_value"`
	MeanMolarMass           MeanMolarMass    `json:"mean_molar_mass"`
	MeanDoubleBondsPerChain float64          `json:"mean_double_bonds_per_chain"`
	UnidentifiedPercent     float64          `json:"unidentified_percent"`
	Sums                    CompositionSums  `json:"sums"`
	Indices                 IndicesBody      `json:"indices"`
	Acids                   []AcidResultBody `json:"acids"`
	Warnings                []WarningBody    `json:"warnings"`
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

var materialNames = map[string]chem.Material{
	"":                 chem.MaterialTAG,
	"triacylglycerols": chem.MaterialTAG,
	"free_fatty_acids": chem.MaterialFreeAcid,
	"methyl_esters":    chem.MaterialMethylEster,
}

func toChemMaterial(s string, path ...any) (chem.Material, error) {
	return enumValue(materialNames, s, Pointer(path...), "must be triacylglycerols, free_fatty_acids or methyl_esters")
}

func handleProperties(cat *chem.Catalogue, rec Recorder) echo.HandlerFunc {
	return func(c echo.Context) error {
		var req PropertiesRequest
		if err := decodeStrict(c, &req); err != nil {
			return err
		}
		material, err := toChemMaterial(req.Material, "material")
		if err != nil {
			return err
		}
		p, err := toChemProfile(cat, req.Profile, "profile")
		if err != nil {
			return err
		}
		props := chem.ComputeProperties(p, material)
		rec.Calculation("properties")
		return respond(c, http.StatusOK, fromProperties(props))
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
	out := PropertiesResponse{
		Material:            p.Material.String(),
		Basis:               p.Basis.String(),
		IodineValue:         p.IodineValue,
		SaponificationValue: p.SaponificationValue,
		MeanMolarMass: MeanMolarMass{
			AcidGPerMol:            p.MeanAcidMolarMass,
			MethylEsterGPerMol:     p.MeanMethylEsterMolarMass,
			TriacylglycerolGPerMol: p.MeanTAGMolarMass,
		},
		MeanDoubleBondsPerChain: p.MeanDoubleBondsPerChain,
		UnidentifiedPercent:     p.UnidentifiedPercent,
		Sums: CompositionSums{
			SaturatedPercent:               p.Sums.Saturated,
			MonounsaturatedPercent:         p.Sums.Monounsaturated,
			PolyunsaturatedPercent:         p.Sums.Polyunsaturated,
			TransPercent:                   p.Sums.Trans,
			OtherUnsaturatedPercent:        p.Sums.OtherUnsaturated,
			N3Percent:                      p.Sums.N3,
			N6Percent:                      p.Sums.N6,
			N9Percent:                      p.Sums.N9,
			N6ToN3Ratio:                    p.Sums.N6ToN3,
			PolyunsaturatedToSaturatedRate: p.Sums.PToS,
		},
		Indices: IndicesBody{
			CalculatedOxidizability: p.Indices.Cox,
			AtherogenicIndex:        p.Indices.Atherogenic,
			ThrombogenicIndex:       p.Indices.Thrombogenic,
		},
		Acids:    make([]AcidResultBody, len(p.Acids)),
		Warnings: toWarnings(p.Warnings, "profile"),
	}
	out.AOCS = AOCSIodineValue{Applies: p.AOCSApplies}
	if p.AOCSApplies {
		set := "triacylglycerol"
		if p.Material == chem.MaterialFreeAcid {
			set = "free_fatty_acid"
		}
		out.AOCS.FactorSet = &set
		out.AOCS.IodineValue = optional(p.IodineValueAOCS)
		out.AOCS.Note = fmt.Sprintf("AOCS Cd 1c-85 with its %s factors over 16:1, 18:1, 18:2, 18:3, 20:1 and 22:1 (FAME weight %%)", set)
	} else {
		out.AOCS.Note = "AOCS Cd 1c-85 defines no factors for methyl esters; use iodine_value"
	}
	for i, a := range p.Acids {
		r := AcidResultBody{
			Acid:                    a.Acid.ID,
			Label:                   acidLabel(a.Acid),
			Percent:                 a.Percent,
			MolePercent:             a.MolePercent,
			FAMEWeightPercent:       a.FAMEWeightPercent,
			IodineValueContribution: a.IodineValue,
		}
		if a.CountedByAOCS {
			r.AOCSIodineValueContribution = optional(a.IodineValueAOCS)
		}
		out.Acids[i] = r
	}
	return out
}
