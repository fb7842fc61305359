package melting

import (
	"math"

	"lipidsvc/chem"
	"lipidsvc/chem/internal/roots"
)

// sfcSolidSolution solves the Rachford–Rice equation for the solid fraction
// β by Newton's method safeguarded by bisection; g(β) is decreasing on
// [0, 1], so the bracket always holds the root.
func (m *Mixture) sfcSolidSolution(tK, shiftK float64, maxIter int, w *workspace) (float64, error) {
	if maxIter <= 0 {
		maxIter = DefaultMaxIterations
	}
	m.saturation(tK, shiftK, w)
	k := w.r // reuse as K_i = 1/x_sat
	var g0, g1 float64
	for i, s := range w.s {
		k[i] = 1 / s
		g0 += m.z[i] * (k[i] - 1)
		g1 += m.z[i] * (1 - s)
	}
	if g0 <= 0 {
		return 0, nil
	}
	beta := 1.0
	if g1 < 0 {
		// g(β) = Σ z_i(K_i − 1)/(1 + β(K_i − 1)) falls from g0 > 0 to
		// g1 < 0 on [0, 1]; its derivative is exact and cheap.
		r, err := roots.Find(roots.Problem{
			F: func(beta float64) (float64, float64, error) {
				var g, dg float64
				for i, z := range m.z {
					d := k[i] - 1
					den := 1 + beta*d
					q := z * d / den
					g += q
					dg -= q * d / den
				}
				return g, dg, nil
			},
			Lo: 0, Hi: 1, FLo: g0, FHi: g1, Start: 0.5, XTol: 1e-15, MaxIter: maxIter,
		})
		if err != nil || !(r.Converged || r.Stalled) {
			return 0, chem.Errorf(chem.KindNoConvergence,
				"the solid-solution equilibrium did not converge in %d iterations", maxIter)
		}
		beta = r.X
	}
	var solidMass float64
	for i, z := range m.z {
		xs := k[i] * z / (1 + beta*(k[i]-1))
		if math.IsInf(k[i], 1) {
			xs = z / beta
		}
		solidMass += beta * xs * m.mass[i]
	}
	return math.Min(100, 100*solidMass/m.totalMass), nil
}

// liquidusK is the temperature at which an ideal solid solution of the
// components first..last−1 starts to crystallise from the whole liquid:
// Σ z_i K_i(T) = 1, solved by safeguarded Newton in u = 1/T.
func (m *Mixture) liquidusK(first, last int, shiftK float64, maxIter int) (float64, error) {
	uMin, maxTm := math.Inf(1), 0.0
	for i := first; i < last; i++ {
		a := m.a[i]
		uMin = math.Min(uMin, (a/(m.tm[i]+shiftK)-math.Log(m.z[i]))/a)
		maxTm = math.Max(maxTm, m.tm[i])
	}
	if last-first == 1 {
		return 1 / uMin, nil
	}
	if maxIter <= 0 {
		maxIter = DefaultMaxIterations
	}
	// h(u) = Σ z_i exp(a_i u − a_i/Tm_i) − 1 is increasing and convex in u;
	// h(1/maxTm) ≤ 0 and h(uMin) ≥ 0. Newton from the right end: h is
	// convex and increasing, so the iterates stay right of the root and
	// decrease monotonically.
	r, err := roots.Find(roots.Problem{
		F: func(u float64) (float64, float64, error) {
			var h, dh float64
			for i := first; i < last; i++ {
				a := m.a[i]
				e := m.z[i] * fastExp(a*u-a/(m.tm[i]+shiftK))
				h += e
				dh += a * e
			}
			return h - 1, dh, nil
		},
		Lo: 1 / (maxTm + shiftK), Hi: uMin, FLo: math.NaN(), FHi: math.NaN(), Increasing: true,
		Start: uMin, XTol: 1e-16, MaxIter: maxIter,
	})
	if err != nil || !(r.Converged || r.Stalled) {
		return 0, chem.Errorf(chem.KindNoConvergence, "the solid-solution clear point did not converge in %d iterations", maxIter)
	}
	return 1 / r.X, nil
}
