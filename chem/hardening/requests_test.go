package hardening

import (
	"context"
	"testing"

	"github.com/stretchr/testify/require"

	"lipidsvc/chem"
	"lipidsvc/chem/melting"
)

func fptr(v float64) *float64 { return &v }

var soyInput = &chem.ProfileInput{Acids: []chem.Entry{
	{Acid: "16:0", Percent: 10.5}, {Acid: "18:0", Percent: 4}, {Acid: "18:1 c9", Percent: 23.4},
	{Acid: "18:2 c9,c12", Percent: 54.5}, {Acid: "18:3 c9,c12,c15", Percent: 7.6},
}}

// TestHydrogenDemandBadInput calls the request-shaped entry point
// directly: every check and path an HTTP client meets.
func TestHydrogenDemandBadInput(t *testing.T) {
	cat := chem.NewCatalogue()
	good := func() HydrogenDemandInput {
		return HydrogenDemandInput{Feed: &FeedInput{IodineValue: fptr(133)}, Target: &IodineValueTargetInput{IodineValue: fptr(70)}, BatchMassKg: 1000}
	}
	cases := []struct {
		name  string
		edit  func(*HydrogenDemandInput)
		kind  chem.ErrorKind
		paths [][]any
	}{
		{"no feed", func(in *HydrogenDemandInput) { in.Feed = nil }, chem.KindMalformed, [][]any{{"feed"}}},
		{"two feeds", func(in *HydrogenDemandInput) { in.Feed.Profile = soyInput }, chem.KindMalformed, [][]any{{"feed"}}},
		{"no target", func(in *HydrogenDemandInput) { in.Target = nil }, chem.KindMalformed, [][]any{{"target"}}},
		{"two targets", func(in *HydrogenDemandInput) { in.Target.IodineValueDrop = fptr(3) }, chem.KindMalformed, [][]any{{"target"}}},
		{"unknown basis", func(in *HydrogenDemandInput) { in.IodineValueBasis = "oil" }, chem.KindMalformed, [][]any{{"iodine_value_basis"}}},
		{"unknown reference", func(in *HydrogenDemandInput) { in.Gas = &GasInput{Reference: "stp"} }, chem.KindMalformed, [][]any{{"gas", "reference"}}},
		{"custom without pressure", func(in *HydrogenDemandInput) {
			in.Gas = &GasInput{Reference: "custom", TemperatureC: fptr(20)}
		}, chem.KindMalformed, [][]any{{"gas", "pressure_kpa"}}},
		{"temperature without custom", func(in *HydrogenDemandInput) { in.Gas = &GasInput{TemperatureC: fptr(20)} }, chem.KindMalformed, [][]any{{"gas", "reference"}}},
		{"custom below absolute zero", func(in *HydrogenDemandInput) {
			in.Gas = &GasInput{Reference: "custom", TemperatureC: fptr(-300), PressureKPa: fptr(100)}
		}, chem.KindInvalid, [][]any{{"gas"}}},
		{"purity zero", func(in *HydrogenDemandInput) { in.Gas = &GasInput{PurityPercent: fptr(0)} }, chem.KindInvalid, [][]any{{"gas", "purity_percent"}}},
		{"positive enthalpy", func(in *HydrogenDemandInput) { in.Heat = &HeatInput{ReactionEnthalpyKJPerMol: fptr(115)} }, chem.KindInvalid, [][]any{{"heat", "reaction_enthalpy_kj_per_mol"}}},
		{"bad feed profile", func(in *HydrogenDemandInput) {
			in.Feed = &FeedInput{Profile: &chem.ProfileInput{Acids: []chem.Entry{{Acid: "18:7", Percent: 100}}}}
		}, chem.KindInvalid, [][]any{{"feed", "profile", "acids", 0, "acid"}}},
		{"target above feed", func(in *HydrogenDemandInput) { in.Target.IodineValue = fptr(140) }, chem.KindOutOfDomain, [][]any{{"target", "iodine_value"}}},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			in := good()
			c.edit(&in)
			_, err := HydrogenDemand(cat, in)
			requireFieldError(t, err, c.kind, c.paths...)
		})
	}
	// Defaults are filled and echoed.
	res, err := HydrogenDemand(cat, good())
	require.NoError(t, err)
	require.Equal(t, DefaultStartTemperatureC, res.Request.StartTemperatureC)
	require.Equal(t, DefaultPurityPercent, res.Request.Gas.PurityPercent)
}

func TestForecastBadInput(t *testing.T) {
	cat := chem.NewCatalogue()
	good := func() ForecastInput {
		return ForecastInput{Profile: soyInput, Target: &ForecastTargetInput{IodineValue: fptr(90)}, Catalyst: &CatalystInput{Preset: PresetNickelSelective}}
	}
	cases := []struct {
		name  string
		edit  func(*ForecastInput)
		kind  chem.ErrorKind
		paths [][]any
	}{
		{"no profile", func(in *ForecastInput) { in.Profile = nil }, chem.KindMalformed, [][]any{{"profile"}}},
		{"no target", func(in *ForecastInput) { in.Target = nil }, chem.KindMalformed, [][]any{{"target"}}},
		{"two targets", func(in *ForecastInput) { in.Target.SlipMeltingPointC = fptr(36) }, chem.KindMalformed, [][]any{{"target"}}},
		{"no catalyst", func(in *ForecastInput) { in.Catalyst = nil }, chem.KindMalformed, [][]any{{"catalyst"}}},
		{"unknown preset", func(in *ForecastInput) { in.Catalyst.Preset = "unobtainium" }, chem.KindMalformed, [][]any{{"catalyst", "preset"}}},
		{"parameters missing", func(in *ForecastInput) { in.Catalyst = &CatalystInput{LinoleicSelectivity: fptr(20)} }, chem.KindMalformed, [][]any{
			{"catalyst", "linolenic_selectivity"}, {"catalyst", "trans_share"}, {"catalyst", "isomerisation_rate"},
			{"catalyst", "trans_cis_equilibrium"}, {"catalyst", "trans_saturation_rate"}}},
		{"melting without a slip target", func(in *ForecastInput) { in.Melting = &melting.ModelInput{} }, chem.KindMalformed, [][]any{{"melting"}}},
		{"unknown polymorph", func(in *ForecastInput) {
			in.Target = &ForecastTargetInput{SlipMeltingPointC: fptr(36)}
			in.Melting = &melting.ModelInput{Polymorph: "gamma"}
		}, chem.KindMalformed, [][]any{{"melting", "polymorph"}}},
		{"sn-2 twice", func(in *ForecastInput) {
			in.Sn2Profile = soyInput
			in.Target = &ForecastTargetInput{SlipMeltingPointC: fptr(36)}
			in.Melting = &melting.ModelInput{Sn2Estimate: "palm_rule", Distribution: "full_random"}
		}, chem.KindMalformed, [][]any{{"melting", "sn2_estimate"}, {"melting", "distribution"}}},
		{"catalyst out of range", func(in *ForecastInput) { in.Catalyst.TransShare = fptr(2) }, chem.KindInvalid, [][]any{{"catalyst", "trans_share"}}},
		{"target above feed", func(in *ForecastInput) { in.Target.IodineValue = fptr(200) }, chem.KindOutOfDomain, [][]any{{"target", "iodine_value"}}},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			in := good()
			in.Catalyst = &CatalystInput{Preset: PresetNickelSelective}
			in.Target = &ForecastTargetInput{IodineValue: fptr(90)}
			c.edit(&in)
			_, err := Forecast(context.Background(), cat, in)
			requireFieldError(t, err, c.kind, c.paths...)
		})
	}
}

func TestFitBadInput(t *testing.T) {
	cat := chem.NewCatalogue()
	good := func() FitInput {
		return FitInput{Feed: soyInput, Observations: []FitObservationInput{{Profile: soyInput, IodineValue: fptr(100)}}}
	}
	cases := []struct {
		name  string
		edit  func(*FitInput)
		kind  chem.ErrorKind
		paths [][]any
	}{
		{"no feed", func(in *FitInput) { in.Feed = nil }, chem.KindMalformed, [][]any{{"feed"}}},
		{"observation without profile", func(in *FitInput) { in.Observations[0].Profile = nil }, chem.KindMalformed, [][]any{{"observations", 0, "profile"}}},
		{"unknown parameter", func(in *FitInput) { in.FreeParameters = []string{"trans_share", "speed"} }, chem.KindMalformed, [][]any{{"free_parameters", 1}}},
		{"duplicate parameter", func(in *FitInput) { in.FreeParameters = []string{"trans_share", "trans_share"} }, chem.KindInvalid, [][]any{{"free_parameters", 1}}},
		{"initial without preset", func(in *FitInput) { in.Initial = &CatalystInput{TransShare: fptr(0.5)} }, chem.KindMalformed, [][]any{
			{"initial", "linolenic_selectivity"}, {"initial", "linoleic_selectivity"}, {"initial", "isomerisation_rate"},
			{"initial", "trans_cis_equilibrium"}, {"initial", "trans_saturation_rate"}}},
		{"computed iodine value at the feed's", func(in *FitInput) { in.Observations[0].IodineValue = nil }, chem.KindOutOfDomain, [][]any{{"observations", 0, "profile"}}},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			in := good()
			c.edit(&in)
			_, err := Fit(context.Background(), cat, in)
			requireFieldError(t, err, c.kind, c.paths...)
		})
	}
}

// Inputs and results outside physical sense are refused or warned about
// with the reason: a heat capacity of 12 kJ/(kg·K) (no oil has one), an
// end temperature above the flash point, an unusual heat of reaction, and
// a copper catalyst driven far past its use.
func TestPhysicalSense(t *testing.T) {
	cat := chem.NewCatalogue()
	in := HydrogenDemandInput{Feed: &FeedInput{IodineValue: fptr(133)}, Target: &IodineValueTargetInput{IodineValue: fptr(70)}, BatchMassKg: 1000,
		Heat: &HeatInput{HeatCapacityInterceptKJPerKgK: fptr(12), HeatCapacitySlopeKJPerKgK2: fptr(0)}}
	_, err := HydrogenDemand(cat, in)
	ce, ok := chem.AsError(err)
	require.True(t, ok, "%v", err)
	require.Equal(t, chem.KindInvalid, ce.Kind)
	require.Equal(t, []any{"heat"}, ce.Fields[0].Path)
	require.Contains(t, ce.Message, "no oil has")

	codes := func(ws []chem.Warning) map[string]bool {
		out := map[string]bool{}
		for _, w := range ws {
			out[w.Code] = true
		}
		return out
	}
	in = HydrogenDemandInput{Feed: &FeedInput{IodineValue: fptr(190)}, Target: &IodineValueTargetInput{IodineValue: fptr(0)}, BatchMassKg: 1000,
		StartTemperatureC: fptr(200), Heat: &HeatInput{ReactionEnthalpyKJPerMol: fptr(-160)}}
	ans, err := HydrogenDemand(cat, in)
	require.NoError(t, err)
	require.Greater(t, ans.Heat.AdiabaticFinalTemperatureC, FlashPointC)
	require.True(t, codes(ans.Warnings)[WarnOutsidePractice])
	// The enthalpy, the end temperature, and the heat capacity the linear
	// fit gives when extrapolated to that temperature.
	require.Len(t, ans.Warnings, 3, "%v", ans.Warnings)

	in = HydrogenDemandInput{Feed: &FeedInput{IodineValue: fptr(133)}, Target: &IodineValueTargetInput{IodineValue: fptr(120)}, BatchMassKg: 1000}
	ans, err = HydrogenDemand(cat, in)
	require.NoError(t, err)
	require.False(t, codes(ans.Warnings)[WarnOutsidePractice], "an ordinary batch: %v", ans.Warnings)

	for target, warned := range map[float64]bool{115: false, 70: true} {
		fa, err := Forecast(context.Background(), cat, ForecastInput{Profile: soyInput, Target: &ForecastTargetInput{IodineValue: fptr(target)},
			Catalyst: &CatalystInput{Preset: PresetCopper}})
		require.NoError(t, err)
		require.Equal(t, warned, codes(fa.Warnings)[WarnOutsidePractice], "copper to IV %g", target)
	}
}

// A fit that could run past one request's share is refused before any
// work, with its own kind (the API's work-cap-exceeded) and the largest
// iteration cap that would pass.
func TestFitWorkCap(t *testing.T) {
	obs := make([]FitObservationInput, 40)
	for i := range obs {
		obs[i] = FitObservationInput{Profile: soyInput, IodineValue: fptr(120)}
	}
	iters := 500
	_, err := Fit(context.Background(), chem.NewCatalogue(), FitInput{Feed: soyInput, Observations: obs, MaxIterations: &iters,
		FreeParameters: []string{"linolenic_selectivity", "linoleic_selectivity", "trans_share", "isomerisation_rate", "trans_cis_equilibrium", "trans_saturation_rate"}})
	ce, ok := chem.AsError(err)
	require.True(t, ok, "%v", err)
	require.Equal(t, chem.KindWorkCap, ce.Kind)
	require.Equal(t, []any{"max_iterations"}, ce.Fields[0].Path)
	require.Contains(t, ce.Fields[0].Reason, "at most 89")
}
