package hardening

import (
	"context"
	"errors"
	"fmt"
	"math"
	"sort"
	"strconv"
	"strings"

	"gonum.org/v1/gonum/mat"
	"gonum.org/v1/gonum/optimize"

	"lipidsvc/chem"
)

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

// ParameterEstimate is one fitted (or held) parameter.
type ParameterEstimate struct {
	Parameter Parameter
	Value     float64
	// Free reports whether the parameter was fitted.
	Free bool
	// StandardError is the asymptotic standard error of a free parameter,
	// from the Gauss–Newton covariance s²(JᵀJ)⁻¹ with the residual variance
	// s² on the degrees of freedom left; nil when the parameter was held,
	// the data leave no degrees of freedom or the parameter is not
	// identifiable from them (singular JᵀJ). It is a linearised figure:
	// read it as an order of magnitude, not as an exact interval.
	StandardError *float64
}

// GroupResidual compares one acid group of one observation. Acids are
// grouped by chain length, number of double bonds and geometry, because
// laboratories resolve positional isomers differently and the model lumps
// them ("18:1 trans" holds elaidic, vaccenic and the lumped "18:1 t").
type GroupResidual struct {
	// Group names the group: "18:0", "18:1 cis", "18:1 trans".
	Group       string
	Carbons     int
	DoubleBonds int
	Trans       bool
	// Observed, Predicted and Residual (observed − predicted) are
	// percentages in the feed's basis. A group a laboratory did not report
	// counts as 0 observed.
	Observed, Predicted, Residual float64
}

// ObservationFit is the fit at one observation.
type ObservationFit struct {
	// IodineValue is the observation's iodine value.
	IodineValue float64
	// PathVariable is τ at that iodine value under the fitted catalyst.
	PathVariable float64
	// Residuals lists every group, in the same order for every observation.
	Residuals []GroupResidual
	// RMSPercentagePoints is the root mean square of this observation's
	// residuals.
	RMSPercentagePoints float64
}

// FitResult is the answer of [Fit].
type FitResult struct {
	// Catalyst is the fitted catalyst, ready for ForecastRequest.Catalyst.
	Catalyst Catalyst
	// Parameters lists all six parameters in canonical order.
	Parameters []ParameterEstimate
	// Observations compares each observation with the fitted model.
	Observations []ObservationFit
	// RMSPercentagePoints is the root mean square of all residuals,
	// percentage points.
	RMSPercentagePoints float64
	// RSquared is 1 − Σ residual² / Σ_g Σ_j (observed_jg − mean_g)², the
	// means taken per acid group over the observations: the share of the
	// change along the hardening path that the model explains. (Against one
	// mean of all groups it would also count the differences between
	// groups, which any model reproduces, and read high.) It is NaN when
	// no group changes between observations (a single observation, or
	// identical ones).
	RSquared float64
	// Iterations is the number of Gauss–Newton iterations.
	Iterations int
	// Evaluations is the number of model evaluations (one forecast per
	// observation each), including those for derivatives.
	Evaluations int
	// Warnings say which parameters were held and why.
	Warnings []chem.Warning
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

// paramTransform maps a bounded parameter to an unbounded one and back:
// θ = logit(u), u = (g(p) − g(lo))/(g(hi) − g(lo)), with g = ln for the
// rate and ratio parameters (they span decades) and g = identity for the
// trans share, a fraction. Searching in θ keeps every trial inside its
// bounds without constraints.
type paramTransform struct {
	p      Parameter
	lo, hi float64 // in g units
	log    bool
}

func newParamTransform(p Parameter) paramTransform {
	lo, hi := p.Range()
	if p == ParamIsomerisationRate {
		lo = minIsomerisationRateFit
	}
	if p == ParamTransShare {
		return paramTransform{p: p, lo: lo, hi: hi}
	}
	return paramTransform{p: p, lo: math.Log(lo), hi: math.Log(hi), log: true}
}

func (t paramTransform) toTheta(v float64) float64 {
	g := v
	if t.log {
		g = math.Log(math.Max(v, math.Exp(t.lo)))
	}
	u := (g - t.lo) / (t.hi - t.lo)
	u = math.Min(math.Max(u, 1e-6), 1-1e-6)
	return math.Log(u / (1 - u))
}

func (t paramTransform) fromTheta(theta float64) float64 {
	u := 1 / (1 + math.Exp(-theta))
	g := t.lo + u*(t.hi-t.lo)
	if t.log {
		// exp(log(bound)) can land a rounding step outside the bound; clamp so
		// that a fitted catalyst always passes Catalyst.Validate.
		lo, hi := t.p.Range()
		return math.Min(math.Max(math.Exp(g), lo), hi)
	}
	return g
}

// dNaturalDTheta is d g(p)/dθ: d ln p/dθ for the log parameters, dp/dθ for
// the trans share.
func (t paramTransform) dNaturalDTheta(theta float64) float64 {
	u := 1 / (1 + math.Exp(-theta))
	return u * (1 - u) * (t.hi - t.lo)
}

// fitter holds one fit's state. It lives for one call of Fit, which is why
// it may carry that call's context.
type fitter struct {
	ctx    context.Context
	net    *network
	tr     *trajectory
	basis  chem.Basis
	base   Catalyst
	free   []paramTransform
	groups []groupKey
	gIndex map[groupKey]int
	// acidGroup maps each network acid to its group.
	acidGroup []int
	obsIV     []float64
	// lastTau is each observation's τ at the last evaluation: a warm start
	// for the next, whose parameters differ little.
	lastTau  []float64
	observed [][]float64 // per observation, per group, feed basis %
	evals    int
	err      error
	// cache of the last residual and Jacobian evaluations.
	lastTheta, lastR []float64
	jacTheta         []float64
	jac              *mat.Dense
}

// FitOf calibrates the catalyst parameters on observed products of plant
// batches: it finds the parameters whose forecast compositions, at the
// observed iodine values, come closest to the observed compositions in the
// least-squares sense (all acid groups of all observations weighted
// equally, percentage points in the feed's basis).
//
// Method: Gauss–Newton on the transformed parameters (see paramTransform),
// run by gonum's optimize.Newton with the Hessian approximated by JᵀJ and
// the gradient Jᵀr, the Jacobian J from central differences; Newton's
// added multiple of the identity when JᵀJ is singular acts as a
// Levenberg–Marquardt damping. Each model evaluation is an exact forecast
// (matrix exponential and a safeguarded Newton root on the iodine value).
// Starting values are kept 5 % of their transformed range inside the
// bounds; a run that ends with a parameter at a bound is repeated from
// every preset and the best fit kept (warning WarnFitRestarted when that
// beat the given start).
//
// cat is the catalogue the profiles were read with.
//
// Errors: chem.KindInvalid for malformed input, chem.KindOutOfDomain for a
// request the data cannot answer (an observation's iodine value outside the
// path, fewer data than free parameters), chem.KindNoConvergence when the
// iteration cap is hit; ctx.Err() if ctx ends first.
func FitOf(ctx context.Context, cat *chem.Catalogue, req FitRequest) (*FitResult, error) {
	f, warnings, err := newFitter(ctx, cat, req)
	if err != nil {
		return nil, err
	}
	iters := req.MaxIterations
	if iters == 0 {
		iters = DefaultFitIterations
	}
	// Gauss–Newton finds the nearest minimum, and from a poor start it can
	// run a parameter into a bound, where the transformed gradient vanishes
	// and it stops far from the best fit (review: exact data fitted to RMS
	// 2–5 points from some presets). So a run that ends with a parameter
	// at a bound is repeated from every preset, and the lowest objective
	// wins; a run that ends inside the box stands alone.
	best, err := f.run(f.start(req.Initial), iters)
	if err != nil || f.atBound(best.x) {
		first, firstErr, winner := best, err, ""
		for _, pr := range Presets() {
			// start reads only the free parameters; the held ones stay
			// those of req.Initial (f.base).
			alt, aerr := f.run(f.start(pr.Catalyst), iters)
			if cerr := ctx.Err(); cerr != nil {
				return nil, cerr
			}
			if aerr == nil && (err != nil || alt.objective < best.objective) {
				best, err, winner = alt, nil, pr.Name
			}
		}
		if err != nil {
			return nil, err
		}
		if firstErr == nil && winner != "" && best.objective < first.objective*(1-1e-6) {
			warnings = append(warnings, chem.Warning{Code: WarnFitRestarted, Message: fmt.Sprintf(
				"from the given initial values the fit stopped at a parameter bound (RMS %.3g points); "+
					"a restart from the %s preset's values fitted better (RMS %.3g points)",
				f.rms(first.objective), winner, f.rms(best.objective)), Path: []any{"initial"}})
		}
	}
	return f.result(req, best.x, best.iterations, warnings)
}

// WarnFitRestarted: the fit from the given initial values stopped at a
// parameter bound and a restart from a preset fitted better.
const WarnFitRestarted = "fit_restarted"

// fitRun is the outcome of one Gauss–Newton run.
type fitRun struct {
	x          []float64
	iterations int
	objective  float64
}

// startShare keeps starting values this share of their (transformed) range
// away from the bounds, where the logit transform flattens the gradient.
const startShare = 0.05

// start is the transformed starting point for catalyst c.
func (f *fitter) start(c Catalyst) []float64 {
	theta := make([]float64, len(f.free))
	lim := math.Log(startShare / (1 - startShare))
	for i, t := range f.free {
		theta[i] = math.Min(math.Max(t.toTheta(c.Value(t.p)), lim), -lim)
	}
	return theta
}

// atBound reports whether a free parameter ended within boundShare of a
// bound of its range.
func (f *fitter) atBound(theta []float64) bool {
	for _, th := range theta {
		if thetaAtBound(th) {
			return true
		}
	}
	return false
}

// thetaAtBound reports whether a transformed parameter lies within
// boundShare of a bound: θ is the logit of the position in the range.
func thetaAtBound(theta float64) bool {
	u := 1 / (1 + math.Exp(-theta))
	return u < boundShare || u > 1-boundShare
}

// rms converts an objective ½‖r‖² into the root-mean-square residual.
func (f *fitter) rms(objective float64) float64 {
	return math.Sqrt(2 * objective / float64(len(f.obsIV)*len(f.groups)))
}

// run minimises the objective from theta0 (see Fit for the method).
func (f *fitter) run(theta0 []float64, iters int) (fitRun, error) {
	f.err = nil
	ctx := f.ctx
	problem := optimize.Problem{
		Func: f.objective,
		Grad: f.gradient,
		Hess: f.hessian,
		Status: func() (optimize.Status, error) {
			if err := ctx.Err(); err != nil {
				return optimize.Failure, err
			}
			if f.err != nil {
				return optimize.Failure, f.err
			}
			return optimize.NotTerminated, nil
		},
	}
	settings := &optimize.Settings{
		MajorIterations: iters,
		Converger:       &optimize.FunctionConverge{Absolute: 1e-14, Relative: 1e-9, Iterations: 3},
	}
	res, err := optimize.Minimize(problem, theta0, settings, &optimize.Newton{GradStopThreshold: 1e-10})
	if cerr := ctx.Err(); cerr != nil {
		return fitRun{}, cerr
	}
	if f.err != nil {
		return fitRun{}, f.err
	}
	if res == nil {
		return fitRun{}, chem.Errorf(chem.KindNoConvergence, "the catalyst fit failed: %v", err)
	}
	// A line search that can make no further progress has found the
	// minimum to working precision; anything else is a failure.
	if err != nil && !errors.Is(err, optimize.ErrLinesearcherFailure) && !errors.Is(err, optimize.ErrNoProgress) {
		return fitRun{}, chem.Errorf(chem.KindNoConvergence, "the catalyst fit failed: %v", err)
	}
	switch res.Status {
	case optimize.IterationLimit, optimize.FunctionEvaluationLimit, optimize.GradientEvaluationLimit,
		optimize.HessianEvaluationLimit, optimize.RuntimeLimit:
		return fitRun{}, chem.Errorf(chem.KindNoConvergence,
			"the catalyst fit did not converge within %d iterations", iters).
			WithField("raise the iteration cap, free fewer parameters or add observations", "max_iterations")
	}
	return fitRun{x: res.X, iterations: res.Stats.MajorIterations, objective: f.objective(res.X)}, nil
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

// catalyst returns the catalyst at transformed parameters theta.
func (f *fitter) catalyst(theta []float64) Catalyst {
	c := f.base
	for i, t := range f.free {
		c = c.With(t.p, t.fromTheta(theta[i]))
	}
	return c
}

// predict returns, per observation, the predicted group percentages and τ.
func (f *fitter) predict(c Catalyst) ([][]float64, []float64, error) {
	f.evals++
	f.net.setCatalyst(c)
	pred := make([][]float64, len(f.obsIV))
	taus := make([]float64, len(f.obsIV))
	x := make([]float64, len(f.tr.x0))
	for j, iv := range f.obsIV {
		tau, err := f.tr.tauAt(f.ctx, iv, f.lastTau[j])
		if err != nil {
			return nil, nil, err
		}
		taus[j] = tau
		f.lastTau[j] = tau
		f.net.evolve(f.tr.x0, tau, x)
		p := chem.FromMoleFractions(f.net.acids, x, f.basis)
		g := make([]float64, len(f.groups))
		for i, comp := range p.Components {
			g[f.acidGroup[i]] += comp.Percent
		}
		pred[j] = g
	}
	return pred, taus, nil
}

// residuals returns observed − predicted for every observation and group,
// flattened; nil when the model could not be evaluated (the error is kept).
func (f *fitter) residuals(theta []float64) []float64 {
	pred, _, err := f.predict(f.catalyst(theta))
	if err != nil {
		if f.err == nil {
			f.err = err
		}
		return nil
	}
	r := make([]float64, 0, len(f.obsIV)*len(f.groups))
	for j := range f.obsIV {
		for g := range f.groups {
			r = append(r, f.observed[j][g]-pred[j][g])
		}
	}
	return r
}

func (f *fitter) cachedResiduals(theta []float64) []float64 {
	if f.lastTheta != nil && equalSlices(f.lastTheta, theta) {
		return f.lastR
	}
	r := f.residuals(theta)
	f.lastTheta = append(f.lastTheta[:0], theta...)
	f.lastR = r
	return r
}

// jacobian returns ∂r/∂θ by central differences, cached per θ.
func (f *fitter) jacobian(theta []float64) *mat.Dense {
	if f.jac != nil && equalSlices(f.jacTheta, theta) {
		return f.jac
	}
	r0 := f.cachedResiduals(theta)
	if r0 == nil {
		return nil
	}
	jac := mat.NewDense(len(r0), len(theta), nil)
	work := append([]float64(nil), theta...)
	for k := range theta {
		work[k] = theta[k] + jacobianStep
		rp := f.residuals(work)
		work[k] = theta[k] - jacobianStep
		rm := f.residuals(work)
		work[k] = theta[k]
		if rp == nil || rm == nil {
			return nil
		}
		for i := range r0 {
			jac.Set(i, k, (rp[i]-rm[i])/(2*jacobianStep))
		}
	}
	f.jacTheta = append(f.jacTheta[:0], theta...)
	f.jac = jac
	return jac
}

// objective is ½‖r‖².
func (f *fitter) objective(theta []float64) float64 {
	r := f.cachedResiduals(theta)
	if r == nil {
		return math.Inf(1)
	}
	var s float64
	for _, v := range r {
		s += v * v
	}
	return s / 2
}

// gradient is ∇(½‖r‖²) = −Jᵀr with J = ∂(predicted)/∂θ, i.e. Jᵀr with
// J = ∂r/∂θ.
func (f *fitter) gradient(grad, theta []float64) {
	j := f.jacobian(theta)
	r := f.cachedResiduals(theta)
	if j == nil || r == nil {
		for i := range grad {
			grad[i] = math.NaN()
		}
		return
	}
	g := mat.NewVecDense(len(grad), grad)
	g.MulVec(j.T(), mat.NewVecDense(len(r), r))
}

// hessian is the Gauss–Newton approximation JᵀJ.
func (f *fitter) hessian(h *mat.SymDense, theta []float64) {
	j := f.jacobian(theta)
	if j == nil {
		for a := 0; a < len(theta); a++ {
			for b := a; b < len(theta); b++ {
				h.SetSym(a, b, math.NaN())
			}
		}
		return
	}
	h.SymOuterK(1, j.T())
}

// result assembles the answer at the optimum theta.
func (f *fitter) result(req FitRequest, theta []float64, iterations int, warnings []chem.Warning) (*FitResult, error) {
	c := f.catalyst(theta)
	pred, taus, err := f.predict(c)
	if err != nil {
		return nil, err
	}
	out := &FitResult{Catalyst: c, Iterations: iterations, Warnings: warnings}
	var ss, n float64
	groupMean := make([]float64, len(f.groups))
	for j := range f.obsIV {
		of := ObservationFit{IodineValue: f.obsIV[j], PathVariable: taus[j]}
		var so float64
		for g, key := range f.groups {
			r := f.observed[j][g] - pred[j][g]
			of.Residuals = append(of.Residuals, GroupResidual{
				Group: key.String(), Carbons: key.carbons, DoubleBonds: key.d, Trans: key.trans,
				Observed: f.observed[j][g], Predicted: pred[j][g], Residual: r,
			})
			so += r * r
			groupMean[g] += f.observed[j][g] / float64(len(f.obsIV))
			n++
		}
		of.RMSPercentagePoints = math.Sqrt(so / float64(len(f.groups)))
		ss += so
		out.Observations = append(out.Observations, of)
	}
	var tot float64
	for j := range f.obsIV {
		for g := range f.groups {
			d := f.observed[j][g] - groupMean[g]
			tot += d * d
		}
	}
	out.RMSPercentagePoints = math.Sqrt(ss / n)
	out.RSquared = math.NaN()
	if tot > 0 {
		out.RSquared = 1 - ss/tot
	}

	// Groups that are zero in every observation and prediction (products
	// of acids the feed does not hold) carry no data.
	active := 0
	for g := range f.groups {
		for j := range f.obsIV {
			if f.observed[j][g] != 0 || pred[j][g] != 0 {
				active++
				break
			}
		}
	}
	se := f.standardErrors(theta, ss, active)
	freeIndex := map[Parameter]int{}
	for i, t := range f.free {
		freeIndex[t.p] = i
	}
	for _, p := range AllParameters() {
		est := ParameterEstimate{Parameter: p, Value: c.Value(p)}
		if i, ok := freeIndex[p]; ok {
			est.Free = true
			if thetaAtBound(theta[i]) {
				// A parameter pinned at its bound is not determined by the
				// data; its linearised standard error would mislead.
				out.Warnings = append(out.Warnings, chem.Warning{Code: chem.WarnMethodScope,
					Message: fmt.Sprintf("%s ended at the bound of its range (%g); the data do not determine it — "+
						"add observations along the path or hold it", p, est.Value),
					Path: []any{"free_parameters"}})
			} else if se != nil && isFinite(se[i]) {
				v := se[i]
				if f.free[i].log {
					v *= est.Value // SE(p) ≈ p·SE(ln p)
				}
				est.StandardError = &v
			}
		}
		out.Parameters = append(out.Parameters, est)
	}
	out.Evaluations = f.evals
	return out, nil
}

// standardErrors returns the standard errors of ln p (log parameters) or p
// (the trans share), from s²(JₙᵀJₙ)⁻¹ with Jₙ the Jacobian in those natural
// coordinates and s² = Σr²/(data − free), data counting activeGroups − 1
// values per observation; nil when they are undefined.
func (f *fitter) standardErrors(theta []float64, ss float64, activeGroups int) []float64 {
	data := len(f.obsIV) * (activeGroups - 1)
	dof := data - len(f.free)
	if dof <= 0 {
		return nil
	}
	j := f.jacobian(theta)
	if j == nil {
		return nil
	}
	rows, cols := j.Dims()
	jn := mat.NewDense(rows, cols, nil)
	for k, t := range f.free {
		scale := 1 / t.dNaturalDTheta(theta[k])
		for i := 0; i < rows; i++ {
			jn.Set(i, k, j.At(i, k)*scale)
		}
	}
	var jtj mat.SymDense
	jtj.SymOuterK(1, jn.T())
	var chol mat.Cholesky
	// A condition number beyond 1e12 means some combination of the
	// parameters is not determined by the data.
	if ok := chol.Factorize(&jtj); !ok || chol.Cond() > 1e12 {
		return nil
	}
	var cov mat.SymDense
	if err := chol.InverseTo(&cov); err != nil {
		return nil
	}
	s2 := ss / float64(dof)
	out := make([]float64, cols)
	for k := range out {
		out[k] = math.Sqrt(s2 * cov.At(k, k))
	}
	return out
}

func equalSlices(a, b []float64) bool {
	if len(a) != len(b) {
		return false
	}
	for i := range a {
		if a[i] != b[i] {
			return false
		}
	}
	return true
}
