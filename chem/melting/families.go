package melting

import (
	"math"

	"lipidsvc/chem"
	"lipidsvc/chem/internal/roots"
)

// Solid-solution families (the SolidSolutionFamilies model).
//
// TAGs form mixed crystals only with TAGs of nearly the same shape
// (isomorphism; Kitaigorodskii's criterion as the fats literature applies
// it [memory]; review of binary and ternary TAG phase behaviour:
// Macridachis-González, Bayés-García & Calvet, Molecules 25:4562, 2020).
// The evidence that fixes our grouping rule, all read in published
// abstracts:
//
//   - Monoacid saturated TAGs two carbons per chain apart (six acyl carbons in
//     all) crystallise as separate phases: tripalmitin/tristearin is eutectic
//     (Pellegrino et al., Phys. Chem. Chem. Phys. 24:29413, 2022; Knoester, de
//     Bruijne & van den Tempel, Chem. Phys. Lipids 9, 1972,
//     doi:10.1016/0009-3084(72)90017-5, where 10 of 15 binary mixtures of
//     palmitic/stearic TAGs are eutectic with only slight to moderate solid
//     solubility), and trilaurin/trimyristin shows eutectic behaviour
//     (Crystals 14:807, 2024).
//   - The other 5 of Knoester's 15 pairs are highly miscible in the solid,
//     and "solid miscibility is strongly favoured by the presence of an
//     asymmetric triglyceride" (such as PPS, which differs from PPP by one
//     chain two carbons longer).
//   - Saturated and cis-unsaturated TAGs crystallise apart: POP/OOP is
//     eutectic (Zhang, Ueno, Miura & Sato, JAOCS 84, 2007); trilaurin forms
//     eutectics with SOS (Yoshikawa et al., Molecules 25:5313, 2020); oleic
//     acid with lauric, myristic or palmitic acid is completely immiscible in
//     the solid (Inoue et al., Chem. Phys. Lipids 127:161, 2004).
//   - Trans-monoene chains pack as straight chains, as saturated ones do:
//     in OSO, OEO and OVO the 1,3-dioleoyl chains segregate "from the
//     vaccinoyl, elaidoyl, or stearoyl chains into alternating layers", and a
//     saturated or trans sn-2 chain between cis outer chains gives the same
//     phases (Kodali, Atkinson, Redgrave & Small, J. Lipid Res. 28:403,
//     1987); the β′ crystal structures of mixed palmitoyl, stearoyl and
//     elaidoyl TAGs are of one type, double-chain-length layers in space group
//     I2, as the saturated analogues (van Mechelen, Peschar & Schenk, Acta
//     Cryst. B64:249, 2008). Their authors caution that little is known about
//     the actual packing of trans chains beside saturated ones, and no binary
//     phase diagram of a trans and a saturated TAG was available to us.
//
//   - Within one unsaturation count, which cis chain matters: SOS and SLS
//     form solid solutions in α but immiscible phases in β′ and β₂ below
//     30 % SLS (JAOCS, doi 10.1007/s11746-002-0535-1, abstract).
//   - Where the cis chain sits does not separate TAGs: POP and PPO form a
//     1:1 molecular compound, "giving rise to two monotectic phases of
//     PPO/compound and compound/POP" (Minato, Ueno, Smith, Amemiya & Sato,
//     J. Phys. Chem. B 101:3498, 1997), and OOP/OPO forms compounds in
//     metastable forms (Bayés-García, Calvet, Cuevas-Diarte, Ueno & Sato,
//     J. Phys. Chem. B 119:4417, 2015). A compound is a crystal holding both
//     molecules, so one mixed crystal is nearer to it than two separate
//     ones; the compound's own stability is not modelled.
//
// Rule (ours, from that evidence): two TAGs belong to the same family when
// they have the same number of cis-unsaturated chains (a chain with a cis
// double bond, or an all-cis polyene), the same number of those that are
// polyenes, and their total acyl carbon numbers fall in the same band of
// familyBandCarbons carbons centred on a monoacid TAG of an even acid (…,
// 30, 36, 42, 48, 54, …; a band holds n − 2 … n + 2 for even chains; the
// centring on monoacid TAGs is our choice, not fitted, and TestFamilyRule
// pins it). Saturated and trans chains count alike, as straight chains, so
// PSS, PES and PEE of a hardened oil crystallise together; their different
// melting points stay in the pure-TAG properties (the trans term of the
// correlation). Trans dienes, as the lumped "18:2 t" of hardening reports
// them, count as trans chains too: the label does not say where a cis bend
// would be. So a family holds TAGs at most two acyl carbons from its centre
// — mixed crystals of near-isomorphous molecules — while monoacid TAGs two
// carbons per chain apart, which the data show eutectic, always fall in
// different families. The bands are fixed, not fitted: a species' family
// does not depend on the rest of the fat, so the model stays continuous
// along a composition path. Each family is an ideal solid solution; the
// families and the liquid are mutually immiscible. Cocoa butter's form V,
// which behaves as one POS-type phase holding POP, POS and SOS (Wille &
// Lutton, JAOCS 43:491, 1966), is a metastable form the rule does not
// describe: POP falls in the band below POS and SOS.

// familyBandCarbons is the width of a carbon-number band (see above).
const familyBandCarbons = 6

// familyKey identifies a solid-solution family.
type familyKey struct {
	cis  uint8 // number of cis-unsaturated chains
	poly uint8 // how many of them are polyenes
	band int16 // carbon-number band, centre = band × familyBandCarbons
}

// familyClass is what a chain counts as in the family rule: 0 for a
// straight chain (saturated or trans), 1 for a cis monoene, 5 for a cis
// polyene (one cis chain plus polyClass). A TAG's family adds its chains'
// classes, which encodes both counts (at most three chains, so the cis
// count never reaches polyClass), and its carbon band; the builder's dense
// keys and familyOf both derive from this one function.
func familyClass(k chainKind) int {
	switch k {
	case kindSaturated, kindTransMonoene, kindTransDiene:
		return 0
	case kindCisMonoene:
		return 1
	default:
		return 1 + polyClass
	}
}

// polyClass is the weight of a polyene in familyClass.
const polyClass = 4

// familyOf is the family of the TAG with chains c1, c2, c3.
func familyOf(c1, c2, c3 chain) familyKey {
	var k familyKey
	for _, c := range [3]chain{c1, c2, c3} {
		code := familyClass(c.kind)
		k.cis += uint8(code % polyClass)
		k.poly += uint8(code / polyClass)
	}
	n := c1.carbons + c2.carbons + c3.carbons
	k.band = int16((n + familyBandCarbons/2) / familyBandCarbons)
	return k
}

// sfcFamilies solves the liquid + ideal-solid-solution-families equilibrium
// at tK and returns the SFC, mass %.
//
// With an ideal liquid and ideal solid solutions, K_i = x_i,solid/x_i,liquid
// = 1/x_i,sat, and the equilibrium is the minimum of Michelsen's convex
// function for multiphase ideal-solution equilibrium, Q = L + Σ_f S_f −
// Σ_i z_i ln(L + S_f(i)·K_i) over phase amounts L, S_f ≥ 0 (M.L. Michelsen,
// "Calculation of multiphase ideal solution chemical equilibrium", Fluid
// Phase Equilib. 33:13, 1987 [memory: citation recalled, form re-derived
// here]): a present family has Σ_{i∈f} x_i,solid = 1, an absent one
// Σ_{i∈f} K_i·x_i,liquid ≤ 1 (its stability test), and the liquid mole
// fractions sum to 1. Writing S_f = L·t_f, a present family satisfies
// φ_f(t) = Σ_{i∈f} z_i K_i/(1 + t K_i) = L, and the liquid balance is
// ψ(L) = Σ_i z_i/(1 + t_f(i) K_i) = L.
//
// The fast path (familyJointNewton) solves all of these at once by Newton's
// method from the previous temperature's solution. Should it fail, the
// robust path takes over: the outer equation in L (ψ(L) − L changes sign
// once on (0, 1], because Q minimised over the S_f is convex in L) by
// bracketed Newton, and each family's inner equation in t by Newton on
// 1/φ_f, which is concave and increasing in t, so the iteration converges
// monotonically once left of the root (one step for a single-member family,
// which is exact). Every iteration is capped by maxIter.
func (m *Mixture) sfcFamilies(tK, shiftK float64, maxIter int, w *workspace) (float64, error) {
	if maxIter <= 0 {
		maxIter = DefaultMaxIterations
	}
	inv := 1 / tK
	nf := len(m.famOff) - 1
	act := w.act[:0]
	var zFree float64 // Σz of the families that cannot crystallise at tK
	k := w.r
	for f := 0; f < nf; f++ {
		// A family whose members are all at or above their melting points
		// has every K_i ≤ 1 and so Σ K_i x_i ≤ 1: it is never present.
		if tK >= m.famMaxTm[f]+shiftK {
			zFree += m.famZ[f]
			w.t[f] = 0
			continue
		}
		lo, hi := m.famOff[f], m.famOff[f+1]
		var phi0 float64
		if shiftK == 0 {
			for i := lo; i < hi; i++ {
				k[i] = fastExp(m.a[i]*inv - m.c[i])
				phi0 += m.z[i] * k[i]
			}
		} else {
			for i := lo; i < hi; i++ {
				k[i] = fastExp(m.a[i]*inv - m.a[i]/(m.tm[i]+shiftK))
				phi0 += m.z[i] * k[i]
			}
		}
		w.phi0[f] = phi0
		act = append(act, int32(f))
	}
	w.act = act
	// All liquid when no family is unstable at L = 1.
	unstable := false
	for _, f := range act {
		if w.phi0[f] > 1 {
			unstable = true
			break
		}
	}
	if !unstable {
		for _, f := range act {
			w.t[f] = 0
		}
		return 0, nil
	}
	// All solid when L = 0 is optimal: every family present with the
	// composition of the fat, S_f = Z_f, and Σ_i z_i/(Z_f K_i) ≤ 1.
	if zFree == 0 {
		var h0 float64
		for _, f := range act {
			var s float64
			for i := m.famOff[f]; i < m.famOff[f+1]; i++ {
				s += m.z[i] / k[i]
			}
			h0 += s / m.famZ[f]
		}
		if h0 <= 1 {
			return 100, nil
		}
	}

	// Outer safeguarded Newton on F(L) = ψ(L) − L, F > 0 below the root.
	// Warm start: the liquid fraction of the last solution, extrapolated
	// linearly in T from the last two when they are close.
	L := w.liquid
	if w.prevT > 0 && w.lastT != w.prevT && math.Abs(tK-w.lastT) < 5 {
		L += (w.liquid - w.prevL) / (w.lastT - w.prevT) * (tK - w.lastT)
	}
	if !(L > 0 && L < 1) {
		L = 0.5
	}
	if !w.nestedOnly {
		if L, ok := m.familyJointNewton(L, zFree, min(maxIter, jointNewtonIterations), w); ok {
			return m.familySFC(L, tK, w), nil
		}
	}
	// Fallback: the nested, bracketed iteration, from scratch: F(L) =
	// ψ(L) − L falls through zero on (0, 1), with dF/dL = ψ′ − 1.
	for _, f := range w.act {
		w.t[f] = 0
	}
	r, err := roots.Find(roots.Problem{
		F: func(L float64) (float64, float64, error) {
			psi, dpsi, err := m.familyBalance(L, zFree, maxIter, w)
			return psi - L, dpsi - 1, err
		},
		Lo: 0, Hi: 1, FLo: math.NaN(), FHi: math.NaN(), Start: 0.5, XTol: 1e-15, RelTol: 1e-13, MaxIter: maxIter,
	})
	if err != nil {
		return 0, err
	}
	if !r.Converged && !r.Stalled {
		return 0, chem.Errorf(chem.KindNoConvergence,
			"the solid-solution-families equilibrium did not converge in %d iterations", maxIter)
	}
	L = r.X
	if _, _, err := m.familyBalance(L, zFree, maxIter, w); err != nil {
		return 0, err
	}
	return m.familySFC(L, tK, w), nil
}

// familySFC records the solution for warm starts and returns the SFC from
// the t_f in w.t: the solid of component i is
// S_f·x_i,solid = z_i t_f K_i/(1 + t_f K_i).
func (m *Mixture) familySFC(L, tK float64, w *workspace) float64 {
	k := w.r
	w.prevT, w.prevL = w.lastT, w.liquid
	w.lastT, w.liquid = tK, L
	var solidMass float64
	for _, f := range w.act {
		t := w.t[f]
		if t == 0 {
			continue
		}
		for i := m.famOff[f]; i < m.famOff[f+1]; i++ {
			tk := t * k[i]
			solidMass += m.mass[i] * m.z[i] * tk / (1 + tk)
		}
	}
	return math.Min(100, 100*solidMass/m.totalMass)
}

// jointNewtonIterations caps the fast path of the families solver.
const jointNewtonIterations = 40

// familyJointNewton is the fast path of the families solver: Newton's
// method on all unknowns at once — L and the t_f of the multi-member
// families, with the families' equations in the form 1/φ_f(t_f) = 1/L and
// single-member families solved exactly in L — so each iteration costs one
// pass over the components. The Jacobian is an arrow matrix, so the step
// needs no linear solver: δt_f = −(G_f + δL/L²)·φ_f²/φ_f′ and
// δL = −(ψ − L + Σ a_f G_f)/(Σ a_f/L² + s − 1), a_f = ψ_f′φ_f²/φ_f′ (primes:
// −d/dt), s = Σ 1/K over present single-member families. A family joins
// when φ_f(0) > L and leaves when its t_f would fall to zero. It reports
// ok = false (and the caller falls back to the bracketed nested iteration)
// if it has not met its tolerances within maxIter iterations.
func (m *Mixture) familyJointNewton(L, zFree float64, maxIter int, w *workspace) (float64, bool) {
	k := w.r
	resynced := false
	for it := 0; it < maxIter; it++ {
		psi := zFree
		var sumA, sumAG, s1 float64
		for _, f := range w.act {
			lo, hi := m.famOff[f], m.famOff[f+1]
			t := w.t[f]
			if t == 0 && w.phi0[f] <= L {
				psi += m.famZ[f]
				continue
			}
			if hi-lo == 1 {
				if w.phi0[f] <= L {
					w.t[f] = 0
					psi += m.famZ[f]
					continue
				}
				w.t[f] = 1 // marks present; the value is set at the end
				psi += L / k[lo]
				s1 += 1 / k[lo]
				continue
			}
			var phi, ps, dps, dphi float64
			for i := lo; i < hi; i++ {
				d := 1 / (1 + t*k[i])
				zk := m.z[i] * k[i] * d
				phi += zk
				ps += m.z[i] * d
				dps += zk * d
				dphi += zk * k[i] * d
			}
			g := 1/phi - 1/L
			a := dps * phi * phi / dphi
			psi += ps
			sumA += a
			sumAG += a * g
			w.gf[f], w.cf[f] = g, phi*phi/dphi
		}
		den := sumA/(L*L) + s1 - 1
		dL := -(psi - L + sumAG) / den
		if math.IsNaN(dL) || den >= 0 {
			// The linearisation is poor far from the solution (a cold
			// start): solve the families exactly at this L once, then go
			// on from there.
			if resynced {
				return L, false
			}
			resynced = true
			if _, _, err := m.familyBalance(L, zFree, maxIter, w); err != nil {
				return L, false
			}
			continue
		}
		// Keep L inside (0, 1): at most halve the distance to either end.
		next := math.Min(math.Max(L+dL, 0.5*L), 0.5*(L+1))
		dL = next - L
		done := math.Abs(dL) <= 1e-13*L
		for _, f := range w.act {
			lo, hi := m.famOff[f], m.famOff[f+1]
			if hi-lo == 1 || w.t[f] == 0 && w.phi0[f] <= L {
				continue
			}
			dt := -(w.gf[f] + dL/(L*L)) * w.cf[f]
			t := w.t[f] + dt
			if t <= 0 {
				t = 0
				done = false
			} else if math.Abs(dt) > 1e-12*t {
				done = false
			}
			w.t[f] = t
		}
		L = next
		if done {
			// Consistency: families left out must be stable as absent.
			for _, f := range w.act {
				lo, hi := m.famOff[f], m.famOff[f+1]
				if hi-lo == 1 {
					w.t[f] = 0
					if w.phi0[f] > L {
						w.t[f] = m.z[lo]/L - 1/k[lo]
					}
					continue
				}
				if w.t[f] == 0 && w.phi0[f] > L {
					return L, false
				}
			}
			return L, true
		}
	}
	return L, false
}

// familyBalance solves every active family's inner equation at liquid
// fraction L (t_f = 0 for a family that is stable as absent) and returns
// ψ(L) = Σ_i z_i/(1 + t_f K_i) and dψ/dL. K_i are in w.r, φ_f(0) in w.phi0.
func (m *Mixture) familyBalance(L, zFree float64, maxIter int, w *workspace) (psi, dpsi float64, err error) {
	k := w.r
	psi = zFree
	for _, f := range w.act {
		lo, hi := m.famOff[f], m.famOff[f+1]
		if w.phi0[f] <= L {
			w.t[f] = 0
			psi += m.famZ[f]
			continue
		}
		if hi-lo == 1 {
			// φ = zK/(1 + tK) = L exactly: t = z/L − 1/K; ψ_f = L/K.
			w.t[f] = m.z[lo]/L - 1/k[lo]
			psi += L / k[lo]
			dpsi += 1 / k[lo]
			continue
		}
		// Newton on G(t) = 1/φ(t) − 1/L, concave and increasing in t from
		// G(0) < 0 (the family is unstable as absent), dG/dt = φ′/φ².
		var t, ps, dps, dphi float64
		r, err := roots.Find(roots.Problem{
			F: func(x float64) (float64, float64, error) {
				var phi float64
				t, ps, dps, dphi = x, 0, 0, 0
				for i := lo; i < hi; i++ {
					d := 1 / (1 + x*k[i])
					zk := m.z[i] * k[i] * d
					phi += zk
					ps += m.z[i] * d
					dps += zk * d         // −dψ_f/dt
					dphi += zk * k[i] * d // −dφ_f/dt
				}
				return 1/phi - 1/L, dphi / (phi * phi), nil
			},
			// A step this small leaves t (and the sums at t) within about
			// 1e-13 of the root; they are kept rather than paid for with
			// one more pass.
			Lo: 0, Hi: math.Inf(1), FLo: math.NaN(), FHi: math.NaN(), Increasing: true,
			Start: w.t[f], Step: 1e-300, RelTol: 1e-13, MaxIter: maxIter,
		})
		if err != nil || !(r.Converged || r.Stalled) {
			return 0, 0, chem.Errorf(chem.KindNoConvergence,
				"the solid-solution-families equilibrium did not converge in %d iterations", maxIter)
		}
		w.t[f] = t
		psi += ps
		// dψ_f/dL = (dψ_f/dt)/(dφ_f/dt) since φ_f(t_f) = L.
		dpsi += dps / dphi
	}
	return psi, dpsi, nil
}

// familyClearPointK is the clear point of the families model: the highest
// of the families' liquidus temperatures, Σ_{i∈f} z_i K_i(T) = 1 (a family
// of one member has the exact eutectic solution).
func (m *Mixture) familyClearPointK(shiftK float64, maxIter int) (float64, error) {
	var best float64
	for f := 0; f+1 < len(m.famOff); f++ {
		// A family's liquidus lies below its highest melting point, so a
		// family that cannot beat the best so far needs no solution.
		if m.famMaxTm[f]+shiftK <= best {
			continue
		}
		t, err := m.liquidusK(m.famOff[f], m.famOff[f+1], shiftK, maxIter)
		if err != nil {
			return 0, err
		}
		best = math.Max(best, t)
	}
	return best, nil
}
