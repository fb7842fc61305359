package chem

import (
	"fmt"
	"math"
	"strings"
)

// Material is the chemical form the sample is in; it sets the denominators of
// the iodine and saponification values.
type Material int

const (
	// MaterialTAG is an oil or fat as triacylglycerols (the default).
	MaterialTAG Material = iota
	// MaterialFreeAcid is free fatty acids (a distillate, split acids).
	MaterialFreeAcid
	// MaterialMethylEster is fatty-acid methyl esters (biodiesel, FAME).
	MaterialMethylEster
)

// String names the material as the API does.
func (m Material) String() string {
	switch m {
	case MaterialFreeAcid:
		return "free_fatty_acids"
	case MaterialMethylEster:
		return "methyl_esters"
	default:
		return "triacylglycerols"
	}
}

// aocsAcid is one acid the calculated-iodine-value method counts, with its
// printed factors [AOCS Recommended Practice Cd 1c-85]. Each triacylglycerol
// factor is the iodine value of the pure simple TAG divided by 100, each
// free-acid factor that of the free acid; the tests recompute both.
type aocsAcid struct {
	carbons, d    int
	tag, freeAcid float64
}

// AOCSScopeIodineValue is how much of the exact iodine value (g I2/100 g)
// the acids AOCS Cd 1c-85 does not count may carry before its value is no
// longer reported as applicable. The method is written for the common
// vegetable oils, whose other unsaturated acids (20:2, 24:1, …) carry a few
// tenths of a unit; a fish oil's C20 and C22 polyenes carry a hundred and
// more. One unit, the resolution certificates print the value to, is our
// limit (common practice, no source).
const AOCSScopeIodineValue = 1.0

var aocsCd1c85 = []aocsAcid{
	{16, 1, 0.950, 0.9976},
	{18, 1, 0.860, 0.8986},
	{18, 2, 1.732, 1.810},
	{18, 3, 2.616, 2.735},
	{20, 1, 0.785, 0.8175},
	{22, 1, 0.723, 0.7497},
}

// AOCSFactor returns the Cd 1c-85 factor for an acid in the given material,
// and false when the method does not count the acid (another chain, a
// hydroxy acid) or defines no factors for the material (methyl esters).
func AOCSFactor(a *FattyAcid, m Material) (float64, bool) {
	if m == MaterialMethylEster || a.HydroxyPosition > 0 {
		return 0, false
	}
	for _, f := range aocsCd1c85 {
		if f.carbons == a.Carbons && f.d == a.DoubleBondCount {
			if m == MaterialFreeAcid {
				return f.freeAcid, true
			}
			return f.tag, true
		}
	}
	return 0, false
}

// AcidResult is one acid's line in the properties.
type AcidResult struct {
	Acid *FattyAcid
	// Percent is the normalised share in the profile's basis.
	Percent float64
	// MolePercent is the share of chains.
	MolePercent float64
	// FAMEWeightPercent is the share as methyl-ester weight (the basis of
	// AOCS Cd 1c-85).
	FAMEWeightPercent float64
	// IodineValue is the acid's contribution to the exact iodine value.
	IodineValue float64
	// IodineValueAOCS is its contribution to the AOCS Cd 1c-85 value; zero
	// when the method does not count it.
	IodineValueAOCS float64
	// CountedByAOCS reports whether the method counts this acid.
	CountedByAOCS bool
}

// Sums are the composition sums, in % of identified acids on the profile's
// basis. Mono, poly and trans follow the labelling definitions of
// Regulation (EU) No 1169/2011, Annex I: monounsaturates have one cis double
// bond; polyunsaturates two or more cis, cis methylene-interrupted double
// bonds; trans fat at least one non-conjugated trans double bond. What fits
// none of these (conjugated acids without a non-conjugated trans bond) is
// OtherUnsaturated, so that the five add to 100.
type Sums struct {
	Saturated, Monounsaturated, Polyunsaturated, Trans, OtherUnsaturated float64
	// N3, N6, N9 sum all-cis, methylene-interrupted acids of each family.
	N3, N6, N9 float64
	// N6ToN3 and PToS are ratios; nil when the denominator is zero.
	N6ToN3, PToS *float64
}

// Indices are nutritional and stability indices, each nil when its
// denominator is zero.
type Indices struct {
	// Cox is the calculated oxidizability [Fatemi & Hammond, Lipids 15:379
	// (1980)]: (18:1 + 10.3 × 18:2 + 21.6 × 18:3)/100 over cis C18 acids.
	Cox float64
	// CoxOutsidePercent is the share of the identified acids (profile
	// basis) that are polyunsaturated but outside Cox's definition: C20
	// and C22 polyenes, C16 polyenes, trans and conjugated dienes. Cox
	// leaves them out, so it understates the oxidizability of a fat that
	// has them; above CoxScopePercent a warning says so.
	CoxOutsidePercent float64
	// AllylicPositionEquivalent and BisAllylicPositionEquivalent are
	// Knothe's structure indices [JAOCS 79:847 (2002)]: Σ share × the number
	// of allylic (or bis-allylic) CH2 positions of the chain. Unlike Cox
	// they count every unsaturated acid — fish-oil polyenes included — and
	// the bis-allylic count is what autoxidation rates follow (linoleate 1,
	// linolenate 2, EPA 4, DHA 5).
	AllylicPositionEquivalent, BisAllylicPositionEquivalent float64
	// Atherogenic is Ulbricht & Southgate's index, Lancet 338:985 (1991):
	// (12:0 + 4×14:0 + 16:0)/(MUFA + n-6 + n-3).
	Atherogenic *float64
	// Thrombogenic is their (14:0 + 16:0 + 18:0)/(0.5 MUFA + 0.5 n-6 +
	// 3 n-3 + n-3/n-6), with the last term as originally published; it is
	// dropped, with a warning, when there is no n-6.
	Thrombogenic *float64
}

// Properties are the certificate values calculated from a profile.
type Properties struct {
	Material Material
	Basis    Basis
	// IodineValue is the exact (stoichiometric) iodine value, g I2/100 g.
	IodineValue float64
	// IodineValueAOCS is the AOCS Cd 1c-85 calculated iodine value; valid
	// only when AOCSApplies. AOCSFactorSet names the factors used
	// ("triacylglycerol" or "free_fatty_acid"), and AOCSNote says what the
	// figure is or why there is none.
	IodineValueAOCS float64
	AOCSApplies     bool
	AOCSFactorSet   string
	AOCSNote        string
	// SaponificationValue is exact, mg KOH/g.
	SaponificationValue float64
	// Mean molar masses, g/mol: free acid, methyl ester, and the material
	// itself (TAG for oils).
	MeanAcidMolarMass, MeanMethylEsterMolarMass, MeanTAGMolarMass float64
	MeanDoubleBondsPerChain                                       float64
	UnidentifiedPercent                                           float64
	Sums                                                          Sums
	Indices                                                       Indices
	Acids                                                         []AcidResult
	// IodineValueCheck and SaponificationValueCheck compare the request's
	// measured values with the exact calculated ones; nil when none was
	// sent.
	IodineValueCheck, SaponificationValueCheck *Check
	// Nutrition holds the label figures when the request asked for them.
	Nutrition *Nutrition
	Warnings  []Warning
}

// CoxScopePercent is the share of polyunsaturated acids outside Cox's
// definition above which the index earns a scope warning (our choice,
// common practice, no source: a seed oil carries a few tenths of a percent
// of them).
const CoxScopePercent = 1.0

// materialMolarMass is the mean molar mass of what one mole of chains is
// carried in, per chain: a third of the mean TAG, the acid, or the ester.
func materialMassPerChain(p *Profile, m Material) float64 {
	mfa := p.MeanAcidMolarMass()
	switch m {
	case MaterialFreeAcid:
		return mfa
	case MaterialMethylEster:
		return mfa + MolarMassCH2
	default:
		return mfa + GlycerolBackboneIncrement/3
	}
}

// IodineValue is the exact iodine value of the profile in the given
// material: 100 × M(I2) × mol C=C per gram.
func IodineValue(p *Profile, m Material) float64 {
	return 100 * MolarMassI2 * p.MeanDoubleBonds() / materialMassPerChain(p, m)
}

// SaponificationValue is the exact saponification value, mg KOH per g: one
// KOH per ester or acid group [the basis of AOCS Cd 3a-94 and ISO 3657
// Annex B: SV from the mean molar mass].
func SaponificationValue(p *Profile, m Material) float64 {
	return 1000 * MolarMassKOH / materialMassPerChain(p, m)
}

// ParseMaterial reads a material by its contract name; "" is the default,
// MaterialTAG.
func ParseMaterial(s string) (Material, bool) {
	switch s {
	case "", "triacylglycerols":
		return MaterialTAG, true
	case "free_fatty_acids":
		return MaterialFreeAcid, true
	case "methyl_esters":
		return MaterialMethylEster, true
	}
	return 0, false
}

// PropertiesInput is a request for the certificate values of one profile,
// in the request's shape. Paths in errors and warnings: "profile", …
// (see [ProfileInput]) and "material".
type PropertiesInput struct {
	// Profile is the sample's fatty-acid profile; required.
	Profile *ProfileInput
	// Material names the chemical form of the sample: "triacylglycerols"
	// (also ""), "free_fatty_acids" or "methyl_esters". See [Material].
	Material string
	// Measured holds laboratory values to check the calculation against;
	// optional. Paths: "measured", "iodine_value", ….
	Measured *MeasuredInput
	// Nutrition asks for the nutrition-label figures; optional. Paths:
	// "nutrition", "food_class", ….
	Nutrition *NutritionInput
}

// MeasuredInput is a sample's measured iodine and saponification values
// (Wijs, AOCS Cd 1d-92 / ISO 3961; AOCS Cd 3-25 / ISO 3657), each optional,
// with the difference from the calculated value the laboratory accepts
// (nil for the defaults).
type MeasuredInput struct {
	IodineValue                  *float64
	SaponificationValue          *float64
	IodineValueTolerance         *float64
	SaponificationValueTolerance *float64
}

// Default agreement between a measured value and the one calculated from
// the composition: our choice, common practice, no source: a few units of
// iodine value and of saponification value cover the methods'
// reproducibility and the GC's response factors for a sound sample; a
// larger difference points at a misidentified peak, an unusual sample, or a
// mix-up of samples.
const (
	DefaultIodineValueTolerance         = 3.0
	DefaultSaponificationValueTolerance = 4.0
)

// WarnMeasuredDisagrees: a measured value differs from the calculated one
// by more than its tolerance.
const WarnMeasuredDisagrees = "measured_disagrees"

// Check is a measured value against the calculated one.
type Check struct {
	Measured, Calculated, Difference, Tolerance float64
	// Agrees reports |Difference| <= Tolerance.
	Agrees bool
}

// ComputeProperties reads the profile of in and calculates its certificate
// values. Errors are *Error values whose paths point into in: KindMalformed
// for a missing profile or an unknown material or basis, KindInvalid for a
// profile that breaks a rule of [NewProfile].
func ComputeProperties(cat *Catalogue, in PropertiesInput) (Properties, error) {
	m, ok := ParseMaterial(in.Material)
	if !ok {
		return Properties{}, Errorf(KindMalformed, "unknown material").
			WithField("must be triacylglycerols, free_fatty_acids or methyl_esters", "material")
	}
	p, err := cat.ReadProfileAt(in.Profile, "profile")
	if err != nil {
		return Properties{}, err
	}
	out := PropertiesOf(p, m)
	if mi := in.Measured; mi != nil {
		var bad FieldErrors
		tolerance := func(v *float64, def float64, field string) float64 {
			if v == nil {
				return def
			}
			if math.IsNaN(*v) || *v < 0 {
				bad.Invalid("must be a number >= 0", "measured", field)
			}
			return *v
		}
		ivTol := tolerance(mi.IodineValueTolerance, DefaultIodineValueTolerance, "iodine_value_tolerance")
		svTol := tolerance(mi.SaponificationValueTolerance, DefaultSaponificationValueTolerance, "saponification_value_tolerance")
		if err := bad.Err(""); err != nil {
			return Properties{}, err
		}
		if mi.IodineValue != nil {
			out.IodineValueCheck = CompareMeasured(*mi.IodineValue, out.IodineValue, ivTol)
			out.Warnings = out.IodineValueCheck.AppendWarning(out.Warnings, "iodine value", "g I2/100 g", "measured", "iodine_value")
		}
		if mi.SaponificationValue != nil {
			out.SaponificationValueCheck = CompareMeasured(*mi.SaponificationValue, out.SaponificationValue, svTol)
			out.Warnings = out.SaponificationValueCheck.AppendWarning(out.Warnings, "saponification value", "mg KOH/g", "measured", "saponification_value")
		}
	}
	if in.Nutrition != nil {
		n, err := NutritionOf(p, m, *in.Nutrition)
		if err != nil {
			return Properties{}, PrefixError(err, "nutrition")
		}
		for _, w := range n.Warnings {
			w.Path = append([]any{"nutrition"}, w.Path...)
			out.Warnings = append(out.Warnings, w)
		}
		n.Warnings = nil
		out.Nutrition = &n
	}
	return out, nil
}

// CompareMeasured checks a measured value against the calculated one with
// a tolerance.
func CompareMeasured(measured, calculated, tol float64) *Check {
	d := measured - calculated
	return &Check{Measured: measured, Calculated: calculated, Difference: d, Tolerance: tol, Agrees: math.Abs(d) <= tol}
}

// AppendWarning appends a WarnMeasuredDisagrees warning to w when c does
// not agree; what names the value ("iodine value"), unit its unit, path
// the measured field.
func (c *Check) AppendWarning(w []Warning, what, unit string, path ...any) []Warning {
	if c.Agrees {
		return w
	}
	return append(w, Warning{WarnMeasuredDisagrees, fmt.Sprintf(
		"the measured %s %.4g differs from the one calculated from the composition, %.4g, by %.3g %s (tolerance %.3g): "+
			"check the peak identification, the sample and the units", what, c.Measured, c.Calculated, c.Difference, unit, c.Tolerance),
		path})
}

// PropertiesOf calculates the certificate values of a profile already read.
// Its warnings are the profile's (with their paths) and the calculation's.
func PropertiesOf(p *Profile, m Material) Properties {
	out := Properties{
		Material:                m,
		Basis:                   p.Basis,
		IodineValue:             IodineValue(p, m),
		SaponificationValue:     SaponificationValue(p, m),
		MeanAcidMolarMass:       p.MeanAcidMolarMass(),
		MeanDoubleBondsPerChain: p.MeanDoubleBonds(),
		UnidentifiedPercent:     p.UnidentifiedPercent,
		AOCSApplies:             m != MaterialMethylEster,
		Acids:                   make([]AcidResult, len(p.Components)),
		Warnings:                append([]Warning(nil), p.Warnings...),
	}
	out.MeanMethylEsterMolarMass = out.MeanAcidMolarMass + MolarMassCH2
	out.MeanTAGMolarMass = 3*out.MeanAcidMolarMass + GlycerolBackboneIncrement

	perChain := materialMassPerChain(p, m)
	fame := p.InBasis(BasisFAMEWeight)
	var ignored []string
	var ignoredIV float64 // exact iodine value of the acids the method does not count
	for i, c := range p.Components {
		r := AcidResult{
			Acid:              c.Acid,
			Percent:           c.Percent,
			MolePercent:       100 * c.MoleFraction,
			FAMEWeightPercent: fame[i],
			IodineValue:       100 * MolarMassI2 * c.MoleFraction * float64(c.Acid.DoubleBondCount) / perChain,
		}
		if f, ok := AOCSFactor(c.Acid, m); ok {
			r.CountedByAOCS = true
			r.IodineValueAOCS = fame[i] * f
			out.IodineValueAOCS += r.IodineValueAOCS
		} else if c.Acid.DoubleBondCount > 0 && c.Percent > 0 && out.AOCSApplies {
			ignored = append(ignored, fmt.Sprintf("%s (%.3g %% as FAME weight)", c.Acid.ID, fame[i]))
			ignoredIV += r.IodineValue
		}
		out.Acids[i] = r
	}
	outOfScope := out.AOCSApplies && ignoredIV > AOCSScopeIodineValue
	if outOfScope {
		out.AOCSApplies = false
	}
	if out.AOCSApplies {
		out.AOCSFactorSet = "triacylglycerol"
		if m == MaterialFreeAcid {
			out.AOCSFactorSet = "free_fatty_acid"
		}
		out.AOCSNote = "AOCS Cd 1c-85 with its " + out.AOCSFactorSet +
			" factors over 16:1, 18:1, 18:2, 18:3, 20:1 and 22:1 (FAME weight %)"
	} else if outOfScope {
		out.AOCSNote = fmt.Sprintf("outside the scope of AOCS Cd 1c-85: acids it does not count carry %.1f of the exact "+
			"iodine value %.1f (more than %g); use iodine_value", ignoredIV, out.IodineValue, AOCSScopeIodineValue)
	} else {
		out.AOCSNote = "AOCS Cd 1c-85 defines no factors for methyl esters; use iodine_value"
	}
	switch {
	case outOfScope:
		out.Warnings = append(out.Warnings, Warning{WarnMethodScope,
			fmt.Sprintf("AOCS Cd 1c-85 counts only 16:1, 18:1, 18:2, 18:3, 20:1 and 22:1; here %s, which it ignores, carry "+
				"%.1f g I2/100 g of the exact iodine value %.1f, so no calculated value is given (applies false): use iodine_value",
				strings.Join(ignored, ", "), ignoredIV, out.IodineValue), nil})
	case !out.AOCSApplies:
		out.Warnings = append(out.Warnings, Warning{WarnMethodScope,
			"AOCS Cd 1c-85 defines factors for triacylglycerols and free fatty acids only; no calculated value is given for methyl esters", nil})
	case len(ignored) > 0:
		out.Warnings = append(out.Warnings, Warning{WarnMethodScope,
			fmt.Sprintf("AOCS Cd 1c-85 counts only 16:1, 18:1, 18:2, 18:3, 20:1 and 22:1; it ignores %s, which the exact iodine value includes",
				strings.Join(ignored, ", ")), nil})
	}
	if out.AOCSApplies && p.Basis != BasisFAMEWeight {
		out.Warnings = append(out.Warnings, Warning{WarnBasisConversion,
			"the profile was converted to FAME weight % for AOCS Cd 1c-85, whose factors apply to that basis", nil})
	}
	out.Sums = SumsOf(p)
	out.Indices, out.Warnings = computeIndices(p, out.Sums, out.Warnings)
	return out
}
