package blend

import (
	"context"
	"errors"
	"fmt"
	"math"

	"gonum.org/v1/gonum/optimize/convex/lp"

	"lipidsvc/chem"
	"lipidsvc/chem/identity"
	"lipidsvc/chem/melting"
)

// Candidate is a component the optimiser may use, with its price and the
// share it may take.
type Candidate struct {
	Component
	// CostPerTonne is the price per tonne, in the caller's currency.
	CostPerTonne float64
	// MinShare and MaxShare bound its mass fraction, 0 ≤ MinShare ≤
	// MaxShare ≤ 1.
	MinShare, MaxShare float64
}

// Quantity is what a linear constraint bounds.
type Quantity int

const (
	// IodineValue of the blend, g I2/100 g.
	IodineValue Quantity = iota + 1
	// SaponificationValue, mg KOH/g.
	SaponificationValue
	// Share of the acids a selector counts, FAME weight percent.
	Share
	// ClassShare of a composition class (Saturated … N6), FAME weight
	// percent.
	ClassShare
	// N6ToN3 is the ratio of the n-6 to the n-3 acids.
	N6ToN3
)

// Composition classes a ClassShare constraint may bound.
const (
	ClassSaturated       = "saturated"
	ClassMonounsaturated = "monounsaturated"
	ClassPolyunsaturated = "polyunsaturated"
	ClassTrans           = "trans"
	ClassN3              = "n3"
	ClassN6              = "n6"
)

// LinearConstraint bounds a quantity that is linear in the fractions.
// Min and Max are NaN where open.
type LinearConstraint struct {
	// Name is how answers and errors name it; Path is where the request
	// gave it.
	Name     string
	Path     []any
	Quantity Quantity
	// Terms select the acids of a Share; Class names a ClassShare's class.
	Terms    []identity.Term
	Class    string
	Min, Max float64
}

// MeltingConstraint bounds the solid fat content at a temperature or the
// slip melting point. Min and Max are NaN where open.
type MeltingConstraint struct {
	Name string
	Path []any
	// Slip selects the slip melting point (°C); otherwise the SFC (%) at
	// TemperatureC.
	Slip         bool
	TemperatureC float64
	Min, Max     float64
}

// Problem is a least-cost blending problem.
type Problem struct {
	Candidates []Candidate
	Linear     []LinearConstraint
	Melting    []MeltingConstraint
	Mode       Mode
	Options    melting.Options
	// MaxIterations caps the sequential linear programming steps of the
	// melting constraints (default 30); ToleranceSFC (points, default 0.5)
	// and ToleranceSlipK (default 0.5) are how far from a melting bound
	// counts as met.
	MaxIterations                int
	ToleranceSFC, ToleranceSlipK float64
}

// Achieved is a constraint's value at the answer.
type Achieved struct {
	Name     string
	Path     []any
	Value    float64
	Min, Max float64
	// Margin is how far inside the range the value lies (negative
	// outside), in the quantity's unit.
	Margin float64
	Met    bool
}

// Solution is the least-cost blend found.
type Solution struct {
	// Shares are the candidates' mass fractions, in candidate order.
	Shares       []float64
	CostPerTonne float64
	Blend        *Blend
	Linear       []Achieved
	Melting      []Achieved
	// MeltingViolation is the largest distance of a melting constraint
	// outside its bounds (SFC points or K; 0 when all are met within
	// tolerance); Iterations and Evaluations count the sequential linear
	// programming steps and the melting-model evaluations; Converged says
	// whether the steps stopped on their own criterion.
	MeltingViolation        float64
	Iterations, Evaluations int
	Converged               bool
	Warnings                []chem.Warning
}

// Warning codes of the optimiser.
const (
	// WarnMeltingNotMet: a melting constraint is not met within tolerance
	// at the answer.
	WarnMeltingNotMet = "melting_constraint_not_met"
)

// candidateData are a candidate's linear coefficients.
type candidateData struct {
	pr           *prepared
	iv, sv, fame float64            // g I2/100 g, mg KOH/g, g FAME per g
	class        map[string]float64 // FAME weight % by class
}

// Optimize finds the least-cost blend of the candidates that meets the
// constraints. Errors are *chem.Error values: KindInvalid with paths
// ("candidates", i, …) for bad candidates and, when no blend meets the
// linear constraints, KindOutOfDomain naming the conflicting constraints
// (an irreducible infeasible subset, see the package documentation); the
// context's error when ctx ends.
func Optimize(ctx context.Context, p Problem) (*Solution, error) {
	n := len(p.Candidates)
	if n == 0 {
		return nil, chem.Errorf(chem.KindMalformed, "no candidates").WithField("at least one candidate", "candidates")
	}
	data, cost, rows, err := p.programme()
	if err != nil {
		return nil, err
	}
	w, err := solveLP(cost, rows, n)
	if errors.Is(err, lp.ErrInfeasible) {
		return nil, infeasible(cost, rows, n)
	}
	if err != nil {
		return nil, chem.Errorf(chem.KindNoConvergence, "the linear programme could not be solved: %v", err)
	}
	sol := &Solution{Shares: w}
	m := newMixer(prsOf(data))
	if len(p.Melting) > 0 {
		if err := p.meltingSteps(ctx, sol, m, cost, rows); err != nil {
			return nil, err
		}
	}
	clean(sol.Shares)
	sol.CostPerTonne = dot(cost, sol.Shares)
	for _, lc := range p.Linear {
		sol.Linear = append(sol.Linear, achievedLinear(lc, data, sol.Shares))
	}
	ids := make([]string, n)
	for i, c := range p.Candidates {
		ids[i] = c.ID
	}
	fat, err := m.fat(sol.Shares, p.Mode, p.Options)
	if err != nil {
		return nil, err
	}
	sol.Blend = &Blend{Mode: p.Mode, IDs: ids, Fractions: sol.Shares, Profile: m.profile(sol.Shares), Fat: fat}
	if len(p.Melting) > 0 {
		vals, err := meltingValues(fat, p.Melting)
		if err != nil {
			return nil, err
		}
		sol.Melting, sol.MeltingViolation = p.achievedMelting(vals)
		for _, a := range sol.Melting {
			if !a.Met {
				sol.Warnings = append(sol.Warnings, chem.Warning{Code: WarnMeltingNotMet, Message: fmt.Sprintf(
					"%s is %.2f at the answer, %.2f outside its range after %d steps; the linear constraints hold, this one could not be met within tolerance",
					a.Name, a.Value, -a.Margin, sol.Iterations), Path: a.Path})
			}
		}
	}
	return sol, nil
}

// programme is the linear programme of the problem: each candidate's
// coefficients, the costs, and the inequality rows (share bounds and the
// linear constraints); Σ w = 1 and w ≥ 0 are implied.
func (p *Problem) programme() ([]candidateData, []float64, []lpRow, error) {
	n := len(p.Candidates)
	var bad chem.FieldErrors
	data := make([]candidateData, n)
	needTAGs := p.Mode == Physical
	for i, c := range p.Candidates {
		if !(c.MinShare >= 0 && c.MaxShare <= 1 && c.MinShare <= c.MaxShare) {
			bad.Invalid("min_share and max_share must satisfy 0 ≤ min_share ≤ max_share ≤ 1", "candidates", i)
		}
		if math.IsNaN(c.CostPerTonne) || math.IsInf(c.CostPerTonne, 0) || c.CostPerTonne < 0 {
			bad.Invalid("must be a non-negative number", "candidates", i, "cost_per_tonne")
		}
		pr, err := prepare(c.Component, i, needTAGs)
		if err != nil {
			bad.Merge(err)
			continue
		}
		props := chem.PropertiesOf(pr.profile, chem.MaterialTAG)
		var fameMass float64
		for j, a := range pr.acids {
			fameMass += pr.x[j] * a.MethylEsterMolarMass()
		}
		data[i] = candidateData{pr: pr, iv: props.IodineValue, sv: props.SaponificationValue,
			fame: pr.chainsPerGram * fameMass,
			class: map[string]float64{ClassSaturated: props.Sums.Saturated, ClassMonounsaturated: props.Sums.Monounsaturated,
				ClassPolyunsaturated: props.Sums.Polyunsaturated, ClassTrans: props.Sums.Trans, ClassN3: props.Sums.N3, ClassN6: props.Sums.N6}}
	}
	if err := bad.Err("the candidates are not valid"); err != nil {
		return nil, nil, nil, err
	}
	rows := make([]lpRow, 0, 2*n+2*len(p.Linear))
	for i, c := range p.Candidates {
		if c.MaxShare < 1 {
			r := lpRow{name: fmt.Sprintf("%s: max_share %g", c.ID, c.MaxShare), path: []any{"candidates", i, "max_share"}, g: make([]float64, n), h: c.MaxShare}
			r.g[i] = 1
			rows = append(rows, r)
		}
		if c.MinShare > 0 {
			r := lpRow{name: fmt.Sprintf("%s: min_share %g", c.ID, c.MinShare), path: []any{"candidates", i, "min_share"}, g: make([]float64, n), h: -c.MinShare}
			r.g[i] = -1
			rows = append(rows, r)
		}
	}
	for _, lc := range p.Linear {
		rows = append(rows, linearRows(lc, data)...)
	}
	cost := make([]float64, n)
	for i, c := range p.Candidates {
		cost[i] = c.CostPerTonne
	}
	return data, cost, rows, nil
}

func prsOf(data []candidateData) []*prepared {
	out := make([]*prepared, len(data))
	for i := range data {
		out[i] = data[i].pr
	}
	return out
}

// clean zeroes the round-off of the simplex and rescales to 1.
func clean(w []float64) {
	var s float64
	for i, v := range w {
		if v < 1e-12 {
			w[i] = 0
		}
		s += w[i]
	}
	for i := range w {
		w[i] /= s
	}
}

func dot(a, b []float64) float64 {
	var s float64
	for i := range a {
		s += a[i] * b[i]
	}
	return s
}

// lpRow is one inequality g·w ≤ h of the programme.
type lpRow struct {
	name string
	path []any
	g    []float64
	h    float64
}

// coefficients are the per-candidate values of a linear quantity, and
// whether it is a FAME-weighted share.
func coefficients(lc LinearConstraint, data []candidateData) (vals []float64, weighted bool, num, den []float64) {
	n := len(data)
	vals = make([]float64, n)
	switch lc.Quantity {
	case IodineValue:
		for k := range data {
			vals[k] = data[k].iv
		}
	case SaponificationValue:
		for k := range data {
			vals[k] = data[k].sv
		}
	case Share:
		for k := range data {
			vals[k] = selectorShare(lc.Terms, data[k].pr.profile)
		}
		weighted = true
	case ClassShare:
		for k := range data {
			vals[k] = data[k].class[lc.Class]
		}
		weighted = true
	case N6ToN3:
		num, den = make([]float64, n), make([]float64, n)
		for k := range data {
			num[k] = data[k].class[ClassN6]
			den[k] = data[k].class[ClassN3]
		}
	}
	return vals, weighted, num, den
}

// linearRows are the rows of one constraint: Σ w_k a_k (v_k − bound) ≤ 0
// with a_k the FAME grams per gram for shares and 1 for the values.
func linearRows(lc LinearConstraint, data []candidateData) []lpRow {
	vals, weighted, num, den := coefficients(lc, data)
	var out []lpRow
	add := func(bound float64, upper bool) {
		r := lpRow{name: lc.Name, path: lc.Path, g: make([]float64, len(data))}
		if upper {
			r.name += fmt.Sprintf(" ≤ %g", bound)
		} else {
			r.name += fmt.Sprintf(" ≥ %g", bound)
		}
		for k := range data {
			var v float64
			if lc.Quantity == N6ToN3 {
				v = data[k].fame * (num[k] - bound*den[k])
			} else {
				a := 1.0
				if weighted {
					a = data[k].fame
				}
				v = a * (vals[k] - bound)
			}
			if upper {
				r.g[k] = v
			} else {
				r.g[k] = -v
			}
		}
		out = append(out, r)
	}
	if !math.IsNaN(lc.Min) {
		add(lc.Min, false)
	}
	if !math.IsNaN(lc.Max) {
		add(lc.Max, true)
	}
	return out
}

// selectorShare is the FAME weight percent of p's acids the terms count.
func selectorShare(terms []identity.Term, p *chem.Profile) float64 {
	var s float64
	for _, c := range p.Components {
		for _, t := range terms {
			if t.Selects(c.Acid) {
				s += c.Percent
				break
			}
		}
	}
	return s
}

// value is a linear quantity at fractions w.
func value(lc LinearConstraint, data []candidateData, w []float64) float64 {
	vals, weighted, num, den := coefficients(lc, data)
	if lc.Quantity == N6ToN3 {
		var a, b float64
		for k := range data {
			a += w[k] * data[k].fame * num[k]
			b += w[k] * data[k].fame * den[k]
		}
		if b == 0 {
			return math.Inf(1)
		}
		return a / b
	}
	var s, d float64
	for k := range data {
		a := 1.0
		if weighted {
			a = data[k].fame
		}
		s += w[k] * a * vals[k]
		d += w[k] * a
	}
	return s / d
}

func achievedLinear(lc LinearConstraint, data []candidateData, w []float64) Achieved {
	v := value(lc, data, w)
	return achieved(lc.Name, lc.Path, v, lc.Min, lc.Max, 1e-6*math.Max(1, math.Abs(v)))
}

func achieved(name string, path []any, v, lo, hi, tol float64) Achieved {
	margin := math.Inf(1)
	if !math.IsNaN(lo) {
		margin = v - lo
	}
	if !math.IsNaN(hi) {
		margin = math.Min(margin, hi-v)
	}
	if math.IsInf(margin, 1) {
		margin = 0
	}
	return Achieved{Name: name, Path: path, Value: v, Min: lo, Max: hi, Margin: margin, Met: margin >= -tol}
}
