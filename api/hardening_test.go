package api_test

import (
	"encoding/json"
	"fmt"
	"net/http"
	"strings"
	"testing"

	"github.com/stretchr/testify/require"

	"lipidsvc/api"
)

// soyFeed is the soy-like check vector of the chem package documentation with explicit labels.
const soyFeed = `{"acids":[
 {"acid":"16:0","percent":10.5},{"acid":"16:1 c9","percent":0.1},{"acid":"18:0","percent":4.0},
 {"acid":"18:1 c9","percent":23.0},{"acid":"18:2 c9,c12","percent":53.7},{"acid":"18:3 c9,c12,c15","percent":7.6},
 {"acid":"20:0","percent":0.4},{"acid":"20:1 c11","percent":0.3},{"acid":"22:0","percent":0.4}]}`

func forecast(t *testing.T, body string) api.ForecastResponse {
	t.Helper()
	rec := do(t, newApp(t), call{method: http.MethodPost, path: "/v1/hardening/forecast", body: body})
	require.Equal(t, http.StatusOK, rec.Code, rec.Body.String())
	return decode[api.ForecastResponse](t, rec)
}

// TestForecastSoybeanNickelSelective runs the published case through HTTP:
// soybean oil over nickel at 175 °C, 15 psi H2 [pub: List, Jackson, Eller &
// Adlof, JAOCS 84:609 (2007)]: trans 18:1 about 46 % near IV 70.
func TestForecastSoybeanNickelSelective(t *testing.T) {
	got := forecast(t, `{"profile":`+soyFeed+`,"target":{"iodine_value":70},"catalyst":{"preset":"nickel_selective"},"path_points":11}`)
	require.InDelta(t, 70, got.IodineValue, 0.01)
	require.InDelta(t, 132.98, got.FeedIodineValue, 0.01) // [calc]
	// Trans 18:1 (every 18:1 entry with a trans bond) inside the published
	// band 46 ± 4 at IV 70 ± 6.
	var trans181 float64
	for _, a := range got.ProductProperties.Acids {
		if strings.HasPrefix(a.Acid, "18:1 t") {
			trans181 += a.Percent
		}
	}
	require.InDelta(t, 46, trans181, 4)
	require.Equal(t, got.TransPercent, got.ProductProperties.Sums.TransPercent)
	require.True(t, got.Flags.TransAboveLimit)
	require.True(t, got.Flags.PartiallyHydrogenated)
	require.Equal(t, "nickel_selective", *got.Catalyst.Preset)
	require.NotEmpty(t, got.Cautions)

	// Path: 11 rows from the feed to the target, iodine value falling.
	require.Len(t, got.Path, 11)
	require.InDelta(t, got.FeedIodineValue, got.Path[0].IodineValue, 1e-6)
	require.InDelta(t, 70, got.Path[10].IodineValue, 0.01)
	for i := 1; i < len(got.Path); i++ {
		require.Less(t, got.Path[i].IodineValue, got.Path[i-1].IodineValue)
		var sum float64
		for _, v := range got.Path[i].Composition {
			sum += v
		}
		require.InDelta(t, 100, sum, 1e-9)
	}
	// The product profile is in the shape the API accepts, and its iodine
	// value by /v1/properties is the forecast's.
	prof, err := json.Marshal(map[string]any{"profile": got.ProductProfile})
	require.NoError(t, err)
	rec := do(t, newApp(t), call{method: http.MethodPost, path: "/v1/properties", body: string(prof)})
	require.Equal(t, http.StatusOK, rec.Code, rec.Body.String())
	require.InDelta(t, 70, decode[api.PropertiesResponse](t, rec).IodineValue, 0.01)

	// Hydrogen agrees with /v1/hydrogen-demand on the product basis.
	h := fmt.Sprintf(`{"feed":{"iodine_value":%v},"target":{"iodine_value":%v},"iodine_value_basis":"product","batch_mass_kg":1000}`,
		got.FeedIodineValue, got.IodineValue)
	rec = do(t, newApp(t), call{method: http.MethodPost, path: "/v1/hydrogen-demand", body: h})
	require.Equal(t, http.StatusOK, rec.Code, rec.Body.String())
	require.InDelta(t, decode[api.HydrogenDemandResponse](t, rec).HydrogenKgPerTonne, got.Hydrogen.HydrogenKgPerTonne, 1e-9)
}

func TestForecastExplicitAndOverriddenCatalyst(t *testing.T) {
	explicit := forecast(t, `{"profile":`+soyFeed+`,"target":{"iodine_value_drop":40},"catalyst":{
	  "linolenic_selectivity":2,"linoleic_selectivity":7,"trans_share":0.4,"isomerisation_rate":0.3,
	  "trans_cis_equilibrium":2,"trans_saturation_rate":0.86}}`)
	require.Nil(t, explicit.Catalyst.Preset)
	require.InDelta(t, explicit.FeedIodineValue-40, explicit.IodineValue, 0.01)
	overridden := forecast(t, `{"profile":`+soyFeed+`,"target":{"hydrogen_kg_per_tonne":3},"catalyst":{"preset":"nickel_selective","linoleic_selectivity":20}}`)
	require.Equal(t, 20.0, overridden.Catalyst.Parameters.LinoleicSelectivity)
	require.InDelta(t, 3, overridden.Hydrogen.HydrogenKgPerTonne, 1e-3)
}

func TestForecastSn2Pools(t *testing.T) {
	sn2 := `{"acids":[{"acid":"18:1 c9","percent":25},{"acid":"18:2 c9,c12","percent":65},{"acid":"18:3 c9,c12,c15","percent":10}]}`
	got := forecast(t, `{"profile":`+soyFeed+`,"sn2_profile":`+sn2+`,"target":{"iodine_value":90},"catalyst":{"preset":"nickel_selective"}}`)
	require.NotNil(t, got.Sn2ProductProfile)
	require.NotNil(t, got.Sn13ProductProfile)
	// Hardening moves no acid between positions, so the pools recombine to
	// the product: x = (2a + b)/3 in moles. Each pool sums to 100.
	for _, pool := range []api.ProfileOut{*got.Sn2ProductProfile, *got.Sn13ProductProfile} {
		var sum float64
		for _, a := range pool.Acids {
			sum += a.Percent
		}
		require.InDelta(t, 100, sum, 1e-9)
	}
	moles := func(p api.ProfileOut) map[string]float64 {
		body, err := json.Marshal(map[string]any{"profile": map[string]any{"basis": p.Basis, "acids": p.Acids}})
		require.NoError(t, err)
		rec := do(t, newApp(t), call{method: http.MethodPost, path: "/v1/properties", body: string(body)})
		require.Equal(t, http.StatusOK, rec.Code, rec.Body.String())
		out := map[string]float64{}
		for _, a := range decode[api.PropertiesResponse](t, rec).Acids {
			out[a.Acid] = a.MolePercent
		}
		return out
	}
	whole, sn2p, sn13p := moles(got.ProductProfile), moles(*got.Sn2ProductProfile), moles(*got.Sn13ProductProfile)
	for id, x := range whole {
		require.InDelta(t, x, (2*sn13p[id]+sn2p[id])/3, 1e-6, id)
	}
}

// TestFitDegenerateObservations: observations with no spread still answer
// 200 with a null R² and a catalyst inside its documented ranges.
func TestFitDegenerateObservations(t *testing.T) {
	third := 100.0 / 3
	obs := fmt.Sprintf(`{"profile":{"acids":[{"acid":"18:0","percent":%v},{"acid":"18:1 c9","percent":%v},{"acid":"18:1 t","percent":%v}]},"iodine_value":30}`, third, third, third)
	body := `{"feed":{"acids":[{"acid":"18:1 c9","percent":50},{"acid":"18:0","percent":50}]},"observations":[` + obs + `,` + obs + `]}`
	rec := do(t, newApp(t), call{method: http.MethodPost, path: "/v1/hardening/fit", body: body})
	require.Equal(t, http.StatusOK, rec.Code, rec.Body.String())
	got := decode[api.FitResponse](t, rec)
	require.Nil(t, got.RSquared)
	cat, err := json.Marshal(got.Catalyst)
	require.NoError(t, err)
	// The fitted catalyst goes straight back into a forecast.
	again := forecast(t, `{"profile":{"acids":[{"acid":"18:1 c9","percent":50},{"acid":"18:0","percent":50}]},"target":{"iodine_value":30},"catalyst":`+string(cat)+`}`)
	require.InDelta(t, 30, again.IodineValue, 0.01)
}

func TestPresets(t *testing.T) {
	rec := do(t, newApp(t), call{method: http.MethodGet, path: "/v1/hardening/presets"})
	require.Equal(t, http.StatusOK, rec.Code)
	list := decode[api.PresetList](t, rec)
	require.GreaterOrEqual(t, len(list.Presets), 4)
	names := map[string]bool{}
	for _, p := range list.Presets {
		names[p.Name] = true
		require.NotEmpty(t, p.Conditions)
		require.NotEmpty(t, p.Basis)
	}
	require.True(t, names["nickel_selective"])
}

// TestFitRoundTrip makes products with a known catalyst through the forecast
// endpoint and recovers its parameters through the fit endpoint (exact
// data: within 2 %, the bound).
func TestFitRoundTrip(t *testing.T) {
	truth := `"linolenic_selectivity":2.5,"linoleic_selectivity":12,"trans_share":0.5,"isomerisation_rate":0.5,"trans_cis_equilibrium":2,"trans_saturation_rate":0.8`
	var obs []string
	for _, iv := range []float64{120, 100, 80, 60, 40, 20} {
		got := forecast(t, fmt.Sprintf(`{"profile":%s,"target":{"iodine_value":%v},"catalyst":{%s},"path_points":2}`, soyFeed, iv, truth))
		p, err := json.Marshal(got.ProductProfile)
		require.NoError(t, err)
		obs = append(obs, fmt.Sprintf(`{"profile":%s,"iodine_value":%v}`, p, got.IodineValue))
	}
	body := `{"feed":` + soyFeed + `,"observations":[` + strings.Join(obs, ",") + `]}`
	rec := do(t, newApp(t), call{method: http.MethodPost, path: "/v1/hardening/fit", body: body})
	require.Equal(t, http.StatusOK, rec.Code, rec.Body.String())
	got := decode[api.FitResponse](t, rec)
	require.InEpsilon(t, 2.5, got.Catalyst.LinolenicSelectivity, 0.02)
	require.InEpsilon(t, 12, got.Catalyst.LinoleicSelectivity, 0.02)
	require.InEpsilon(t, 0.5, got.Catalyst.TransShare, 0.02)
	require.InEpsilon(t, 0.5, got.Catalyst.IsomerisationRate, 0.02)
	require.InEpsilon(t, 0.8, got.Catalyst.TransSaturationRate, 0.02)
	require.Less(t, got.RMSPercentagePoints, 0.01)
	require.Len(t, got.Observations, 6)
	require.Len(t, got.Parameters, 6)
}

func TestHardeningBadRequests(t *testing.T) {
	app := newApp(t)
	feed := `"profile":` + soyFeed
	cases := []struct {
		name, path, body string
		status           int
		pointer          string
	}{
		{"no catalyst", "/v1/hardening/forecast", `{` + feed + `,"target":{"iodine_value":70}}`, 400, "/catalyst"},
		{"unknown preset", "/v1/hardening/forecast", `{` + feed + `,"target":{"iodine_value":70},"catalyst":{"preset":"iron"}}`, 400, "/catalyst/preset"},
		{"partial parameters", "/v1/hardening/forecast", `{` + feed + `,"target":{"iodine_value":70},"catalyst":{"linoleic_selectivity":10}}`, 400, "/catalyst/trans_share"},
		{"parameter out of range", "/v1/hardening/forecast", `{` + feed + `,"target":{"iodine_value":70},"catalyst":{"preset":"copper","trans_share":2}}`, 400, "/catalyst/trans_share"},
		{"two targets", "/v1/hardening/forecast", `{` + feed + `,"target":{"iodine_value":70,"iodine_value_drop":5},"catalyst":{"preset":"copper"}}`, 400, "/target"},
		{"no target", "/v1/hardening/forecast", `{` + feed + `,"catalyst":{"preset":"copper"}}`, 400, "/target"},
		{"too many path points", "/v1/hardening/forecast", `{` + feed + `,"target":{"iodine_value":70},"catalyst":{"preset":"copper"},"path_points":500}`, 400, "/path_points"},
		{"target above feed", "/v1/hardening/forecast", `{` + feed + `,"target":{"iodine_value":150},"catalyst":{"preset":"copper"}}`, 422, "/target/iodine_value"},
		{"drop beyond feed", "/v1/hardening/forecast", `{` + feed + `,"target":{"iodine_value_drop":140},"catalyst":{"preset":"copper"}}`, 422, "/target/iodine_value_drop"},
		{"hydrogen beyond saturation", "/v1/hardening/forecast", `{` + feed + `,"target":{"hydrogen_kg_per_tonne":50},"catalyst":{"preset":"copper"}}`, 422, "/target/hydrogen_kg_per_tonne"},
		{"nothing to harden", "/v1/hardening/forecast", `{"profile":{"acids":[{"acid":"18:0","percent":100}]},"target":{"iodine_value":0},"catalyst":{"preset":"copper"}}`, 422, ""},
		{"hydroxy feed", "/v1/hardening/forecast", `{"profile":{"acids":[{"acid":"ricinoleic","percent":90},{"acid":"18:0","percent":10}]},"target":{"iodine_value":10},"catalyst":{"preset":"copper"}}`, 422, ""},
		{"sn2 impossible", "/v1/hardening/forecast", `{` + feed + `,"sn2_profile":{"acids":[{"acid":"16:0","percent":100}]},"target":{"iodine_value":70},"catalyst":{"preset":"copper"}}`, 422, "/sn2_profile/acids"},
		{"bad feed label", "/v1/hardening/forecast", `{"profile":{"acids":[{"acid":"18:9","percent":100}]},"target":{"iodine_value":70},"catalyst":{"preset":"copper"}}`, 422, "/profile/acids/0/acid"},
		{"fit without observations", "/v1/hardening/fit", `{"feed":` + soyFeed + `,"observations":[]}`, 400, "/observations"},
		{"fit observation above feed", "/v1/hardening/fit", `{"feed":` + soyFeed + `,"observations":[{"profile":` + soyFeed + `,"iodine_value":150}]}`, 422, "/observations/0/iodine_value"},
		// No iodine value sent: the one computed from the profile equals the
		// feed's, and the pointer names the profile the client did send.
		{"fit computed IV at feed", "/v1/hardening/fit", `{"feed":` + soyFeed + `,"observations":[{"profile":` + soyFeed + `}]}`, 422, "/observations/0/profile"},
		{"fit unknown parameter", "/v1/hardening/fit", `{"feed":` + soyFeed + `,"observations":[{"profile":` + soyFeed + `,"iodine_value":100}],"free_parameters":["speed"]}`, 400, "/free_parameters/0"},
		{"fit duplicate parameter", "/v1/hardening/fit", `{"feed":` + soyFeed + `,"observations":[{"profile":` + soyFeed + `,"iodine_value":100}],"free_parameters":["trans_share","trans_share"]}`, 400, "/free_parameters"},
		{"fit bad observation label", "/v1/hardening/fit", `{"feed":` + soyFeed + `,"observations":[{"profile":{"acids":[{"acid":"oleik","percent":100}]},"iodine_value":80}]}`, 422, "/observations/0/profile/acids/0/acid"},
		{"presets wrong method", "/v1/hardening/presets", `{}`, 405, ""},
	}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			method := http.MethodPost
			rec := do(t, app, call{method: method, path: tc.path, body: tc.body})
			require.Equal(t, tc.status, rec.Code, rec.Body.String())
			require.Equal(t, "application/problem+json", rec.Header().Get("Content-Type"))
			if tc.pointer != "" {
				p := decode[api.Problem](t, rec)
				var ptrs []string
				for _, e := range p.Errors {
					ptrs = append(ptrs, e.Pointer)
				}
				require.Contains(t, ptrs, tc.pointer, rec.Body.String())
			}
		})
	}
}

// TestForecastSlipTargetWarnsAtMeltingOptions: the melting model's warning
// about the sn-2 rule reaches the forecast's answer pointing at the melting
// option that would change it.
func TestForecastSlipTargetWarnsAtMeltingOptions(t *testing.T) {
	got := forecast(t, `{"profile":`+palmLike+`,"target":{"slip_melting_point_c":40},"catalyst":{"preset":"nickel_selective"},"melting":{"sn2_estimate":"seed_oil_rule"}}`)
	var ptrs []string
	for _, w := range got.Warnings {
		if w.Code == "sn2_rule_questionable" {
			ptrs = append(ptrs, w.Pointer)
		}
	}
	require.NotEmpty(t, ptrs, "%v", got.Warnings)
	for _, p := range ptrs {
		require.Equal(t, "/melting/sn2_estimate", p)
	}
}

// A selectively hardened soybean basestock near IV 66 melts, in practice,
// around 36–46 °C [practice, memory: trade-typical slip melting points of
// such basestocks]; the product of the forecast, posted as a plant would
// post it to /v1/melting, lands there and is classed as hardened.
func TestHardenedSoybeanForecastMelts(t *testing.T) {
	got := forecast(t, `{"profile":`+soyFeed+`,"target":{"iodine_value":66},"catalyst":{"preset":"nickel_selective"}}`)
	product, err := json.Marshal(got.ProductProfile)
	require.NoError(t, err)
	m := melt(t, `{"profile":`+string(product)+`}`)
	require.NotNil(t, m.SlipMeltingPointC)
	require.GreaterOrEqual(t, *m.SlipMeltingPointC, 36.0)
	require.LessOrEqual(t, *m.SlipMeltingPointC, 46.0)
	require.Equal(t, "hardened", m.Parameters.FatClass)
	require.Equal(t, "hardened_rule", *m.Parameters.Sn2Estimate)
	requireNonIncreasing(t, m.ReportingPoints)

	// The slip-melting-point target stops the batch where the same model
	// says the product melts, and says how good that is.
	st := forecast(t, `{"profile":`+soyFeed+`,"target":{"slip_melting_point_c":`+fmt.Sprint(*m.SlipMeltingPointC)+`},"catalyst":{"preset":"nickel_selective"}}`)
	require.NotNil(t, st.MeltingTarget)
	require.InDelta(t, 66, st.MeltingTarget.IodineValue, 1.5)
	require.Equal(t, "hardened_rule", st.MeltingTarget.Sn2Estimate)
	require.Equal(t, "hardened", st.MeltingTarget.Uncertainty.FatClass)
	require.Positive(t, st.MeltingTarget.Uncertainty.SlipMeltingPointK)
	var uncertain bool
	for _, w := range st.Warnings {
		uncertain = uncertain || w.Code == "estimate_uncertain"
	}
	require.True(t, uncertain, "hardened fats are a class the model misses by more than 3 K: %v", st.Warnings)
}
