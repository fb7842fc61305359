package api

import (
	"context"

	"lipidsvc/chem"
	"lipidsvc/chem/blend"
	"lipidsvc/chem/identity"
	"lipidsvc/chem/melting"
)

// BlendComponentBody is one component of a blend or a candidate of an
// optimisation.
type BlendComponentBody struct {
	ID               string       `json:"id"`
	Profile          *ProfileBody `json:"profile,omitempty"`
	Reference        string       `json:"reference,omitempty"`
	Triacylglycerols []TAGEntry   `json:"triacylglycerols,omitempty"`
	Sn2Estimate      string       `json:"sn2_estimate,omitempty"`
	Fraction         *float64     `json:"fraction,omitempty"`
	CostPerTonne     *float64     `json:"cost_per_tonne,omitempty"`
	MinShare         *float64     `json:"min_share,omitempty"`
	MaxShare         *float64     `json:"max_share,omitempty"`
}

// BlendRequest is the body of POST /v1/blends.
type BlendRequest struct {
	Components    []BlendComponentBody `json:"components"`
	Mode          string               `json:"mode,omitempty"`
	Melting       *MeltingModel        `json:"melting,omitempty"`
	TemperaturesC []float64            `json:"temperatures_c,omitempty"`
}

// BlendResponse is the answer of POST /v1/blends.
type BlendResponse struct {
	Mode string `json:"mode"`
	// Method says how the TAG composition was formed.
	Method     string             `json:"method"`
	Fractions  map[string]float64 `json:"fractions"`
	Profile    ProfileOut         `json:"profile"`
	Properties PropertiesResponse `json:"properties"`
	Melting    MeltingResponse    `json:"melting"`
	Provenance *Provenance        `json:"provenance,omitempty"`
	Warnings   []WarningBody      `json:"warnings"`
}

// RangeBound is an optional minimum and maximum.
type RangeBound struct {
	Min *float64 `json:"min,omitempty"`
	Max *float64 `json:"max,omitempty"`
}

// AcidConstraintBody bounds a selector's share.
type AcidConstraintBody struct {
	Acid string   `json:"acid"`
	Min  *float64 `json:"min,omitempty"`
	Max  *float64 `json:"max,omitempty"`
}

// SFCConstraintBody bounds the SFC at a temperature.
type SFCConstraintBody struct {
	TemperatureC float64  `json:"temperature_c"`
	Min          *float64 `json:"min,omitempty"`
	Max          *float64 `json:"max,omitempty"`
}

// BlendConstraintsBody are the optimiser's constraints.
type BlendConstraintsBody struct {
	IodineValue         *RangeBound           `json:"iodine_value,omitempty"`
	SaponificationValue *RangeBound           `json:"saponification_value,omitempty"`
	Acids               []AcidConstraintBody  `json:"acids,omitempty"`
	Classes             map[string]RangeBound `json:"classes,omitempty"`
	N6ToN3              *RangeBound           `json:"n6_to_n3,omitempty"`
	SFC                 []SFCConstraintBody   `json:"sfc,omitempty"`
	SlipMeltingPointC   *RangeBound           `json:"slip_melting_point_c,omitempty"`
}

// OptimizeRequest is the body of POST /v1/blends/optimize.
type OptimizeRequest struct {
	Candidates    []BlendComponentBody `json:"candidates"`
	Constraints   BlendConstraintsBody `json:"constraints"`
	Mode          string               `json:"mode,omitempty"`
	Melting       *MeltingModel        `json:"melting,omitempty"`
	MaxIterations *Integer             `json:"max_iterations,omitempty"`
}

// ConstraintResult is one constraint at the answer.
type ConstraintResult struct {
	Name   string   `json:"name"`
	Value  float64  `json:"value"`
	Min    *float64 `json:"min"`
	Max    *float64 `json:"max"`
	Margin float64  `json:"margin"`
	Met    bool     `json:"met"`
}

// MeltingSearch reports the sequential linear programming of the melting
// constraints.
type MeltingSearch struct {
	Iterations          int     `json:"iterations"`
	Evaluations         int     `json:"evaluations"`
	Converged           bool    `json:"converged"`
	MaxViolation        float64 `json:"max_violation"`
	ToleranceSFCPercent float64 `json:"tolerance_sfc_percent"`
	ToleranceSlipK      float64 `json:"tolerance_slip_k"`
}

// OptimizeResponse is the answer of POST /v1/blends/optimize.
type OptimizeResponse struct {
	CostPerTonne       float64            `json:"cost_per_tonne"`
	Shares             map[string]float64 `json:"shares"`
	Mode               string             `json:"mode"`
	Constraints        []ConstraintResult `json:"constraints"`
	MeltingConstraints []ConstraintResult `json:"melting_constraints"`
	MeltingSearch      *MeltingSearch     `json:"melting_search,omitempty"`
	Profile            ProfileOut         `json:"profile"`
	Properties         PropertiesResponse `json:"properties"`
	Melting            MeltingResponse    `json:"melting"`
	Provenance         *Provenance        `json:"provenance,omitempty"`
	Warnings           []WarningBody      `json:"warnings"`
}

func (b *BlendComponentBody) input() blend.ComponentInput {
	in := blend.ComponentInput{ID: b.ID, Profile: b.Profile.input(), Reference: b.Reference, Sn2Estimate: b.Sn2Estimate,
		Fraction: b.Fraction, CostPerTonne: b.CostPerTonne, MinShare: b.MinShare, MaxShare: b.MaxShare}
	for _, t := range b.Triacylglycerols {
		in.Triacylglycerols = append(in.Triacylglycerols, melting.TAGEntry{SN1: t.SN1, SN2: t.SN2, SN3: t.SN3, MolePercent: t.MolePercent})
	}
	return in
}

func modelOf(m *MeltingModel) *melting.ModelInput {
	if m == nil {
		return nil
	}
	return m.input()
}

func rangeOf(r *RangeBound) *blend.RangeInput {
	if r == nil {
		return nil
	}
	return &blend.RangeInput{Min: r.Min, Max: r.Max}
}

func (r *OptimizeRequest) input() blend.OptimizeInput {
	in := blend.OptimizeInput{Mode: r.Mode, Melting: modelOf(r.Melting)}
	if r.MaxIterations != nil {
		n := int(*r.MaxIterations)
		in.MaxIterations = &n
	}
	for i := range r.Candidates {
		in.Candidates = append(in.Candidates, r.Candidates[i].input())
	}
	c := r.Constraints
	in.Constraints = blend.ConstraintsInput{IodineValue: rangeOf(c.IodineValue), SaponificationValue: rangeOf(c.SaponificationValue),
		N6ToN3: rangeOf(c.N6ToN3), SlipMeltingPointC: rangeOf(c.SlipMeltingPointC)}
	for _, a := range c.Acids {
		in.Constraints.Acids = append(in.Constraints.Acids, blend.AcidConstraintInput{Acid: a.Acid, Min: a.Min, Max: a.Max})
	}
	if c.Classes != nil {
		in.Constraints.Classes = map[string]blend.RangeInput{}
		for k, v := range c.Classes {
			in.Constraints.Classes[k] = blend.RangeInput{Min: v.Min, Max: v.Max}
		}
	}
	for _, s := range c.SFC {
		in.Constraints.SFC = append(in.Constraints.SFC, blend.SFCConstraintInput{TemperatureC: s.TemperatureC, Min: s.Min, Max: s.Max})
	}
	return in
}

// blendMethod says how the blend's TAGs were formed.
func blendMethod(m blend.Mode) string {
	if m == blend.Interesterified {
		return "chemically interesterified: the full random distribution of the pooled acids"
	}
	return "physical blend: the components' own TAG compositions, mixed by mass"
}

func runBlend(cat *chem.Catalogue, lib *identity.Library, rec Recorder) operation {
	return func(_ context.Context, b []byte) (traced, error) {
		var req BlendRequest
		if err := decodeBytes(b, &req); err != nil {
			return nil, err
		}
		in := blend.BlendInput{Mode: req.Mode, Melting: modelOf(req.Melting), TemperaturesC: req.TemperaturesC}
		for i := range req.Components {
			in.Components = append(in.Components, req.Components[i].input())
		}
		ans, err := blend.Mix(cat, lib, in)
		if err != nil {
			return nil, err
		}
		rec.Calculation("blend")
		out := BlendResponse{Mode: ans.Blend.Mode.String(), Method: blendMethod(ans.Blend.Mode),
			Fractions: fractionsOf(ans.Blend.IDs, ans.Blend.Fractions), Profile: profileOut(ans.Blend.Profile),
			Properties: fromProperties(ans.Properties),
			Melting:    fromMelting(&melting.MeltingAnswer{Result: ans.Melting, Warnings: []chem.Warning{}}),
			Warnings:   toWarnings(ans.Warnings)}
		return &out, nil
	}
}

func fractionsOf(ids []string, w []float64) map[string]float64 {
	out := make(map[string]float64, len(ids))
	for i, id := range ids {
		out[id] += round(w[i], decimalsShare)
	}
	return out
}

func runOptimize(cat *chem.Catalogue, lib *identity.Library, rec Recorder) operation {
	return func(ctx context.Context, b []byte) (traced, error) {
		var req OptimizeRequest
		if err := decodeBytes(b, &req); err != nil {
			return nil, err
		}
		ans, err := blend.Solve(ctx, cat, lib, req.input())
		if err != nil {
			return nil, err
		}
		rec.Calculation("blend_optimize")
		s := ans.Solution
		rec.SolverIterations("blend_melting_steps", s.Iterations)
		out := OptimizeResponse{CostPerTonne: round(s.CostPerTonne, decimalsValue), Shares: fractionsOf(s.Blend.IDs, s.Shares),
			Mode: s.Blend.Mode.String(), Constraints: constraintResults(s.Linear), MeltingConstraints: constraintResults(s.Melting),
			Profile: profileOut(s.Blend.Profile), Properties: fromProperties(ans.Properties),
			Melting:  fromMelting(&melting.MeltingAnswer{Result: ans.Melting, Warnings: []chem.Warning{}}),
			Warnings: toWarnings(ans.Warnings)}
		if len(s.Melting) > 0 {
			out.MeltingSearch = &MeltingSearch{Iterations: s.Iterations, Evaluations: s.Evaluations, Converged: s.Converged,
				MaxViolation: round(s.MeltingViolation, decimalsRow), ToleranceSFCPercent: blend.DefaultToleranceSFC, ToleranceSlipK: blend.DefaultToleranceSlipK}
		}
		return &out, nil
	}
}

func constraintResults(as []blend.Achieved) []ConstraintResult {
	out := make([]ConstraintResult, len(as))
	for i, a := range as {
		out[i] = ConstraintResult{Name: a.Name, Value: round(a.Value, decimalsRow), Min: finiteOrNil(a.Min), Max: finiteOrNil(a.Max),
			Margin: round(a.Margin, decimalsRow), Met: a.Met}
	}
	return out
}

func (r *BlendResponse) setProvenance(p *Provenance) { r.Provenance = p }

func (r *BlendResponse) methods() []string {
	return []string{"blend: chains pooled by moles (3/M̄ mol of chains per gram of each component)", r.Method, methodTAG, methodSLE, methodSlip}
}

func (r *OptimizeResponse) setProvenance(p *Provenance) { r.Provenance = p }

func (r *OptimizeResponse) methods() []string {
	m := []string{"least cost: linear programming, simplex method (gonum optimize/convex/lp)",
		"infeasibility: irreducible infeasible subset by the deletion filter (Chinneck & Dravnieks 1991)"}
	if r.MeltingSearch != nil {
		m = append(m, "melting constraints: sequential linear programming in a trust region (Fletcher 1987)", methodTAG, methodSLE, methodSlip)
	}
	return m
}
