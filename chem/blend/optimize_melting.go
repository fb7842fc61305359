package blend

import (
	"context"
	"errors"
	"fmt"
	"math"

	"gonum.org/v1/gonum/optimize/convex/lp"

	"lipidsvc/chem"
	"lipidsvc/chem/melting"
)

// Defaults of the melting steps.
const (
	DefaultMaxIterations  = 30
	DefaultToleranceSFC   = 0.5
	DefaultToleranceSlipK = 0.5
	// finiteStep is the finite-difference step in mass fraction.
	finiteStep = 0.01
	// minTrust ends the steps when the trust region is this small.
	minTrust = 1e-4
)

// meltingValues evaluates the melting constraints' quantities of a fat: the
// SFC at each temperature, the slip melting point (the top of the model's
// range when the fat never falls to the threshold below it).
func meltingValues(f *melting.Fat, cs []MeltingConstraint) ([]float64, error) {
	out := make([]float64, len(cs))
	for i, c := range cs {
		if c.Slip {
			t, ok, err := f.SlipMeltingPointC()
			if err != nil {
				return nil, err
			}
			if !ok {
				t = melting.MaxTemperatureC
			}
			out[i] = t
			continue
		}
		s, err := f.SolidFatContent(c.TemperatureC)
		if err != nil {
			return nil, err
		}
		out[i] = s
	}
	return out, nil
}

// tolerance is the constraint's tolerance in its unit.
func (p *Problem) tolerance(c MeltingConstraint) float64 {
	if c.Slip {
		return p.ToleranceSlipK
	}
	return p.ToleranceSFC
}

// violation is the largest distance of a value outside its bounds beyond
// the tolerance (0 when all are met).
func (p *Problem) violation(vals []float64) float64 {
	var worst float64
	for i, c := range p.Melting {
		v := vals[i]
		if !math.IsNaN(c.Min) {
			worst = math.Max(worst, c.Min-v-p.tolerance(c))
		}
		if !math.IsNaN(c.Max) {
			worst = math.Max(worst, v-c.Max-p.tolerance(c))
		}
	}
	return math.Max(worst, 0)
}

func (p *Problem) achievedMelting(vals []float64) ([]Achieved, float64) {
	out := make([]Achieved, len(p.Melting))
	for i, c := range p.Melting {
		out[i] = achieved(c.Name, c.Path, vals[i], c.Min, c.Max, p.tolerance(c))
	}
	return out, p.violation(vals)
}

// meltingSteps moves the linear optimum to one that also meets the melting
// constraints, by sequential linear programming in a trust region (see
// the package documentation). The merit of a blend is its cost plus a
// penalty on the melting violation large enough that any reduction of the
// violation outweighs cost.
func (p *Problem) meltingSteps(ctx context.Context, sol *Solution, m *mixer, cost []float64, rows []lpRow) error {
	if p.MaxIterations <= 0 {
		p.MaxIterations = DefaultMaxIterations
	}
	if p.ToleranceSFC <= 0 {
		p.ToleranceSFC = DefaultToleranceSFC
	}
	if p.ToleranceSlipK <= 0 {
		p.ToleranceSlipK = DefaultToleranceSlipK
	}
	n := len(cost)
	var maxCost float64
	for _, c := range cost {
		maxCost = math.Max(maxCost, c)
	}
	penalty := 100 * (maxCost + 1)
	eval := func(w []float64) ([]float64, error) {
		if err := ctx.Err(); err != nil {
			return nil, err
		}
		sol.Evaluations++
		f, err := m.fat(w, p.Mode, p.Options)
		if err != nil {
			return nil, err
		}
		return meltingValues(f, p.Melting)
	}
	merit := func(w, vals []float64) float64 { return dot(cost, w) + penalty*p.violation(vals) }

	w := append([]float64(nil), sol.Shares...)
	vals, err := eval(w)
	if err != nil {
		return err
	}
	trust := 0.25
	for sol.Iterations < p.MaxIterations {
		sol.Iterations++
		// Gradients along each candidate, on the simplex: the blend moves
		// a step towards the pure candidate.
		grad := make([][]float64, n)
		for k := 0; k < n; k++ {
			wk := make([]float64, n)
			for j := range w {
				wk[j] = w[j] * (1 - finiteStep)
			}
			wk[k] += finiteStep
			vk, err := eval(wk)
			if err != nil {
				return err
			}
			grad[k] = make([]float64, len(p.Melting))
			for i := range p.Melting {
				// Along e_k − w per unit of step: g(w + h(e_k − w)).
				grad[k][i] = (vk[i] - vals[i]) / finiteStep
			}
		}
		accepted := false
		for trust >= minTrust {
			next, err := p.stepLP(cost, rows, w, vals, grad, trust, penalty)
			if err != nil {
				return err
			}
			nv, err := eval(next)
			if err != nil {
				return err
			}
			if merit(next, nv) < merit(w, vals)-1e-9 {
				w, vals = next, nv
				accepted = true
				trust = math.Min(2*trust, 0.5)
				break
			}
			trust /= 2
		}
		if !accepted {
			sol.Converged = true
			break
		}
		if p.violation(vals) == 0 && trust < 1e-3 {
			sol.Converged = true
			break
		}
	}
	sol.Shares = w
	return nil
}

// stepLP solves the linear programme around w: the linear rows, the
// melting constraints linearised with elastic slacks e ≥ 0 (penalised),
// and |w' − w| ≤ trust. The step d = w' − w is written through the
// directions e_k − w: w' = w + Σ t_k (e_k − w) with Σ t_k ≤ 1 and t ≥ 0 is
// every blend, and the linearisation is g(w') ≈ g(w) + Σ t_k grad_k.
// Variables: t_1…t_n, e_1…e_c.
func (p *Problem) stepLP(cost []float64, rows []lpRow, w, vals []float64, grad [][]float64, trust, penalty float64) ([]float64, error) {
	n, c := len(w), len(p.Melting)
	// w'_j = w_j (1 − Σt) + t_j, so a row g·w' ≤ h becomes
	// Σ_k t_k (g_k − g·w) ≤ h − g·w.
	nv := n + c
	var lrows []lpRow
	for _, r := range rows {
		gw := dot(r.g, w)
		lr := lpRow{name: r.name, path: r.path, g: make([]float64, nv), h: r.h - gw}
		for k := 0; k < n; k++ {
			lr.g[k] = r.g[k] - gw
		}
		lrows = append(lrows, lr)
	}
	// Σ t ≤ 1 keeps w' a blend.
	sum := lpRow{g: make([]float64, nv), h: 1}
	for k := 0; k < n; k++ {
		sum.g[k] = 1
	}
	lrows = append(lrows, sum)
	// Trust region on each fraction: |w'_j − w_j| = |t_j − w_j Σt| ≤ trust.
	for j := 0; j < n; j++ {
		up := lpRow{g: make([]float64, nv), h: trust}
		dn := lpRow{g: make([]float64, nv), h: trust}
		for k := 0; k < n; k++ {
			v := -w[j]
			if k == j {
				v += 1
			}
			up.g[k], dn.g[k] = v, -v
		}
		lrows = append(lrows, up, dn)
	}
	for i, mc := range p.Melting {
		if !math.IsNaN(mc.Min) { // g + Σ t grad ≥ min − e
			r := lpRow{g: make([]float64, nv), h: vals[i] - mc.Min}
			for k := 0; k < n; k++ {
				r.g[k] = -grad[k][i]
			}
			r.g[n+i] = -1
			lrows = append(lrows, r)
		}
		if !math.IsNaN(mc.Max) { // g + Σ t grad ≤ max + e
			r := lpRow{g: make([]float64, nv), h: mc.Max - vals[i]}
			for k := 0; k < n; k++ {
				r.g[k] = grad[k][i]
			}
			r.g[n+i] = -1
			lrows = append(lrows, r)
		}
	}
	// Objective: the cost change Σ t_k (cost_k − cost·w) plus the penalty.
	cw := dot(cost, w)
	obj := make([]float64, nv)
	for k := 0; k < n; k++ {
		obj[k] = cost[k] - cw
	}
	for i := range p.Melting {
		obj[n+i] = penalty / p.tolerance(p.Melting[i])
	}
	x, err := solveFree(obj, lrows)
	if err != nil {
		return nil, chem.Errorf(chem.KindNoConvergence, "a step of the melting constraints could not be solved: %v", err)
	}
	var st float64
	for k := 0; k < n; k++ {
		st += x[k]
	}
	next := make([]float64, n)
	for j := range w {
		next[j] = w[j]*(1-st) + x[j]
	}
	clean(next)
	return next, nil
}

// solveFree minimises obj·x subject to rows g·x ≤ h and x ≥ 0 (no
// equality row), by the simplex method on the slack form.
func solveFree(obj []float64, rows []lpRow) ([]float64, error) {
	nv := len(obj)
	// A zero step is feasible when every h ≥ 0 except the elastic rows,
	// whose slacks absorb it; the simplex finds its own start.
	x, err := solveWith(obj, rows, nv)
	if errors.Is(err, lp.ErrInfeasible) {
		return nil, fmt.Errorf("infeasible step")
	}
	return x, err
}
