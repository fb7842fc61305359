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

// palmLike is the palm-like check vector of the chem package documentation (a test vector).
const palmLike = `{"acids":[{"acid":"12:0","percent":0.2},{"acid":"14:0","percent":1.0},{"acid":"16:0","percent":44.0},
 {"acid":"16:1 c9","percent":0.2},{"acid":"18:0","percent":4.5},{"acid":"18:1 c9","percent":39.2},{"acid":"18:2 c9,c12","percent":10.1},
 {"acid":"18:3 c9,c12,c15","percent":0.3},{"acid":"20:0","percent":0.4},{"acid":"20:1 c11","percent":0.1}]}`

// pkoBelitz is palm kernel oil as in Belitz, Grosch & Schieberle, Food
// Chemistry, 4th ed. (2009), Table 14.8 (average composition).
const pkoBelitz = `{"acids":[{"acid":"8:0","percent":6},{"acid":"10:0","percent":4},{"acid":"12:0","percent":47},{"acid":"14:0","percent":16},
 {"acid":"16:0","percent":8},{"acid":"18:0","percent":2.5},{"acid":"18:1 c9","percent":14},{"acid":"18:2 c9,c12","percent":2.5}]}`

func melt(t *testing.T, body string) api.MeltingResponse {
	t.Helper()
	rec := do(t, newApp(t), call{method: http.MethodPost, path: "/v1/melting", body: body})
	require.Equal(t, http.StatusOK, rec.Code, rec.Body.String())
	return decode[api.MeltingResponse](t, rec)
}

func requireNonIncreasing(t *testing.T, curve []api.SFCPoint) {
	t.Helper()
	for i := 1; i < len(curve); i++ {
		require.Greater(t, curve[i].TemperatureC, curve[i-1].TemperatureC)
		require.LessOrEqual(t, curve[i].SolidFatPercent, curve[i-1].SolidFatPercent+1e-9, "SFC rises at %g °C", curve[i].TemperatureC)
	}
}

// TestMeltingPublishedRanges: palm oil (IV 50–55) slip melting point
// 33–39 °C [pub: Codex CXS 210 Table 2; trade specification]; palm kernel
// oil melting range 23–30 °C [pub: Belitz et al., Food Chemistry, Table
// 14.8]. Coconut oil is outside its 23–26 °C range with the default model
// (about 5 K high; testdata/melting/VALIDATION.md), so it is not asserted
// here.
func TestMeltingPublishedRanges(t *testing.T) {
	palm := melt(t, `{"profile":`+palmLike+`,"sn2_estimate":"palm_rule"}`)
	require.NotNil(t, palm.SlipMeltingPointC)
	require.GreaterOrEqual(t, *palm.SlipMeltingPointC, 33.0)
	require.LessOrEqual(t, *palm.SlipMeltingPointC, 39.0)
	require.NotNil(t, palm.ClearPointC)
	require.GreaterOrEqual(t, *palm.ClearPointC, *palm.SlipMeltingPointC)
	requireNonIncreasing(t, palm.Curve)
	require.Len(t, palm.Curve, 61+3) // 0–60 °C in 1 °C steps plus 21.1, 26.7 and 33.3
	require.Len(t, palm.ReportingPoints, 10)
	require.Equal(t, "beta_prime", palm.Parameters.Polymorph)
	require.Equal(t, "solid_solution_families", palm.Parameters.SolidModel)
	require.Equal(t, "palm_rule", *palm.Parameters.Sn2Estimate)
	require.NotEmpty(t, palm.MainSpecies)
	require.NotEmpty(t, palm.Assumptions)

	pko := melt(t, `{"profile":`+pkoBelitz+`}`)
	require.NotNil(t, pko.SlipMeltingPointC)
	require.GreaterOrEqual(t, *pko.SlipMeltingPointC, 23.0)
	require.LessOrEqual(t, *pko.SlipMeltingPointC, 30.0)
	requireNonIncreasing(t, pko.Curve)
}

func TestMeltingOptionsAndComparison(t *testing.T) {
	for _, model := range []string{"solid_solution_families", "multiple_pure_solids", "ideal_solid_solution"} {
		for _, poly := range []string{"alpha", "beta_prime", "beta"} {
			got := melt(t, `{"profile":`+palmLike+`,"solid_model":"`+model+`","polymorph":"`+poly+`","temperatures_c":[40,10,20,30,20]}`)
			require.Len(t, got.Curve, 4, "sorted, duplicates dropped")
			requireNonIncreasing(t, got.Curve)
		}
	}
	got := melt(t, `{"profile":`+palmLike+`,"distribution":"full_random","measured":{"sfc_points":[{"temperature_c":20,"solid_fat_percent":25}],"slip_melting_point_c":36}}`)
	require.NotNil(t, got.Comparison)
	require.Equal(t, 1, got.Comparison.SFCPoints)
	require.NotNil(t, got.Comparison.SFCRMSErrorPercent)
	require.NotNil(t, got.Comparison.SlipErrorK)
	require.InDelta(t, *got.SlipMeltingPointC-36, *got.Comparison.SlipErrorK, 1e-9)
	require.Nil(t, got.Parameters.Sn2Estimate)
}

// TestCalibrationRoundTrip: a measured slip melting point is met exactly by
// the fitted temperature shift, and the calibration object is accepted by
// /v1/melting.
func TestCalibrationRoundTrip(t *testing.T) {
	rec := do(t, newApp(t), call{method: http.MethodPost, path: "/v1/melting/calibrate",
		body: `{"profile":` + palmLike + `,"sn2_estimate":"palm_rule","measured":{"slip_melting_point_c":36.5}}`})
	require.Equal(t, http.StatusOK, rec.Code, rec.Body.String())
	cal := decode[api.CalibrateResponse](t, rec)
	require.NotNil(t, cal.Before.SlipErrorK)
	require.NotNil(t, cal.After.SlipErrorK)
	require.InDelta(t, 0, *cal.After.SlipErrorK, 0.05)
	body, err := json.Marshal(cal.Calibration)
	require.NoError(t, err)
	got := melt(t, `{"profile":`+palmLike+`,"sn2_estimate":"palm_rule","calibration":`+string(body)+`}`)
	require.InDelta(t, 36.5, *got.SlipMeltingPointC, 0.05)
}

// TestForecastToSlipMeltingPointHTTP: hardening stops where the product's
// slip melting point reaches the target, and reports the iodine value.
func TestForecastToSlipMeltingPointHTTP(t *testing.T) {
	got := forecast(t, `{"profile":`+soyFeed+`,"target":{"slip_melting_point_c":36},"catalyst":{"preset":"nickel_selective"},"path_points":5}`)
	require.NotNil(t, got.MeltingTarget)
	require.InDelta(t, 36, got.MeltingTarget.SlipMeltingPointC, 0.01)
	require.InDelta(t, got.IodineValue, got.MeltingTarget.IodineValue, 1e-9)
	require.Less(t, got.IodineValue, got.FeedIodineValue)
	require.Len(t, got.Path, 5)
	// The product's slip melting point by /v1/melting agrees.
	prof, err := json.Marshal(got.ProductProfile)
	require.NoError(t, err)
	m := melt(t, `{"profile":`+string(prof)+`}`)
	require.InDelta(t, 36, *m.SlipMeltingPointC, 0.05)
}

func TestMeltingBadRequests(t *testing.T) {
	app := newApp(t)
	cases := []struct {
		name, path, body string
		status           int
		pointer          string
	}{
		{"unknown polymorph", "/v1/melting", `{"profile":` + palmLike + `,"polymorph":"gamma"}`, 400, "/polymorph"},
		{"unknown model", "/v1/melting", `{"profile":` + palmLike + `,"solid_model":"glass"}`, 400, "/solid_model"},
		{"temperature out of range", "/v1/melting", `{"profile":` + palmLike + `,"temperatures_c":[20,500]}`, 400, "/temperatures_c/1"},
		{"empty temperatures", "/v1/melting", `{"profile":` + palmLike + `,"temperatures_c":[]}`, 400, "/temperatures_c"},
		{"zero threshold", "/v1/melting", `{"profile":` + palmLike + `,"slip_threshold_percent":0}`, 400, "/slip_threshold_percent"},
		{"calibration shift too large", "/v1/melting", `{"profile":` + palmLike + `,"calibration":{"temperature_shift_k":30}}`, 400, "/calibration/temperature_shift_k"},
		{"enrichment without factor", "/v1/melting", `{"profile":` + palmLike + `,"sn2_enrichment_factors":[{"acid":"16:0","percent":1}]}`, 400, "/sn2_enrichment_factors/0/factor"},
		{"enrichment acid not in profile", "/v1/melting", `{"profile":` + palmLike + `,"sn2_enrichment_factors":[{"acid":"DHA","factor":1}]}`, 422, "/sn2_enrichment_factors/0/acid"},
		{"enrichment unknown acid", "/v1/melting", `{"profile":` + palmLike + `,"sn2_enrichment_factors":[{"acid":"blubber","factor":1}]}`, 422, "/sn2_enrichment_factors/0/acid"},
		{"sn2 and enrichment", "/v1/melting", `{"profile":` + palmLike + `,"sn2_profile":` + palmLike + `,"sn2_enrichment_factors":[{"acid":"16:0","factor":1}]}`, 400, "/sn2_enrichment_factors"},
		{"sn2 acid not in profile", "/v1/melting", `{"profile":` + palmLike + `,"sn2_profile":{"acids":[{"acid":"DHA","percent":100}]}}`, 422, ""},
		{"empty measured", "/v1/melting", `{"profile":` + palmLike + `,"measured":{}}`, 400, "/measured"},
		{"calibrate without measured", "/v1/melting/calibrate", `{"profile":` + palmLike + `}`, 400, "/measured"},
		{"calibrate sfc above 100", "/v1/melting/calibrate", `{"profile":` + palmLike + `,"measured":{"sfc_points":[{"temperature_c":20,"solid_fat_percent":120}]}}`, 400, "/measured/sfc_points/0/solid_fat_percent"},
		{"bad profile label", "/v1/melting", `{"profile":{"acids":[{"acid":"blubber","percent":100}]}}`, 422, "/profile/acids/0/acid"},
		{"melting options without slip target", "/v1/hardening/forecast", `{"profile":` + soyFeed + `,"target":{"iodine_value":70},"catalyst":{"preset":"copper"},"melting":{"polymorph":"beta"}}`, 400, "/melting"},
		{"slip target below feed", "/v1/hardening/forecast", `{"profile":` + palmLike + `,"target":{"slip_melting_point_c":0},"catalyst":{"preset":"copper"}}`, 422, "/target/slip_melting_point_c"},
		{"slip target unreachable", "/v1/hardening/forecast", `{"profile":` + soyFeed + `,"target":{"slip_melting_point_c":110},"catalyst":{"preset":"copper"}}`, 422, "/target/slip_melting_point_c"},
		{"slip target and iodine value", "/v1/hardening/forecast", `{"profile":` + soyFeed + `,"target":{"slip_melting_point_c":36,"iodine_value":70},"catalyst":{"preset":"copper"}}`, 400, "/target"},
		{"melting bad polymorph", "/v1/hardening/forecast", `{"profile":` + soyFeed + `,"target":{"slip_melting_point_c":36},"catalyst":{"preset":"copper"},"melting":{"polymorph":"delta"}}`, 400, "/melting/polymorph"},
	}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			rec := do(t, app, call{method: http.MethodPost, path: tc.path, body: tc.body})
			require.Equal(t, tc.status, rec.Code, rec.Body.String())
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

func TestMeltingEnrichmentFactors(t *testing.T) {
	// Palmitic acid strongly kept out of sn-2 versus let in: more PPP-type
	// species raise the clear point.
	out := melt(t, `{"profile":`+palmLike+`,"sn2_enrichment_factors":[{"acid":"18:1 c9","factor":1},{"acid":"18:2 c9,c12","factor":1}]}`)
	in := melt(t, `{"profile":`+palmLike+`,"sn2_enrichment_factors":[{"acid":"16:0","factor":1},{"acid":"18:1 c9","factor":1},{"acid":"18:2 c9,c12","factor":1}]}`)
	require.Equal(t, "enrichment_factors", *out.Parameters.Sn2Estimate)
	require.NotEqual(t, *out.ClearPointC, *in.ClearPointC)
}

// TestMeltingExplicitTAGs: a fat given as TAG species. A palm-like mix of
// its main species (invented shares for the test) melts, the species come
// back as given, and the distribution is reported as explicit.
func TestMeltingExplicitTAGs(t *testing.T) {
	got := melt(t, `{"triacylglycerols":[
	  {"sn1":"16:0","sn2":"18:1 c9","sn3":"16:0","mole_percent":30},
	  {"sn1":"16:0","sn2":"18:1 c9","sn3":"18:1 c9","mole_percent":25},
	  {"sn1":"18:1 c9","sn2":"18:1 c9","sn3":"16:0","mole_percent":5},
	  {"sn1":"16:0","sn2":"18:2 c9,c12","sn3":"18:1 c9","mole_percent":10},
	  {"sn1":"16:0","sn2":"16:0","sn3":"16:0","mole_percent":5},
	  {"sn1":"18:1 c9","sn2":"18:1 c9","sn3":"18:1 c9","mole_percent":15},
	  {"sn1":"16:0","sn2":"18:1 c9","sn3":"18:0","mole_percent":10}],"temperatures_c":[5,15,25,35]}`)
	require.Equal(t, "explicit_tags", got.Parameters.Distribution)
	require.Nil(t, got.Parameters.Sn2Estimate)
	requireNonIncreasing(t, got.Curve)
	require.Equal(t, 6, got.SpeciesCount) // POO and OOP are one species
	var codes []string
	for _, w := range got.Warnings {
		codes = append(codes, w.Code)
	}
	require.Contains(t, codes, "duplicate_acid_summed")

	app := newApp(t)
	for _, c := range []struct {
		body    string
		status  int
		pointer string
	}{
		{`{"triacylglycerols":[{"sn1":"16:0","sn2":"oleik","sn3":"16:0","mole_percent":100}]}`, 422, "/triacylglycerols/0/sn2"},
		{`{"triacylglycerols":[{"sn1":"16:0","sn2":"18:1","sn3":"16:0","mole_percent":90}]}`, 422, "/triacylglycerols"},
		{`{"triacylglycerols":[{"sn1":"16:0","sn2":"18:1","sn3":"16:0","mole_percent":100}],"profile":` + palmLike + `}`, 400, ""},
		{`{"triacylglycerols":[{"sn1":"16:0","sn2":"18:1","sn3":"16:0","mole_percent":100}],"distribution":"full_random"}`, 400, "/distribution"},
		{`{"temperatures_c":[20]}`, 400, ""},
	} {
		rec := do(t, app, call{method: http.MethodPost, path: "/v1/melting", body: c.body})
		require.Equal(t, c.status, rec.Code, rec.Body.String())
		p := decode[api.Problem](t, rec)
		var ptrs []string
		for _, e := range p.Errors {
			ptrs = append(ptrs, e.Pointer)
		}
		require.Contains(t, ptrs, c.pointer, rec.Body.String())
	}
}

// TestMeltingTraceAcids: acids whose TAG shares underflow to zero (the
// traces a hardening forecast leaves) neither hang nor break the answer.
func TestMeltingTraceAcids(t *testing.T) {
	trace := `{"acids":[{"acid":"16:0","percent":50},{"acid":"18:1 c9","percent":50},{"acid":"18:3 c9,c12,c15","percent":1e-120}]}`
	for _, model := range []string{"solid_solution_families", "multiple_pure_solids", "ideal_solid_solution"} {
		got := melt(t, `{"profile":`+trace+`,"solid_model":"`+model+`"}`)
		requireNonIncreasing(t, got.Curve)
		rec := do(t, newApp(t), call{method: http.MethodPost, path: "/v1/melting/calibrate",
			body: `{"profile":` + trace + `,"solid_model":"` + model + `","measured":{"slip_melting_point_c":30}}`})
		require.Equal(t, http.StatusOK, rec.Code, rec.Body.String())
	}
	// A hardened product, traces and all, goes back into /v1/melting, and a
	// slip target works with every catalyst and solid model.
	for _, preset := range []string{"copper", "nickel_non_selective", "palladium"} {
		got := forecast(t, `{"profile":`+soyFeed+`,"target":{"slip_melting_point_c":36},"catalyst":{"preset":"`+preset+`"},"melting":{"solid_model":"multiple_pure_solids"},"path_points":2}`)
		require.InDelta(t, 36, got.MeltingTarget.SlipMeltingPointC, 0.05, preset)
		prof, err := json.Marshal(got.ProductProfile)
		require.NoError(t, err)
		m := melt(t, `{"profile":`+string(prof)+`,"solid_model":"multiple_pure_solids"}`)
		require.InDelta(t, 36, *m.SlipMeltingPointC, 0.05, preset)
	}
}

// TestMeltingWarningPointers: warnings point into the request or nowhere.
func TestMeltingWarningPointers(t *testing.T) {
	got := melt(t, `{"profile":`+palmLike+`}`)
	var saw bool
	for _, w := range got.Warnings {
		switch w.Code {
		case "outside_property_fit":
			saw = true
			require.Equal(t, "/profile/acids", w.Pointer)
		case "species_pooled":
			require.Empty(t, w.Pointer)
		}
	}
	require.True(t, saw, "palm-like has 20:0 and 20:1, outside the fitted data: %v", got.Warnings)

	// The seed-oil rule, asked for explicitly, does not suit palm oil: the
	// warning points where the client chooses the rule.
	got = melt(t, `{"profile":`+palmLike+`,"sn2_estimate":"seed_oil_rule"}`)
	var sn2 bool
	for _, w := range got.Warnings {
		if w.Code == "sn2_rule_questionable" {
			sn2 = true
			require.Equal(t, "/sn2_estimate", w.Pointer)
		}
	}
	require.True(t, sn2, "%v", got.Warnings)
}

// A palm oil posted plainly gets the palm rule by the automatic choice, a
// slip melting point in palm oil's range, and says how good that is.
func TestPalmPostedPlainly(t *testing.T) {
	got := melt(t, `{"profile":`+palmLike+`}`)
	require.Equal(t, "palm_rule", *got.Parameters.Sn2Estimate)
	require.True(t, got.Parameters.Sn2Automatic)
	require.Equal(t, "palm", got.Parameters.FatClass)
	require.NotNil(t, got.SlipMeltingPointC)
	// Trade specification for refined palm oil: melting point (AOCS Cc
	// 3-25) 33-39 °C.
	require.GreaterOrEqual(t, *got.SlipMeltingPointC, 33.0)
	require.LessOrEqual(t, *got.SlipMeltingPointC, 39.0)
	require.Contains(t, strings.Join(got.Assumptions, " "), "palm rule, chosen automatically")
	require.Equal(t, "palm", got.Uncertainty.FatClass)
	require.Positive(t, got.Uncertainty.SlipMeltingPointK)
	require.Positive(t, got.Uncertainty.ValidationFats)
	require.False(t, got.Uncertainty.Calibrated)
	for _, w := range got.Warnings {
		require.NotEqual(t, "sn2_rule_questionable", w.Code)
	}
	// An explicit rule still wins.
	seed := melt(t, `{"profile":`+palmLike+`,"sn2_estimate":"seed_oil_rule"}`)
	require.Equal(t, "seed_oil_rule", *seed.Parameters.Sn2Estimate)
	require.False(t, seed.Parameters.Sn2Automatic)
	require.Less(t, *seed.SlipMeltingPointC, *got.SlipMeltingPointC)
}

func TestCalibrationFromSFCPoints(t *testing.T) {
	// Invented measurements for the test (not published data): the model
	// shifted to follow them must fit better than unshifted.
	body := `{"profile":` + palmLike + `,"sn2_estimate":"palm_rule","measured":{"sfc_points":[
	  {"temperature_c":10,"solid_fat_percent":50},{"temperature_c":20,"solid_fat_percent":26},
	  {"temperature_c":30,"solid_fat_percent":9},{"temperature_c":35,"solid_fat_percent":5}],"slip_melting_point_c":36}}`
	rec := do(t, newApp(t), call{method: http.MethodPost, path: "/v1/melting/calibrate", body: body})
	require.Equal(t, http.StatusOK, rec.Code, rec.Body.String())
	got := decode[api.CalibrateResponse](t, rec)
	require.Equal(t, 4, got.Before.SFCPoints)
	require.LessOrEqual(t, *got.After.SFCRMSErrorPercent, *got.Before.SFCRMSErrorPercent)
	require.Greater(t, got.Calibration.SlipThresholdPercent, 0.0)

	// Options that do not apply to a calibration are refused, not ignored.
	for _, extra := range []string{`"temperatures_c":[20]`, `"main_species_count":3`, `"calibration":{"temperature_shift_k":1}`} {
		rec := do(t, newApp(t), call{method: http.MethodPost, path: "/v1/melting/calibrate",
			body: `{"profile":` + palmLike + `,` + extra + `,"measured":{"slip_melting_point_c":36}}`})
		require.Equal(t, http.StatusBadRequest, rec.Code, extra)
	}
}

// TestForecastSlipTargetUsesSn2Pools: with a measured sn-2 composition the
// melting model uses the hardened sn-2 pool, which changes the answer.
func TestForecastSlipTargetUsesSn2Pools(t *testing.T) {
	sn2 := `{"acids":[{"acid":"18:1 c9","percent":25},{"acid":"18:2 c9,c12","percent":65},{"acid":"18:3 c9,c12,c15","percent":10}]}`
	with := forecast(t, `{"profile":`+soyFeed+`,"sn2_profile":`+sn2+`,"target":{"slip_melting_point_c":36},"catalyst":{"preset":"nickel_selective"},"path_points":2}`)
	without := forecast(t, `{"profile":`+soyFeed+`,"target":{"slip_melting_point_c":36},"catalyst":{"preset":"nickel_selective"},"path_points":2}`)
	require.InDelta(t, 36, with.MeltingTarget.SlipMeltingPointC, 0.05)
	require.NotEqual(t, with.IodineValue, without.IodineValue)
}

// TestMeltingSn2InputsConflict: each way of fixing sn-2 excludes the others
// and full_random uses none; a request that combines them is refused at the
// field that would otherwise be silently ignored.
func TestMeltingSn2InputsConflict(t *testing.T) {
	app := newApp(t)
	sn2 := `{"acids":[{"acid":"18:1 c9","percent":70},{"acid":"18:2 c9,c12","percent":20},{"acid":"16:0","percent":10}]}`
	for _, c := range []struct {
		path, body string
		pointers   []string
	}{
		{"/v1/melting", `{"profile":` + palmLike + `,"distribution":"full_random","sn2_profile":` + sn2 + `}`, []string{"/sn2_profile"}},
		{"/v1/melting", `{"profile":` + palmLike + `,"distribution":"full_random","sn2_estimate":"palm_rule"}`, []string{"/sn2_estimate"}},
		{"/v1/melting", `{"profile":` + palmLike + `,"distribution":"full_random","sn2_enrichment_factors":[{"acid":"16:0","factor":0.2}]}`, []string{"/sn2_enrichment_factors"}},
		{"/v1/melting", `{"profile":` + palmLike + `,"sn2_estimate":"palm_rule","sn2_profile":` + sn2 + `}`, []string{"/sn2_estimate"}},
		{"/v1/melting/calibrate", `{"profile":` + palmLike + `,"sn2_estimate":"palm_rule","sn2_enrichment_factors":[{"acid":"16:0","factor":0.2}],"measured":{"slip_melting_point_c":35}}`, []string{"/sn2_estimate"}},
		{"/v1/melting", `{"profile":` + palmLike + `,"sn2_enrichment_factors":[{"acid":"18:1 c9","factor":5},{"acid":"oleic","factor":0.01}]}`, []string{"/sn2_enrichment_factors/1/acid"}},
		{"/v1/melting", `{"triacylglycerols":[{"sn1":"16:0","sn2":"18:1","sn3":"16:0","mole_percent":100}],"sn2_estimate":"palm_rule","distribution":"full_random"}`, []string{"/sn2_estimate", "/distribution"}},
		{"/v1/hardening/forecast", `{"profile":` + palmLike + `,"sn2_profile":` + sn2 + `,"target":{"slip_melting_point_c":42},"catalyst":{"preset":"nickel_selective"},"melting":{"sn2_estimate":"palm_rule","distribution":"full_random"}}`, []string{"/melting/sn2_estimate", "/melting/distribution"}},
	} {
		rec := do(t, app, call{method: http.MethodPost, path: c.path, body: c.body})
		require.Equal(t, http.StatusBadRequest, rec.Code, rec.Body.String())
		p := decode[api.Problem](t, rec)
		var ptrs []string
		for _, e := range p.Errors {
			ptrs = append(ptrs, e.Pointer)
		}
		require.ElementsMatch(t, c.pointers, ptrs, rec.Body.String())
	}
}

// TestMeltingTAGLabelsReportAssumedIsomers: a bare "18:1" in a TAG entry or
// an enrichment factor is read as oleic acid and said so, as in a profile;
// a TAG request with nothing to report still answers an empty list.
func TestMeltingTAGLabelsReportAssumedIsomers(t *testing.T) {
	got := melt(t, `{"triacylglycerols":[{"sn1":"16:0","sn2":"18:1","sn3":"16:0","mole_percent":100}]}`)
	var ptrs []string
	for _, w := range got.Warnings {
		if w.Code == "assumed_isomer" {
			ptrs = append(ptrs, w.Pointer)
		}
	}
	require.Equal(t, []string{"/triacylglycerols/0/sn2"}, ptrs)

	rec := do(t, newApp(t), call{method: http.MethodPost, path: "/v1/melting",
		body: `{"triacylglycerols":[{"sn1":"16:0","sn2":"16:0","sn3":"16:0","mole_percent":100}]}`})
	require.Equal(t, http.StatusOK, rec.Code, rec.Body.String())
	require.Contains(t, rec.Body.String(), `"warnings":[]`)

	got = melt(t, `{"profile":`+palmLike+`,"sn2_enrichment_factors":[{"acid":"16:0","factor":0.1},{"acid":"18:1","factor":1}]}`)
	ptrs = nil
	for _, w := range got.Warnings {
		if w.Code == "assumed_isomer" {
			ptrs = append(ptrs, w.Pointer)
		}
	}
	require.Contains(t, ptrs, "/sn2_enrichment_factors/1/acid")
}

// TestIntegersInAnySpelling: JSON Schema's integer, which the contract uses,
// accepts 3.0 and 1e1; so must the handlers. 3.5 is still refused.
func TestIntegersInAnySpelling(t *testing.T) {
	app := newApp(t)
	rec := do(t, app, call{method: http.MethodPost, path: "/v1/melting", body: `{"profile":` + pkoBelitz + `,"main_species_count":1e1}`})
	require.Equal(t, http.StatusOK, rec.Code, rec.Body.String())
	require.Len(t, decode[api.MeltingResponse](t, rec).MainSpecies, 10)

	rec = do(t, app, call{method: http.MethodPost, path: "/v1/hardening/forecast",
		body: `{"profile":` + soyFeed + `,"target":{"iodine_value":70},"catalyst":{"preset":"nickel_selective"},"path_points":3.0}`})
	require.Equal(t, http.StatusOK, rec.Code, rec.Body.String())
	require.Len(t, decode[api.ForecastResponse](t, rec).Path, 3)

	rec = do(t, app, call{method: http.MethodPost, path: "/v1/melting", body: `{"profile":` + pkoBelitz + `,"main_species_count":3.5}`})
	require.Equal(t, http.StatusBadRequest, rec.Code, rec.Body.String())
}

// TestSpeciesWithoutMeltingPoint: a species the correlation gives no
// melting point (tributyrin in α sits at the floor that marks it as never
// crystallising in range) is listed with melting_point_c null, not the
// floor's −123 °C.
func TestSpeciesWithoutMeltingPoint(t *testing.T) {
	got := melt(t, `{"triacylglycerols":[{"sn1":"4:0","sn2":"4:0","sn3":"4:0","mole_percent":100}],"polymorph":"alpha"}`)
	require.Len(t, got.MainSpecies, 1)
	require.Nil(t, got.MainSpecies[0].MeltingPointC)
	require.Nil(t, got.ClearPointC)
}

// TestCalibrateLibrary: a plant's library of fats is calibrated together;
// the answer pools the errors and gives each fat's leave-one-out error.
func TestCalibrateLibrary(t *testing.T) {
	body := `{"polymorph":"beta_prime","fats":[
	  {"profile":` + palmLike + `,"sn2_estimate":"palm_rule","measured":{"sfc_points":[{"temperature_c":20,"solid_fat_percent":26},{"temperature_c":30,"solid_fat_percent":8}],"slip_melting_point_c":36}},
	  {"profile":` + pkoBelitz + `,"measured":{"slip_melting_point_c":27.5}},
	  {"profile":` + palmLike + `,"sn2_estimate":"palm_rule","measured":{"sfc_points":[{"temperature_c":10,"solid_fat_percent":52}]}}]}`
	rec := do(t, newApp(t), call{method: http.MethodPost, path: "/v1/melting/calibrate", body: body})
	require.Equal(t, http.StatusOK, rec.Code, rec.Body.String())
	got := decode[api.CalibrateResponse](t, rec)
	require.Len(t, got.Fats, 3)
	require.NotNil(t, got.LeaveOneOut)
	require.Equal(t, 3, got.After.SFCPoints)
	require.Equal(t, 2, got.After.SlipPoints)
	for i, f := range got.Fats {
		require.NotNil(t, f.LeaveOneOut, "fat %d", i)
	}
	// One fat and a library together, or a fat without measurements, are refused.
	for _, c := range []struct{ body, pointer string }{
		{`{"profile":` + palmLike + `,"measured":{"slip_melting_point_c":36},"fats":[{"profile":` + palmLike + `,"measured":{"slip_melting_point_c":36}}]}`, ""},
		{`{"fats":[{"profile":` + palmLike + `,"measured":{"slip_melting_point_c":36}},{"profile":` + palmLike + `}]}`, "/fats/1/measured"},
	} {
		rec := do(t, newApp(t), call{method: http.MethodPost, path: "/v1/melting/calibrate", body: c.body})
		require.Equal(t, http.StatusBadRequest, rec.Code, rec.Body.String())
		require.Equal(t, c.pointer, decode[api.Problem](t, rec).Errors[0].Pointer)
	}
}

// TestCalibrationWorkCapHTTP: a library whose calibration would run far
// past one request's share (20 fats × 100 SFC points with the model that
// never pools species) is refused at once with 422 and the distinct
// problem type, pointing at the fats.
func TestCalibrationWorkCapHTTP(t *testing.T) {
	var pts []string
	for k := 0; k < 100; k++ {
		pts = append(pts, fmt.Sprintf(`{"temperature_c":%g,"solid_fat_percent":%g}`, 5+0.35*float64(k), 40-0.38*float64(k)))
	}
	fat := `{"profile":` + palmLike + `,"sn2_estimate":"palm_rule","measured":{"sfc_points":[` + strings.Join(pts, ",") + `]}}`
	fats := strings.TrimSuffix(strings.Repeat(fat+",", 20), ",")
	rec := do(t, newApp(t), call{method: http.MethodPost, path: "/v1/melting/calibrate",
		body: `{"solid_model":"multiple_pure_solids","fats":[` + fats + `]}`})
	require.Equal(t, http.StatusUnprocessableEntity, rec.Code, rec.Body.String())
	p := decode[api.Problem](t, rec)
	require.Equal(t, api.ProblemTypeBase+"work-cap-exceeded", p.Type)
	require.Len(t, p.Errors, 1)
	require.Equal(t, "/fats", p.Errors[0].Pointer)
	require.Contains(t, p.Errors[0].Reason, "fewer fats")
}
