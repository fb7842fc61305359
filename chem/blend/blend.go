// Package blend mixes oils and fats: the fatty-acid profile and the
// triacylglycerol (TAG) composition of a blend, physical or chemically
// interesterified, and the least-cost blend that meets a specification.
//
// # Blending
//
// Components are mixed by mass. A component's chains are counted in moles:
// one gram of a fat whose TAGs weigh M̄ g/mol on average carries 3/M̄ mol
// of acyl chains, distributed as its mole fractions x_i. The blend's mole
// fractions are the mass-weighted sums of 3 x_i / M̄ over the components,
// normalised (first principles; a mass average of FAME weight percentages
// is close but not exact, since FAME and TAG masses differ by component).
//
// A physical blend is a mixture of the components' own TAG molecules, not
// the random rearrangement of its pooled acids: each component keeps its
// TAG composition (measured, or estimated from its profile with its own
// distribution and sn-2 rule, see the melting package), and the blend's
// TAG mole fractions are the mass-weighted sums of x_s / M̄ over the
// components. Chemical interesterification (sodium methoxide and similar
// catalysts) randomises the acids over all positions of all molecules, so
// an interesterified blend has the full random distribution of the pooled
// acids, P(i,j,k) = x_i x_j x_k (Sreenivasan, JAOCS 55:796, 1978;
// Rozendaal & Macrae in Lipid Technologies and Applications, 1997).
// Interesterifying a blend of hard stock and liquid oil turns its
// trisaturated TAGs into mixed saturated–unsaturated ones and so lowers its
// melting point, which is why it is how trans-free hard stocks are made.
//
// # Least-cost blends (optimize.go)
//
// Every composition constraint is linear in the components' mass
// fractions w_k: the iodine and saponification values are mass-additive
// (per 100 g and per g), and a share of a set of acids in FAME weight
// percent, S = 100 Σ_k w_k g_k / Σ_k w_k φ_k (g_k the set's FAME grams per
// gram of component k, φ_k all its FAME grams per gram), meets S ≤ c
// exactly when Σ_k w_k (100 g_k − c φ_k) ≤ 0; ratios such as n-6/n-3 ≤ r
// linearise the same way. With the cost Σ w_k p_k, the shares' bounds and
// Σ w_k = 1 this is a linear programme, solved by the simplex method
// (gonum optimize/convex/lp). An infeasible programme is explained by an
// irreducible infeasible subset of the constraints, found by the deletion
// filter (Chinneck & Dravnieks, ORSA J. Computing 3:157, 1991): drop each
// constraint in turn and keep it out if the rest stay infeasible; what is
// left conflicts, and every constraint in it is needed for the conflict.
//
// Solid fat contents and the slip melting point are not linear in w. They
// are met by sequential linear programming with a trust region: linearise
// them at the current blend by finite differences, solve the linear
// programme with the linearised constraints made elastic (a penalised
// slack) inside a box of half-width Δ around the current blend, evaluate
// the melting model at the answer, and accept it when the penalised cost
// falls, widening Δ, or halve Δ and retry (Fletcher, Practical Methods of
// Optimization, 2nd ed., 1987, ch. 14). The answer reports how far each
// melting constraint is from being met at the final blend.
package blend

import (
	"fmt"

	"lipidsvc/chem"
	"lipidsvc/chem/melting"
)

// Mode is how the components are combined.
type Mode int

const (
	// Physical mixes the components' own TAG molecules.
	Physical Mode = iota + 1
	// Interesterified randomises the pooled acids over all positions.
	Interesterified
)

// String is the mode's contract name.
func (m Mode) String() string {
	switch m {
	case Physical:
		return "physical"
	case Interesterified:
		return "interesterified"
	}
	return "unknown"
}

// ParseMode reads a mode by its contract name; "" is Physical.
func ParseMode(s string) (Mode, bool) {
	switch s {
	case "", "physical":
		return Physical, true
	case "interesterified":
		return Interesterified, true
	}
	return 0, false
}

// Component is one oil or fat of a blend.
type Component struct {
	// ID names the component in answers and errors.
	ID string
	// Profile is its fatty-acid profile (any basis). With TAGs it may be
	// nil: the profile is then the TAGs' acids.
	Profile *chem.Profile
	// TAGs is its measured TAG composition, optional; a physical blend
	// uses it instead of the estimate from the profile.
	TAGs []melting.TAGAmount
	// Composition is how its TAG composition is estimated from the profile
	// in a physical blend (distribution and sn-2 rule; zero for the
	// melting package's defaults).
	Composition melting.CompositionOptions
}

// prepared is a component's chains and TAGs, computed once per component
// and reused for every blend of it.
type prepared struct {
	id    string
	acids []*chem.FattyAcid
	x     []float64 // chain mole fractions
	// chainsPerGram is 3/M̄(TAG), mol of chains per g.
	chainsPerGram float64
	// species are the TAGs (mole fractions summing to 1) and
	// molesPerGram their moles per g of the component.
	species      []melting.TAGAmount
	molesPerGram float64
	// profile is the component's profile on the FAME weight basis.
	profile *chem.Profile
}

// prepare reads a component: its chains and, for physical blends, its
// TAG composition. Errors have paths under its index.
func prepare(c Component, i int, needTAGs bool) (*prepared, error) {
	pr := &prepared{id: c.ID}
	switch {
	case c.Profile != nil:
		for _, comp := range c.Profile.Components {
			pr.acids = append(pr.acids, comp.Acid)
			pr.x = append(pr.x, comp.MoleFraction)
		}
	case len(c.TAGs) > 0:
		idx := map[*chem.FattyAcid]int{}
		for _, t := range c.TAGs {
			for _, a := range []*chem.FattyAcid{t.Outer1, t.Middle, t.Outer2} {
				j, ok := idx[a]
				if !ok {
					j = len(pr.acids)
					idx[a] = j
					pr.acids = append(pr.acids, a)
					pr.x = append(pr.x, 0)
				}
				pr.x[j] += t.MolePercent
			}
		}
	default:
		return nil, chem.Errorf(chem.KindInvalid, "component %q has neither a profile nor a TAG composition", c.ID).
			WithField("a profile or triacylglycerols is required", "components", i)
	}
	var sx, macid float64
	for j, v := range pr.x {
		sx += v
		macid += v * pr.acids[j].MolarMass()
	}
	if sx <= 0 {
		return nil, chem.Errorf(chem.KindInvalid, "component %q has no acids", c.ID).WithField("no acids", "components", i)
	}
	for j := range pr.x {
		pr.x[j] /= sx
	}
	macid /= sx
	pr.chainsPerGram = 3 / (3*macid + chem.GlycerolBackboneIncrement)
	pr.profile = chem.FromMoleFractions(pr.acids, pr.x, chem.BasisFAMEWeight)
	if !needTAGs {
		return pr, nil
	}
	if len(c.TAGs) > 0 {
		var total, mass float64
		for _, t := range c.TAGs {
			total += t.MolePercent
		}
		for _, t := range c.TAGs {
			f := t.MolePercent / total
			pr.species = append(pr.species, melting.TAGAmount{Outer1: t.Outer1, Middle: t.Middle, Outer2: t.Outer2, MolePercent: f})
			mass += f * tagMass(t.Outer1, t.Middle, t.Outer2)
		}
		pr.molesPerGram = 1 / mass
		return pr, nil
	}
	comp, err := melting.TAGComposition(pr.profile, c.Composition)
	if err != nil {
		return nil, chem.PrefixError(err, "components", i)
	}
	var mass float64
	for _, s := range comp.Species {
		pr.species = append(pr.species, melting.TAGAmount{Outer1: s.Outer1, Middle: s.Middle, Outer2: s.Outer2, MolePercent: s.MoleFraction})
		mass += s.MoleFraction * s.MolarMass
	}
	pr.molesPerGram = 1 / mass
	return pr, nil
}

// tagMass is a TAG's molar mass: glycerol plus three acids less three
// waters.
func tagMass(a, b, c *chem.FattyAcid) float64 {
	return a.MolarMass() + b.MolarMass() + c.MolarMass() + chem.GlycerolBackboneIncrement
}

// mixer blends a fixed set of prepared components at any fractions.
type mixer struct {
	comps []*prepared
	// acids is the union of the components' acids; at[k][j] is where
	// component k's acid j sits in it.
	acids []*chem.FattyAcid
	at    [][]int
}

func newMixer(comps []*prepared) *mixer {
	m := &mixer{comps: comps}
	idx := map[*chem.FattyAcid]int{}
	for _, c := range comps {
		pos := make([]int, len(c.acids))
		for j, a := range c.acids {
			k, ok := idx[a]
			if !ok {
				k = len(m.acids)
				idx[a] = k
				m.acids = append(m.acids, a)
			}
			pos[j] = k
		}
		m.at = append(m.at, pos)
	}
	return m
}

// profile is the blend's profile at mass fractions w (FAME weight basis).
func (m *mixer) profile(w []float64) *chem.Profile {
	x := make([]float64, len(m.acids))
	for k, c := range m.comps {
		for j, v := range c.x {
			x[m.at[k][j]] += w[k] * c.chainsPerGram * v
		}
	}
	// Acids absent at these fractions are left out.
	var acids []*chem.FattyAcid
	var xs []float64
	for i, v := range x {
		if v > 0 {
			acids = append(acids, m.acids[i])
			xs = append(xs, v)
		}
	}
	return chem.FromMoleFractions(acids, xs, chem.BasisFAMEWeight)
}

// tags is the physical blend's TAG composition at w, in mol %.
func (m *mixer) tags(w []float64) []melting.TAGAmount {
	var out []melting.TAGAmount
	var total float64
	for k, c := range m.comps {
		if w[k] <= 0 {
			continue
		}
		f := w[k] * c.molesPerGram
		for _, s := range c.species {
			v := f * s.MolePercent
			out = append(out, melting.TAGAmount{Outer1: s.Outer1, Middle: s.Middle, Outer2: s.Outer2, MolePercent: v})
			total += v
		}
	}
	for i := range out {
		out[i].MolePercent *= 100 / total
	}
	return out
}

// fat prepares the melting model of the blend at w.
func (m *mixer) fat(w []float64, mode Mode, opt melting.Options) (*melting.Fat, error) {
	if mode == Interesterified {
		opt.Composition = melting.CompositionOptions{Distribution: melting.FullRandom, PoolFloorMoleFraction: opt.Composition.PoolFloorMoleFraction}
		return melting.Prepare(m.profile(w), opt)
	}
	opt.Composition = melting.CompositionOptions{PoolFloorMoleFraction: opt.Composition.PoolFloorMoleFraction}
	return melting.PrepareTAGs(m.tags(w), opt, 1e-6)
}

// Blend is a blend at given fractions, ready for its properties and its
// melting behaviour.
type Blend struct {
	Mode Mode
	// IDs and Fractions are the components and their mass fractions
	// (summing to 1).
	IDs       []string
	Fractions []float64
	// Profile is the blended profile on the FAME weight basis.
	Profile *chem.Profile
	// Fat is the melting model of the blend.
	Fat      *melting.Fat
	Warnings []chem.Warning
}

// WarnFractionsNormalised: the fractions did not sum to 1 and were
// scaled.
const WarnFractionsNormalised = "fractions_normalised"

// New blends the components at the mass fractions (which must be
// non-negative and sum to 1 within 0.001; they are scaled to 1 with a
// warning otherwise within that). Errors are *chem.Error values with paths
// ("components", i, …).
func New(comps []Component, fractions []float64, mode Mode, opt melting.Options) (*Blend, error) {
	if len(comps) == 0 || len(comps) != len(fractions) {
		return nil, chem.Errorf(chem.KindMalformed, "a blend needs components, each with its fraction").WithField("at least one", "components")
	}
	var sum float64
	var bad chem.FieldErrors
	for i, f := range fractions {
		if !(f >= 0 && f <= 1) {
			bad.Invalid("must be from 0 to 1", "components", i, "fraction")
		}
		sum += f
	}
	if err := bad.Err("the fractions are not valid"); err != nil {
		return nil, err
	}
	b := &Blend{Mode: mode}
	if sum < 0.999 || sum > 1.001 {
		return nil, chem.Errorf(chem.KindInvalid, "the fractions sum to %.4g, not 1", sum).
			WithField(fmt.Sprintf("the fractions sum to %.4g; they must sum to 1", sum), "components")
	}
	if sum != 1 {
		b.Warnings = append(b.Warnings, chem.Warning{Code: WarnFractionsNormalised, Message: fmt.Sprintf(
			"the fractions summed to %.6g and were scaled to 1", sum), Path: []any{"components"}})
	}
	w := make([]float64, len(fractions))
	for i, f := range fractions {
		w[i] = f / sum
	}
	var prs []*prepared
	for i, c := range comps {
		pr, err := prepare(c, i, mode == Physical)
		if err != nil {
			return nil, err
		}
		prs = append(prs, pr)
		b.IDs = append(b.IDs, c.ID)
	}
	m := newMixer(prs)
	b.Fractions = w
	b.Profile = m.profile(w)
	fat, err := m.fat(w, mode, opt)
	if err != nil {
		return nil, err
	}
	b.Fat = fat
	return b, nil
}
