package blend

import (
	"context"
	"fmt"
	"math"

	"lipidsvc/chem"
	"lipidsvc/chem/identity"
	"lipidsvc/chem/melting"
)

// ComponentInput is a component in the shape requests give it: an id and
// exactly one of a profile, a reference-catalogue id (its range
// midpoints) or a TAG composition. Fraction is for blends; CostPerTonne,
// MinShare and MaxShare for the optimiser. Paths: "id", "profile",
// "reference", "triacylglycerols", "fraction", "cost_per_tonne",
// "min_share", "max_share", "sn2_estimate".
type ComponentInput struct {
	ID               string
	Profile          *chem.ProfileInput
	Reference        string
	Triacylglycerols []melting.TAGEntry
	// Sn2Estimate is how this component's TAGs are estimated from its
	// profile in a physical blend ("" for the blend's choice).
	Sn2Estimate string
	Fraction    *float64
	// Optimiser fields.
	CostPerTonne       *float64
	MinShare, MaxShare *float64
}

// ModelInput is the melting model of a blend: the melting package's
// options. Its distribution and sn-2 estimate say how the components' own
// TAGs are estimated in a physical blend; an interesterified blend takes
// neither.
type ModelInput = melting.ModelInput

// BlendInput is POST /v1/blends in its own shape. Paths: "components", i,
// …; "mode"; "melting", …; "temperatures_c".
type BlendInput struct {
	Components    []ComponentInput
	Mode          string
	Melting       *ModelInput
	TemperaturesC []float64
}

// WarnReferenceMidpoint: a component was taken as the middle of a
// reference's ranges, not an analysis.
const WarnReferenceMidpoint = "reference_midpoint_profile"

// BlendAnswer is a blend with its properties and melting behaviour.
type BlendAnswer struct {
	Blend      *Blend
	Properties chem.Properties
	Melting    *melting.Result
	Warnings   []chem.Warning
}

// resolveMode reads the mode and the melting options for it.
func resolveMode(mode string, model *ModelInput, temps []float64) (Mode, melting.Options, error) {
	m, ok := ParseMode(mode)
	if !ok {
		return 0, melting.Options{}, chem.Errorf(chem.KindMalformed, "unknown mode %q", mode).WithField("must be physical or interesterified", "mode")
	}
	if m == Interesterified && model != nil && (model.Distribution != "" || model.Sn2Estimate != "") {
		return 0, melting.Options{}, chem.Errorf(chem.KindMalformed, "an interesterified blend has the full random distribution").
			WithField("not with mode interesterified: interesterification randomises every position", "melting", "distribution")
	}
	opt, err := melting.ResolveModel(model)
	if err != nil {
		return 0, melting.Options{}, chem.PrefixError(err, "melting")
	}
	if temps != nil {
		opt.TemperaturesC = temps
		if err := opt.Validate(); err != nil {
			return 0, melting.Options{}, err
		}
	}
	return m, opt, nil
}

// resolveComponent reads one component: its profile (given, from a
// reference's midpoints, or from its TAGs) and its TAG options.
func resolveComponent(cat *chem.Catalogue, lib *identity.Library, in ComponentInput, i int, base melting.CompositionOptions) (Component, []chem.Warning, error) {
	at := func(p ...any) []any { return append([]any{"components", i}, p...) }
	c := Component{ID: in.ID, Composition: base}
	var warnings []chem.Warning
	given := 0
	for _, b := range []bool{in.Profile != nil, in.Reference != "", len(in.Triacylglycerols) > 0} {
		if b {
			given++
		}
	}
	if given != 1 {
		return c, nil, chem.Errorf(chem.KindMalformed, "component %d needs exactly one of profile, reference and triacylglycerols", i).
			WithField("give exactly one of profile, reference, triacylglycerols", at()...)
	}
	if in.ID == "" {
		return c, nil, chem.Errorf(chem.KindMalformed, "component %d has no id", i).WithField("required", at("id")...)
	}
	switch {
	case in.Profile != nil:
		p, err := cat.ReadProfileAt(in.Profile, at("profile")...)
		if err != nil {
			return c, nil, err
		}
		c.Profile = p
		for _, w := range p.Warnings {
			warnings = append(warnings, w)
		}
	case in.Reference != "":
		s, ok := lib.ByID(in.Reference)
		if !ok || s.Limits {
			return c, nil, chem.Errorf(chem.KindInvalid, "no identity reference %q", in.Reference).
				WithField("not a reference oil id; GET /v1/reference-oils lists them", at("reference")...)
		}
		p, err := identity.MidpointProfile(cat, s)
		if err != nil {
			return c, nil, chem.PrefixError(err, at("reference")...)
		}
		c.Profile = p
		warnings = append(warnings, chem.Warning{Code: WarnReferenceMidpoint, Message: fmt.Sprintf(
			"component %s is the middle of the %s ranges of %s, a typical composition, not an analysis of a lot", in.ID, s.Standard, s.ID),
			Path: at("reference")})
	default:
		var bad chem.FieldErrors
		for j, t := range in.Triacylglycerols {
			var acids [3]*chem.FattyAcid
			for k, label := range []string{t.SN1, t.SN2, t.SN3} {
				r, err := cat.Resolve(label)
				if err != nil || r.Acid == nil {
					bad.Invalid(fmt.Sprintf("unknown acid label %q", label), at("triacylglycerols", j, []string{"sn1", "sn2", "sn3"}[k])...)
					continue
				}
				acids[k] = r.Acid
			}
			if !(t.MolePercent >= 0 && t.MolePercent <= 100) {
				bad.Invalid("must be from 0 to 100", at("triacylglycerols", j, "mole_percent")...)
			}
			c.TAGs = append(c.TAGs, melting.TAGAmount{Outer1: acids[0], Middle: acids[1], Outer2: acids[2], MolePercent: t.MolePercent})
		}
		if err := bad.Err("the TAG composition is not valid"); err != nil {
			return c, nil, err
		}
	}
	if in.Sn2Estimate != "" {
		opt, err := melting.ResolveModel(&ModelInput{Sn2Estimate: in.Sn2Estimate})
		if err != nil {
			return c, nil, chem.PrefixError(err, at()...)
		}
		c.Composition.SN2 = opt.Composition.SN2
	}
	return c, warnings, nil
}

// Mix is POST /v1/blends: the blend of the components at their fractions,
// its certificate values and its melting behaviour. Errors are *chem.Error
// values with paths into in.
func Mix(cat *chem.Catalogue, lib *identity.Library, in BlendInput) (*BlendAnswer, error) {
	mode, opt, err := resolveMode(in.Mode, in.Melting, in.TemperaturesC)
	if err != nil {
		return nil, err
	}
	if len(in.Components) == 0 {
		return nil, chem.Errorf(chem.KindMalformed, "a blend needs components").WithField("at least one", "components")
	}
	var comps []Component
	var fractions []float64
	var warnings []chem.Warning
	var bad chem.FieldErrors
	for i, ci := range in.Components {
		if ci.Fraction == nil {
			bad.Invalid("each component of a blend needs its mass fraction", "components", i, "fraction")
			continue
		}
		c, ws, err := resolveComponent(cat, lib, ci, i, opt.Composition)
		if err != nil {
			return nil, err
		}
		comps = append(comps, c)
		fractions = append(fractions, *ci.Fraction)
		warnings = append(warnings, ws...)
	}
	if err := bad.Err("the blend is not valid"); err != nil {
		return nil, err
	}
	// The components carry their own TAG options; the blend's fat takes
	// the mode's distribution (mixer.fat).
	b, err := New(comps, fractions, mode, opt)
	if err != nil {
		return nil, err
	}
	res, err := b.Fat.Melt()
	if err != nil {
		return nil, err
	}
	warnings = append(append(warnings, b.Warnings...), res.Warnings...)
	props := chem.PropertiesOf(b.Profile, chem.MaterialTAG)
	return &BlendAnswer{Blend: b, Properties: props, Melting: res, Warnings: warnings}, nil
}

// RangeInput is an optional minimum and maximum.
type RangeInput struct{ Min, Max *float64 }

// AcidConstraintInput bounds the share of the acids a selector counts
// (see identity.ParseSelector), FAME weight %.
type AcidConstraintInput struct {
	Acid     string
	Min, Max *float64
}

// SFCConstraintInput bounds the solid fat content at a temperature.
type SFCConstraintInput struct {
	TemperatureC float64
	Min, Max     *float64
}

// ConstraintsInput are the optimiser's constraints by their contract
// names. Paths: "constraints", "iodine_value" …
type ConstraintsInput struct {
	IodineValue, SaponificationValue *RangeInput
	Acids                            []AcidConstraintInput
	// Classes by name: saturated, monounsaturated, polyunsaturated,
	// trans, n3, n6.
	Classes           map[string]RangeInput
	N6ToN3            *RangeInput
	SFC               []SFCConstraintInput
	SlipMeltingPointC *RangeInput
}

// OptimizeInput is POST /v1/blends/optimize in its own shape. Paths:
// "candidates", i, …; "constraints", …; "mode"; "melting", …;
// "max_iterations".
type OptimizeInput struct {
	Candidates    []ComponentInput
	Constraints   ConstraintsInput
	Mode          string
	Melting       *ModelInput
	MaxIterations *int
}

// OptimizeAnswer is the least-cost blend with its certificate values and
// melting behaviour.
type OptimizeAnswer struct {
	Solution   *Solution
	Properties chem.Properties
	Melting    *melting.Result
	Warnings   []chem.Warning
}

func bounds(r *RangeInput) (float64, float64) {
	lo, hi := math.NaN(), math.NaN()
	if r != nil && r.Min != nil {
		lo = *r.Min
	}
	if r != nil && r.Max != nil {
		hi = *r.Max
	}
	return lo, hi
}

// classOrder is the order class constraints are listed in.
var classOrder = []string{ClassSaturated, ClassMonounsaturated, ClassPolyunsaturated, ClassTrans, ClassN3, ClassN6}

// Solve is POST /v1/blends/optimize. Errors are *chem.Error values with
// paths into in; an infeasible set of constraints is KindOutOfDomain with
// the conflicting constraints as its fields.
func Solve(ctx context.Context, cat *chem.Catalogue, lib *identity.Library, in OptimizeInput) (*OptimizeAnswer, error) {
	mode, opt, err := resolveMode(in.Mode, in.Melting, nil)
	if err != nil {
		return nil, err
	}
	if len(in.Candidates) == 0 {
		return nil, chem.Errorf(chem.KindMalformed, "no candidates").WithField("at least one", "candidates")
	}
	p := Problem{Mode: mode}
	p.Options = opt
	if in.MaxIterations != nil {
		p.MaxIterations = *in.MaxIterations
	}
	var warnings []chem.Warning
	var bad chem.FieldErrors
	seen := map[string]int{}
	for i, ci := range in.Candidates {
		c, ws, err := resolveComponent(cat, lib, ci, i, opt.Composition)
		if err != nil {
			return nil, err
		}
		if j, dup := seen[ci.ID]; dup {
			bad.Invalid(fmt.Sprintf("id %q is also candidate %d", ci.ID, j), "candidates", i, "id")
		}
		seen[ci.ID] = i
		cand := Candidate{Component: c, MinShare: 0, MaxShare: 1}
		if ci.CostPerTonne == nil {
			bad.Invalid("each candidate needs its cost_per_tonne", "candidates", i, "cost_per_tonne")
		} else {
			cand.CostPerTonne = *ci.CostPerTonne
		}
		if ci.MinShare != nil {
			cand.MinShare = *ci.MinShare
		}
		if ci.MaxShare != nil {
			cand.MaxShare = *ci.MaxShare
		}
		p.Candidates = append(p.Candidates, cand)
		warnings = append(warnings, ws...)
	}
	cs := in.Constraints
	at := func(path ...any) []any { return append([]any{"constraints"}, path...) }
	addLinear := func(name string, q Quantity, r *RangeInput, path []any) LinearConstraint {
		lo, hi := bounds(r)
		if r != nil && r.Min == nil && r.Max == nil {
			bad.Invalid("give min, max or both", path...)
		}
		if !math.IsNaN(lo) && !math.IsNaN(hi) && lo > hi {
			bad.Invalid("min is above max", path...)
		}
		return LinearConstraint{Name: name, Path: path, Quantity: q, Min: lo, Max: hi}
	}
	if cs.IodineValue != nil {
		p.Linear = append(p.Linear, addLinear("iodine_value", IodineValue, cs.IodineValue, at("iodine_value")))
	}
	if cs.SaponificationValue != nil {
		p.Linear = append(p.Linear, addLinear("saponification_value", SaponificationValue, cs.SaponificationValue, at("saponification_value")))
	}
	for i, a := range cs.Acids {
		terms, err := identity.ParseSelector(a.Acid)
		if err != nil {
			bad.Invalid(err.Error(), at("acids", i, "acid")...)
			continue
		}
		lc := addLinear(a.Acid, Share, &RangeInput{a.Min, a.Max}, at("acids", i))
		lc.Terms = terms
		p.Linear = append(p.Linear, lc)
	}
	for name := range cs.Classes {
		known := false
		for _, c := range classOrder {
			known = known || c == name
		}
		if !known {
			bad.Invalid("unknown class (saturated, monounsaturated, polyunsaturated, trans, n3, n6)", at("classes", name)...)
		}
	}
	for _, name := range classOrder {
		if r, ok := cs.Classes[name]; ok {
			lc := addLinear(name, ClassShare, &r, at("classes", name))
			lc.Class = name
			p.Linear = append(p.Linear, lc)
		}
	}
	if cs.N6ToN3 != nil {
		p.Linear = append(p.Linear, addLinear("n6_to_n3", N6ToN3, cs.N6ToN3, at("n6_to_n3")))
	}
	for i, s := range cs.SFC {
		lo, hi := bounds(&RangeInput{s.Min, s.Max})
		if math.IsNaN(lo) && math.IsNaN(hi) {
			bad.Invalid("give min, max or both", at("sfc", i)...)
		}
		if !(s.TemperatureC >= melting.MinTemperatureC && s.TemperatureC <= melting.MaxTemperatureC) {
			bad.Invalid(fmt.Sprintf("must be from %g to %g °C", melting.MinTemperatureC, melting.MaxTemperatureC), at("sfc", i, "temperature_c")...)
		}
		p.Melting = append(p.Melting, MeltingConstraint{Name: fmt.Sprintf("sfc at %g °C", s.TemperatureC), Path: at("sfc", i),
			TemperatureC: s.TemperatureC, Min: lo, Max: hi})
	}
	if cs.SlipMeltingPointC != nil {
		lo, hi := bounds(cs.SlipMeltingPointC)
		if math.IsNaN(lo) && math.IsNaN(hi) {
			bad.Invalid("give min, max or both", at("slip_melting_point_c")...)
		}
		p.Melting = append(p.Melting, MeltingConstraint{Name: "slip_melting_point_c", Path: at("slip_melting_point_c"), Slip: true, Min: lo, Max: hi})
	}
	if err := bad.Err("the optimisation request is not valid"); err != nil {
		return nil, err
	}
	sol, err := Optimize(ctx, p)
	if err != nil {
		return nil, err
	}
	res, err := sol.Blend.Fat.Melt()
	if err != nil {
		return nil, err
	}
	warnings = append(append(warnings, sol.Warnings...), res.Warnings...)
	return &OptimizeAnswer{Solution: sol, Properties: chem.PropertiesOf(sol.Blend.Profile, chem.MaterialTAG), Melting: res, Warnings: warnings}, nil
}
