package api

import (
	"context"
	"testing"

	"github.com/stretchr/testify/require"

	"lipidsvc/chem"
	"lipidsvc/chem/hardening"
)

// TestForecastJSONMatchesEncoder holds the hand-written forecast encoder to
// encoding/json's output for the same value (map keys sorted), byte for
// byte: real forecasts with every optional part (sn-2 pools, a
// slip-melting-point target, provenance), and rows whose acid sets differ,
// a nil composition, escapes and extreme numbers.
func TestForecastJSONMatchesEncoder(t *testing.T) {
	cat := chem.NewCatalogue()
	iv, slip, points := 70.0, 34.0, 12
	feed := &chem.ProfileInput{Acids: []chem.Entry{{Acid: "16:0", Percent: 10.6}, {Acid: "18:0", Percent: 4.1},
		{Acid: "18:1", Percent: 24.2}, {Acid: "18:2", Percent: 52.7}, {Acid: "18:3", Percent: 6.9},
		{Acid: "20:1", Percent: 0.6}, {Acid: "22:0", Percent: 0.9}}}
	sn2 := &chem.ProfileInput{Acids: []chem.Entry{{Acid: "16:0", Percent: 1}, {Acid: "18:1", Percent: 27},
		{Acid: "18:2", Percent: 64}, {Acid: "18:3", Percent: 8}}}
	for _, c := range []struct {
		preset string
		target hardening.ForecastTargetInput
		sn2    *chem.ProfileInput
	}{
		{"nickel_selective", hardening.ForecastTargetInput{IodineValue: &iv}, nil},
		{"copper", hardening.ForecastTargetInput{IodineValue: &iv}, sn2},
		{"nickel_non_selective", hardening.ForecastTargetInput{SlipMeltingPointC: &slip}, nil},
	} {
		res, err := hardening.Forecast(context.Background(), cat, hardening.ForecastInput{
			Profile: feed, Sn2Profile: c.sn2, Target: &c.target,
			Catalyst: &hardening.CatalystInput{Preset: c.preset}, PathPoints: &points,
		})
		require.NoError(t, err, c.preset)
		r := fromForecast(res)
		r.Provenance = &Provenance{Service: ServiceName, Version: "test", RequestID: "r\"1", Operation: "forecast",
			Parameters: []byte(`{"a":1}`), Methods: []string{"m"}}
		require.Len(t, r.Path, points)
		require.Greater(t, len(r.Path[0].Composition), 8)
		if c.sn2 != nil {
			require.NotNil(t, r.Sn2ProductProfile)
		}
		if c.target.SlipMeltingPointC != nil {
			require.NotNil(t, r.MeltingTarget)
		}
		got, err := r.AppendJSON(nil)
		require.NoError(t, err)
		require.Equal(t, string(stdJSON(t, r.plain())), string(got), c.preset)
	}

	odd := ForecastResponse{Path: []ForecastPoint{
		{IodineValue: 1e22, TransPercent: 3e-9, Composition: map[string]float64{"b": 1, "a": -0.0000005, "q\"\\\t<é>": 2}},
		{IodineValue: 5, Composition: map[string]float64{"a": 1, "c": 2}},
		{IodineValue: 4, Composition: map[string]float64{"a": 1, "c": 3}},
		{IodineValue: 3},
		{IodineValue: 2, Composition: map[string]float64{}},
	}, Cautions: []string{"<hot & hazardous>"}}
	got, err := odd.AppendJSON(nil)
	require.NoError(t, err)
	require.Equal(t, string(stdJSON(t, odd.plain())), string(got))

	var empty ForecastResponse
	got, err = empty.AppendJSON(nil)
	require.NoError(t, err)
	require.Equal(t, string(stdJSON(t, empty.plain())), string(got))
}

func (r ForecastResponse) plain() any {
	type noMethods ForecastResponse
	return noMethods(r)
}
