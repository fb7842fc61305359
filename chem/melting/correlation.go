package melting

// The fitted coefficients (coefficients_gen.go, with their data and
// residuals in testdata/melting) and the validation report are generated
// by the tests that check them; go generate ./... rewrites both.
//
//go:generate go test -run ^TestFitCoefficients$ -update .
//go:generate go test -run ^TestValidation$ -update .

import (
	"math"

	"lipidsvc/chem"
)

// Polymorph is a crystal form of a triacylglycerol. The three classes are
// the ones the trade and the literature use; sub-forms (β′1, β′2, β1, β2,
// pseudo-β′) are folded into their class, taking the highest-melting
// sub-form of the class.
type Polymorph int

const (
	// Alpha (α) is the least stable, hexagonal form, obtained by quenching.
	Alpha Polymorph = iota + 1
	// BetaPrime (β′) is the orthorhombic-perpendicular form. Unstabilised
	// hardened and palm-based fats crystallise mostly in it (the melting package documentation), so
	// it is the default.
	BetaPrime
	// Beta (β) is the triclinic-parallel, most stable form of most TAGs;
	// tempered cocoa-butter-type fats and aged trisaturated fats reach it.
	Beta
)

// DefaultPolymorph is the form used when a request names none: β′, the form
// unstabilised SFC of hardened and palm-based fats mostly reflects (see the
// package documentation) and the stable form of lauric fats. One polymorph serves every fat
// class; the validation in testdata/melting/VALIDATION.md was run with it.
const DefaultPolymorph = BetaPrime

// String gives the name the API uses: "alpha", "beta_prime", "beta".
func (p Polymorph) String() string {
	switch p {
	case Alpha:
		return "alpha"
	case BetaPrime:
		return "beta_prime"
	case Beta:
		return "beta"
	default:
		return "unknown"
	}
}

// ParsePolymorph reads the API name of a polymorph.
func ParsePolymorph(s string) (Polymorph, bool) {
	for _, p := range []Polymorph{Alpha, BetaPrime, Beta} {
		if p.String() == s {
			return p, true
		}
	}
	return 0, false
}

func (p Polymorph) valid() bool { return p >= Alpha && p <= Beta }

// index is the position of the polymorph in per-polymorph arrays.
func (p Polymorph) index() int { return int(p) - 1 }

// PolymorphCoefficients are the coefficients of the pure-TAG correlation for
// one polymorph. The structure is Wesdorp's (see the package comment):
//
//	ΔH = h·n + h0 + Σk hk·gk                      (kJ/mol)
//	ΔS = s·n + s0 + (1000/θ)·Σk hk·gk             (J/(mol·K))
//	Tm = 1000·ΔH/ΔS                               (K)
//
// where n is the total acyl carbon number and the structural terms gk are:
// the two chain-length mismatch terms f_x and f_y (see
// [Coefficients.SN2MismatchWidthCarbons]), the number of odd-numbered
// chains, the numbers of cis-monoene (cis-18:1 type) chains at sn-2 and at
// sn-1/3 (counted apart, our extension: see CisMonoeneOuterKJ), and the
// numbers of trans-monoene (trans-18:1 type), diene (18:2 type) and
// triene-or-higher (18:3 type) chains. Each structural term changes ΔS by its
// ΔH change divided by one compensation temperature θ, because the data have
// melting points but almost no enthalpies for mixed TAGs and so cannot
// separate the ΔH and ΔS parts of these terms (a documented constraint of
// our fit, not part of Wesdorp's published form).
type PolymorphCoefficients struct {
	// EnthalpyPerCarbonKJ is h, kJ/mol per acyl carbon.
	EnthalpyPerCarbonKJ float64
	// EnthalpyInterceptKJ is h0, kJ/mol.
	EnthalpyInterceptKJ float64
	// EntropyPerCarbonJ is s, J/(mol·K) per acyl carbon.
	EntropyPerCarbonJ float64
	// EntropyInterceptJ is s0, J/(mol·K).
	EntropyInterceptJ float64
	// SN2MismatchKJ multiplies f_x, the mismatch between the sn-2 chain and
	// the shorter outer chain, kJ/mol.
	SN2MismatchKJ float64
	// OuterMismatchKJ multiplies f_y, the mismatch between the two outer
	// chains, kJ/mol.
	OuterMismatchKJ float64
	// OddChainKJ is per odd-numbered chain, kJ/mol.
	OddChainKJ float64
	// CisMonoeneSN2KJ is per cis-monoene chain (oleic type) at sn-2, kJ/mol.
	CisMonoeneSN2KJ float64
	// CisMonoeneOuterKJ is per cis-monoene chain at sn-1 or sn-3, kJ/mol.
	// Wesdorp counts unsaturated chains without regard to position; we
	// count the cis-monoenes by position because their position changes
	// how the TAG packs — POP and SOS (oleic at sn-2) reach a β form,
	// OOP (oleic at sn-1/3) only β′ (Zhang et al., JAOCS 84, 2007) — and
	// because one term linear in the number of oleic chains cannot fit the
	// measured POP/POS/SOS/SOA melting points and triolein together (see
	// testdata/melting/fit_coefficients.json).
	CisMonoeneOuterKJ float64
	// TransMonoeneKJ is per trans-monoene chain (elaidic type), kJ/mol.
	TransMonoeneKJ float64
	// DieneKJ is per diene chain (linoleic type), kJ/mol.
	DieneKJ float64
	// TrieneKJ is per chain with three or more double bonds (linolenic
	// type), kJ/mol.
	TrieneKJ float64
}

// Coefficients is the full fitted correlation: one set per polymorph plus
// the two shared shape constants.
type Coefficients struct {
	// Polymorphs holds the coefficients for α, β′ and β, in that order.
	Polymorphs [3]PolymorphCoefficients
	// CompensationTemperatureK is θ: each structural term changes ΔS by its
	// ΔH change (in J/mol) divided by θ.
	CompensationTemperatureK float64
	// SN2MismatchWidthCarbons is w_x in f_x = 1 − exp(−(x/w_x)²), where x
	// is the sn-2 chain length minus the shorter outer chain, in carbons.
	SN2MismatchWidthCarbons float64
	// OuterMismatchWidthCarbons is w_y in f_y = 1 − exp(−(y/w_y)²), where y
	// is the difference of the two outer chains, in carbons.
	//
	// Wesdorp's correlation has separate exponential terms in x and y, each
	// with its own width (see testdata/melting/SOURCES.md); the Gaussian
	// form of each term is ours, as his exact function was not available to
	// us. Separate terms matter: a long unsaturated sn-2 chain between
	// shorter saturated ones (POP, x = 2) packs much better than two unequal
	// outer chains (POS, y = 2), which one shared term could not express.
	OuterMismatchWidthCarbons float64
}

// For returns the coefficients of one polymorph.
func (c *Coefficients) For(p Polymorph) PolymorphCoefficients { return c.Polymorphs[p.index()] }

// FittedCoefficients returns the coefficients the package uses, fitted by
// TestFitCoefficients to testdata/melting/pure_tag_thermo.csv and published
// in testdata/melting/fit_coefficients.json.
func FittedCoefficients() Coefficients { return fittedCoefficients }

// Limits below which the correlation is not trusted for a species: a
// species with a smaller enthalpy, a non-positive entropy or a lower melting
// point is taken as non-crystallising in any temperature range the package
// reports (it melts at floorMeltingPointK with floorEnthalpyKJ).
const (
	floorEnthalpyKJ    = 5.0
	floorMeltingPointK = 150.0
)

// chainKind is the structural class of one acyl chain in the correlation.
type chainKind uint8

const (
	kindSaturated chainKind = iota
	kindCisMonoene
	kindTransMonoene
	kindDiene
	kindTriene
)

// chain is what the correlation needs to know about one acid.
type chain struct {
	carbons int
	kind    chainKind
	// inFit reports whether the acid is one the fitted data cover: even
	// saturated C8–C22, oleic, elaidic, linoleic, alpha-linolenic.
	inFit bool
}

// chainOf classifies an acid. Unsaturated acids count in n, x and y with
// their own carbon number (Wesdorp's scheme counts the C18 unsaturated acids
// as 18-carbon chains). Cis monoenes other than 18:1 use the cis-18:1 term,
// trans-containing monoenes the trans-18:1 term, every diene the 18:2 term
// and every acid with three or more double bonds the 18:3 term: a lumping of
// ours, flagged as outside the fit.
func chainOf(a *chem.FattyAcid) chain {
	c := chain{carbons: a.Carbons}
	switch {
	case a.DoubleBondCount == 0:
		c.kind = kindSaturated
		c.inFit = a.Carbons >= 8 && a.Carbons <= 22 && a.Carbons%2 == 0 && a.HydroxyPosition == 0
	case a.DoubleBondCount == 1 && a.HasTrans():
		c.kind = kindTransMonoene
		c.inFit = a.Carbons == 18 && a.HydroxyPosition == 0
	case a.DoubleBondCount == 1:
		c.kind = kindCisMonoene
		c.inFit = a.Carbons == 18 && a.HydroxyPosition == 0 && len(a.Bonds) == 1 && a.Bonds[0].Position == 9
	case a.DoubleBondCount == 2:
		c.kind = kindDiene
		c.inFit = a.Carbons == 18 && a.AllCis() && !a.Conjugated()
	default:
		c.kind = kindTriene
		c.inFit = a.Carbons == 18 && a.DoubleBondCount == 3 && a.AllCis() && a.OmegaFamily() == 3
	}
	return c
}

// structure holds the correlation's inputs for one TAG.
type structure struct {
	n      float64    // total acyl carbons
	x, y   int        // mismatch in carbons (see SN2MismatchWidthCarbons)
	groups [8]float64 // f_x, f_y, odd chains, cis at sn-2, cis at sn-1/3, trans, diene, triene
}

// structureOf builds the inputs for the TAG sn1/sn2/sn3 (sn-1 and sn-3 are
// interchangeable). The mismatch terms themselves are filled by evaluate,
// which knows the widths.
func structureOf(sn1, sn2, sn3 chain) structure {
	var s structure
	s.n = float64(sn1.carbons + sn2.carbons + sn3.carbons)
	short, long := sn1.carbons, sn3.carbons
	if short > long {
		short, long = long, short
	}
	s.x = sn2.carbons - short
	s.y = long - short
	for pos, c := range [3]chain{sn1, sn2, sn3} {
		if c.carbons%2 == 1 {
			s.groups[2]++
		}
		switch c.kind {
		case kindCisMonoene:
			if pos == 1 {
				s.groups[3]++
			} else {
				s.groups[4]++
			}
		case kindTransMonoene:
			s.groups[5]++
		case kindDiene:
			s.groups[6]++
		case kindTriene:
			s.groups[7]++
		}
	}
	return s
}

// mismatch is one mismatch term, 1 − exp(−(d/w)²) for a difference of d
// carbons.
func mismatch(d, w float64) float64 {
	q := d / w
	return 1 - math.Exp(-q*q)
}

// evaluate returns ΔH (kJ/mol) and ΔS (J/(mol·K)) of fusion from the
// correlation, before any floor is applied.
func (c *Coefficients) evaluate(p Polymorph, s structure) (dh, ds float64) {
	k := &c.Polymorphs[p.index()]
	g := s.groups
	g[0] = mismatch(float64(s.x), c.SN2MismatchWidthCarbons)
	g[1] = mismatch(float64(s.y), c.OuterMismatchWidthCarbons)
	terms := k.SN2MismatchKJ*g[0] + k.OuterMismatchKJ*g[1] + k.OddChainKJ*g[2] + k.CisMonoeneSN2KJ*g[3] +
		k.CisMonoeneOuterKJ*g[4] + k.TransMonoeneKJ*g[5] + k.DieneKJ*g[6] + k.TrieneKJ*g[7]
	dh = k.EnthalpyPerCarbonKJ*s.n + k.EnthalpyInterceptKJ + terms
	ds = k.EntropyPerCarbonJ*s.n + k.EntropyInterceptJ + 1000*terms/c.CompensationTemperatureK
	return dh, ds
}

// correlate returns the floored melting point (K) and enthalpy (kJ/mol).
func (c *Coefficients) correlate(p Polymorph, s structure) (tm, dh float64) {
	dh, ds := c.evaluate(p, s)
	if dh < floorEnthalpyKJ || ds <= 0 {
		return floorMeltingPointK, floorEnthalpyKJ
	}
	tm = 1000 * dh / ds
	if tm < floorMeltingPointK {
		return floorMeltingPointK, dh
	}
	return tm, dh
}

// PureProperties are the melting properties of one TAG in one polymorph.
type PureProperties struct {
	// MeltingPointK and EnthalpyKJPerMol are the values the equilibrium
	// uses: measured where a measurement exists, otherwise the correlation.
	MeltingPointK    float64
	EnthalpyKJPerMol float64
	// CorrelationMeltingPointK and CorrelationEnthalpyKJPerMol are what the
	// correlation alone gives, for comparison with a measured override.
	CorrelationMeltingPointK    float64
	CorrelationEnthalpyKJPerMol float64
	// MeltingPointMeasured and EnthalpyMeasured report which values are
	// measured overrides; MeasuredSource names their source.
	MeltingPointMeasured bool
	EnthalpyMeasured     bool
	MeasuredSource       string
	// InsideFit is false when an acid of the TAG is not one the fitted data
	// cover (see the package's warning code WarnOutsideFit).
	InsideFit bool
}

// MeltingPointC is the melting point in °C.
func (p PureProperties) MeltingPointC() float64 { return p.MeltingPointK - zeroCelsiusK }

// EntropyJPerMolK is ΔS = ΔH/Tm of the values in use, J/(mol·K).
func (p PureProperties) EntropyJPerMolK() float64 {
	return 1000 * p.EnthalpyKJPerMol / p.MeltingPointK
}

// PureTAGProperties returns the melting properties of the TAG sn1/sn2/sn3 in
// polymorph p: the correlation with the fitted coefficients, overridden by
// measured values where the package has them (sn-1 and sn-3 are
// interchangeable). It returns a KindInvalid error for a nil acid or an
// unknown polymorph.
func PureTAGProperties(sn1, sn2, sn3 *chem.FattyAcid, p Polymorph) (PureProperties, error) {
	if sn1 == nil || sn2 == nil || sn3 == nil {
		return PureProperties{}, chem.Errorf(chem.KindInvalid, "all three acids are required").
			WithField("an acid is missing", "acids")
	}
	if !p.valid() {
		return PureProperties{}, chem.Errorf(chem.KindInvalid, "unknown polymorph").
			WithField("must be alpha, beta_prime or beta", "polymorph")
	}
	c1, c2, c3 := chainOf(sn1), chainOf(sn2), chainOf(sn3)
	tm, dh := fittedCoefficients.correlate(p, structureOf(c1, c2, c3))
	out := PureProperties{
		MeltingPointK: tm, EnthalpyKJPerMol: dh,
		CorrelationMeltingPointK: tm, CorrelationEnthalpyKJPerMol: dh,
		InsideFit: c1.inFit && c2.inFit && c3.inFit,
	}
	if m, ok := findOverride(sn1.ID, sn2.ID, sn3.ID, p); ok {
		out.applyOverride(m)
	}
	return out, nil
}

func (out *PureProperties) applyOverride(m measuredOverride) {
	if !math.IsNaN(m.meltingPointK) {
		out.MeltingPointK = m.meltingPointK
		out.MeltingPointMeasured = true
	}
	if !math.IsNaN(m.enthalpyKJ) {
		out.EnthalpyKJPerMol = m.enthalpyKJ
		out.EnthalpyMeasured = true
	}
	out.MeasuredSource = m.source
}

// measuredOverride is one measured pure-TAG value the correlation yields to.
// NaN marks a quantity the sources did not give.
type measuredOverride struct {
	outer1, middle, outer2 string // catalogue acid IDs; outer order free
	polymorph              Polymorph
	meltingPointK          float64
	enthalpyKJ             float64
	source                 string
}

func findOverride(sn1, sn2, sn3 string, p Polymorph) (measuredOverride, bool) {
	for _, m := range measuredOverrides {
		if m.polymorph != p || m.middle != sn2 {
			continue
		}
		if (m.outer1 == sn1 && m.outer2 == sn3) || (m.outer1 == sn3 && m.outer2 == sn1) {
			return m, true
		}
	}
	return measuredOverride{}, false
}

// zeroCelsiusK is 0 °C in kelvin.
const zeroCelsiusK = chem.ZeroCelsiusK

// prepareAcids computes the per-acid parts of the correlation for
// polymorph p: ΔH and ΔS are sums over chains plus the intercepts and the
// mismatch term. It also returns the acids outside the fitted data, those
// with a share above the sum noise when shares is given (nil: all).
func prepareAcids(acids []*chem.FattyAcid, shares []float64, p Polymorph) (prepared, []string) {
	coef := fittedCoefficients
	k := coef.For(p)
	n := len(acids)
	chains := make([]chain, n)
	// Per-acid ΔH and ΔS parts at sn-1/3 (outer) and at sn-2 (the
	// cis-monoene term depends on the position).
	hcOuter, scOuter := make([]float64, n), make([]float64, n)
	hcSN2, scSN2 := make([]float64, n), make([]float64, n)
	var outside []string
	sat := chain{kind: kindSaturated}
	part := func(s structure, carbons int) (h, sj float64) {
		g := k.OddChainKJ*s.groups[2] + k.CisMonoeneSN2KJ*s.groups[3] + k.CisMonoeneOuterKJ*s.groups[4] +
			k.TransMonoeneKJ*s.groups[5] + k.DieneKJ*s.groups[6] + k.TrieneKJ*s.groups[7]
		return k.EnthalpyPerCarbonKJ*float64(carbons) + g,
			k.EntropyPerCarbonJ*float64(carbons) + 1000*g/coef.CompensationTemperatureK
	}
	for i, a := range acids {
		c := chainOf(a)
		chains[i] = c
		// An acid the fat holds no more than a trace of (a hardening
		// product lists every acid the network can form, many at 0 %) is
		// not worth naming.
		if !c.inFit && (shares == nil || shares[i] > chem.SumNoise) {
			outside = append(outside, a.ID)
		}
		hcOuter[i], scOuter[i] = part(structureOf(c, sat, sat), c.carbons)
		hcSN2[i], scSN2[i] = part(structureOf(sat, c, sat), c.carbons)
	}
	// Mismatch terms 1 − exp(−(d/w)²) for every chain-length difference.
	maxC := 0
	for _, c := range chains {
		maxC = max(maxC, c.carbons)
	}
	gx, gy := make([]float64, maxC+1), make([]float64, maxC+1)
	for d := range gx {
		gx[d] = mismatch(float64(d), coef.SN2MismatchWidthCarbons)
		gy[d] = mismatch(float64(d), coef.OuterMismatchWidthCarbons)
	}
	return prepared{chains: chains, hcOuter: hcOuter, scOuter: scOuter, hcSN2: hcSN2, scSN2: scSN2, gx: gx, gy: gy, k: k,
		thetaK: coef.CompensationTemperatureK, overrides: resolveOverrides(acids, p)}, outside
}

// resolveOverrides maps the measured values for polymorph p onto a dense
// table over species acid-index triples (outer, middle, outer; both outer
// orders): entry k > 0 means measuredOverrides[k−1]. It returns nil when no
// override applies to these acids.
func resolveOverrides(acids []*chem.FattyAcid, p Polymorph) []int16 {
	var out []int16
	n := len(acids)
	idx := func(id string) (int, bool) {
		for i, a := range acids {
			if a.ID == id {
				return i, true
			}
		}
		return 0, false
	}
	for k, m := range measuredOverrides {
		if m.polymorph != p {
			continue
		}
		o1, ok1 := idx(m.outer1)
		mid, ok2 := idx(m.middle)
		o2, ok3 := idx(m.outer2)
		if !ok1 || !ok2 || !ok3 {
			continue
		}
		if out == nil {
			out = make([]int16, n*n*n)
		}
		out[(o1*n+mid)*n+o2] = int16(k + 1)
		out[(o2*n+mid)*n+o1] = int16(k + 1)
	}
	return out
}
