package hardening

import (
	"context"
	"errors"
	"fmt"
	"math"

	"gonum.org/v1/gonum/mat"
	"gonum.org/v1/gonum/optimize"

	"lipidsvc/chem"
)

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
// (the exact propagator and a safeguarded Newton root on the iodine value).
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
	for j, iv := range f.obsIV {
		tau, err := f.tr.tauAt(f.ctx, iv, f.lastTau[j])
		if err != nil {
			return nil, nil, err
		}
		taus[j] = tau
		f.lastTau[j] = tau
		// The root finder leaves the composition at the root in tr.x.
		p := chem.FromMoleFractions(f.net.acids, f.tr.x, f.basis)
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
