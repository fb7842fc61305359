package hardening

import (
	"context"
	"fmt"
	"sort"
	"strconv"
	"strings"

	"lipidsvc/chem"
)

// Observation is one observed product of a plant batch hardened from the
// fit's feed with the catalyst to be calibrated.
type Observation struct {
	// Profile is the product's composition as analysed. Its basis may
	// differ from the feed's; it is converted.
	Profile *chem.Profile
	// IodineValue is the product's iodine value, per 100 g of product, as
	// measured (or as chem.IodineValue computes it from Profile). It fixes
	// the point of the path the composition is compared with.
	IodineValue float64
	// IodineValueComputed says that IodineValue was computed from Profile;
	// a problem with it then points at the profile, which is what the
	// caller gave.
	IodineValueComputed bool
}

// ivPath is where a problem with an observation's iodine value points.
func (o Observation) ivPath(i int) []any {
	if o.IodineValueComputed {
		return []any{"observations", i, "profile"}
	}
	return []any{"observations", i, "iodine_value"}
}

// FitRequest is the input of [Fit]. Build it with [NewFitRequest]. Field
// paths in errors:
//
//	("feed"), ("feed", "acids")              as for Forecast
//	("observations")                         none given, too many, too few data for the free parameters
//	("observations", i, "profile")           missing profile
//	("observations", i, "iodine_value")      not finite; at or above the feed's, at or below 0
//	("initial", <parameter>)                 starting values, see [Parameter.String]
//	("free_parameters"), ("free_parameters", i)  empty or duplicate free parameters
//	("max_iterations")                       iteration cap
type FitRequest struct {
	// Feed is the oil the observed products were hardened from.
	Feed *chem.Profile
	// Observations are the observed products, one or more. The parameters
	// are determined by observations spread along the path: samples while
	// trienes and dienes are still present (iodine values near the feed's)
	// fix the selectivities and the trans share; samples after the dienes
	// are gone (iodine value below about 70 for soybean oil) fix the
	// isomerisation and trans saturation rates. Samples from several
	// batches of the same feed and catalyst may be pooled.
	Observations []Observation
	// Initial is where the search starts and the value of every parameter
	// that is not free. NewFitRequest sets the selective-nickel preset.
	Initial Catalyst
	// Free lists the parameters to fit; nil means [DefaultFreeParameters],
	// less the linolenic selectivity when the feed holds (almost) no
	// triene (with a warning).
	Free []Parameter
	// MaxIterations caps the Gauss–Newton iterations; 0 means
	// DefaultFitIterations.
	MaxIterations int
}

// DefaultFreeParameters are the parameters a fit frees unless told
// otherwise: all but the trans:cis equilibrium ratio K.
//
// Why K is held: once the polyenes are gone, composition against iodine
// value carries only two numbers about the monoene pools (the trans:cis
// ratio of the slow mode and the ratio of the two decay rates), while three
// parameters shape them (isomerisation rate, K, trans saturation rate).
// With exact data all six are determined, but at laboratory noise
// (±0.3 percentage points) K, the isomerisation rate and the trans
// saturation rate trade off against each other and wander by 20–40 %
// together. K is a thermodynamic property of the monoenes rather than of
// the catalyst (about 2:1 to 3:1 for internal 18:1 [memory]), so it is the
// one to take from the literature; free it explicitly when the data are
// rich enough (the standard errors of the result tell).
func DefaultFreeParameters() []Parameter {
	return []Parameter{
		ParamLinolenicSelectivity, ParamLinoleicSelectivity, ParamTransShare,
		ParamIsomerisationRate, ParamTransSaturationRate,
	}
}

// NewFitRequest returns a fit of the default free parameters starting from
// the selective-nickel preset. It does not validate; [Fit] does.
func NewFitRequest(feed *chem.Profile, observations []Observation) FitRequest {
	start, _ := PresetByName(PresetNickelSelective)
	return FitRequest{Feed: feed, Observations: observations, Initial: start.Catalyst, MaxIterations: DefaultFitIterations}
}

// groupKey identifies an acid group.
type groupKey struct {
	carbons, d int
	trans      bool
}

func groupOf(a *chem.FattyAcid) groupKey {
	return groupKey{a.Carbons, a.DoubleBondCount, a.DoubleBondCount > 0 && a.HasTrans()}
}

func (g groupKey) String() string {
	s := strconv.Itoa(g.carbons) + ":" + strconv.Itoa(g.d)
	switch {
	case g.d == 0:
		return s
	case g.trans:
		return s + " trans"
	default:
		return s + " cis"
	}
}

// newFitter validates the request and prepares the data.
func newFitter(ctx context.Context, cat *chem.Catalogue, req FitRequest) (*fitter, []chem.Warning, error) {
	var errs chem.FieldErrors
	if req.Feed == nil || len(req.Feed.Components) == 0 {
		errs.Invalid("a feed profile is required", "feed")
	}
	switch {
	case len(req.Observations) == 0:
		errs.Invalid("at least one observed product is required", "observations")
	case len(req.Observations) > MaxObservations:
		errs.Invalid(fmt.Sprintf("at most %d observed products", MaxObservations), "observations")
	}
	for i, o := range req.Observations {
		if o.Profile == nil || len(o.Profile.Components) == 0 {
			errs.Invalid("a product profile is required", "observations", i, "profile")
		}
		if !isFinite(o.IodineValue) {
			errs.Invalid("must be a finite iodine value", o.ivPath(i)...)
		}
	}
	req.Initial.validateInto(&errs, "initial")
	if req.Free != nil {
		if len(req.Free) == 0 {
			errs.Invalid("name at least one parameter to fit, or leave the list out to fit all", "free_parameters")
		}
		seen := map[Parameter]bool{}
		for i, p := range req.Free {
			if _, ok := ParseParameter(p.String()); !ok {
				errs.Invalid("unknown parameter", "free_parameters", i)
			} else if seen[p] {
				errs.Invalid("parameter listed twice", "free_parameters", i)
			}
			seen[p] = true
		}
	}
	if req.MaxIterations < 0 || req.MaxIterations > MaxFitIterations {
		errs.Invalid(fmt.Sprintf("must be from 0 (default) to %d", MaxFitIterations), "max_iterations")
	}
	if err := errs.Err("the catalyst fit request has problems"); err != nil {
		return nil, nil, err
	}

	net, x0, err := prepareFeed(cat, req.Feed, nil, "feed")
	if err != nil {
		return nil, nil, err
	}
	feedIV := chem.IodineValue(req.Feed, chem.MaterialTAG)
	if !(feedIV > 0) {
		return nil, nil, chem.Errorf(chem.KindOutOfDomain, "the feed has no double bonds (iodine value 0): nothing to harden").
			WithField("the feed's iodine value is 0; there is nothing to harden", "feed", "acids")
	}
	for i, o := range req.Observations {
		if o.IodineValue <= 0 || o.IodineValue >= feedIV {
			errs.OutOfDomain(fmt.Sprintf("must lie between 0 and the feed's iodine value %.4g (both excluded)", feedIV),
				o.ivPath(i)...)
		}
	}
	if err := errs.Err("the catalyst fit request has problems"); err != nil {
		return nil, nil, err
	}

	var warnings []chem.Warning
	free := req.Free
	if free == nil {
		var trienes, polyenes float64
		for i, a := range net.acids {
			if a.DoubleBondCount >= 3 {
				trienes += x0[i]
			}
			if a.DoubleBondCount >= 2 {
				polyenes += x0[i]
			}
		}
		// Without enough trienes the data cannot tell S_Ln; without enough
		// dienes (and trienes) neither S_R nor the trans share of the bonds
		// they lose: such parameters are held at their initial values.
		var held []string
		for _, p := range DefaultFreeParameters() {
			switch {
			case p == ParamLinolenicSelectivity && trienes < minLinolenicMoleFraction:
				warnings = append(warnings, chem.Warning{Code: chem.WarnMethodScope,
					Message: fmt.Sprintf("the feed holds %.3g mol %% of acids with three or more double bonds, too little to "+
						"tell the linolenic selectivity from the data; it was held at %g", 100*trienes, req.Initial.LinolenicSelectivity),
					Path: []any{"free_parameters"}})
			case (p == ParamLinoleicSelectivity || p == ParamTransShare) && polyenes < minLinolenicMoleFraction:
				held = append(held, fmt.Sprintf("%s at %g", p, req.Initial.Value(p)))
			default:
				free = append(free, p)
			}
		}
		if len(held) > 0 {
			warnings = append(warnings, chem.Warning{Code: chem.WarnMethodScope,
				Message: fmt.Sprintf("the feed holds %.3g mol %% of acids with two or more double bonds, too little to tell "+
					"the linoleic selectivity and the trans share from the data; held %s", 100*polyenes, strings.Join(held, " and ")),
				Path: []any{"free_parameters"}})
		}
	}

	f := &fitter{ctx: ctx, net: net, basis: req.Feed.Basis, base: req.Initial, gIndex: map[groupKey]int{}}
	for _, p := range free {
		f.free = append(f.free, newParamTransform(p))
	}
	sort.Slice(f.free, func(i, j int) bool { return f.free[i].p < f.free[j].p })

	// Groups: those of the model's acids and of every observation.
	keys := map[groupKey]bool{}
	for _, a := range net.acids {
		keys[groupOf(a)] = true
	}
	for _, o := range req.Observations {
		for _, c := range o.Profile.Components {
			keys[groupOf(c.Acid)] = true
		}
	}
	for k := range keys {
		f.groups = append(f.groups, k)
	}
	sort.Slice(f.groups, func(i, j int) bool {
		a, b := f.groups[i], f.groups[j]
		if a.carbons != b.carbons {
			return a.carbons < b.carbons
		}
		if a.d != b.d {
			return a.d < b.d
		}
		return !a.trans && b.trans
	})
	for i, g := range f.groups {
		f.gIndex[g] = i
	}
	f.acidGroup = make([]int, len(net.acids))
	for i, a := range net.acids {
		f.acidGroup[i] = f.gIndex[groupOf(a)]
	}
	for _, o := range req.Observations {
		obs := make([]float64, len(f.groups))
		pct := o.Profile.InBasis(f.basis)
		for i, c := range o.Profile.Components {
			obs[f.gIndex[groupOf(c.Acid)]] += pct[i]
		}
		f.observed = append(f.observed, obs)
		f.obsIV = append(f.obsIV, o.IodineValue)
	}

	// Each observation carries len(groups) − 1 independent values (they
	// sum to 100).
	if data := len(req.Observations) * (len(f.groups) - 1); data < len(f.free) {
		return nil, nil, chem.Errorf(chem.KindOutOfDomain,
			"the observations carry %d independent values, fewer than the %d parameters to fit", data, len(f.free)).
			WithField("add observations or free fewer parameters", "observations")
	}
	f.tr = newTrajectory(net, x0)
	f.lastTau = make([]float64, len(f.obsIV))
	return f, warnings, nil
}

// Fit limits.
const (
	// DefaultFitIterations is the iteration cap when FitRequest.MaxIterations
	// is 0. A Gauss–Newton fit of this model usually converges in 5–20.
	DefaultFitIterations = 100
	// MaxFitIterations is the largest iteration cap a request may set.
	MaxFitIterations = 1000
	// MaxObservations is the most observed products one fit accepts.
	MaxObservations = 100
	// minLinolenicMoleFraction is the polyene (three or more double bonds)
	// content below which the linolenic selectivity cannot be told from
	// the data and is held fixed unless the caller frees it explicitly.
	minLinolenicMoleFraction = 0.005
	// jacobianStep is the central-difference step in the transformed
	// parameters (which are of order one).
	jacobianStep = 1e-5
	// boundShare is how close, as a share of its search range (in the
	// transformed coordinate), a fitted parameter may come to a bound before
	// it is reported as not determined by the data.
	boundShare = 1e-4
	// minIsomerisationRateFit is the lower bound of the isomerisation rate
	// during a fit: the logarithmic transform cannot reach 0 itself.
	minIsomerisationRateFit = 1e-3
)
