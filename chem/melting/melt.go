package melting

import (
	"context"
	"fmt"
	"math"
	"slices"
	"strings"
	"sync"

	"lipidsvc/chem"
)

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
	Polymorph    Polymorph
	SolidModel   SolidModel
	Distribution Distribution
	SN2Estimate  SN2Estimate // the rule used; zero for FullRandom
	// SN2Chosen reports that SN2Estimate was chosen automatically, for
	// SN2Reason; Class is the fat's class.
	SN2Chosen             bool
	SN2Reason             string
	Class                 FatClass
	PoolFloorMoleFraction float64 // zero when pooling is off
	SlipThresholdPercent  float64 // the threshold in force
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
	// Uncertainty is how good the estimate typically is for a fat of this
	// kind.
	Uncertainty Uncertainty
	Warnings    []chem.Warning
}

// LiquidOilSlipC is the slip melting point, °C, below which a fat counts
// as an oil, liquid at room temperature (20 °C; common practice, no
// source), and gets WarnLiquidOil.
const LiquidOilSlipC = 20.0

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
func (f *Fat) Melt() (*Result, error) { return f.MeltContext(context.Background()) }

// MeltContext is Melt that stops, with ctx's error, between the points
// of the curve once ctx ends (a request abandoned by its client).
func (f *Fat) MeltContext(ctx context.Context) (*Result, error) {
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
	w := f.mixture.resetWorkspace(workspaces.Get().(*workspace))
	defer recycleWorkspace(w)
	known := make([]curvePoint, len(all))
	sfcAt := make(map[float64]float64, len(all))
	for i, t := range all {
		if err := ctx.Err(); err != nil {
			return nil, err
		}
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
	var uw []chem.Warning
	r.Uncertainty, uw = f.Uncertainty()
	r.Warnings = append(r.Warnings, uw...)
	if ok && r.SlipMeltingPointC < LiquidOilSlipC {
		r.Warnings = append(r.Warnings, chem.Warning{Code: WarnLiquidOil, Message: fmt.Sprintf(
			"the slip melting point, %.1f °C, is below %g °C: the fat is an oil, liquid at room temperature, and the value is "+
				"only where the model's last solids fall below the slip threshold; oils are usually characterised by their "+
				"cloud point (AOCS Cc 6-25) instead", r.SlipMeltingPointC, LiquidOilSlipC)})
	}
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
	c := f.composition
	p.Class = c.Class
	if o.Composition.Distribution == Positional {
		p.SN2Estimate, p.SN2Chosen, p.SN2Reason = c.SN2Estimate, c.SN2Chosen, c.SN2Reason
	}
	if o.Composition.NoPooling {
		p.PoolFloorMoleFraction = 0
	}
	return p
}

func (f *Fat) assumptions() []string {
	o := f.opt
	out := []string{
		"TAG species: " + distributionWords(o.Composition.Distribution, f.composition) + "; sn-1 and sn-3 taken as equivalent (regio-isomers lumped)",
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

func distributionWords(d Distribution, c *Composition) string {
	switch d {
	case FullRandom:
		return "full random distribution"
	case ExplicitTAGs:
		return "TAG composition as given"
	}
	words := "1,3-random-2-random distribution, sn-2 by the " + strings.ReplaceAll(c.SN2Estimate.String(), "_", " ")
	if c.SN2Chosen {
		words += ", chosen automatically for " + c.SN2Reason
	}
	return words
}

func modelWords(m SolidModel) string {
	switch m {
	case IdealSolidSolution:
		return "one ideal solid solution"
	case SolidSolutionFamilies:
		return "ideal solid solutions of near-isomorphous TAG families (same number of cis-unsaturated chains, trans " +
			"chains packing with saturated ones; total acyl carbons within a 6-carbon band), mutually immiscible"
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
