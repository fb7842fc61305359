package api_test

import (
	"encoding/json"
	"net/http"
	"strings"
	"testing"

	"github.com/stretchr/testify/require"

	"lipidsvc/api"
)

const fhsbo = `{"acids":[{"acid":"C16:0","percent":10.7},{"acid":"C18:0","percent":88.3},{"acid":"C20:0","percent":0.6},{"acid":"C22:0","percent":0.4}]}`

// A blend of fully hardened soybean oil and soybean oil, physical and
// interesterified: interesterifying lowers the slip melting point and the
// solids at 30 °C (published practice; see chem/blend), and the blend's
// iodine value is the mass average of its components'.
func TestBlendPhysicalAndInteresterified(t *testing.T) {
	app := newApp(t)
	body := func(mode string) string {
		return `{"mode":"` + mode + `","components":[{"id":"fhsbo","fraction":0.3,"profile":` + fhsbo + `},{"id":"soybean","fraction":0.7,"profile":{"acids":` + soyAcids + `}}]}`
	}
	get := func(mode string) api.BlendResponse {
		rec := do(t, app, call{method: http.MethodPost, path: "/v1/blends", body: body(mode)})
		require.Equal(t, http.StatusOK, rec.Code, rec.Body.String())
		return decode[api.BlendResponse](t, rec)
	}
	phys, ie := get("physical"), get("interesterified")
	require.Equal(t, "physical", phys.Mode)
	require.Contains(t, phys.Method, "own TAG compositions")
	require.Contains(t, ie.Method, "full random")
	require.Less(t, *ie.Melting.SlipMeltingPointC, *phys.Melting.SlipMeltingPointC-5)
	require.Equal(t, map[string]float64{"fhsbo": 0.3, "soybean": 0.7}, phys.Fractions)

	single := func(profile string) float64 {
		rec := do(t, app, call{method: http.MethodPost, path: "/v1/properties", body: `{"profile":` + profile + `}`})
		return decode[api.PropertiesResponse](t, rec).IodineValue
	}
	want := 0.3*single(fhsbo) + 0.7*single(`{"acids":`+soyAcids+`}`)
	require.InDelta(t, want, phys.Properties.IodineValue, 0.011)
	require.Equal(t, phys.Properties.IodineValue, ie.Properties.IodineValue, "interesterification moves acids, not double bonds")
	require.Equal(t, "POST /v1/blends", phys.Provenance.Operation)
}

// The least-cost blend: the answer meets its constraints, every share is
// within its bounds, and the cost is the shares' cost.
func TestBlendOptimize(t *testing.T) {
	app := newApp(t)
	body := `{"mode":"interesterified","candidates":[
	  {"id":"soybean","reference":"soybean","cost_per_tonne":1050},
	  {"id":"palm","reference":"palm","cost_per_tonne":980,"max_share":0.6},
	  {"id":"fhsbo","profile":` + fhsbo + `,"cost_per_tonne":1200,"max_share":0.3}],
	  "constraints":{"iodine_value":{"min":75},"acids":[{"acid":"C18:3","max":5}],"classes":{"trans":{"max":1},"saturated":{"max":45}},
	  "sfc":[{"temperature_c":10,"min":30},{"temperature_c":20,"min":15}],"slip_melting_point_c":{"max":38}}}`
	rec := do(t, app, call{method: http.MethodPost, path: "/v1/blends/optimize", body: body})
	require.Equal(t, http.StatusOK, rec.Code, rec.Body.String())
	got := decode[api.OptimizeResponse](t, rec)
	require.Len(t, got.Shares, 3)
	var sum, cost float64
	prices := map[string]float64{"soybean": 1050, "palm": 980, "fhsbo": 1200}
	for id, s := range got.Shares {
		sum += s
		cost += s * prices[id]
	}
	require.InDelta(t, 1, sum, 1e-5)
	require.InDelta(t, cost, got.CostPerTonne, 0.02)
	require.LessOrEqual(t, got.Shares["palm"], 0.6+1e-6)
	require.LessOrEqual(t, got.Shares["fhsbo"], 0.3+1e-6)
	for _, c := range append(got.Constraints, got.MeltingConstraints...) {
		require.True(t, c.Met, "%+v", c)
	}
	require.NotNil(t, got.MeltingSearch)
	require.Zero(t, got.MeltingSearch.MaxViolation)
	require.GreaterOrEqual(t, got.Properties.IodineValue, 75-0.01)
	require.Contains(t, got.Provenance.Methods[0], "simplex")
}

// Bad and infeasible requests are 4xx problem documents that point at the
// fault; a conflict names the constraints in it.
func TestBlendBadRequests(t *testing.T) {
	app := newApp(t)
	soy := `{"acids":` + soyAcids + `}`
	for body, want := range map[string]string{
		`{"components":[{"id":"a","fraction":0.5,"profile":` + soy + `},{"id":"b","fraction":0.4,"profile":` + fhsbo + `}]}`:               "/components",
		`{"components":[{"id":"a","fraction":1,"profile":` + soy + `,"reference":"soybean"}]}`:                                             "/components/0",
		`{"components":[{"id":"a","fraction":1,"reference":"soybeen"}]}`:                                                                   "/components/0/reference",
		`{"components":[{"id":"a","fraction":1,"reference":"en14214_fame"}]}`:                                                              "/components/0/reference",
		`{"components":[{"id":"a","profile":` + soy + `}]}`:                                                                                "/components/0/fraction",
		`{"mode":"interesterified","melting":{"distribution":"full_random"},"components":[{"id":"a","fraction":1,"profile":` + soy + `}]}`: "/melting/distribution",
		`{"mode":"stirred","components":[{"id":"a","fraction":1,"profile":` + soy + `}]}`:                                                  "/mode",
		`{"components":[{"id":"a","fraction":1,"profile":{"acids":[{"acid":"C18:7","percent":100}]}}]}`:                                    "/components/0/profile/acids/0/acid",
	} {
		rec := do(t, app, call{method: http.MethodPost, path: "/v1/blends", body: body})
		require.Contains(t, []int{400, 422}, rec.Code, rec.Body.String())
		require.Contains(t, rec.Body.String(), `"pointer":"`+want+`"`, body)
	}
	cands := `[{"id":"soybean","reference":"soybean","cost_per_tonne":1050},{"id":"palm","reference":"palm","cost_per_tonne":980}]`
	for body, want := range map[string][]string{
		`{"candidates":` + cands + `,"constraints":{"iodine_value":{"min":125},"classes":{"saturated":{"min":30}},"acids":[{"acid":"C18:3","max":9}]}}`: {"/constraints/iodine_value", "/constraints/classes/saturated"},
		`{"candidates":` + cands + `,"constraints":{"acids":[{"acid":"oleic","max":9}]}}`:                                                               {"/constraints/acids/0/acid"},
		`{"candidates":[{"id":"soybean","reference":"soybean"}],"constraints":{}}`:                                                                      {"/candidates/0/cost_per_tonne"},
		`{"candidates":` + cands + `,"constraints":{"classes":{"omega7":{"max":1}}}}`:                                                                   {"/constraints/classes/omega7"},
	} {
		rec := do(t, app, call{method: http.MethodPost, path: "/v1/blends/optimize", body: body})
		require.Contains(t, []int{400, 422}, rec.Code, rec.Body.String())
		var p api.Problem
		require.NoError(t, json.Unmarshal(rec.Body.Bytes(), &p))
		var ptrs []string
		for _, e := range p.Errors {
			ptrs = append(ptrs, e.Pointer)
		}
		require.ElementsMatch(t, want, ptrs, rec.Body.String())
		if strings.Contains(body, `"min":125`) {
			require.Contains(t, p.Type, "outside-model-domain")
		}
	}
}
