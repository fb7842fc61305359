package melting

import (
	"fmt"
	"math"
	"slices"
	"strings"
	"sync"

	"lipidsvc/chem"
)

// DefaultSlipThresholdPercent is the solid fat content (mass %) at which the
// slip melting point is read. The trade places the slip melting point where
// the SFC falls to about 3–5 % [practice, DOMAIN §10]; with the default model
// and polymorph 3 %, the low end of that range, gave the smallest mean error
// on the validation fats (testdata/melting/VALIDATION.md lists 3, 4 and 5 %
// for every model and polymorph). Calibrate a fat to fit its own threshold.
const DefaultSlipThresholdPercent = 3.0

// DefaultMainSpecies is how many TAG species a result lists by default.
const DefaultMainSpecies = 10

// Temperature limits of the package, °C: requested temperatures must lie in
// [MinTemperatureC, MaxTemperatureC]; the slip melting point is searched
// down to MinTemperatureC.
const (
	MinTemperatureC = -60.0
	MaxTemperatureC = 120.0
	// MaxTemperatures is the largest number of temperatures one request may
	// ask for.
	MaxTemperatures = 2000
)

// ReportingTemperaturesC are the temperatures at which SFC is customarily
// reported (AOCS Cd 16b-93 and trade specifications quote 10, 21.1, 26.7,
// 33.3 and 37.8 °C — 50, 70, 80, 92 and 100 °F — or 10, 20, 25, 30, 35,
// 40 °C); 37 °C is mouth temperature.
var reportingTemperaturesC = []float64{10, 20, 21.1, 25, 26.7, 30, 33.3, 35, 37, 40}

// ReportingTemperaturesC returns a copy of the customary reporting
// temperatures, °C: 10, 20, 21.1, 25, 26.7, 30, 33.3, 35, 37, 40.
func ReportingTemperaturesC() []float64 { return slices.Clone(reportingTemperaturesC) }

// DefaultTemperaturesC returns the default curve: 0–60 °C in 1 °C steps plus
// the customary reporting points, ascending.
func DefaultTemperaturesC() []float64 {
	t := make([]float64, 0, 64)
	for i := 0; i <= 60; i++ {
		t = append(t, float64(i))
	}
	t = append(t, reportingTemperaturesC...)
	slices.Sort(t)
	return slices.Compact(t)
}

// Calibration is a small correction fitted to one fat's measurements by
// [Calibrate] and accepted by [Melt]: every TAG melting point is raised by
// TemperatureShiftK (enthalpies unchanged), and the slip melting point is
// read at SlipThresholdPercent. The zero value is no correction.
type Calibration struct {
	// TemperatureShiftK, K, within ±MaxCalibrationShiftK. Field
	// "temperature_shift_k".
	TemperatureShiftK float64
	// SlipThresholdPercent, mass %; zero keeps Options.SlipThresholdPercent.
	// When set it wins over Options.SlipThresholdPercent. Field
	// "slip_threshold_percent".
	SlipThresholdPercent float64
}

// Options are the parameters of a melting calculation. The zero value of
// every field means its documented default, so Options{} is valid. Field
// names for error paths are given on each field (under "options" only where
// the caller nests them).
type Options struct {
	// Polymorph of all solids; zero means DefaultPolymorph (β′). Field
	// "polymorph".
	Polymorph Polymorph
	// SolidModel; zero means DefaultSolidModel. Field "solid_model".
	SolidModel SolidModel
	// Composition chooses the TAG distribution and pooling. Field
	// "composition".
	Composition CompositionOptions
	// TemperaturesC of the SFC curve; nil means DefaultTemperaturesC. At most
	// MaxTemperatures values in [MinTemperatureC, MaxTemperatureC]. The curve
	// is returned ascending without duplicates. Field "temperatures_c".
	TemperaturesC []float64
	// SlipThresholdPercent, mass % in (0, 50]; zero means
	// DefaultSlipThresholdPercent. Field "slip_threshold_percent".
	SlipThresholdPercent float64
	// Calibration from Calibrate; zero means none. Field "calibration".
	Calibration Calibration
	// MainSpecies is how many species the result lists; zero means
	// DefaultMainSpecies, at most 100. Field "main_species_count".
	MainSpecies int
	// MaxIterations caps iterative solvers; zero means
	// DefaultMaxIterations. Field "max_iterations".
	MaxIterations int
}

// MaxCalibrationShiftK bounds Calibration.TemperatureShiftK.
const MaxCalibrationShiftK = 15.0

// DefaultOptions returns the defaults written out.
func DefaultOptions() Options {
	return Options{}.withDefaults()
}

func (o Options) withDefaults() Options {
	if o.Polymorph == 0 {
		o.Polymorph = DefaultPolymorph
	}
	if o.SolidModel == 0 {
		o.SolidModel = DefaultSolidModel
	}
	if o.Composition.PoolFloorMoleFraction == 0 && o.SolidModel == SolidSolutionFamilies {
		o.Composition.PoolFloorMoleFraction = DefaultFamiliesPoolFloorMoleFraction
	}
	// In the eutectic model each species saturates on its own, so a pool
	// of many trace species crystallises where none of them would (one
	// seed oil's clear point moved from 14 to 20 °C with 0.5 % of its mass
	// pooled): that model keeps every species; its solver is a sort and
	// stays fast (about 7 ms for a 20-acid random curve).
	if o.SolidModel == MultiplePureSolids {
		o.Composition.NoPooling = true
	}
	o.Composition = o.Composition.withDefaults()
	if o.SlipThresholdPercent == 0 {
		o.SlipThresholdPercent = DefaultSlipThresholdPercent
	}
	if o.MainSpecies == 0 {
		o.MainSpecies = DefaultMainSpecies
	}
	if o.MaxIterations == 0 {
		o.MaxIterations = DefaultMaxIterations
	}
	return o
}

// validate checks options after defaults are filled.
func (o Options) validate() error {
	var bad chem.FieldErrors
	if !o.Polymorph.valid() {
		bad.Invalid("must be alpha, beta_prime or beta", "polymorph")
	}
	if o.SolidModel < MultiplePureSolids || o.SolidModel > SolidSolutionFamilies {
		bad.Invalid("must be multiple_pure_solids, ideal_solid_solution or solid_solution_families", "solid_model")
	}
	if o.Composition.Distribution != Positional && o.Composition.Distribution != FullRandom {
		bad.Invalid("must be sn13_random_sn2_random or full_random", "distribution")
	}
	if o.Composition.SN2 < SN2SeedOil || o.Composition.SN2 > SN2Enrichment {
		bad.Invalid("must be seed_oil_rule, palm_rule, supplied or enrichment_factors", "sn2_estimate")
	}
	if f := o.Composition.PoolFloorMoleFraction; !(f > 0 && f <= 0.01) {
		bad.Invalid("must be > 0 and <= 0.01", "pool_floor_mole_fraction")
	}
	if len(o.TemperaturesC) > MaxTemperatures {
		bad.Invalid(fmt.Sprintf("at most %d temperatures", MaxTemperatures), "temperatures_c")
	}
	for i, t := range o.TemperaturesC {
		if !inTemperatureRange(t) {
			bad.Invalid(fmt.Sprintf("must be a number from %g to %g °C", MinTemperatureC, MaxTemperatureC), "temperatures_c", i)
		}
	}
	if t := o.SlipThresholdPercent; !(t > 0 && t <= 50) {
		bad.Invalid("must be > 0 and <= 50", "slip_threshold_percent")
	}
	if s := o.Calibration.TemperatureShiftK; !(math.Abs(s) <= MaxCalibrationShiftK) {
		bad.Invalid(fmt.Sprintf("must be within ±%g K", MaxCalibrationShiftK), "calibration", "temperature_shift_k")
	}
	if t := o.Calibration.SlipThresholdPercent; !(t >= 0 && t <= 50) {
		bad.Invalid("must be >= 0 and <= 50", "calibration", "slip_threshold_percent")
	}
	if o.MainSpecies < 0 || o.MainSpecies > 100 {
		bad.Invalid("must be from 0 to 100", "main_species_count")
	}
	if o.MaxIterations < 1 || o.MaxIterations > 100000 {
		bad.Invalid("must be from 1 to 100000", "max_iterations")
	}
	if err := bad.Err(""); err != nil {
		return err
	}
	return nil
}

// Validate checks the options, with their defaults filled, and returns a
// KindInvalid *chem.Error whose paths name the request fields ("polymorph",
// "distribution", "calibration", "temperature_shift_k", …), or nil.
func (o Options) Validate() error { return o.withDefaults().validate() }

// slipThreshold is the threshold in force: the calibration's if set.
func (o Options) slipThreshold() float64 {
	if o.Calibration.SlipThresholdPercent > 0 {
		return o.Calibration.SlipThresholdPercent
	}
	return o.SlipThresholdPercent
}

// Fat is a profile prepared for melting queries: its TAG species with their
// properties in the chosen polymorph, pooled and ready for the equilibrium.
// Build it with [Prepare]; it is immutable and safe for concurrent use.
type Fat struct {
	opt         Options
	composition *Composition // without Species; see Composition
	full        *lazyComposition
	mixture     *Mixture
	// reporting
	main              []mainEntry // the largest species by mass, largest first
	speciesCount      int
	totalMass         float64
	pooledSpecies     int
	pooledMassPercent float64
	overrides         int
	warnings          []chem.Warning
}

// Prepare builds the TAG composition of p, assigns each species its
// melting properties in opt.Polymorph (measured where known, otherwise the
// fitted correlation), pools the species below the floor and returns the
// fat ready for equilibrium queries.
func Prepare(p *chem.Profile, opt Options) (*Fat, error) {
	opt = opt.withDefaults()
	if err := opt.validate(); err != nil {
		return nil, err
	}
	comp, err := positionPools(p, opt.Composition)
	if err != nil {
		return nil, err
	}
	f := &Fat{opt: opt, composition: comp, full: &lazyComposition{}}
	f.warnings = append(f.warnings, comp.Warnings...)
	pr, outside := prepareAcids(comp.Acids, comp.Total, opt.Polymorph)
	outsideMass := f.build(pr)
	f.finishWarnings(outside, outsideMass, "profile", "acids")
	return f, nil
}

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

// finishWarnings adds the warnings about acids outside the fit, which
// point at acidsPath (where the caller gave the acids), and about pooling.
func (f *Fat) finishWarnings(outside []string, outsideMass float64, acidsPath ...any) {
	opt := f.opt
	if len(outside) > 0 {
		f.warnings = append(f.warnings, chem.Warning{Code: WarnOutsideFit, Message: fmt.Sprintf(
			"%s %s outside the pure-TAG data the property correlation was fitted to; the species containing "+
				"them (%.3g %% of the mass) use extrapolated melting properties", strings.Join(outside, ", "),
			plural(len(outside), "is", "are"), 100*outsideMass/f.totalMass), Path: acidsPath})
	}
	if f.pooledSpecies > 0 {
		f.warnings = append(f.warnings, chem.Warning{Code: WarnPooled, Message: fmt.Sprintf(
			"%d species below a mole fraction of %.3g (%.3g %% of the mass) were pooled into %d components "+
				"by melting point (%g K bins)", f.pooledSpecies, opt.Composition.PoolFloorMoleFraction,
			f.pooledMassPercent, f.mixture.Len()-(f.speciesCount-f.pooledSpecies), poolBinK),
		})
	}
}

func plural(n int, one, many string) string {
	if n == 1 {
		return one
	}
	return many
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

// Composition returns the TAG composition the fat was built from.
func (f *Fat) Composition() *Composition {
	f.full.once.Do(func() {
		c := *f.composition
		c.Species = c.materialize(enumerate(c.Acids, c.SN13, c.SN2))
		f.full.c = &c
	})
	return f.full.c
}

// lazyComposition builds the full Composition of a Fat on first request
// (Prepare itself works on the compact species).
type lazyComposition struct {
	once sync.Once
	c    *Composition
}

// Mixture returns the components handed to the equilibrium solvers.
func (f *Fat) Mixture() *Mixture { return f.mixture }

// Options returns the options in force, defaults filled.
func (f *Fat) Options() Options { return f.opt }

// Warnings returns what preparing the fat assumed (pooling, acids outside
// the fit, clipped sn-2).
func (f *Fat) Warnings() []chem.Warning { return slices.Clone(f.warnings) }

// SolidFatContent is the SFC (mass %) at temperatureC in the fat's
// polymorph and solid model, with its calibration shift applied (the shift
// is already in the components). A temperature outside [MinTemperatureC,
// MaxTemperatureC] is a KindInvalid error.
func (f *Fat) SolidFatContent(temperatureC float64) (float64, error) {
	if err := checkTemperatureC(temperatureC); err != nil {
		return 0, err
	}
	return f.mixture.sfc(f.opt.SolidModel, temperatureC+zeroCelsiusK, 0, f.opt.MaxIterations, f.mixture.newWorkspace())
}

// ClearPointC is the temperature (°C) at which the SFC reaches zero; see
// [Mixture.ClearPointC].
func (f *Fat) ClearPointC() (float64, error) {
	return f.mixture.ClearPointC(f.opt.SolidModel, f.opt.MaxIterations)
}

// SlipMeltingPointC returns the temperature (°C) at which the SFC falls to
// the slip threshold, found by root finding on the monotone SFC(T) between
// the clear point and a temperature where the SFC is above the threshold.
// When the SFC stays below the threshold down to MinTemperatureC, it returns
// MinTemperatureC and defined = false, so the function stays monotone for a
// root finder working along a hardening path.
func (f *Fat) SlipMeltingPointC() (tC float64, defined bool, err error) {
	w := f.mixture.newWorkspace()
	t, ok, err := f.slipPoint(w, nil, math.NaN())
	return t - zeroCelsiusK, ok, err
}

// curvePoint is one evaluated SFC value, K.
type curvePoint struct{ tK, sfc float64 }

// slipPoint finds the slip temperature (K). known are SFC values already
// computed (ascending in T), used to bracket the root without new
// evaluations; clear is the clear point (K) if already known, else NaN.
func (f *Fat) slipPoint(w *workspace, known []curvePoint, clear float64) (float64, bool, error) {
	thr := f.opt.slipThreshold()
	model, maxIter := f.opt.SolidModel, f.opt.MaxIterations
	eval := func(tK float64) (float64, error) { return f.mixture.sfc(model, tK, 0, maxIter, w) }
	if math.IsNaN(clear) {
		var err error
		if clear, err = f.mixture.clearPointK(model, 0, maxIter); err != nil {
			return 0, false, err
		}
	}
	lowK := MinTemperatureC + zeroCelsiusK
	if math.IsNaN(clear) || math.IsInf(clear, 0) {
		return 0, false, chem.Errorf(chem.KindNoConvergence, "the clear point could not be determined")
	}
	// Bracket [lo, hi] with SFC(lo) ≥ thr > SFC(hi).
	hi, lo := clear, math.NaN()
	var flo, fhi float64 = math.NaN(), -thr
	for _, p := range known {
		if p.tK >= clear {
			break
		}
		if p.sfc >= thr {
			lo, flo = p.tK, p.sfc-thr
		} else if !math.IsNaN(lo) && p.tK < hi {
			hi, fhi = p.tK, p.sfc-thr
			break
		}
	}
	if math.IsNaN(lo) {
		if len(known) > 0 && known[0].sfc < thr {
			hi, fhi = known[0].tK, known[0].sfc-thr
		}
		// The step doubles from 2 K, so the search reaches lowK from any
		// clear point in well under 64 steps.
		for step := 2.0; step < 1e6; step *= 2 {
			t := math.Max(hi-step, lowK)
			v, err := eval(t)
			if err != nil {
				return 0, false, err
			}
			if v >= thr {
				lo, flo = t, v-thr
				break
			}
			hi, fhi = t, v-thr
			if t <= lowK {
				return lowK, false, nil
			}
		}
		if math.IsNaN(lo) {
			return lowK, false, nil
		}
	}
	// Illinois (modified regula falsi) on the monotone, continuous SFC(T).
	side := 0
	for it := 0; it < 200; it++ {
		t := hi - fhi*(hi-lo)/(fhi-flo)
		if !(t > lo && t < hi) {
			t = 0.5 * (lo + hi)
		}
		v, err := eval(t)
		if err != nil {
			return 0, false, err
		}
		fv := v - thr
		if hi-lo < 1e-7 || fv == 0 {
			// Where the SFC drops in a step (a fat of one species melts
			// at one temperature) the root is the step, which the clear
			// point found by its own iteration may place a few 1e-8 K
			// lower: keep slip ≤ clear.
			return math.Min(t, clear), true, nil
		}
		if fv > 0 {
			lo, flo = t, fv
			if side == -1 {
				fhi /= 2
			}
			side = -1
		} else {
			hi, fhi = t, fv
			if side == 1 {
				flo /= 2
			}
			side = 1
		}
	}
	return math.Min(0.5*(lo+hi), clear), true, nil
}

// SFCPoint is one point of a solid fat content curve.
type SFCPoint struct {
	TemperatureC float64
	// SolidFatPercent is the solid fat content, mass %.
	SolidFatPercent float64
}

// SpeciesShare is one TAG species of a result.
type SpeciesShare struct {
	// Label is "sn-1/sn-2/sn-3" by catalogue IDs (sn-1 and sn-3
	// interchangeable); ShortName the trade letters, e.g. "POP".
	Label, ShortName string
	MolePercent      float64
	MassPercent      float64
	// MeltingPointC in the result's polymorph, calibration shift included;
	// NaN when the correlation gives the species no melting point (it
	// never crystallises in the model's range).
	MeltingPointC float64
	// MeltingPointMeasured reports a measured override.
	MeltingPointMeasured bool
}

// Parameters echoes what a result was computed with, defaults filled.
type Parameters struct {
	Polymorph             Polymorph
	SolidModel            SolidModel
	Distribution          Distribution
	SN2Estimate           SN2Estimate // zero for FullRandom
	PoolFloorMoleFraction float64     // zero when pooling is off
	SlipThresholdPercent  float64     // the threshold in force
	Calibration           Calibration
}

// Result is the melting behaviour of one fat.
type Result struct {
	// Curve is the SFC at the requested temperatures, ascending.
	Curve []SFCPoint
	// ReportingPoints is the SFC at ReportingTemperaturesC.
	ReportingPoints []SFCPoint
	// SlipMeltingPointC is where the SFC falls to the slip threshold; when
	// SlipMeltingPointDefined is false the SFC stays below the threshold
	// down to MinTemperatureC and the value is MinTemperatureC.
	SlipMeltingPointC       float64
	SlipMeltingPointDefined bool
	// ClearPointC is where the SFC reaches zero. ClearPointDefined is false
	// when that is below MinTemperatureC: the fat is liquid over the whole
	// range of the model.
	ClearPointC       float64
	ClearPointDefined bool
	// SFCAt37CPercent is the SFC at 37 °C (mouth temperature).
	SFCAt37CPercent float64
	// MainSpecies are the largest species by mass, largest first.
	MainSpecies []SpeciesShare
	// SpeciesCount is the number of species generated; ComponentCount the
	// number the equilibrium solved after pooling; PooledSpecies and
	// PooledMassPercent describe the pooling.
	SpeciesCount      int
	ComponentCount    int
	PooledSpecies     int
	PooledMassPercent float64
	// MeasuredOverrides is how many species used measured pure-TAG values.
	MeasuredOverrides int
	Parameters        Parameters
	// Assumptions states the models used, in words.
	Assumptions []string
	Warnings    []chem.Warning
}

// MeltProfile computes the melting behaviour of a fat from its profile. Errors are
// *chem.Error values: KindInvalid for bad options, KindNoConvergence if an
// iterative solver hits its cap.
func MeltProfile(p *chem.Profile, opt Options) (*Result, error) {
	f, err := Prepare(p, opt)
	if err != nil {
		return nil, err
	}
	return f.Melt()
}

// Melt computes the full result for a prepared fat.
func (f *Fat) Melt() (*Result, error) {
	opt := f.opt
	temps := opt.TemperaturesC
	if temps == nil {
		temps = DefaultTemperaturesC()
	} else {
		temps = slices.Clone(temps)
		slices.Sort(temps)
		temps = slices.Compact(temps)
	}
	all := slices.Concat(temps, reportingTemperaturesC)
	slices.Sort(all)
	all = slices.Compact(all)

	// The clear point first: at and above it the SFC is zero and needs no
	// equilibrium solution.
	clear, err := f.mixture.clearPointK(opt.SolidModel, 0, opt.MaxIterations)
	if err != nil {
		return nil, err
	}
	w := f.mixture.newWorkspace()
	known := make([]curvePoint, len(all))
	sfcAt := make(map[float64]float64, len(all))
	for i, t := range all {
		var v float64
		if tK := t + zeroCelsiusK; tK < clear {
			if v, err = f.mixture.sfc(opt.SolidModel, tK, 0, opt.MaxIterations, w); err != nil {
				return nil, err
			}
		}
		known[i] = curvePoint{t + zeroCelsiusK, v}
		sfcAt[t] = v
	}
	r := &Result{
		SpeciesCount:      f.speciesCount,
		ComponentCount:    f.mixture.Len(),
		PooledSpecies:     f.pooledSpecies,
		PooledMassPercent: f.pooledMassPercent,
		MeasuredOverrides: f.overrides,
		SFCAt37CPercent:   sfcAt[37],
	}
	for _, t := range temps {
		r.Curve = append(r.Curve, SFCPoint{t, sfcAt[t]})
	}
	for _, t := range reportingTemperaturesC {
		r.ReportingPoints = append(r.ReportingPoints, SFCPoint{t, sfcAt[t]})
	}
	r.ClearPointC = clear - zeroCelsiusK
	r.ClearPointDefined = r.ClearPointC >= MinTemperatureC
	slip, ok, err := f.slipPoint(w, known, clear)
	if err != nil {
		return nil, err
	}
	r.SlipMeltingPointC, r.SlipMeltingPointDefined = slip-zeroCelsiusK, ok
	r.MainSpecies = f.mainSpecies()
	r.Parameters = f.parameters()
	r.Assumptions = f.assumptions()
	r.Warnings = slices.Clone(f.warnings)
	if !ok {
		r.Warnings = append(r.Warnings, chem.Warning{Code: WarnSlipUndefined, Message: fmt.Sprintf(
			"the solid fat content stays below the slip threshold of %.3g %% down to %g °C; no slip melting point is reported",
			opt.slipThreshold(), MinTemperatureC), Path: []any{"slip_threshold_percent"}})
	}
	return r, nil
}

func (f *Fat) parameters() Parameters {
	o := f.opt
	p := Parameters{
		Polymorph: o.Polymorph, SolidModel: o.SolidModel, Distribution: o.Composition.Distribution,
		PoolFloorMoleFraction: o.Composition.PoolFloorMoleFraction,
		SlipThresholdPercent:  o.slipThreshold(), Calibration: o.Calibration,
	}
	if o.Composition.Distribution == Positional {
		p.SN2Estimate = o.Composition.SN2
	}
	if o.Composition.NoPooling {
		p.PoolFloorMoleFraction = 0
	}
	return p
}

func (f *Fat) assumptions() []string {
	o := f.opt
	out := []string{
		"TAG species: " + distributionWords(o.Composition) + "; sn-1 and sn-3 taken as equivalent (regio-isomers lumped)",
		fmt.Sprintf("pure-TAG properties in the %s form from the fitted correlation (Wesdorp's structure, our coefficients), "+
			"measured values used for %d species", o.Polymorph, f.overrides),
		"solid-liquid equilibrium with an ideal liquid and " + modelWords(o.SolidModel),
		fmt.Sprintf("slip melting point read where the SFC falls to %.3g %%; clear point where it reaches zero", o.slipThreshold()),
	}
	if o.Calibration != (Calibration{}) {
		out = append(out, fmt.Sprintf("calibrated: every melting point shifted by %+.3g K", o.Calibration.TemperatureShiftK))
	}
	return out
}

func distributionWords(c CompositionOptions) string {
	switch c.Distribution {
	case FullRandom:
		return "full random distribution"
	case ExplicitTAGs:
		return "TAG composition as given"
	}
	return "1,3-random-2-random distribution, sn-2 by the " + strings.ReplaceAll(c.SN2.String(), "_", " ")
}

func modelWords(m SolidModel) string {
	switch m {
	case IdealSolidSolution:
		return "one ideal solid solution"
	case SolidSolutionFamilies:
		return "ideal solid solutions of near-isomorphous TAG families (same unsaturation, total acyl carbons " +
			"within a 6-carbon band), mutually immiscible"
	}
	return "multiple pure solid phases (eutectic)"
}

// mainSpecies returns the species build kept as the largest by mass.
func (f *Fat) mainSpecies() []SpeciesShare {
	out := make([]SpeciesShare, len(f.main))
	for k, e := range f.main {
		sp := f.composition.species(e.sp)
		out[k] = SpeciesShare{
			Label: sp.Label(), ShortName: sp.ShortName(),
			MolePercent:          100 * sp.MoleFraction,
			MassPercent:          100 * sp.MoleFraction * sp.MolarMass / f.totalMass,
			MeltingPointC:        speciesMeltingPointC(e.tmK, f.opt.Calibration.TemperatureShiftK),
			MeltingPointMeasured: e.measured,
		}
	}
	return out
}

// speciesMeltingPointC is a listed species' melting point, °C, or NaN when
// the correlation gives none (the species sits at the floor that marks it
// as never crystallising in the model's range).
func speciesMeltingPointC(tmK, shiftK float64) float64 {
	if tmK <= floorMeltingPointK {
		return math.NaN()
	}
	return tmK + shiftK - zeroCelsiusK
}

// SlipMeltingPointC is the cheap entry point for root finders (for example
// hardening to a melting target): it prepares the fat and finds the slip
// melting point without computing a curve. See [Fat.SlipMeltingPointC] for
// the undefined case. For strict continuity along a composition path set
// opt.Composition.NoPooling (pooling can move the result by a few hundredths
// of a kelvin when a species crosses the floor).
func SlipMeltingPointC(p *chem.Profile, opt Options) (tC float64, defined bool, err error) {
	f, err := Prepare(p, opt)
	if err != nil {
		return 0, false, err
	}
	return f.SlipMeltingPointC()
}
