package hardening

import (
	"context"
	"math"

	"lipidsvc/chem"
	"lipidsvc/chem/internal/roots"
)

// trajectory evaluates the hardening path of one feed for one catalyst.
type trajectory struct {
	net    *network
	x0     []float64
	x      []float64
	feedIV float64
	// anchorTau and anchorX are a known point of the path; later points
	// are evolved from it, x(τ) = exp(A(τ − τa))·x(τa), which is exact and
	// keeps τ − τa small, so few binary powers are applied.
	anchorTau float64
	anchorX   []float64
	// fromStart and fromAnchor are the series of x0 and of the anchor,
	// reused by every evaluation from them.
	fromStart, fromAnchor *series
	// lastTau, lastIV and lastSlope are the most recent evaluation, which
	// the path uses for its next start.
	lastTau, lastIV, lastSlope float64
	// prior is the path point solved before the last one (ok false until
	// there is one), for the next start's extrapolation.
	prior struct {
		ok             bool
		tau, iv, slope float64
	}
	// endTau and endIV are the end of the path (beginPath).
	endTau, endIV float64
	// evals counts network evaluations, for benchmarks and tests.
	evals int
}

func newTrajectory(net *network, x0 []float64) *trajectory {
	tr := &trajectory{net: net, x0: x0, x: make([]float64, len(x0)), anchorX: x0}
	tr.fromStart = net.newSeries(x0)
	tr.fromAnchor = tr.fromStart
	tr.feedIV = net.iodineValue(x0)
	return tr
}

// anchor makes (tau, x) the point later evaluations start from; x is
// copied.
func (tr *trajectory) anchor(tau float64, x []float64) {
	tr.anchorTau = tau
	tr.anchorX = append(tr.anchorX[:0:0], x...)
	if tr.fromAnchor == tr.fromStart {
		tr.fromAnchor = tr.net.newSeries(tr.anchorX)
	} else {
		tr.fromAnchor.reset(tr.anchorX)
	}
}

// beginPath makes the point just solved (the trajectory's last
// evaluation) the end of a path table and the feed its first point, for
// nextRoot to walk from one to the other.
func (tr *trajectory) beginPath() {
	tr.endTau, tr.endIV = tr.lastTau, tr.lastIV
	tr.lastTau = 0
	tr.lastIV, tr.lastSlope = tr.net.iodineValueSlope(tr.x0)
	tr.prior.ok = false
}

// ivAt returns the iodine value at path variable tau and its slope
// dIV/dτ; it leaves the composition in tr.x.
func (tr *trajectory) ivAt(tau float64) (iv, slope float64) {
	tr.evals++
	if tau >= tr.anchorTau {
		tr.fromAnchor.evolve(tau-tr.anchorTau, tr.x)
	} else {
		tr.fromStart.evolve(tau, tr.x)
	}
	iv, slope = tr.net.iodineValueSlope(tr.x)
	tr.lastTau, tr.lastIV, tr.lastSlope = tau, iv, slope
	return iv, slope
}

// nextRoot finds the path variable of the next path point, at iodine value
// target, between the point just solved (where the trajectory's last
// evaluation is) and the end of the path set by beginPath. Both ends are
// known, so neither is evaluated again. The search
// starts from τ(IV) extrapolated by the cubic Hermite polynomial through the
// last two points, with their exact slopes dτ/dIV = 1/(dIV/dτ), whose error
// falls with the fourth power of the spacing (off the single point just
// solved, a Newton step, while there is only one); with evenly spaced path
// points that start is usually within the tolerance after one Newton step.
func (tr *trajectory) nextRoot(ctx context.Context, target float64) (float64, error) {
	tauEnd, ivEnd := tr.endTau, tr.endIV
	lo, ivLo, slopeLo := tr.lastTau, tr.lastIV, tr.lastSlope
	start := math.NaN()
	if slopeLo < 0 {
		start = lo + (target-ivLo)/slopeLo
	}
	if p := tr.prior; p.ok && p.slope < 0 && slopeLo < 0 && p.iv != ivLo {
		h := ivLo - p.iv
		t := (target - p.iv) / h
		t2, t3 := t*t, t*t*t
		hermite := (2*t3-3*t2+1)*p.tau + (t3-2*t2+t)*h/p.slope +
			(-2*t3+3*t2)*lo + (t3-t2)*h/slopeLo
		if hermite > lo && hermite < tauEnd {
			start = hermite
		}
	}
	tau, err := tr.solve(ctx, target, lo, tauEnd, ivLo-target, ivEnd-target, start)
	tr.prior.ok, tr.prior.tau, tr.prior.iv, tr.prior.slope = true, lo, ivLo, slopeLo
	return tau, err
}

// solve finds τ in (lo, hi) with IV(τ) = target, to within ivTolerance,
// starting from start. On success tr.x holds the composition at the root:
// the finder runs with no x tolerance, so every successful exit is at the
// point it evaluated last (the path and the fit rely on this). The caller guarantees IV(lo) > target and, unless
// hi is +Inf, IV(hi) < target.
//
// Method: the shared bracketed root finder (chem/internal/roots), which
// here takes Newton steps safeguarded by bisection (the "rtsafe" scheme,
// Press et al., Numerical Recipes, 3rd ed., §9.4). The
// iodine value falls strictly along the path (every hydrogenation step
// removes a double bond and adds mass, isomerisation changes neither) and
// tends to zero, so the root is unique; its derivative is exact and cheap
// (dx/dτ = A·x), which makes Newton converge in three or four evaluations
// where Brent's derivative-free method needs about ten, and every matrix
// exponential saved counts. Each evaluation narrows the bracket; a Newton
// step that would leave it is replaced by bisection, or by doubling while
// no upper end is known yet. The iteration cap ends a solve that does not
// converge with chem.KindNoConvergence.
//
// flo and fhi are IV − target at lo and hi when known, NaN otherwise.
func (tr *trajectory) solve(ctx context.Context, target, lo, hi, flo, fhi, start float64) (float64, error) {
	r, err := roots.Find(roots.Problem{
		F: func(tau float64) (float64, float64, error) {
			iv, slope := tr.ivAt(tau)
			return iv - target, slope, nil
		},
		Lo: lo, Hi: hi, FLo: flo, FHi: fhi, Start: start, Step: 1,
		FTol: ivTolerance, MaxIter: rootIterations, Check: ctx.Err,
	})
	switch {
	case err != nil:
		return 0, err
	case r.Converged:
		return r.X, nil
	case r.Stalled && math.Abs(r.F) <= ivAcceptTolerance:
		// The bracket has shrunk to adjacent numbers: near steep corners
		// of the parameter space the iodine value can step by more than
		// ivTolerance between neighbouring τ. Accept the point when it is
		// still far inside the 0.01 the target promises.
		return r.X, nil
	}
	return 0, chem.Errorf(chem.KindNoConvergence,
		"the root finder did not reach iodine value %.6g within %d iterations", target, rootIterations).
		WithField("target not reached within the solver's limits", "target")
}

// tauAt finds the path variable at which the iodine value equals target,
// which must lie strictly between 0 and the feed's iodine value, starting
// the search at start (0 when nothing better is known).
func (tr *trajectory) tauAt(ctx context.Context, target, start float64) (float64, error) {
	return tr.solve(ctx, target, 0, math.Inf(1), math.NaN(), math.NaN(), start)
}
