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
)

// DefaultSN2Estimate is [SN2SeedOil], the seed-oil rule of the package documentation; choose
// SN2Palm for palm oil and its fractions.
const DefaultSN2Estimate = SN2SeedOil

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
					"about 11 K low)", 100*palmitic),
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
	case SN2Supplied:
		return suppliedSN2(p, x, opt.SN2Profile)
	default:
		return nil, nil, chem.Errorf(chem.KindInvalid, "unknown sn-2 estimate").
			WithField("must be seed_oil_rule, palm_rule, supplied or enrichment_factors", "sn2_estimate")
	}
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
