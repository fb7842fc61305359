package blend

import (
	"context"
	"math"
	"testing"

	"github.com/stretchr/testify/require"
	"gonum.org/v1/gonum/mat"

	"lipidsvc/chem"
	"lipidsvc/chem/identity"
	"lipidsvc/chem/melting"
)

// Typical compositions of the candidates of a margarine basestock
// (invented demo data near published typical values; common practice, no
// source): soybean, palm, palm stearin, coconut, fully hardened soybean.
func palm(t testing.TB) *chem.Profile {
	return profileOf(t, chem.Entry{Acid: "14:0", Percent: 1}, chem.Entry{Acid: "16:0", Percent: 44}, chem.Entry{Acid: "18:0", Percent: 4.5},
		chem.Entry{Acid: "18:1 c9", Percent: 39.5}, chem.Entry{Acid: "18:2 c9,c12", Percent: 10.5}, chem.Entry{Acid: "18:3 c9,c12,c15", Percent: 0.2},
		chem.Entry{Acid: "20:0", Percent: 0.3})
}

func palmStearin(t testing.TB) *chem.Profile {
	return profileOf(t, chem.Entry{Acid: "14:0", Percent: 1.3}, chem.Entry{Acid: "16:0", Percent: 60}, chem.Entry{Acid: "18:0", Percent: 5},
		chem.Entry{Acid: "18:1 c9", Percent: 27}, chem.Entry{Acid: "18:2 c9,c12", Percent: 6.4}, chem.Entry{Acid: "20:0", Percent: 0.3})
}

func coconut(t testing.TB) *chem.Profile {
	return profileOf(t, chem.Entry{Acid: "8:0", Percent: 7.5}, chem.Entry{Acid: "10:0", Percent: 6}, chem.Entry{Acid: "12:0", Percent: 47.5},
		chem.Entry{Acid: "14:0", Percent: 18.5}, chem.Entry{Acid: "16:0", Percent: 9}, chem.Entry{Acid: "18:0", Percent: 3},
		chem.Entry{Acid: "18:1 c9", Percent: 6.5}, chem.Entry{Acid: "18:2 c9,c12", Percent: 2})
}

func open() float64 { return math.NaN() }

func candidates(t testing.TB, n int) []Candidate {
	all := []Candidate{
		{Component: Component{ID: "soybean", Profile: soybean(t)}, CostPerTonne: 1050, MaxShare: 1},
		{Component: Component{ID: "palm", Profile: palm(t)}, CostPerTonne: 980, MaxShare: 1},
		{Component: Component{ID: "coconut", Profile: coconut(t)}, CostPerTonne: 1450, MaxShare: 0.4},
		{Component: Component{ID: "fhsbo", Profile: hardSoybean(t)}, CostPerTonne: 1200, MaxShare: 1},
		{Component: Component{ID: "palm_stearin", Profile: palmStearin(t)}, CostPerTonne: 940, MaxShare: 1},
	}
	return all[:n]
}

func terms(t testing.TB, sel string) []identity.Term {
	ts, err := identity.ParseSelector(sel)
	require.NoError(t, err)
	return ts
}

// bruteForce is the least cost over every vertex of the feasible region:
// each choice of n−1 of the inequalities (with w ≥ 0) held as equalities,
// with Σ w = 1, solved directly and kept when feasible. It shares nothing
// with the simplex but the rows.
func bruteForce(cost []float64, rows []lpRow, n int) (best float64, bestW []float64) {
	all := append([]lpRow(nil), rows...)
	for k := 0; k < n; k++ {
		r := lpRow{g: make([]float64, n)}
		r.g[k] = -1
		all = append(all, r)
	}
	best = math.Inf(1)
	idx := make([]int, n-1)
	var rec func(start, depth int)
	rec = func(start, depth int) {
		if depth == n-1 {
			A := mat.NewDense(n, n, nil)
			b := mat.NewVecDense(n, nil)
			for i, ri := range idx {
				for k := 0; k < n; k++ {
					A.Set(i, k, all[ri].g[k])
				}
				b.SetVec(i, all[ri].h)
			}
			for k := 0; k < n; k++ {
				A.Set(n-1, k, 1)
			}
			b.SetVec(n-1, 1)
			var w mat.VecDense
			if err := w.SolveVec(A, b); err != nil {
				return
			}
			x := w.RawVector().Data
			for _, r := range all {
				if dot(r.g, x) > r.h+1e-9 {
					return
				}
			}
			if c := dot(cost, x); c < best {
				best, bestW = c, append([]float64(nil), x...)
			}
			return
		}
		for i := start; i < len(all); i++ {
			idx[depth] = i
			rec(i+1, depth+1)
		}
	}
	rec(0, 0)
	return best, bestW
}

// The simplex optimum of three- and four-candidate problems with linear
// constraints matches the vertex enumeration within 1e-6 relative, and no
// point of a fine grid over the blends is cheaper while meeting every
// constraint.
func TestOptimizeLinearMatchesBruteForce(t *testing.T) {
	cases := []struct {
		name   string
		n      int
		linear []LinearConstraint
	}{
		{"three: IV and saturates", 3, []LinearConstraint{
			{Name: "iodine_value", Quantity: IodineValue, Min: 85, Max: 100},
			{Name: "saturated", Quantity: ClassShare, Class: ClassSaturated, Min: open(), Max: 40},
		}},
		{"three: linolenic and lauric", 3, []LinearConstraint{
			{Name: "C18:3", Quantity: Share, Terms: terms(t, "C18:3"), Min: open(), Max: 3},
			{Name: "C12:0", Quantity: Share, Terms: terms(t, "C12:0"), Min: 8, Max: open()},
			{Name: "saponification_value", Quantity: SaponificationValue, Min: open(), Max: 215},
		}},
		{"four: IV, C18:0, n-6/n-3", 4, []LinearConstraint{
			{Name: "iodine_value", Quantity: IodineValue, Min: 70, Max: 80},
			{Name: "C18:0", Quantity: Share, Terms: terms(t, "C18:0"), Min: 10, Max: open()},
			{Name: "n6_to_n3", Quantity: N6ToN3, Min: open(), Max: 12},
			{Name: "polyunsaturated", Quantity: ClassShare, Class: ClassPolyunsaturated, Min: 15, Max: open()},
		}},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			p := Problem{Candidates: candidates(t, c.n), Linear: c.linear, Mode: Physical}
			sol, err := Optimize(context.Background(), p)
			require.NoError(t, err)
			data, cost, rows, err := p.programme()
			require.NoError(t, err)
			_ = data
			best, bestW := bruteForce(cost, rows, c.n)
			require.False(t, math.IsInf(best, 1))
			require.InDelta(t, best, sol.CostPerTonne, 1e-6*best, "simplex %v, vertices %v", sol.Shares, bestW)
			for _, a := range sol.Linear {
				require.True(t, a.Met, "%s = %g", a.Name, a.Value)
			}
			// A grid: nothing feasible is cheaper.
			step := 0.02
			if c.n == 4 {
				step = 0.05
			}
			var walk func(k int, w []float64, left float64)
			walk = func(k int, w []float64, left float64) {
				if k == c.n-1 {
					w[k] = left
					for _, r := range rows {
						if dot(r.g, w) > r.h+1e-9 {
							return
						}
					}
					require.GreaterOrEqual(t, dot(cost, w), sol.CostPerTonne-1e-6, "grid point %v", w)
					return
				}
				for v := 0.0; v <= left+1e-9; v += step {
					w[k] = v
					walk(k+1, w, left-v)
				}
			}
			walk(0, make([]float64, c.n), 1)
		})
	}
}

// Constraints that cannot hold together are named, and only those: an
// iodine value of at least 110 and saturates of at least 45 % cannot be
// had from soybean, palm and coconut (coconut capped at 40 %), while the
// linolenic limit is not part of the conflict.
func TestOptimizeInfeasibleNamesTheConflict(t *testing.T) {
	p := Problem{Candidates: candidates(t, 3), Mode: Physical, Linear: []LinearConstraint{
		{Name: "C18:3", Path: []any{"constraints", "acids", 0}, Quantity: Share, Terms: terms(t, "C18:3"), Min: open(), Max: 8},
		{Name: "iodine_value", Path: []any{"constraints", "iodine_value"}, Quantity: IodineValue, Min: 110, Max: open()},
		{Name: "saturated", Path: []any{"constraints", "classes", "saturated"}, Quantity: ClassShare, Class: ClassSaturated, Min: 45, Max: open()},
	}}
	_, err := Optimize(context.Background(), p)
	ce, ok := chem.AsError(err)
	require.True(t, ok, "%v", err)
	require.Equal(t, chem.KindOutOfDomain, ce.Kind)
	var paths []any
	for _, f := range ce.Fields {
		paths = append(paths, f.Path[len(f.Path)-1])
	}
	require.Contains(t, paths, "iodine_value")
	require.Contains(t, paths, "saturated")
	require.NotContains(t, paths, 0, "the linolenic limit is not in conflict")
	require.Contains(t, ce.Message, "iodine_value ≥ 110")

	// Shares that cannot sum to 1.
	cs := candidates(t, 2)
	cs[0].MaxShare, cs[1].MaxShare = 0.3, 0.4
	_, err = Optimize(context.Background(), Problem{Candidates: cs, Mode: Physical})
	ce, _ = chem.AsError(err)
	require.Len(t, ce.Fields, 2, ce.Message)
}

// Melting constraints: the answer meets them within tolerance, and its
// cost matches the least cost over a grid of blends (step 0.02) that meet
// them within 1 %, the resolution of the grid.
func TestOptimizeMeltingAgainstGrid(t *testing.T) {
	if testing.Short() {
		t.Skip("evaluates the melting model on a grid")
	}
	// The physical blend's slip point jumps with the first percent of
	// hard stock (its trisaturated TAGs melt near 70 °C), so its case
	// bounds the SFC at 35 °C instead of the slip point.
	cases := map[Mode][]MeltingConstraint{
		Physical: {{Name: "sfc_10c", TemperatureC: 10, Min: 30, Max: open()}, {Name: "sfc_20c", TemperatureC: 20, Min: 10, Max: open()},
			{Name: "sfc_35c", TemperatureC: 35, Min: open(), Max: 12}},
		Interesterified: {{Name: "sfc_10c", TemperatureC: 10, Min: 30, Max: open()}, {Name: "sfc_20c", TemperatureC: 20, Min: 15, Max: open()},
			{Name: "slip", Slip: true, Min: open(), Max: 38}},
	}
	for _, mode := range []Mode{Physical, Interesterified} {
		t.Run(mode.String(), func(t *testing.T) {
			cs := candidates(t, 4)
			cs = []Candidate{cs[0], cs[1], cs[3]} // soybean, palm, fully hardened soybean
			p := Problem{Candidates: cs, Mode: mode, Linear: []LinearConstraint{
				{Name: "iodine_value", Quantity: IodineValue, Min: 75, Max: open()},
			}, Melting: cases[mode]}
			sol, err := Optimize(context.Background(), p)
			require.NoError(t, err)
			require.Zero(t, sol.MeltingViolation, "%+v after %d steps", sol.Melting, sol.Iterations)
			_, cost, rows, err := p.programme()
			require.NoError(t, err)
			m := newMixer(prsOf(mustData(t, p)))
			best := math.Inf(1)
			const step = 0.02
			for a := 0.0; a <= 1+1e-9; a += step {
				for b := 0.0; a+b <= 1+1e-9; b += step {
					w := []float64{a, b, math.Max(0, 1-a-b)}
					ok := true
					for _, r := range rows {
						ok = ok && dot(r.g, w) <= r.h+1e-9
					}
					if !ok {
						continue
					}
					f, err := m.fat(w, mode, melting.Options{})
					require.NoError(t, err)
					vals, err := meltingValues(f, p.Melting)
					require.NoError(t, err)
					if p.violation(vals) == 0 {
						best = math.Min(best, dot(cost, w))
					}
				}
			}
			require.False(t, math.IsInf(best, 1), "the grid has a feasible blend")
			// Within the grid's resolution either way: the optimiser is not
			// beaten by a grid point meeting the same constraints (with the
			// same tolerance), and finds nothing much cheaper than the
			// grid, which would mean it broke a constraint.
			require.LessOrEqual(t, sol.CostPerTonne, best*1.01, "the grid found %.2f, the optimiser %.2f %v", best, sol.CostPerTonne, sol.Shares)
			require.GreaterOrEqual(t, sol.CostPerTonne, best*0.99, "the grid found %.2f, the optimiser %.2f %v", best, sol.CostPerTonne, sol.Shares)
			t.Logf("%s: cost %.2f (grid %.2f), shares %.3f, %d steps, %d evaluations", mode, sol.CostPerTonne, best, sol.Shares, sol.Iterations, sol.Evaluations)
		})
	}
}

func mustData(t *testing.T, p Problem) []candidateData {
	data, _, _, err := p.programme()
	require.NoError(t, err)
	return data
}

// twelve are the candidates of a plant's margarine basestock planning
// (typical compositions; invented demo data, common practice, no source).
func twelve(b testing.TB) []Candidate {
	e := func(acid string, pct float64) chem.Entry { return chem.Entry{Acid: acid, Percent: pct} }
	cs := candidates(b, 5)
	more := []struct {
		id   string
		cost float64
		p    *chem.Profile
	}{
		{"rapeseed", 1000, profileOf(b, e("16:0", 4.5), e("18:0", 1.7), e("18:1 c9", 61), e("18:2 c9,c12", 20.5), e("18:3 c9,c12,c15", 9.5), e("20:1 c11", 1.4), e("20:0", 0.6), e("22:0", 0.3), e("18:1 c11", 0.5))},
		{"sunflower_high_oleic", 1250, profileOf(b, e("16:0", 3.8), e("18:0", 3.5), e("18:1 c9", 82), e("18:2 c9,c12", 9), e("20:0", 0.4), e("22:0", 1.0), e("24:0", 0.3))},
		{"cottonseed", 1080, profileOf(b, e("14:0", 0.8), e("16:0", 23.5), e("18:0", 2.5), e("18:1 c9", 17.5), e("18:2 c9,c12", 55), e("18:3 c9,c12,c15", 0.4), e("20:0", 0.3))},
		{"palm_kernel", 1380, profileOf(b, e("6:0", 0.3), e("8:0", 3.7), e("10:0", 3.5), e("12:0", 48), e("14:0", 16), e("16:0", 8.5), e("18:0", 2.4), e("18:1 c9", 15.2), e("18:2 c9,c12", 2.4))},
		{"palm_olein", 1010, profileOf(b, e("14:0", 1), e("16:0", 39.5), e("18:0", 4.2), e("18:1 c9", 42.5), e("18:2 c9,c12", 12.2), e("18:3 c9,c12,c15", 0.3), e("20:0", 0.3))},
		{"maize", 1150, profileOf(b, e("16:0", 11), e("18:0", 2), e("18:1 c9", 28), e("18:2 c9,c12", 57), e("18:3 c9,c12,c15", 1), e("20:0", 0.5), e("20:1 c11", 0.3), e("22:0", 0.2))},
		{"fh_palm", 1150, profileOf(b, e("14:0", 1.1), e("16:0", 44.5), e("18:0", 53.9), e("20:0", 0.5))},
	}
	for _, m := range more {
		cs = append(cs, Candidate{Component: Component{ID: m.id, Profile: m.p}, CostPerTonne: m.cost, MaxShare: 1})
	}
	return cs
}

// BenchmarkOptimize12 is a twelve-candidate least-cost basestock: linear
// constraints only, and with solid fat contents at 10, 20 and 35 °C.
func BenchmarkOptimize12(b *testing.B) {
	linear := []LinearConstraint{
		{Name: "iodine_value", Quantity: IodineValue, Min: 70, Max: 90},
		{Name: "C18:3", Quantity: Share, Terms: terms(b, "C18:3"), Min: open(), Max: 3},
		{Name: "saturated", Quantity: ClassShare, Class: ClassSaturated, Min: open(), Max: 40},
		{Name: "trans", Quantity: ClassShare, Class: ClassTrans, Min: open(), Max: 1},
	}
	meltingCs := []MeltingConstraint{{Name: "sfc_10c", TemperatureC: 10, Min: 28, Max: open()},
		{Name: "sfc_20c", TemperatureC: 20, Min: 12, Max: open()}, {Name: "sfc_35c", TemperatureC: 35, Min: open(), Max: 4}}
	for _, c := range []struct {
		name string
		mc   []MeltingConstraint
		mode Mode
	}{{"linear", nil, Physical}, {"melting_physical", meltingCs, Physical}, {"melting_interesterified", meltingCs, Interesterified}} {
		b.Run(c.name, func(b *testing.B) {
			p := Problem{Candidates: twelve(b), Linear: linear, Melting: c.mc, Mode: c.mode}
			var sol *Solution
			for b.Loop() {
				var err error
				sol, err = Optimize(context.Background(), p)
				if err != nil {
					b.Fatal(err)
				}
			}
			b.ReportMetric(float64(sol.Evaluations), "melting-evaluations")
			b.ReportMetric(sol.MeltingViolation, "violation")
		})
	}
}
