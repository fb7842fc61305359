package hardening

import (
	"context"
	"fmt"
	"math"

	"lipidsvc/chem"
	"lipidsvc/chem/internal/roots"
	"lipidsvc/chem/melting"
)

// Limits of the search for a slip-melting-point target.
const (
	// slipToleranceK is how closely the product's slip melting point meets
	// the target, K.
	slipToleranceK = 0.01
	// slipIterations caps the search on the iodine value.
	slipIterations = 80
	// lowestSearchIodineValue is the most the search hardens: near full
	// saturation, where the slip melting point is at its highest.
	lowestSearchIodineValue = 0.5
)

// SlipTargetResult is a forecast that stops where the product's slip melting
// point reaches a target.
type SlipTargetResult struct {
	*ForecastResult
	// TargetSlipMeltingPointC is the requested slip melting point, °C.
	TargetSlipMeltingPointC float64
	// SlipMeltingPointC is the product's slip melting point, °C, within
	// 0.01 K of the target.
	SlipMeltingPointC float64
	// FeedSlipMeltingPointC is the feed's slip melting point, °C; NaN when
	// the feed has none above melting.MinTemperatureC.
	FeedSlipMeltingPointC float64
	// Evaluations counts the forecasts made during the search.
	Evaluations int
	// MeltingWarnings are what the melting model assumed for the product
	// (pooling, acids outside its fitted data) and how uncertain it is for
	// a fat of the product's kind.
	MeltingWarnings []chem.Warning
	// Uncertainty is the melting model's typical error for the product's
	// kind of fat; SN2Estimate is the sn-2 estimate it used for the product
	// (SN2Supplied when the forecast hardened a measured sn-2 composition).
	Uncertainty melting.Uncertainty
	SN2Estimate melting.SN2Estimate
}

// ForecastToSlipMeltingPoint hardens req.Feed with req.Catalyst until the
// product's slip melting point, computed by the melting model with mopt,
// equals targetC; req.Target is ignored. Hardening raises the slip melting
// point as the iodine value falls, so the search brackets the target
// between the feed and an almost fully hardened product and bisects on the
// final iodine value (which keeps working where pooling of minor TAG species
// makes the slip melting point step slightly rather than vary smoothly).
//
// Errors: the forecast's and the melting model's; KindInvalid when mopt
// supplies an sn-2 composition or enrichment factors (use req.Sn2, which is
// hardened with the feed); KindOutOfDomain with the
// field path ("target", "slip_melting_point_c") when the feed already melts
// at or above the target or even a fully hardened product stays below it;
// KindNoConvergence past the iteration cap; ctx.Err() when ctx ends.
func ForecastToSlipMeltingPoint(ctx context.Context, cat *chem.Catalogue, req ForecastRequest, targetC float64, mopt melting.Options) (*SlipTargetResult, error) {
	if math.IsNaN(targetC) || math.IsInf(targetC, 0) || targetC < melting.MinTemperatureC || targetC > melting.MaxTemperatureC {
		return nil, chem.Errorf(chem.KindInvalid, "the slip melting point target must be a temperature from %g to %g °C",
			melting.MinTemperatureC, melting.MaxTemperatureC).
			WithField("out of range", "target", "slip_melting_point_c")
	}
	if req.Feed == nil {
		return nil, chem.Errorf(chem.KindInvalid, "the feed is missing").WithField("required", "profile")
	}
	if err := mopt.Validate(); err != nil {
		return nil, chem.PrefixError(err, "melting")
	}
	// A measured sn-2 composition enters as req.Sn2, which is hardened
	// along with the feed; one fixed sn-2 profile or per-acid factors in
	// mopt would be applied unchanged to products whose acids differ.
	if s := mopt.Composition.SN2; s == melting.SN2Supplied || s == melting.SN2Enrichment {
		return nil, chem.Errorf(chem.KindInvalid, "give a measured sn-2 composition as the forecast's Sn2, not as a melting option").
			WithField("use the forecast's sn-2 composition", "melting", "sn2_estimate")
	}
	// With an sn-2 composition the melting model uses the (hardened) sn-2
	// pool instead of estimating one, since hardening barely moves acids
	// between positions.
	optFor := func(sn2 *chem.Profile) melting.Options {
		o := mopt
		if sn2 != nil {
			o.Composition.SN2 = melting.SN2Supplied
			o.Composition.SN2Profile = sn2
		}
		return o
	}
	// slip is the slip melting point of a fat, −Inf when it has none, and
	// what the melting model assumed for it; last is the model of the
	// latest fat.
	var last *melting.Fat
	slip := func(p, sn2 *chem.Profile) (float64, []chem.Warning, error) {
		fat, err := melting.Prepare(p, optFor(sn2))
		if err != nil {
			return 0, nil, err
		}
		last = fat
		t, defined, err := fat.SlipMeltingPointC()
		if err != nil {
			return 0, nil, err
		}
		if !defined {
			t = math.Inf(-1)
		}
		return t, fat.Warnings(), nil
	}
	out := &SlipTargetResult{TargetSlipMeltingPointC: targetC}
	feedSlip, _, err := slip(req.Feed, req.Sn2)
	if err != nil {
		return nil, err
	}
	out.FeedSlipMeltingPointC = feedSlip
	if math.IsInf(feedSlip, -1) {
		out.FeedSlipMeltingPointC = math.NaN()
	}
	if feedSlip >= targetC {
		return nil, chem.Errorf(chem.KindOutOfDomain,
			"the feed's slip melting point (%.2f °C) is already at or above the target %.2f °C; hardening only raises it",
			feedSlip, targetC).WithField("at or below the feed's slip melting point", "target", "slip_melting_point_c")
	}
	feedIV := chem.IodineValue(req.Feed, chem.MaterialTAG)
	if !(feedIV > lowestSearchIodineValue) {
		return nil, chem.Errorf(chem.KindOutOfDomain, "the feed has nothing to harden (iodine value %.3g)", feedIV).
			WithField("nothing to harden", "profile", "acids")
	}

	// at forecasts the product at a final iodine value and returns its slip
	// melting point and the melting model's warnings.
	at := func(iv float64, points int) (*ForecastResult, float64, []chem.Warning, error) {
		r := req
		r.Target = FinalIodineValue(iv)
		r.PathPoints = points
		res, err := ForecastOf(ctx, cat, r)
		if err != nil {
			return nil, 0, nil, err
		}
		out.Evaluations++
		s, w, err := slip(res.Product, res.Sn2Product)
		return res, s, w, err
	}
	_, hardest, _, err := at(lowestSearchIodineValue, MinPathPoints)
	if err != nil {
		return nil, err
	}
	if hardest < targetC {
		return nil, chem.Errorf(chem.KindOutOfDomain,
			"even hardened to iodine value %g the product's slip melting point is %.2f °C, below the target %.2f °C",
			lowestSearchIodineValue, hardest, targetC).
			WithField("above the reach of this feed and catalyst", "target", "slip_melting_point_c")
	}
	// The slip melting point falls as the iodine value rises: slip(hi IV) <
	// target ≤ slip(lo IV). Pooling of minor species can make it step
	// slightly rather than vary smoothly; the search brackets a step too.
	fFeed := feedSlip - targetC
	if math.IsInf(fFeed, -1) {
		fFeed = math.NaN() // no slip point at the feed: no value to interpolate with
	}
	r, err := roots.Find(roots.Problem{
		F: func(iv float64) (float64, float64, error) {
			_, s, _, err := at(iv, MinPathPoints)
			return s - targetC, math.NaN(), err
		},
		Lo: lowestSearchIodineValue, Hi: feedIV, FLo: hardest - targetC, FHi: fFeed, Start: math.NaN(),
		FTol: slipToleranceK, XTol: 1e-9, MaxIter: slipIterations, Check: ctx.Err,
	})
	if err != nil {
		return nil, err
	}
	if r.Converged || r.Stalled {
		final, fs, warnings, err := at(r.X, req.PathPoints)
		if err != nil {
			return nil, err
		}
		out.ForecastResult, out.SlipMeltingPointC, out.MeltingWarnings = final, fs, warnings
		var uw []chem.Warning
		out.Uncertainty, uw = last.Uncertainty()
		out.MeltingWarnings = append(out.MeltingWarnings, uw...)
		out.SN2Estimate = last.Composition().SN2Estimate
		if math.Abs(fs-targetC) > slipToleranceK {
			// The slip melting point steps across the target between
			// neighbouring iodine values (pooling of minor species):
			// the nearest reachable product is reported, with a warning.
			final.Warnings = append(final.Warnings, chem.Warning{Code: chem.WarnMethodScope, Message: fmt.Sprintf(
				"the slip melting point steps across the target between adjacent iodine values; "+
					"the nearest product melts at %.2f °C", fs), Path: []any{"target", "slip_melting_point_c"}})
		}
		return out, nil
	}
	return nil, chem.Errorf(chem.KindNoConvergence,
		"the slip melting point target was not reached within %d iterations", slipIterations).
		WithField("target not reached within the solver's limits", "target", "slip_melting_point_c")
}
