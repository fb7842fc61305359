package hardening

import (
	"context"
	"fmt"
	"math"
	"strings"

	"lipidsvc/chem"
)

// Path sizes accepted by [Forecast].
const (
	// DefaultPathPoints is the number of path points when a request leaves
	// ForecastRequest.PathPoints at 0.
	DefaultPathPoints = 21
	// MinPathPoints is the fewest path points: the feed and the product.
	MinPathPoints = 2
	// MaxPathPoints is the most path points a request may ask for.
	MaxPathPoints = 201
)

// Regulatory thresholds behind the forecast's flags.
const (
	// TransLimitPercent is the limit on industrial trans fat, 2 g per 100 g
	// of fat [pub: Commission Regulation (EU) 2019/649, amending Annex III
	// of Regulation (EC) No 1925/2006; WHO REPLACE best-practice policy].
	TransLimitPercent = 2.0
	// FullyHydrogenatedMaxIodineValue is the iodine value at or below which
	// a hardened oil counts as fully hydrogenated and so not as a partially
	// hydrogenated oil [pub: FDA declaratory order, Final Determination
	// Regarding Partially Hydrogenated Oils, 80 FR 34650 (2015)].
	FullyHydrogenatedMaxIodineValue = 4.0
)

// Solver limits. They are generous: a safeguarded Newton solve on the
// smooth, monotone iodine value needs three to six evaluations.
const (
	// rootIterations caps the evaluations of one root solve.
	rootIterations = 200
	// ivTolerance is the accuracy to which a target iodine value is hit,
	// g I2/100 g (the requirement is 0.01).
	ivTolerance = 1e-9
	// ivAcceptTolerance is the accuracy accepted when floating-point
	// resolution in τ stops the search before ivTolerance.
	ivAcceptTolerance = 1e-6
	// sn2Slack is the rounding allowed when checking b_i ≤ 3x_i, in mole
	// fraction.
	sn2Slack = 1e-6
)

// ForecastRequest is the input of [Forecast]. Build it with
// [NewForecastRequest]. Field paths in errors, in the API's vocabulary:
//
//	("profile")                              missing feed
//	("profile", "acids")                     feed acids the model cannot harden; nothing to harden
//	("sn2_profile", "acids")                 an sn-2 composition that breaks b_i ≤ 3x_i
//	("target", "kind")                       unknown target kind
//	("target", "iodine_value")               final iodine value
//	("target", "iodine_value_drop")          iodine-value drop
//	("target", "hydrogen_kg_per_tonne")      hydrogen taken up
//	("catalyst", <parameter>)                see [Parameter.String]
//	("path_points")                          number of path points
type ForecastRequest struct {
	// Feed is the oil to harden, as triacylglycerols. Its basis is the
	// basis of every composition in the result.
	Feed *chem.Profile
	// Sn2 is, optionally, the composition of the sn-2 position of the
	// feed's triacylglycerols (pancreatic lipase analysis). When given, the
	// result also carries the hardened sn-2 and sn-1,3 compositions. Nil
	// leaves them out.
	Sn2 *chem.Profile
	// Target is where hardening stops: [FinalIodineValue], [IodineValueDrop]
	// or [HydrogenKgPerTonne]. Iodine values are per 100 g of the oil
	// itself, as a laboratory measures them on a sample (for the product,
	// the product basis of [ProductBasis]), and as chem.IodineValue computes
	// them from a composition.
	Target Target
	// Catalyst holds the kinetic parameters; see [Presets] for documented
	// starting points and [Fit] to calibrate them on plant data.
	Catalyst Catalyst
	// PathPoints is the number of rows of the path table, from
	// MinPathPoints to MaxPathPoints; 0 means DefaultPathPoints.
	PathPoints int
}

// NewForecastRequest returns a request with the default number of path
// points and no sn-2 composition. It does not validate; [Forecast] does.
func NewForecastRequest(feed *chem.Profile, target Target, catalyst Catalyst) ForecastRequest {
	return ForecastRequest{Feed: feed, Target: target, Catalyst: catalyst, PathPoints: DefaultPathPoints}
}

// PathPoint is one row of the path table.
type PathPoint struct {
	// PathVariable is τ, the integral of k3 over time: hydrogenation time
	// times catalyst activity, in units of the cis-monoene saturation rate
	// (dimensionless). Equal steps of τ are equal times at constant
	// activity.
	PathVariable float64
	// IodineValue is the exact iodine value of the oil at this point, per
	// 100 g of oil (product basis), g I2/100 g.
	IodineValue float64
	// Percent is the composition, one value per entry of
	// ForecastResult.Acids, in the feed's basis, summing to 100.
	Percent []float64
	// TransPercent and SaturatedPercent are the composition sums of
	// chem.PropertiesOf (trans: at least one non-conjugated trans
	// double bond, Regulation (EU) No 1169/2011), in the feed's basis.
	TransPercent     float64
	SaturatedPercent float64
	// HydrogenKgPerTonne is the H2 taken up so far, kg per tonne of feed.
	HydrogenKgPerTonne float64
}

// Flags are regulatory readings of the product.
type Flags struct {
	// TransAboveLimit reports a product trans content above
	// TransLimitPercent. The regulation counts grams of trans fat per 100 g
	// of fat; the forecast's trans share is a percentage of the fatty acids
	// in the feed's basis (usually FAME weight %), a close proxy: fatty
	// acids make up about 95 % of the mass of a triacylglycerol oil, so the
	// proxy reads slightly high, on the safe side.
	TransAboveLimit bool
	// PartiallyHydrogenated reports a product iodine value above
	// FullyHydrogenatedMaxIodineValue, the US definition of a partially
	// hydrogenated oil (80 FR 34650, 2015). It says nothing about the
	// feed, which is not hydrogenated at all.
	PartiallyHydrogenated bool
}

// ForecastResult is the answer of [Forecast].
type ForecastResult struct {
	// Catalyst echoes the parameters used.
	Catalyst Catalyst
	// Acids are the acids of the model, in the order of every per-acid list
	// (Product.Components, PathPoint.Percent): the feed's acids in the
	// feed's order, then the products hardening forms (saturated acids,
	// trans pools, intermediates of polyenes).
	Acids []*chem.FattyAcid
	// FeedIodineValue is the exact iodine value of the feed, g I2/100 g.
	FeedIodineValue float64
	// FinalIodineValue is the exact iodine value of the product per 100 g
	// of product; it meets the target within 1e-9.
	FinalIodineValue float64
	// PathVariable is τ at the target (see PathPoint.PathVariable).
	PathVariable float64
	// Product is the hardened oil, in the feed's basis, built with
	// chem.FromMoleFractions.
	Product *chem.Profile
	// ProductProperties are chem.PropertiesOf of Product as a
	// triacylglycerol oil, so that every figure matches what the properties
	// calculation would say of the same composition.
	ProductProperties chem.Properties
	// TransPercent and SaturatedPercent repeat ProductProperties.Sums.
	TransPercent     float64
	SaturatedPercent float64
	// Hydrogen is the hydrogen taken up, per tonne of feed: the same
	// figures [HydrogenDemand] gives for FeedIodineValue and
	// FinalIodineValue on the product basis. It is exact for the model's
	// composition: the mass gain of the oil is the mass of H2 added.
	Hydrogen Saturation
	// HydrogenVolumeM3PerTonne is Hydrogen's amount as a volume at 0 °C
	// and 101.325 kPa (the default gas reference state), m³ per tonne of
	// feed.
	HydrogenVolumeM3PerTonne float64
	// Sn2Product and Sn13Product are the hardened sn-2 and sn-1,3 pools (the
	// latter per sn-1,3 chain, i.e. the mean of the two outer positions);
	// nil unless the request gave an sn-2 composition.
	Sn2Product  *chem.Profile
	Sn13Product *chem.Profile
	// Path is the path table: PathPoints rows evenly spaced in iodine value
	// from the feed (first row, τ = 0) to the target (last row).
	Path []PathPoint
	// Flags are regulatory readings of the product.
	Flags Flags
	// Warnings say where the model had to simplify for this feed.
	Warnings []chem.Warning
	// evaluations counts the network evaluations of the target and the
	// path, for tests.
	evaluations int
}

// ForecastOf predicts the composition of an oil hardened to a target with a
// given catalyst, the path it follows and the hydrogen it takes up. The
// model is described in the package documentation. cat is the catalogue
// the feed was read with; the products are looked up in it. It returns a
// *chem.Error of kind chem.KindInvalid for malformed input, chem.KindOutOfDomain
// for a request the model cannot answer (a target at or above the feed's
// iodine value, at or below zero, beyond full saturation; a feed with nothing
// to harden or with an acid it cannot harden), and chem.KindNoConvergence if
// a solver hits its iteration cap; ctx.Err() if ctx ends first.
func ForecastOf(ctx context.Context, cat *chem.Catalogue, req ForecastRequest) (*ForecastResult, error) {
	var errs chem.FieldErrors
	if req.Feed == nil || len(req.Feed.Components) == 0 {
		errs.Invalid("a feed profile is required", "profile")
	}
	req.Catalyst.validateInto(&errs, "catalyst")
	points := req.PathPoints
	if points == 0 {
		points = DefaultPathPoints
	}
	if points < MinPathPoints || points > MaxPathPoints {
		errs.Invalid(fmt.Sprintf("must be from %d to %d", MinPathPoints, MaxPathPoints), "path_points")
	}
	if req.Target.Kind < TargetFinalIodineValue || req.Target.Kind > TargetHydrogenKgPerTonne {
		errs.Invalid("must be a final iodine value, an iodine-value drop or hydrogen per tonne", "target", "kind")
	} else if !isFinite(req.Target.Value) {
		errs.Invalid("must be a finite number", targetPath(req.Target.Kind)...)
	}
	if err := errs.Err("the hardening forecast request has problems"); err != nil {
		return nil, err
	}

	net, x0, err := prepareFeed(cat, req.Feed, req.Sn2, "profile")
	if err != nil {
		return nil, err
	}
	feedIV := chem.IodineValue(req.Feed, chem.MaterialTAG)
	finalIV, err := targetIodineValue(req.Target, feedIV)
	if err != nil {
		return nil, err
	}

	net.setCatalyst(req.Catalyst)
	tr := newTrajectory(net, x0)
	tauFinal, err := tr.tauAt(ctx, finalIV, 0)
	if err != nil {
		return nil, err
	}

	res := &ForecastResult{
		Catalyst:        req.Catalyst,
		Acids:           net.acids,
		FeedIodineValue: feedIV,
		PathVariable:    tauFinal,
	}

	// Path: evenly spaced in iodine value; each point is bracketed by the
	// previous point and the target, and evolved from the previous point.
	res.Path = make([]PathPoint, points)
	taus := make([]float64, points)
	states := make([][]float64, points)
	taus[points-1], states[points-1] = tauFinal, append([]float64(nil), tr.x...)
	states[0] = x0
	tr.beginPath()
	for k := 1; k < points-1; k++ {
		iv := feedIV + (finalIV-feedIV)*float64(k)/float64(points-1)
		tau, err := tr.nextRoot(ctx, iv)
		if err != nil {
			return nil, err
		}
		taus[k], states[k] = tau, append([]float64(nil), tr.x...)
		tr.anchor(tau, tr.x)
	}
	for k, tau := range taus {
		p := chem.FromMoleFractions(net.acids, states[k], req.Feed.Basis)
		// A row needs the iodine value and two sums; the product, the last
		// row, gets the full certificate.
		var props chem.Properties
		if k == points-1 {
			props = chem.PropertiesOf(p, chem.MaterialTAG)
		} else {
			props.IodineValue, props.Sums = chem.IodineValue(p, chem.MaterialTAG), chem.SumsOf(p)
		}
		pt := PathPoint{
			PathVariable:     tau,
			IodineValue:      props.IodineValue,
			Percent:          make([]float64, len(p.Components)),
			TransPercent:     props.Sums.Trans,
			SaturatedPercent: props.Sums.Saturated,
		}
		for i, c := range p.Components {
			pt.Percent[i] = c.Percent
		}
		if k > 0 {
			pt.HydrogenKgPerTonne = saturationProductBasis(feedIV, props.IodineValue).HydrogenKgPerTonne
		}
		res.Path[k] = pt
		if k == points-1 {
			res.Product = p
			res.ProductProperties = props
		}
	}

	props := res.ProductProperties
	res.FinalIodineValue = props.IodineValue
	res.TransPercent = props.Sums.Trans
	res.SaturatedPercent = props.Sums.Saturated
	res.Hydrogen = saturationProductBasis(feedIV, res.FinalIodineValue)
	ref, _ := StandardGasReference(DefaultGasReferenceKind)
	res.HydrogenVolumeM3PerTonne = res.Hydrogen.HydrogenMolPerTonne * ref.MolarVolumeM3PerMol()
	res.Flags = Flags{
		TransAboveLimit: res.TransPercent > TransLimitPercent,
		// The root finder lands within ivAcceptTolerance of its target, on
		// either side: a product hardened to exactly the limit is at it.
		PartiallyHydrogenated: res.FinalIodineValue > FullyHydrogenatedMaxIodineValue+ivAcceptTolerance,
	}

	if req.Sn2 != nil {
		b, a := positionalPools(net, x0, req.Sn2)
		xb, xa := make([]float64, len(x0)), make([]float64, len(x0))
		net.evolve(b, tauFinal, xb)
		net.evolve(a, tauFinal, xa)
		res.Sn2Product = chem.FromMoleFractions(net.acids, xb, req.Feed.Basis)
		res.Sn13Product = chem.FromMoleFractions(net.acids, xa, req.Feed.Basis)
	}
	res.evaluations = tr.evals
	res.Warnings = net.warnings()
	return res, nil
}

// targetPath is the error path of a target's value.
func targetPath(k TargetKind) []any {
	switch k {
	case TargetIodineValueDrop:
		return []any{"target", "iodine_value_drop"}
	case TargetHydrogenKgPerTonne:
		return []any{"target", "hydrogen_kg_per_tonne"}
	default:
		return []any{"target", "iodine_value"}
	}
}

// fullSaturationKgPerTonne is the H2 that saturates every double bond of a
// feed of iodine value feedIV, kg per tonne of feed (the hardening package documentation: 0.07943 kg
// per tonne per iodine-value unit).
func fullSaturationKgPerTonne(feedIV float64) float64 {
	return feedIV / iodineValuePerMolPerGram * gramsPerTonne * chem.MolarMassH2 / 1000
}

// targetIodineValue turns a target into the final iodine value of the
// product (per 100 g of product) and checks that the path can reach it:
// strictly between zero (full saturation, approached but never reached) and
// the feed's iodine value.
func targetIodineValue(t Target, feedIV float64) (float64, error) {
	path := targetPath(t.Kind)
	if !(feedIV > 0) {
		return 0, chem.Errorf(chem.KindOutOfDomain, "the feed has no double bonds (iodine value 0): nothing to harden").
			WithField("the feed's iodine value is 0; there is nothing to harden", "profile", "acids")
	}
	outside := func(reason string) error {
		return chem.Errorf(chem.KindOutOfDomain, "%s", reason).WithField(reason, path...)
	}
	v := t.Value
	switch t.Kind {
	case TargetFinalIodineValue:
		switch {
		case v < 0:
			return 0, outside(fmt.Sprintf("target iodine value %g is below zero", v))
		case v == 0:
			return 0, outside("iodine value 0 (full saturation) is approached but never reached; ask for a small positive iodine value")
		case v >= feedIV:
			return 0, outside(fmt.Sprintf("target iodine value %g is not below the feed's %.4g; hardening only lowers it", v, feedIV))
		}
		return v, nil
	case TargetIodineValueDrop:
		switch {
		case v <= 0:
			return 0, outside(fmt.Sprintf("iodine-value drop %g must be above zero", v))
		case v >= feedIV:
			return 0, outside(fmt.Sprintf("iodine-value drop %g reaches or passes the feed's iodine value %.4g, which full saturation approaches but never reaches", v, feedIV))
		}
		return feedIV - v, nil
	default: // TargetHydrogenKgPerTonne
		full := fullSaturationKgPerTonne(feedIV)
		switch {
		case v <= 0:
			return 0, outside(fmt.Sprintf("hydrogen %g kg per tonne must be above zero", v))
		case v >= full:
			return 0, outside(fmt.Sprintf("hydrogen %g kg per tonne reaches or passes full saturation of this feed (%.4g kg per tonne)", v, full))
		}
		// Invert the product-basis relation of ProductBasis: with n mol H2
		// per g of feed, IV_product = (IV_feed − 100·M(I2)·n)/(1 + M(H2)·n).
		n := v * 1000 / chem.MolarMassH2 / gramsPerTonne
		return (feedIV - iodineValuePerMolPerGram*n) / (1 + chem.MolarMassH2*n), nil
	}
}

// prepareFeed builds the network for the feed (and sn-2 composition) and
// the feed's mole fractions in network order.
// Errors about the feed's acids point under feedField.
func prepareFeed(cat *chem.Catalogue, feed, sn2 *chem.Profile, feedField string) (*network, []float64, error) {
	acids := make([]*chem.FattyAcid, 0, len(feed.Components))
	for _, c := range feed.Components {
		acids = append(acids, c.Acid)
	}
	net, err := newNetwork(cat, acids)
	if err != nil {
		return nil, nil, chem.PrefixError(err, feedField)
	}
	x0 := make([]float64, len(net.acids))
	for i, c := range feed.Components {
		x0[i] = c.MoleFraction
	}
	if sn2 != nil {
		if err := checkSn2(net, x0, sn2); err != nil {
			return nil, nil, err
		}
	}
	return net, x0, nil
}

// checkSn2 enforces b_i ≤ 3x_i: an acid cannot fill more of the sn-2
// position than a third of all its chains (the melting package documentation, 1,3-random-2-random).
func checkSn2(net *network, x0 []float64, sn2 *chem.Profile) error {
	index := make(map[string]int, len(net.acids))
	for i, a := range net.acids {
		index[a.ID] = i
	}
	var bad []string
	for _, c := range sn2.Components {
		x := 0.0
		if i, ok := index[c.Acid.ID]; ok {
			x = x0[i]
		}
		if c.MoleFraction > 3*x+sn2Slack {
			bad = append(bad, fmt.Sprintf("%s (sn-2 %.4g mol %%, at most %.4g)", c.Acid.ID, 100*c.MoleFraction, 300*x))
		}
	}
	if len(bad) > 0 {
		reason := "an acid's sn-2 share exceeds three times its share of all chains: " + strings.Join(bad, ", ")
		return chem.Errorf(chem.KindInvalid, "the sn-2 composition does not fit the feed").WithField(reason, "sn2_profile", "acids")
	}
	return nil
}

// positionalPools returns the sn-2 composition b and the sn-1,3 composition
// a = (3x − b)/2 in network order, as mole fractions of their own position
// [Vander Wal 1960; Coleman 1961; the melting package documentation]. Hardening barely moves acids
// between positions [pub: J. Japan Oil Chem. Soc. 20:10 (1971)], so each
// pool is hardened with the same τ; because the model is linear, the
// recombined (2a + b)/3 is exactly the overall product.
func positionalPools(net *network, x0 []float64, sn2 *chem.Profile) (b, a []float64) {
	index := make(map[string]int, len(net.acids))
	for i, acid := range net.acids {
		index[acid.ID] = i
	}
	b = make([]float64, len(x0))
	for _, c := range sn2.Components {
		// checkSn2 has made sure that an acid missing from the feed has
		// an sn-2 share within rounding of zero.
		if i, ok := index[c.Acid.ID]; ok {
			b[i] += c.MoleFraction
		}
	}
	a = make([]float64, len(x0))
	for i := range x0 {
		a[i] = math.Max((3*x0[i]-b[i])/2, 0)
	}
	return b, a
}

// warnings explains where the model simplified for this feed.
func (net *network) warnings() []chem.Warning {
	var out []chem.Warning
	if len(net.untracked) > 0 {
		out = append(out, chem.Warning{
			Code: chem.WarnMethodScope,
			Message: fmt.Sprintf("the catalogue holds no trans isomers for %s or for what hardening makes of them; "+
				"trans formed there is counted as cis, so the trans figures are a lower bound", strings.Join(net.untracked, ", ")),
			Path: []any{"profile", "acids"},
		})
	}
	if len(net.conjugated) > 0 {
		verb := "have"
		if len(net.conjugated) == 1 {
			verb = "has"
		}
		out = append(out, chem.Warning{
			Code: chem.WarnMethodScope,
			Message: fmt.Sprintf("%s %s conjugated double bonds; the model has no rate of its own for them and hardens "+
				"them at the rate of the methylene-interrupted isomers", strings.Join(net.conjugated, ", "), verb),
			Path: []any{"profile", "acids"},
		})
	}
	return out
}
