package melting

import (
	"context"
	"math"
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
	_, err := Calibrate(context.Background(), cat, CalibrationInput{CalibrationFat: CalibrationFat{Profile: palmInput}})
	requirePaths(t, err, chem.KindMalformed, []any{"measured"})
	_, err = Calibrate(context.Background(), cat, CalibrationInput{CalibrationFat: CalibrationFat{Profile: palmInput, Measured: &MeasuredInput{}}})
	requirePaths(t, err, chem.KindInvalid, []any{"measured"})
	_, err = Calibrate(context.Background(), cat, CalibrationInput{CalibrationFat: CalibrationFat{Measured: &MeasuredInput{SlipMeltingPointC: fptr(35)}}})
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
	ans, err := Melt(cat, MeltingInput{Profile: &chem.ProfileInput{Acids: []chem.Entry{{Acid: "16:0", Percent: 45}, {Acid: "18:1", Percent: 45}, {Acid: "18:2", Percent: 10}}},
		ModelInput: ModelInput{Sn2Estimate: "seed_oil_rule"}})
	require.NoError(t, err)
	var paths [][]any
	for _, w := range ans.Warnings {
		paths = append(paths, w.Path)
	}
	require.Contains(t, paths, []any{"profile", "acids", 1, "acid"}) // bare 18:1
	require.Contains(t, paths, []any{"sn2_estimate"})                // palm-like fat under the seed-oil rule
}

// TestCalibrateFatsRecoversSyntheticParameters: measurements generated by
// the model itself with a known shift and threshold, for a library of four
// fats, give back that shift and threshold, and every fat's leave-one-out
// error is near zero (the model is exact for its own data).
func TestCalibrateFatsRecoversSyntheticParameters(t *testing.T) {
	cat := chem.NewCatalogue()
	truth := Calibration{TemperatureShiftK: 2.3, SlipThresholdPercent: 4.5}
	fats := []struct {
		in  *chem.ProfileInput
		sn2 SN2Estimate
	}{
		{palmInput, SN2Palm},
		{&chem.ProfileInput{Acids: []chem.Entry{{Acid: "8:0", Percent: 6}, {Acid: "10:0", Percent: 4}, {Acid: "12:0", Percent: 47},
			{Acid: "14:0", Percent: 16}, {Acid: "16:0", Percent: 8}, {Acid: "18:0", Percent: 2.5}, {Acid: "18:1", Percent: 14}, {Acid: "18:2", Percent: 2.5}}}, SN2SeedOil},
		{&chem.ProfileInput{Acids: []chem.Entry{{Acid: "16:0", Percent: 26}, {Acid: "18:0", Percent: 34}, {Acid: "18:1", Percent: 35}, {Acid: "18:2", Percent: 3}, {Acid: "20:0", Percent: 2}}}, SN2SeedOil},
		{&chem.ProfileInput{Acids: []chem.Entry{{Acid: "16:0", Percent: 10.5}, {Acid: "18:0", Percent: 20}, {Acid: "18:1 c9", Percent: 27}, {Acid: "18:1 t", Percent: 42.5}}}, SN2SeedOil},
	}
	var lib []LibraryFat
	for i, f := range fats {
		p, err := cat.ReadProfile(f.in)
		require.NoError(t, err)
		opt := Options{Composition: CompositionOptions{SN2: f.sn2}}
		truthOpt := opt
		truthOpt.Calibration = truth
		ref, err := Prepare(p, truthOpt)
		require.NoError(t, err)
		var m Measurements
		// Two fats with SFC points, all four with a slip melting point.
		if i%2 == 0 {
			for _, tC := range []float64{10, 20, 30} {
				v, err := ref.SolidFatContent(tC)
				require.NoError(t, err)
				m.SFC = append(m.SFC, SFCPoint{TemperatureC: tC, SolidFatPercent: v})
			}
		}
		slip, ok, err := ref.SlipMeltingPointC()
		require.NoError(t, err)
		require.True(t, ok)
		m.SlipMeltingPointC, m.HasSlipMeltingPoint = slip, true
		fat, err := Prepare(p, opt)
		require.NoError(t, err)
		lib = append(lib, LibraryFat{Fat: fat, Measurements: m})
	}
	rep, err := CalibrateFats(context.Background(), lib)
	require.NoError(t, err)
	require.InDelta(t, truth.TemperatureShiftK, rep.Calibration.TemperatureShiftK, 0.01)
	require.InDelta(t, truth.SlipThresholdPercent, rep.Calibration.SlipThresholdPercent, 0.05)
	require.Greater(t, rep.Before.SFCRMSErrorPercent, 1.0, "the uncalibrated model misses the synthetic data")
	require.Less(t, rep.After.SFCRMSErrorPercent, 0.05)
	require.Less(t, rep.After.SlipRMSErrorK, 0.05)
	require.True(t, rep.LeaveOneOutDefined)
	for i, f := range rep.Fats {
		require.True(t, f.LeaveOneOutDefined, "fat %d", i)
		require.Less(t, math.Abs(f.LeaveOneOut.SlipErrorK), 0.1, "fat %d", i)
	}
	require.Less(t, rep.LeaveOneOut.SFCRMSErrorPercent, 0.1)

	// The same library through the request shape.
	in := CalibrationInput{}
	for i, f := range fats {
		m := lib[i].Measurements
		slip := m.SlipMeltingPointC
		cf := CalibrationFat{Profile: f.in, Measured: &MeasuredInput{SFCPoints: m.SFC, SlipMeltingPointC: &slip}}
		if f.sn2 == SN2Palm {
			cf.Sn2Estimate = "palm_rule"
		}
		in.Fats = append(in.Fats, cf)
	}
	ans, err := Calibrate(context.Background(), cat, in)
	require.NoError(t, err)
	require.True(t, ans.Library)
	require.InDelta(t, truth.TemperatureShiftK, ans.Calibration.TemperatureShiftK, 0.01)
	// A library and a single fat together are refused, as is a bad fat at its path.
	in.Profile = palmInput
	_, err = Calibrate(context.Background(), cat, in)
	requirePaths(t, err, chem.KindMalformed, nil)
	in.Profile = nil
	in.Fats[2].Measured = nil
	_, err = Calibrate(context.Background(), cat, in)
	requirePaths(t, err, chem.KindMalformed, []any{"fats", 2, "measured"})
}
