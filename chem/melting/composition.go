package melting

import (
	"math"

	"lipidsvc/chem"
)

// Distribution is how acids are placed on the glycerol positions.
type Distribution int

const (
	// Positional is the 1,3-random-2-random distribution (Vander Wal 1960;
	// Coleman 1961): sn-2 has its own composition b, sn-1 and sn-3 share
	// a = (3x − b)/2, and P(i,j,k) = a_i·b_j·a_k. It needs b_i ≤ 3·x_i.
	Positional Distribution = iota + 1
	// FullRandom places every acid on every position with its overall mole
	// fraction: P(i,j,k) = x_i·x_j·x_k. It fits chemically interesterified
	// fats and is a fair default for tallow (the melting package documentation).
	FullRandom
	// ExplicitTAGs marks a fat given as a list of TAG species
	// ([PrepareTAGs]) rather than built from a profile. It is not an option
	// of Options.Composition.
	ExplicitTAGs
)

// DefaultDistribution is [Positional]: natural vegetable fats are not
// randomly distributed, and the sn-2 rule can be chosen.
const DefaultDistribution = Positional

// String gives the API name: "sn13_random_sn2_random", "full_random".
func (d Distribution) String() string {
	switch d {
	case Positional:
		return "sn13_random_sn2_random"
	case FullRandom:
		return "full_random"
	case ExplicitTAGs:
		return "explicit_tags"
	default:
		return "unknown"
	}
}

// DefaultPoolFloorMoleFraction is the mole fraction below which species are
// pooled (see CompositionOptions.PoolFloorMoleFraction). At 1e-4 the pooled
// species of palm, palm kernel and coconut oil carry well under 3 % of the
// mass; pooling by melting point changes the slip melting point and clear point
// of the test fats by at most 0.25 K and their SFC by at most 0.3 points
// (TestPoolingChangesLittle), and it keeps a 20-acid curve fast.
const DefaultPoolFloorMoleFraction = 1e-4

// DefaultFamiliesPoolFloorMoleFraction is the pooling floor the
// SolidSolutionFamilies model uses when none is given. There species are
// pooled only within their own family, where species of nearly the same
// melting point enter the same ideal solid solution and behave almost as
// one: pooling 70 % of the mass of a 20-acid random fat this way moves its
// SFC by under 0.01 points and its slip and clear points by under 0.03 K
// against no pooling (TestPoolingChangesLittle checks the validation fats),
// while the solver works on a few hundred components instead of thousands.
const DefaultFamiliesPoolFloorMoleFraction = 0.01

// poolBinK is the width of the melting-point bins pooled species share.
const poolBinK = 2.0

// CompositionOptions choose how TAG species are built from a profile.
type CompositionOptions struct {
	// Distribution; zero means DefaultDistribution. Field "distribution".
	Distribution Distribution
	// SN2 is the sn-2 estimate for a Positional distribution; zero means
	// DefaultSN2Estimate. Field "sn2_estimate".
	SN2 SN2Estimate
	// SN2Profile is the sn-2 composition for SN2Supplied. Its acids must all
	// be in the main profile (matched by catalogue ID). Field "sn2_profile".
	SN2Profile *chem.Profile
	// EnrichmentFactors are the E_i for SN2Enrichment, one per component of
	// the main profile, finite and ≥ 0, at least one > 0. Field
	// "sn2_enrichment_factors".
	EnrichmentFactors []float64
	// PoolFloorMoleFraction: species with a smaller mole fraction are pooled
	// into pseudo-components that share a 2 K melting-point bin and a
	// solid-solution family (mole fractions summed, mass kept exactly,
	// melting point and enthalpy mole-averaged). Zero means
	// DefaultFamiliesPoolFloorMoleFraction for the SolidSolutionFamilies
	// model and DefaultPoolFloorMoleFraction for IdealSolidSolution; the
	// MultiplePureSolids model never pools. Field
	// "pool_floor_mole_fraction".
	PoolFloorMoleFraction float64
	// NoPooling keeps every species (slower for profiles with many acids).
	NoPooling bool
}

func (o CompositionOptions) withDefaults() CompositionOptions {
	if o.Distribution == 0 {
		o.Distribution = DefaultDistribution
	}
	if o.SN2 == 0 {
		o.SN2 = DefaultSN2Estimate
	}
	if o.PoolFloorMoleFraction == 0 {
		o.PoolFloorMoleFraction = DefaultPoolFloorMoleFraction
	}
	return o
}

// Species is one TAG species with the regio-isomers lumped: Outer1 and
// Outer2 stand for sn-1 and sn-3 in either order.
type Species struct {
	Outer1, Middle, Outer2 *chem.FattyAcid
	// MoleFraction among all TAG species.
	MoleFraction float64
	// MolarMass is 92.094 + Σ acids − 3 × 18.015 g/mol (glycerol plus the
	// three acids less the water of esterification; the melting package documentation).
	MolarMass float64
	// idx are the component indices of Outer1, Middle, Outer2.
	idx [3]int32
}

// Label is "16:0/18:1 c9/16:0": the catalogue IDs of sn-1/sn-2/sn-3, where
// sn-1 and sn-3 are interchangeable.
func (s Species) Label() string {
	return s.Outer1.ID + "/" + s.Middle.ID + "/" + s.Outer2.ID
}

// shortCodes are the one- and two-letter acid codes of the fats literature
// (P palmitic, O oleic, …); acids without one are written by their ID in
// brackets.
var shortCodes = map[string]string{
	"4:0": "Bu", "6:0": "Co", "8:0": "Cy", "10:0": "C", "12:0": "La", "14:0": "M",
	"16:0": "P", "16:1 c9": "Po", "18:0": "S", "18:1 c9": "O", "18:1 t9": "E",
	"18:2 c9,c12": "L", "18:3 c9,c12,c15": "Ln", "20:0": "A", "22:0": "B",
	"22:1 c13": "Er", "24:0": "Lg",
}

func shortCode(a *chem.FattyAcid) string {
	if c, ok := shortCodes[a.ID]; ok {
		return c
	}
	return "[" + a.ID + "]"
}

// ShortName is the trade shorthand, e.g. "POP", "LaLaM", with sn-1/sn-3 in
// the order stored.
func (s Species) ShortName() string {
	return shortCode(s.Outer1) + shortCode(s.Middle) + shortCode(s.Outer2)
}

// Composition is the TAG composition of a profile.
type Composition struct {
	// Acids are the profile's acids, in component order.
	Acids []*chem.FattyAcid
	// Total, SN2 and SN13 are the acids' mole fractions overall, at sn-2 and
	// at sn-1/3 (each sums to 1).
	Total, SN2, SN13 []float64
	// Species lists every species with a positive mole fraction, in a fixed
	// enumeration order (not sorted).
	Species []Species
	// Distribution and SN2Estimate are what was used; with the automatic
	// choice SN2Estimate is the rule it chose, SN2Chosen says so and
	// SN2Reason why. Class is the profile's FatClass.
	Distribution Distribution
	SN2Estimate  SN2Estimate
	SN2Chosen    bool
	SN2Reason    string
	Class        FatClass
	// Warnings records what the sn-2 step did or doubts: clipping of a
	// supplied sn-2 composition (WarnSN2Clipped), the seed-oil rule applied
	// to a palm-like fat (WarnSN2RuleQuestionable).
	Warnings []chem.Warning
}

// Warning codes of the melting package, in addition to chem's.
const (
	// WarnPooled: species below the mole-fraction floor were pooled.
	WarnPooled = "species_pooled"
	// WarnOutsideFit: some acids are outside the data the property
	// correlation was fitted to.
	WarnOutsideFit = "outside_property_fit"
	// WarnSN2Clipped: a supplied sn-2 composition exceeded 3·x_i slightly
	// and was clipped.
	WarnSN2Clipped = "sn2_clipped"
	// WarnSN2RuleQuestionable: the seed-oil sn-2 rule was applied to a fat
	// with as much palmitic acid as palm oil and its fractions (see
	// PalmLikePalmiticMoleFraction).
	WarnSN2RuleQuestionable = "sn2_rule_questionable"
	// WarnSlipUndefined: the SFC never reaches the slip threshold in the
	// searched range, so no slip melting point is reported.
	WarnSlipUndefined = "slip_point_undefined"
	// WarnLiquidOil: the slip melting point lies below LiquidOilSlipC, so
	// the fat is an oil, liquid at room temperature, for which a slip
	// melting point means little.
	WarnLiquidOil = "liquid_oil"
	// WarnCalibrationLimit: a calibrated parameter sits at its allowed limit.
	WarnCalibrationLimit = "calibration_at_limit"
)

// TAGComposition builds the TAG species of a profile. Errors are
// KindInvalid *chem.Error values with paths under "composition".
func TAGComposition(p *chem.Profile, opt CompositionOptions) (*Composition, error) {
	c, err := positionPools(p, opt)
	if err != nil {
		return nil, err
	}
	c.Species = c.materialize(enumerate(c.Acids, c.SN13, c.SN2))
	return c, nil
}

// positionPools fills everything of a Composition except Species.
func positionPools(p *chem.Profile, opt CompositionOptions) (*Composition, error) {
	if p == nil || len(p.Components) == 0 {
		return nil, chem.Errorf(chem.KindInvalid, "a fatty-acid profile is required").WithField("no acids", "profile", "acids")
	}
	opt = opt.withDefaults()
	c := &Composition{Distribution: opt.Distribution, Class: ClassOf(p)}
	if opt.Distribution == FullRandom {
		c.Class = ClassInteresterified
	}
	n := len(p.Components)
	c.Acids = make([]*chem.FattyAcid, n)
	c.Total = make([]float64, n)
	for i, comp := range p.Components {
		c.Acids[i] = comp.Acid
		c.Total[i] = comp.MoleFraction
	}
	switch opt.Distribution {
	case FullRandom:
		c.SN2 = c.Total
		c.SN13 = c.Total
	case Positional:
		if opt.SN2 == SN2Automatic {
			opt.SN2, c.SN2Reason = automaticSN2(c.Class)
			c.SN2Chosen = true
		}
		c.SN2Estimate = opt.SN2
		b, warn, err := sn2Composition(p, c.Total, opt)
		if err != nil {
			return nil, err
		}
		c.Warnings = append(c.Warnings, warn...)
		c.SN2 = b
		c.SN13 = make([]float64, n)
		var s float64
		for i := range c.SN13 {
			c.SN13[i] = math.Max(0, (3*c.Total[i]-b[i])/2)
			s += c.SN13[i]
		}
		for i := range c.SN13 {
			c.SN13[i] /= s
		}
	default:
		return nil, chem.Errorf(chem.KindInvalid, "unknown distribution").
			WithField("must be sn13_random_sn2_random or full_random", "distribution")
	}
	return c, nil
}

// tagSpecies is the compact, pointer-free form of a Species the solvers
// work with (cheap to allocate for thousands of species).
type tagSpecies struct {
	z, mass float64  // mole fraction, g/mol
	idx     [3]int32 // acid indices: outer, middle, outer
}

// materialize turns compact species into Species.
func (c *Composition) materialize(sp []tagSpecies) []Species {
	out := make([]Species, len(sp))
	for i, s := range sp {
		out[i] = c.species(s)
	}
	return out
}

func (c *Composition) species(s tagSpecies) Species {
	return Species{Outer1: c.Acids[s.idx[0]], Middle: c.Acids[s.idx[1]], Outer2: c.Acids[s.idx[2]],
		MoleFraction: s.z, MolarMass: s.mass, idx: s.idx}
}

// enumerate lists the lumped species: for outer acids i ≤ k and middle j,
// P = a_i·b_j·a_k, doubled when i ≠ k because sn-1/sn-3 are equivalent.
func enumerate(acids []*chem.FattyAcid, a, b []float64) []tagSpecies {
	n := len(acids)
	mass := make([]float64, n)
	for i, ac := range acids {
		mass[i] = ac.MolarMass()
	}
	out := make([]tagSpecies, 0, n*n*(n+1)/2)
	for i := 0; i < n; i++ {
		if a[i] == 0 {
			continue
		}
		for k := i; k < n; k++ {
			if a[k] == 0 {
				continue
			}
			outer := a[i] * a[k]
			if i != k {
				outer *= 2
			}
			for j := 0; j < n; j++ {
				if b[j] == 0 {
					continue
				}
				out = append(out, tagSpecies{
					z:    outer * b[j],
					mass: chem.GlycerolBackboneIncrement + mass[i] + mass[j] + mass[k],
					idx:  [3]int32{int32(i), int32(j), int32(k)},
				})
			}
		}
	}
	return out
}
