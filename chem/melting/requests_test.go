package melting

import (
	"context"
	"testing"

	"github.com/stretchr/testify/require"

	"lipidsvc/chem"
)

func fptr(v float64) *float64 { return &v }

var palmInput = &chem.ProfileInput{Acids: []chem.Entry{
	{Acid: "14:0", Percent: 1}, {Acid: "16:0", Percent: 44}, {Acid: "18:0", Percent: 4.5},
	{Acid: "18:1 c9", Percent: 40}, {Acid: "18:2 c9,c12", Percent: 10.5},
}}

func requirePaths(t *testing.T, err error, kind chem.ErrorKind, paths ...[]any) {
	t.Helper()
	ce, ok := chem.AsError(err)
	require.True(t, ok, "want a *chem.Error, got %v", err)
	require.Equal(t, kind, ce.Kind, ce.Error())
	got := make([][]any, len(ce.Fields))
	for i, f := range ce.Fields {
		got[i] = f.Path
	}
	require.ElementsMatch(t, paths, got, ce.Error())
}

// TestMeltBadInput calls the request-shaped entry point directly: every
// check and path an HTTP client meets.
func TestMeltBadInput(t *testing.T) {
	cat := chem.NewCatalogue()
	tag := []TAGEntry{{"16:0", "18:1", "16:0", 100}}
	cases := []struct {
		name  string
		in    MeltingInput
		kind  chem.ErrorKind
		paths [][]any
	}{
		{"no fat", MeltingInput{}, chem.KindMalformed, [][]any{nil}},
		{"two fats", MeltingInput{Profile: palmInput, Triacylglycerols: tag}, chem.KindMalformed, [][]any{nil}},
		{"unknown polymorph", MeltingInput{Profile: palmInput, ModelInput: ModelInput{Polymorph: "gamma"}}, chem.KindMalformed, [][]any{{"polymorph"}}},
		{"unknown solid model", MeltingInput{Profile: palmInput, ModelInput: ModelInput{SolidModel: "glass"}}, chem.KindMalformed, [][]any{{"solid_model"}}},
		{"estimate beside full random", MeltingInput{Profile: palmInput, ModelInput: ModelInput{Distribution: "full_random", Sn2Estimate: "palm_rule"}},
			chem.KindMalformed, [][]any{{"sn2_estimate"}}},
		{"profile and factors", MeltingInput{Profile: palmInput, Sn2Profile: palmInput, Sn2EnrichmentFactors: []EnrichmentFactor{{"16:0", 1}}},
			chem.KindMalformed, [][]any{{"sn2_enrichment_factors"}}},
		{"estimate beside a profile", MeltingInput{Profile: palmInput, Sn2Profile: palmInput, ModelInput: ModelInput{Sn2Estimate: "palm_rule"}},
			chem.KindMalformed, [][]any{{"sn2_estimate"}}},
		{"factor twice", MeltingInput{Profile: palmInput, Sn2EnrichmentFactors: []EnrichmentFactor{{"18:1 c9", 5}, {"oleic", 1}}},
			chem.KindMalformed, [][]any{{"sn2_enrichment_factors", 1, "acid"}}},
		{"factor for an absent acid", MeltingInput{Profile: palmInput, Sn2EnrichmentFactors: []EnrichmentFactor{{"12:0", 1}}},
			chem.KindInvalid, [][]any{{"sn2_enrichment_factors", 0, "acid"}}},
		{"negative factor", MeltingInput{Profile: palmInput, Sn2EnrichmentFactors: []EnrichmentFactor{{"16:0", -1}}},
			chem.KindInvalid, [][]any{{"sn2_enrichment_factors", 0, "factor"}}},
		{"options beside TAGs", MeltingInput{Triacylglycerols: tag, ModelInput: ModelInput{Distribution: "full_random", Sn2Estimate: "palm_rule"}},
			chem.KindMalformed, [][]any{{"distribution"}, {"sn2_estimate"}}},
		{"unknown TAG acid", MeltingInput{Triacylglycerols: []TAGEntry{{"16:0", "18:9", "16:0", 100}}}, chem.KindInvalid, [][]any{{"triacylglycerols", 0, "sn2"}}},
		{"TAG sum off", MeltingInput{Triacylglycerols: []TAGEntry{{"16:0", "18:1", "16:0", 50}}}, chem.KindInvalid, [][]any{{"triacylglycerols"}}},
		{"temperature out of range", MeltingInput{Profile: palmInput, TemperaturesC: []float64{20, 500}}, chem.KindInvalid, [][]any{{"temperatures_c", 1}}},
		{"calibration shift too large", MeltingInput{Profile: palmInput, ModelInput: ModelInput{Calibration: &Calibration{TemperatureShiftK: 40}}},
			chem.KindInvalid, [][]any{{"calibration", "temperature_shift_k"}}},
		{"sfc above 100", MeltingInput{Profile: palmInput, Measured: &MeasuredInput{SFCPoints: []SFCPoint{{20, 120}}}},
			chem.KindInvalid, [][]any{{"measured", "sfc_points", 0, "solid_fat_percent"}}},
		{"bad sn-2 profile", MeltingInput{Profile: palmInput, Sn2Profile: &chem.ProfileInput{Acids: []chem.Entry{{Acid: "20:0", Percent: 100}}}},
			chem.KindInvalid, [][]any{{"sn2_profile", "acids", 0}}},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			_, err := Melt(cat, c.in)
			requirePaths(t, err, c.kind, c.paths...)
		})
	}
}

func TestCalibrateBadInput(t *testing.T) {
	cat := chem.NewCatalogue()
	_, err := Calibrate(context.Background(), cat, CalibrationInput{Profile: palmInput})
	requirePaths(t, err, chem.KindMalformed, []any{"measured"})
	_, err = Calibrate(context.Background(), cat, CalibrationInput{Profile: palmInput, Measured: &MeasuredInput{}})
	requirePaths(t, err, chem.KindInvalid, []any{"measured"})
	_, err = Calibrate(context.Background(), cat, CalibrationInput{Measured: &MeasuredInput{SlipMeltingPointC: fptr(35)}})
	requirePaths(t, err, chem.KindMalformed, []any{"profile"})
}

func TestResolveModel(t *testing.T) {
	opt, err := ResolveModel(nil)
	require.NoError(t, err)
	require.Equal(t, Options{}, opt)
	_, err = ResolveModel(&ModelInput{SlipThresholdPercent: fptr(80)})
	requirePaths(t, err, chem.KindInvalid, []any{"slip_threshold_percent"})
	opt, err = ResolveModel(&ModelInput{Polymorph: "beta", Sn2Estimate: "palm_rule"})
	require.NoError(t, err)
	require.Equal(t, Beta, opt.Polymorph)
	require.Equal(t, SN2Palm, opt.Composition.SN2)
}

// TestMeltWarningsPointIntoTheRequest: what reading the request assumed
// is reported at the request's own fields.
func TestMeltWarningsPointIntoTheRequest(t *testing.T) {
	cat := chem.NewCatalogue()
	ans, err := Melt(cat, MeltingInput{Profile: &chem.ProfileInput{Acids: []chem.Entry{{Acid: "16:0", Percent: 45}, {Acid: "18:1", Percent: 45}, {Acid: "18:2", Percent: 10}}}})
	require.NoError(t, err)
	var paths [][]any
	for _, w := range ans.Warnings {
		paths = append(paths, w.Path)
	}
	require.Contains(t, paths, []any{"profile", "acids", 1, "acid"}) // bare 18:1
	require.Contains(t, paths, []any{"sn2_estimate"})                // palm-like fat under the seed-oil rule
}
