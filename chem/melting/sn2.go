package melting

import (
	"fmt"
	"math"
	"strings"

	"lipidsvc/chem"
)

// SN2Estimate is where the sn-2 composition of a [Positional] distribution
// comes from.
type SN2Estimate int

const (
	// SN2SeedOil is the seed-oil rule (the melting package documentation): saturated acids and C20+
	// acids stay out of sn-2; the unsaturated C18 acids fill it in
	// proportion to their amounts; if they are less than a third of all
	// chains they all go to sn-2 and the other acids fill the rest in
	// proportion to their amounts.
	SN2SeedOil SN2Estimate = iota + 1
	// SN2Palm is our palm rule: as the seed-oil rule, but saturated and C20+
	// acids compete for sn-2 with a selectivity of [PalmSN2Selectivity]
	// relative to the unsaturated acids of C18 and shorter. See
	// PalmSN2Selectivity for its calibration.
	SN2Palm
	// SN2Supplied takes the sn-2 composition from CompositionOptions.SN2Profile:
	// a measured pancreatic-lipase analysis, or the sn-2 pool of a hardening
	// forecast that hardened the sn-2 and sn-1,3 pools separately.
	SN2Supplied
	// SN2Enrichment uses caller-given enrichment factors E_i
	// (CompositionOptions.EnrichmentFactors, aligned with the profile's
	// components): b_i ∝ E_i·x_i, no acid above 3·x_i, acids with E_i = 0
	// filling any remainder in proportion to x_i.
	SN2Enrichment
	// SN2Lauric is the lauric rule: the unsaturated acids take sn-2 first,
	// lauric acid fills what they leave, and the other saturated acids only
	// what is left after that. Pancreatic-lipase analyses found the saturated
	// acids of vegetable fats exclusively at the outer positions except
	// lauric acid in coconut oil, and the unsaturated acids predominantly at
	// sn-2 [pub: Agric. Biol. Chem. 28(4):201, 1964, abstract]. No published
	// sn-2 composition of a lauric oil was available to us, so the rule is
	// the ordering that statement gives, not a fitted distribution: for a
	// coconut oil it puts about half the lauric acid at sn-2.
	SN2Lauric
	// SN2Lard is the rule for pig fat: each acid's share of its chains at
	// sn-2 as stereospecific analyses of lard report it (see [LardSN2]).
	SN2Lard
	// SN2Tallow is the rule for beef and mutton fat, likewise ([TallowSN2]).
	SN2Tallow
	// SN2MilkFat is the rule for milk fat, likewise ([MilkFatSN2]).
	SN2MilkFat
	// SN2Hardened is the rule for hardened oils: the sn-2 position holds the
	// C18 chains, whatever hardening made of them. A seed-oil feed carries
	// its unsaturated C18 acids at sn-2 (the seed-oil rule), and hardening
	// barely moves acids between positions [pub: J. Japan Oil Chem. Soc.
	// 20:10 (1971)], so the stearic and trans acids it forms at sn-2 stay
	// there — which the seed-oil rule, applied to the product, would move
	// out. (The feed's own stearic acid, at sn-1,3, is counted in with them;
	// about 4 % of the chains of a soybean oil.)
	SN2Hardened
	// SN2Automatic chooses the estimate from the composition: the rule of
	// the fat's [FatClass] (see automaticSN2). The chosen rule and the
	// reason are reported.
	SN2Automatic
)

// DefaultSN2Estimate is [SN2Automatic]: the rule is chosen from the
// composition, and named in the answer.
const DefaultSN2Estimate = SN2Automatic

// Published positional distributions, as sn-2 enrichment factors E = 3·D₂,
// where D₂ is the fraction of an acid's chains found at sn-2 (E = 1 is a
// random distribution). The rule gives b_i ∝ E_i·x_i, capped at 3·x_i
// (waterFill), so it carries the measured tendencies over to a sample of
// another composition.

// LardSN2 is the sn-2 enrichment factor of an acid in pig fat, from the
// positional distribution of lard [pub: Michalski M.C. et al., Prog. Lipid
// Res. 52:354 (2013), Table 1, a compilation: of each acid's chains at sn-2,
// palmitic 61 %, stearic 8 %, oleic 13 %, linoleic 26 %]. Assignments of
// ours for the minor acids: myristic and shorter saturated acids as
// palmitic (lard's myristic acid is also enriched at sn-2: sn-1 1 %, sn-2
// 4 % of the chains, Ong A.S.H. & Goh S.H., Food Nutr. Bull. 23(1):11,
// 2002, Table 2), C20 and longer saturated acids as stearic, other
// monoenes as oleic, trienes and longer polyenes as linoleic.
func LardSN2(a *chem.FattyAcid) float64 {
	return positional(a, lardFactors)
}

// TallowSN2 is the sn-2 enrichment factor of an acid in beef or mutton
// fat [pub: Michalski et al. 2013, Table 1: of each acid's chains at sn-2,
// palmitic 21 %, stearic 18 %, oleic 42 %, linoleic 36 %]; minor acids are
// assigned as for LardSN2.
func TallowSN2(a *chem.FattyAcid) float64 {
	return positional(a, tallowFactors)
}

// MilkFatSN2 is the sn-2 enrichment factor of an acid in milk fat, from a
// stereospecific analysis of bovine milk fat [pub: Ong & Goh 2002, Table 2,
// mol % at sn-1/sn-2/sn-3: 4:0 5/2.9/43.3, 6:0 3.0/4.8/10.8, 8:0
// 0.9/2.3/2.2, 10:0 2.5/6.1/3.6, 12:0 3.1/6.0/3.5, 14:0 10.5/20.4/7.1,
// 16:0 35.9/32.8/10.1, 18:0 14.7/6.4/4.0, 18:1 20.6/13.7/14.9, 18:2
// 1.2/2.5/0.5], E = 3·sn2/(sn1 + sn2 + sn3). Odd saturated chains take the
// factor of the even chain below them, trans and other monoenes the
// oleic factor, trienes the linoleic one, C20 and longer saturated acids
// the stearic one (ours).
func MilkFatSN2(a *chem.FattyAcid) float64 {
	return positional(a, milkFatFactors)
}

// positionalFactors are enrichment factors by chain group.
type positionalFactors struct {
	saturated map[int]float64 // by carbon number; missing ones take the nearest shorter entry
	monoene   float64
	polyene   float64
}

var (
	lardFactors = positionalFactors{
		saturated: map[int]float64{4: 1.83, 16: 1.83, 18: 0.24},
		monoene:   0.39, polyene: 0.78,
	}
	tallowFactors = positionalFactors{
		saturated: map[int]float64{4: 0.63, 16: 0.63, 18: 0.54},
		monoene:   1.26, polyene: 1.08,
	}
	milkFatFactors = positionalFactors{
		saturated: map[int]float64{
			4: milkE(5, 2.9, 43.3), 6: milkE(3.0, 4.8, 10.8), 8: milkE(0.9, 2.3, 2.2), 10: milkE(2.5, 6.1, 3.6),
			12: milkE(3.1, 6.0, 3.5), 14: milkE(10.5, 20.4, 7.1), 16: milkE(35.9, 32.8, 10.1), 18: milkE(14.7, 6.4, 4.0),
		},
		monoene: milkE(20.6, 13.7, 14.9), polyene: milkE(1.2, 2.5, 0.5),
	}
)

// milkE is the enrichment factor of an acid from its mol % at the three
// positions.
func milkE(sn1, sn2, sn3 float64) float64 { return 3 * sn2 / (sn1 + sn2 + sn3) }

func positional(a *chem.FattyAcid, f positionalFactors) float64 {
	switch {
	case a.DoubleBondCount == 1:
		return f.monoene
	case a.DoubleBondCount > 1:
		return f.polyene
	}
	best, e := -1, 1.0
	for c, v := range f.saturated {
		if c <= a.Carbons && c > best {
			best, e = c, v
		}
	}
	return e
}

// String gives the API name.
func (e SN2Estimate) String() string {
	switch e {
	case SN2SeedOil:
		return "seed_oil_rule"
	case SN2Palm:
		return "palm_rule"
	case SN2Supplied:
		return "supplied"
	case SN2Enrichment:
		return "enrichment_factors"
	case SN2Lauric:
		return "lauric_rule"
	case SN2Lard:
		return "lard_rule"
	case SN2Tallow:
		return "tallow_rule"
	case SN2MilkFat:
		return "milk_fat_rule"
	case SN2Hardened:
		return "hardened_rule"
	case SN2Automatic:
		return "automatic"
	default:
		return "unknown"
	}
}

// PalmLikePalmiticMoleFraction is the palmitic acid share (mole fraction of
// the chains) from which the seed-oil rule warns that the fat looks like
// palm oil or one of its fractions. Our choice between the two groups:
// Codex CXS 210 puts palm oil at 39.3–47.5 % palmitic acid;
// the palm olein reference material has 39.66 % (Tarmizi, Siew & Kuntom,
// J. Oleo Sci. 57:275, 2008, abstract); the seed oils of the same standard
// stay below about 27 % (cottonseed, the highest) [memory].
const PalmLikePalmiticMoleFraction = 0.35

// PalmSN2Selectivity is the sn-2 selectivity of saturated and C20+ acids
// relative to unsaturated acids of C18 and shorter in the palm rule. With it
// a palm oil of about 50 % saturated acids carries about 13 % saturated acids
// at sn-2, as reported for palm oil (sn-2: 16:0 11 %, 18:0 2 %, 18:1 65 %,
// 18:2 22 %) [Ong A.S.H. & Goh S.H., Food Nutr. Bull. 23(1):11 (2002),
// Table 2]; 10–13 % palmitic acid at sn-2 is the figure commonly recalled [memory].
// TestPalmRuleReproducesPublishedSN2 checks the calibration.
const PalmSN2Selectivity = 0.14

// maxSN2Overshoot is how far (mole fraction) a supplied sn-2 composition may
// exceed 3·x_i before it is rejected rather than clipped.
const maxSN2Overshoot = 0.01

// sn2Composition returns the sn-2 mole fractions b for a Positional
// distribution.
func sn2Composition(p *chem.Profile, x []float64, opt CompositionOptions) ([]float64, []chem.Warning, error) {
	n := len(x)
	weight := make([]float64, n)
	switch opt.SN2 {
	case SN2SeedOil:
		var palmitic float64
		for i, comp := range p.Components {
			a := comp.Acid
			if a.DoubleBondCount > 0 && a.Carbons == 18 {
				weight[i] = 1
			}
			if a.DoubleBondCount == 0 && a.Carbons == 16 && a.HydroxyPosition == 0 {
				palmitic += x[i]
			}
		}
		var warn []chem.Warning
		if palmitic >= PalmLikePalmiticMoleFraction {
			warn = append(warn, chem.Warning{Code: WarnSN2RuleQuestionable, Message: fmt.Sprintf(
				"the seed-oil sn-2 rule keeps palmitic acid out of sn-2, but this fat has %.1f mol %% palmitic acid, "+
					"as palm oil and its fractions do, which carry some at sn-2; for them use sn2_estimate palm_rule "+
					"or a measured sn2_profile (with the seed-oil rule a palm oil's slip melting point comes out "+
					"about 13 K low)", 100*palmitic),
				Path: []any{"sn2_estimate"}})
		}
		return waterFill(x, weight), warn, nil
	case SN2Palm:
		for i, comp := range p.Components {
			a := comp.Acid
			if a.DoubleBondCount > 0 && a.Carbons <= 18 {
				weight[i] = 1
			} else {
				weight[i] = PalmSN2Selectivity
			}
		}
		return waterFill(x, weight), nil, nil
	case SN2Enrichment:
		if len(opt.EnrichmentFactors) != n {
			return nil, nil, chem.Errorf(chem.KindInvalid, "enrichment factors must match the profile's acids").
				WithField(fmt.Sprintf("%d factors for %d acids", len(opt.EnrichmentFactors), n), "sn2_enrichment_factors")
		}
		var bad chem.FieldErrors
		anyPositive := false
		for i, e := range opt.EnrichmentFactors {
			if math.IsNaN(e) || math.IsInf(e, 0) || e < 0 {
				bad.Invalid("must be a finite number >= 0", "sn2_enrichment_factors", i)
			}
			if e > 0 {
				anyPositive = true
			}
		}
		if err := bad.Err("enrichment factors must be finite and non-negative"); err != nil {
			return nil, nil, err
		}
		if !anyPositive {
			return nil, nil, chem.Errorf(chem.KindInvalid, "at least one enrichment factor must be positive").
				WithField("all factors are zero", "sn2_enrichment_factors")
		}
		copy(weight, opt.EnrichmentFactors)
		return waterFill(x, weight), nil, nil
	case SN2Lauric:
		return priorityFill(x, func(i int) int {
			a := p.Components[i].Acid
			switch {
			case a.DoubleBondCount > 0:
				return 0
			case a.Carbons == 12:
				return 1
			}
			return 2
		}), nil, nil
	case SN2Lard, SN2Tallow, SN2MilkFat:
		rule := map[SN2Estimate]func(*chem.FattyAcid) float64{SN2Lard: LardSN2, SN2Tallow: TallowSN2, SN2MilkFat: MilkFatSN2}[opt.SN2]
		for i, comp := range p.Components {
			weight[i] = rule(comp.Acid)
		}
		return waterFill(x, weight), nil, nil
	case SN2Hardened:
		for i, comp := range p.Components {
			if comp.Acid.Carbons == 18 && comp.Acid.HydroxyPosition == 0 {
				weight[i] = 1
			}
		}
		return waterFill(x, weight), nil, nil
	case SN2Supplied:
		return suppliedSN2(p, x, opt.SN2Profile)
	default:
		return nil, nil, chem.Errorf(chem.KindInvalid, "unknown sn-2 estimate").
			WithField("must be seed_oil_rule, palm_rule, supplied or enrichment_factors", "sn2_estimate")
	}
}

// priorityFill fills sn-2 rank by rank (rank 0 first): the acids of a rank
// share what is left in proportion to their amounts, each capped at 3·x_i
// (all its chains at sn-2).
func priorityFill(x []float64, rank func(i int) int) []float64 {
	n := len(x)
	b := make([]float64, n)
	remaining := 1.0
	for r := 0; remaining > 1e-15; r++ {
		var total float64
		more := false
		for i := 0; i < n; i++ {
			switch k := rank(i); {
			case k == r:
				total += x[i]
			case k > r:
				more = true
			}
		}
		if total > 0 {
			share := math.Min(remaining/(3*total), 1)
			for i := 0; i < n; i++ {
				if rank(i) == r {
					b[i] = 3 * x[i] * share
				}
			}
			remaining -= 3 * total * share
		}
		if !more {
			break
		}
	}
	return b
}

// waterFill distributes the sn-2 position: first among acids with positive
// weight, b_i ∝ weight_i·x_i, capping each at 3·x_i (an acid cannot occupy
// more sn-2 places than it has chains) and sharing the excess among the
// uncapped ones; any remainder goes to the zero-weight acids in proportion
// to x_i, with the same cap.
func waterFill(x, weight []float64) []float64 {
	n := len(x)
	b := make([]float64, n)
	fixed := make([]bool, n)
	remaining := 1.0
	for tier := 0; tier < 2 && remaining > 1e-15; tier++ {
		for {
			var total float64
			for i := 0; i < n; i++ {
				if !fixed[i] && tierWeight(tier, weight[i], x[i]) > 0 {
					total += tierWeight(tier, weight[i], x[i])
				}
			}
			if total == 0 {
				break
			}
			capped := false
			for i := 0; i < n; i++ {
				w := tierWeight(tier, weight[i], x[i])
				if fixed[i] || w == 0 {
					continue
				}
				if remaining*w/total > 3*x[i] {
					b[i] = 3 * x[i]
					fixed[i] = true
					remaining -= b[i]
					capped = true
				}
			}
			if capped {
				continue
			}
			for i := 0; i < n; i++ {
				w := tierWeight(tier, weight[i], x[i])
				if !fixed[i] && w > 0 {
					b[i] = remaining * w / total
					fixed[i] = true
				}
			}
			remaining = 0
			break
		}
	}
	return b
}

// tierWeight is the filling weight of an acid in tier 0 (positive-weight
// acids) or tier 1 (the rest).
func tierWeight(tier int, w, x float64) float64 {
	if tier == 0 {
		return w * x
	}
	if w > 0 {
		return 0 // already served in tier 0
	}
	return x
}

func suppliedSN2(p *chem.Profile, x []float64, sn2 *chem.Profile) ([]float64, []chem.Warning, error) {
	if sn2 == nil || len(sn2.Components) == 0 {
		return nil, nil, chem.Errorf(chem.KindInvalid, "the supplied sn-2 estimate needs an sn-2 composition").
			WithField("required when sn2_estimate is supplied", "sn2_profile")
	}
	// Acids are matched by canonical ID, so profiles read through different
	// catalogue instances still match.
	index := make(map[string]int, len(p.Components))
	for i, c := range p.Components {
		index[c.Acid.ID] = i
	}
	b := make([]float64, len(x))
	var bad chem.FieldErrors
	for k, c := range sn2.Components {
		i, ok := index[c.Acid.ID]
		if !ok {
			if c.MoleFraction > 0 {
				bad.Invalid(c.Acid.ID+" is at sn-2 but not in the profile", "sn2_profile", "acids", k)
			}
			continue
		}
		b[i] += c.MoleFraction
	}
	var warn []chem.Warning
	var clipped []string
	for i := range b {
		over := b[i] - 3*x[i]
		switch {
		case over > maxSN2Overshoot:
			bad.Invalid(fmt.Sprintf("%s is %.4g mole fraction at sn-2 but at most 3 × %.4g = %.4g is possible",
				p.Components[i].Acid.ID, b[i], x[i], 3*x[i]), "sn2_profile")
		case over > 0:
			b[i] = 3 * x[i]
			clipped = append(clipped, p.Components[i].Acid.ID)
		}
	}
	if err := bad.Err(""); err != nil {
		return nil, nil, err
	}
	if len(clipped) > 0 {
		// Share the clipped excess among the other sn-2 acids in
		// proportion to their supplied shares, again capped at 3·x_i:
		// waterFill with weights b_i/x_i does exactly that (rescaling all of
		// b would push the clipped acids back over their limit).
		weight := make([]float64, len(b))
		for i := range b {
			if x[i] > 0 {
				weight[i] = b[i] / x[i]
			}
		}
		b = waterFill(x, weight)
		warn = append(warn, chem.Warning{Code: WarnSN2Clipped, Message: fmt.Sprintf(
			"the sn-2 share of %s exceeded three times its overall share by less than %.2g mole fraction; "+
				"it was clipped to that limit and the excess shared among the other sn-2 acids in proportion",
			strings.Join(clipped, ", "), maxSN2Overshoot),
			Path: []any{"sn2_profile"}})
	}
	return b, warn, nil
}

// CombinePools returns the overall profile of a fat whose sn-1,3 and sn-2
// pools are known separately (for example from a hardening forecast that
// hardened them separately): x = (2·a + b)/3 in mole fractions, over the
// union of their acids, in the basis of sn13. Use it with SN2Supplied and
// the sn-2 pool as SN2Profile.
func CombinePools(sn13, sn2 *chem.Profile) (*chem.Profile, error) {
	if sn13 == nil || sn2 == nil || len(sn13.Components) == 0 || len(sn2.Components) == 0 {
		return nil, chem.Errorf(chem.KindInvalid, "both pools are required").WithField("a pool is empty", "sn2_profile")
	}
	var acids []*chem.FattyAcid
	index := map[string]int{} // by canonical acid ID
	var x []float64
	add := func(p *chem.Profile, w float64) {
		for _, c := range p.Components {
			i, ok := index[c.Acid.ID]
			if !ok {
				i = len(acids)
				index[c.Acid.ID] = i
				acids = append(acids, c.Acid)
				x = append(x, 0)
			}
			x[i] += w * c.MoleFraction
		}
	}
	add(sn13, 2.0/3)
	add(sn2, 1.0/3)
	return chem.FromMoleFractions(acids, x, sn13.Basis), nil
}
