package hardening

import (
	"context"
	"math"
	"testing"

	"github.com/stretchr/testify/require"

	"lipidsvc/chem"
	"lipidsvc/chem/melting"
)

func soyProfile(t *testing.T, cat *chem.Catalogue) *chem.Profile {
	t.Helper()
	// The soy-like check vector of the chem package documentation (a test vector, not a
	// measured oil).
	p, err := chem.NewProfile(cat, chem.BasisFAMEWeight, []chem.Entry{
		{Acid: "16:0", Percent: 10.5}, {Acid: "16:1 c9", Percent: 0.1}, {Acid: "18:0", Percent: 4.0},
		{Acid: "18:1 c9", Percent: 23.0}, {Acid: "18:2 c9,c12", Percent: 53.7}, {Acid: "18:3 c9,c12,c15", Percent: 7.6},
		{Acid: "20:0", Percent: 0.4}, {Acid: "20:1 c11", Percent: 0.3}, {Acid: "22:0", Percent: 0.4},
	}, 0)
	require.NoError(t, err)
	return p
}

// TestForecastToSlipMeltingPoint: the search meets the target within
// 0.01 K, and the reported product is the forecast at the iodine value found
// (its slip melting point recomputed independently agrees).
func TestForecastToSlipMeltingPoint(t *testing.T) {
	cat := chem.NewCatalogue()
	preset, _ := PresetByName(PresetNickelSelective)
	req := NewForecastRequest(soyProfile(t, cat), Target{}, preset.Catalyst)
	for _, target := range []float64{30, 36, 42} {
		res, err := ForecastToSlipMeltingPoint(context.Background(), cat, req, target, melting.Options{})
		require.NoError(t, err, target)
		require.InDelta(t, target, res.SlipMeltingPointC, 0.01)
		again, defined, err := melting.SlipMeltingPointC(res.Product, melting.Options{})
		require.NoError(t, err)
		require.True(t, defined)
		require.InDelta(t, res.SlipMeltingPointC, again, 1e-9)
		require.Less(t, res.FinalIodineValue, res.FeedIodineValue)
		require.Len(t, res.Path, DefaultPathPoints)
		require.Less(t, res.Evaluations, slipIterations+3)
	}
	// A higher melting target needs a harder product.
	a, err := ForecastToSlipMeltingPoint(context.Background(), cat, req, 32, melting.Options{})
	require.NoError(t, err)
	b, err := ForecastToSlipMeltingPoint(context.Background(), cat, req, 40, melting.Options{})
	require.NoError(t, err)
	require.Greater(t, a.FinalIodineValue, b.FinalIodineValue)
}

func TestForecastToSlipMeltingPointRejects(t *testing.T) {
	cat := chem.NewCatalogue()
	preset, _ := PresetByName(PresetNickelSelective)
	req := NewForecastRequest(soyProfile(t, cat), Target{}, preset.Catalyst)
	for _, target := range []float64{math.NaN(), 500, 119} {
		_, err := ForecastToSlipMeltingPoint(context.Background(), cat, req, target, melting.Options{})
		ce, ok := chem.AsError(err)
		require.True(t, ok, "%v: %v", target, err)
		require.Equal(t, []any{"target", "slip_melting_point_c"}, ce.Fields[0].Path)
	}
	// sn-2 placement fixed in the melting options would be applied
	// unchanged to products with other acids (found in review).
	for _, sn2 := range []melting.SN2Estimate{melting.SN2Supplied, melting.SN2Enrichment} {
		_, err := ForecastToSlipMeltingPoint(context.Background(), cat, req, 35,
			melting.Options{Composition: melting.CompositionOptions{SN2: sn2, SN2Profile: req.Feed, EnrichmentFactors: make([]float64, len(req.Feed.Components))}})
		ce, ok := chem.AsError(err)
		require.True(t, ok, "%v", err)
		require.Equal(t, chem.KindInvalid, ce.Kind)
	}
	// A feed that already melts above the target.
	stearin, err := chem.NewProfile(cat, chem.BasisFAMEWeight, []chem.Entry{{Acid: "18:0", Percent: 60}, {Acid: "18:1 c9", Percent: 40}}, 0)
	require.NoError(t, err)
	req.Feed = stearin
	_, err = ForecastToSlipMeltingPoint(context.Background(), cat, req, 10, melting.Options{})
	ce, ok := chem.AsError(err)
	require.True(t, ok)
	require.Equal(t, chem.KindOutOfDomain, ce.Kind)
}
