package api

import (
	"net/http"

	"github.com/labstack/echo/v4"

	"lipidsvc/chem"
)

// FattyAcidList is the answer of GET /v1/fatty-acids.
type FattyAcidList struct {
	Count int             `json:"count"`
	Acids []FattyAcidBody `json:"acids"`
}

// FattyAcidBody describes one catalogue entry.
type FattyAcidBody struct {
	ID                              string     `json:"id"`
	Shorthand                       string     `json:"shorthand"`
	Carbons                         int        `json:"carbons"`
	DoubleBonds                     int        `json:"double_bonds"`
	Bonds                           []BondBody `json:"bonds"`
	Class                           string     `json:"class"`
	Trans                           bool       `json:"trans"`
	Conjugated                      bool       `json:"conjugated"`
	OmegaPosition                   *int       `json:"omega_position"`
	OmegaFamily                     *int       `json:"omega_family"`
	HydroxyPosition                 *int       `json:"hydroxy_position"`
	Branch                          *string    `json:"branch"`
	CommonName                      string     `json:"common_name"`
	SystematicName                  string     `json:"systematic_name"`
	Names                           []string   `json:"names"`
	DefaultForShorthand             bool       `json:"default_for_shorthand"`
	MolarMassGPerMol                float64    `json:"molar_mass_g_per_mol"`
	MethylEsterMolarMassGPerMol     float64    `json:"methyl_ester_molar_mass_g_per_mol"`
	TriacylglycerolMolarMassGPerMol float64    `json:"triacylglycerol_molar_mass_g_per_mol"`
}

// BondBody is one double bond.
type BondBody struct {
	Position int    `json:"position"`
	Geometry string `json:"geometry"`
}

func positive(n int) *int {
	if n <= 0 {
		return nil
	}
	return &n
}

// branchName is the contract's name of a branch, nil for a straight chain.
func branchName(b chem.Branch) *string {
	if b == chem.Unbranched {
		return nil
	}
	s := b.String()
	return &s
}

func fromAcid(a *chem.FattyAcid) FattyAcidBody {
	b := FattyAcidBody{
		ID:                              a.ID,
		Shorthand:                       a.Shorthand(),
		Carbons:                         a.Carbons,
		DoubleBonds:                     a.DoubleBondCount,
		Bonds:                           make([]BondBody, len(a.Bonds)),
		Class:                           a.Class().String(),
		Trans:                           a.HasTrans(),
		Conjugated:                      a.Conjugated(),
		OmegaPosition:                   positive(a.OmegaPosition()),
		OmegaFamily:                     positive(a.OmegaFamily()),
		HydroxyPosition:                 positive(a.HydroxyPosition),
		Branch:                          branchName(a.Branch),
		CommonName:                      a.CommonName,
		SystematicName:                  a.SystematicName,
		Names:                           append([]string{}, a.Names...),
		DefaultForShorthand:             a.Preferred,
		MolarMassGPerMol:                a.MolarMass(),
		MethylEsterMolarMassGPerMol:     a.MethylEsterMolarMass(),
		TriacylglycerolMolarMassGPerMol: a.SimpleTAGMolarMass(),
	}
	for i, bond := range a.Bonds {
		g := "cis"
		if bond.Geometry == chem.Trans {
			g = "trans"
		}
		b.Bonds[i] = BondBody{Position: bond.Position, Geometry: g}
	}
	return b
}

// handleFattyAcids serves the catalogue. The body never changes, so it is
// built once when the route is made.
func handleFattyAcids(cat *chem.Catalogue) echo.HandlerFunc {
	acids := cat.Acids()
	list := FattyAcidList{Count: len(acids), Acids: make([]FattyAcidBody, len(acids))}
	for i, a := range acids {
		list.Acids[i] = fromAcid(a)
	}
	return func(c echo.Context) error {
		return respond(c, http.StatusOK, list)
	}
}
