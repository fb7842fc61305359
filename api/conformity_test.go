package api_test

import (
	"encoding/json"
	"fmt"
	"net/http"
	"sort"
	"strings"
	"testing"

	"github.com/stretchr/testify/require"

	"lipidsvc/api"
)

// soyAcids is a soybean oil profile inside every Codex CXS 210 soybean range
// (Table 1: 16:0 8.0-13.5, 18:0 2.0-5.4, 18:1 17-30, 18:2 48-59,
// 18:3 4.5-11.0, 20:0 0.1-0.6, 20:1 ND-0.5, 22:0 ND-0.7); its calculated
// iodine value 132.98 lies inside Table 2's 124-139.
const soyAcids = `[{"acid":"16:0","percent":10.5},{"acid":"16:1 c9","percent":0.1},{"acid":"18:0","percent":4.0},
 {"acid":"18:1 c9","percent":23.0},{"acid":"18:2 c9,c12","percent":53.7},{"acid":"18:3 c9,c12,c15","percent":7.6},
 {"acid":"20:0","percent":0.4},{"acid":"20:1 c11","percent":0.3},{"acid":"22:0","percent":0.4}]`

// palmAcids is a palm oil profile inside the CXS 210 palm ranges
// (16:0 39.3-47.5, 18:0 3.5-6.0, 18:1 36-44, 18:2 9-12, 14:0 0.5-2.0).
const palmAcids = `[{"acid":"14:0","percent":1.0},{"acid":"16:0","percent":44.0},{"acid":"18:0","percent":4.5},
 {"acid":"18:1 c9","percent":39.5},{"acid":"18:2 c9,c12","percent":10.2},{"acid":"18:3 c9,c12,c15","percent":0.3},
 {"acid":"20:0","percent":0.4},{"acid":"16:1 c9","percent":0.1}]`

func conform(t *testing.T, body string) api.ConformityResponse {
	t.Helper()
	rec := do(t, newApp(t), call{method: http.MethodPost, path: "/v1/conformity", body: body})
	require.Equal(t, http.StatusOK, rec.Code, rec.Body.String())
	return decode[api.ConformityResponse](t, rec)
}

func TestReferenceOilsListAndGet(t *testing.T) {
	app := newApp(t)
	rec := do(t, app, call{method: http.MethodGet, path: "/v1/reference-oils"})
	require.Equal(t, http.StatusOK, rec.Code)
	list := decode[api.ReferenceOilList](t, rec)
	require.Equal(t, list.Count, len(list.ReferenceOils))
	ids := map[string]bool{}
	for _, o := range list.ReferenceOils {
		require.NotEmpty(t, o.Name, o.ID)
		require.NotEmpty(t, o.Standard, o.ID)
		ids[o.ID] = true
	}
	// The oils the issue names, and the biodiesel limits.
	for _, id := range []string{"soybean", "rapeseed_low_erucic", "sunflower", "sunflower_mid_oleic", "sunflower_high_oleic",
		"palm", "palm_olein", "palm_stearin", "palm_superolein", "palm_kernel", "coconut", "cottonseed", "maize",
		"groundnut", "safflower", "sesame", "olive_extra_virgin", "en14214_fame"} {
		require.True(t, ids[id], id)
	}

	rec = do(t, app, call{method: http.MethodGet, path: "/v1/reference-oils/palm_kernel"})
	require.Equal(t, http.StatusOK, rec.Code)
	pk := decode[api.ReferenceOil](t, rec)
	require.Equal(t, "palm_kernel", pk.ID)
	require.Equal(t, "identity", pk.Kind)
	var lauric *api.SpecRowBody
	for i := range pk.Acids {
		if pk.Acids[i].Acid == "C12:0" {
			lauric = &pk.Acids[i]
		}
	}
	require.NotNil(t, lauric)
	require.NotNil(t, lauric.Min)
	require.Greater(t, *lauric.Min, 40.0) // palm kernel oil is about half lauric acid
	require.NotNil(t, pk.IodineValue)

	rec = do(t, app, call{method: http.MethodGet, path: "/v1/reference-oils/en14214_fame"})
	require.Equal(t, http.StatusOK, rec.Code)
	fame := decode[api.ReferenceOil](t, rec)
	require.Equal(t, "limits", fame.Kind)
	require.Equal(t, "methyl_esters", fame.Material)
	require.Equal(t, 120.0, *fame.IodineValue.Max)

	rec = do(t, app, call{method: http.MethodGet, path: "/v1/reference-oils/whale"})
	require.Equal(t, http.StatusNotFound, rec.Code)
	require.Contains(t, decode[api.Problem](t, rec).Detail, "/v1/reference-oils")
}

func TestConformitySoybeanByID(t *testing.T) {
	got := conform(t, `{"specification":"soybean","profile":{"acids":`+soyAcids+`}}`)
	require.Equal(t, "conforms", got.Verdict)
	require.Equal(t, "soybean", got.Specification.ID)
	require.False(t, got.Specification.Inline)
	require.Zero(t, got.Distance)
	for _, r := range got.Acids {
		require.Equal(t, "within", r.Verdict, r.Acid)
		require.GreaterOrEqual(t, r.Margin, 0.0, r.Acid)
	}
	require.NotNil(t, got.IodineValue)
	require.InDelta(t, 132.98, got.IodineValue.Value, 0.01)
	require.False(t, got.IodineValue.Measured)
	require.Equal(t, "soybean", got.ClosestReferences[0].ID)
	require.True(t, got.ClosestReferences[0].Conforms)
	require.Greater(t, got.ClosestReferences[1].Distance, 0.0)
	codes := map[string]bool{}
	for _, w := range got.Warnings {
		codes[w.Code] = true
	}
	require.True(t, codes["iodine_value_computed"])

	// A measured iodine value outside the range fails the lot even though
	// the composition fits: the laboratory's figure is the one that counts.
	got = conform(t, `{"specification":"soybean","measured":{"iodine_value":141.2},"profile":{"acids":`+soyAcids+`}}`)
	require.Equal(t, "does_not_conform", got.Verdict)
	require.True(t, got.IodineValue.Measured)
	require.Equal(t, "above", got.IodineValue.Verdict)
	require.InDelta(t, -2.2, got.IodineValue.Margin, 1e-9)
	require.InDelta(t, 132.98, *got.IodineValue.Calculated, 0.01)
	// 141.2 against 132.98 calculated is beyond the default 3 units.
	var disagrees bool
	for _, w := range got.Warnings {
		disagrees = disagrees || (w.Code == "measured_disagrees" && w.Pointer == "/measured/iodine_value")
	}
	require.True(t, disagrees, "%+v", got.Warnings)
}

// Moving palmitic acid from 10.5 to 14.5 % (linoleic down by 4) puts the
// soybean lot outside exactly one row.
func TestConformityOneAcidOutside(t *testing.T) {
	moved := strings.Replace(strings.Replace(soyAcids, `"16:0","percent":10.5`, `"16:0","percent":14.5`, 1),
		`"percent":53.7`, `"percent":49.7`, 1)
	got := conform(t, `{"specification":"soybean","profile":{"acids":`+moved+`}}`)
	require.Equal(t, "does_not_conform", got.Verdict)
	var outside []string
	for _, r := range got.Acids {
		if r.Verdict != "within" {
			outside = append(outside, r.Acid+" "+r.Verdict)
			require.InDelta(t, -1.0, r.Margin, 1e-9) // 14.5 against the maximum 13.5
		}
	}
	require.Equal(t, []string{"C16:0 above"}, outside)
	require.InDelta(t, 1.0, got.Distance, 1e-9)
}

// A 70/30 mix of soybean and palm oil fits neither box, and no reference
// oil is reported as a conforming match.
func TestConformityBlendMatchesNoPureOil(t *testing.T) {
	type entry struct {
		Acid    string  `json:"acid"`
		Percent float64 `json:"percent"`
	}
	mix := map[string]float64{}
	for _, part := range []struct {
		acids string
		share float64
	}{{soyAcids, 0.7}, {palmAcids, 0.3}} {
		var es []entry
		require.NoError(t, json.Unmarshal([]byte(part.acids), &es))
		for _, e := range es {
			mix[e.Acid] += part.share * e.Percent
		}
	}
	var entries []string
	for acid, pct := range mix {
		entries = append(entries, fmt.Sprintf(`{"acid":%q,"percent":%.4f}`, acid, pct))
	}
	sort.Strings(entries)
	profile := `{"acids":[` + strings.Join(entries, ",") + `]}`
	for _, id := range []string{"soybean", "palm"} {
		got := conform(t, `{"specification":"`+id+`","closest_count":10,"profile":`+profile+`}`)
		require.Equal(t, "does_not_conform", got.Verdict, id)
		require.Greater(t, got.Distance, 1.0, id)
		for _, c := range got.ClosestReferences {
			require.False(t, c.Conforms, "the blend is reported as conforming to %s", c.ID)
		}
	}
}

func TestConformityInlineAndLimits(t *testing.T) {
	// A plant's own intake specification, given inline.
	inline := `{"id":"nb-soy-intake","name":"Northbay crude soybean oil intake","acids":[
		{"acid":"C18:3","max":8.0},{"acid":"C16:0+C18:0","max":16},{"acid":"trans","max":0.5}],
		"iodine_value":{"min":128,"max":138}}`
	got := conform(t, `{"specification":`+inline+`,"profile":{"acids":`+soyAcids+`}}`)
	require.Equal(t, "conforms", got.Verdict, "%+v", got.Acids)
	require.True(t, got.Specification.Inline)
	require.Equal(t, "nb-soy-intake", got.Specification.ID)
	require.Len(t, got.Acids, 3)
	require.InDelta(t, 14.5, got.Acids[1].Percent, 1e-9)

	// EN 14214 on the methyl-ester basis: soybean methyl esters pass the
	// linolenic limit (12 %) and fail the iodine value limit (120). The
	// methyl esters' iodine value is the oil's scaled by the mass ratio
	// M(TAG)/(3 M(FAME)) = 873.705/(3 × 292.579) [first principles]:
	// 132.98 × 0.99540 = 132.37.
	got = conform(t, `{"specification":"en14214_fame","profile":{"acids":`+soyAcids+`}}`)
	require.Equal(t, "does_not_conform", got.Verdict)
	require.Equal(t, "above", got.IodineValue.Verdict)
	require.InDelta(t, 132.37, got.IodineValue.Value, 0.01)
	for _, r := range got.Acids {
		require.Equal(t, "within", r.Verdict, r.Acid)
	}
}

func TestConformityBadRequests(t *testing.T) {
	app := newApp(t)
	prof := `"profile":{"acids":` + soyAcids + `}`
	cases := []struct {
		name, body string
		status     int
		pointer    string
		suggest    string
	}{
		{"unknown id", `{"specification":"soyabean",` + prof + `}`, 422, "/specification", "soybean"},
		{"missing specification", `{` + prof + `}`, 400, "/specification", ""},
		{"specification as number", `{"specification":7,` + prof + `}`, 400, "/specification", ""},
		{"inline without rows", `{"specification":{"id":"x","name":"x"},` + prof + `}`, 422, "/specification/acids", ""},
		{"inline bad selector", `{"specification":{"id":"x","name":"x","acids":[{"acid":"C18:9","max":1}]},` + prof + `}`,
			422, "/specification/acids/0/acid", ""},
		{"inline min above max", `{"specification":{"id":"x","name":"x","acids":[{"acid":"C18:2","min":60,"max":50}]},` + prof + `}`,
			422, "/specification/acids/0/max", ""},
		{"inline ND with bounds", `{"specification":{"id":"x","name":"x","acids":[{"acid":"C18:2","nd":true,"max":1}]},` + prof + `}`,
			422, "/specification/acids/0/nd", ""},
		{"inline bad id", `{"specification":{"id":"Soy Intake","name":"x","acids":[{"acid":"C18:2","max":60}]},` + prof + `}`,
			422, "/specification/id", ""},
		{"unknown inline field", `{"specification":{"id":"x","name":"x","colour":"red","acids":[{"acid":"C18:2","max":60}]},` + prof + `}`,
			400, "/specification/colour", ""},
		{"measured IV negative", `{"specification":"soybean","measured":{"iodine_value":-3},` + prof + `}`, 400, "/measured/iodine_value", ""},
		{"bad profile", `{"specification":"soybean","profile":{"acids":[{"acid":"oleik","percent":100}]}}`, 422, "/profile/acids/0/acid", ""},
		{"closest_count zero", `{"specification":"soybean","closest_count":0,` + prof + `}`, 400, "/closest_count", ""},
	}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			rec := do(t, app, call{method: http.MethodPost, path: "/v1/conformity", body: tc.body})
			require.Equal(t, tc.status, rec.Code, rec.Body.String())
			p := decode[api.Problem](t, rec)
			var pointers []string
			var suggestions []string
			for _, e := range p.Errors {
				pointers = append(pointers, e.Pointer)
				suggestions = append(suggestions, e.Suggestions...)
			}
			require.Contains(t, pointers, tc.pointer, rec.Body.String())
			if tc.suggest != "" {
				require.Contains(t, suggestions, tc.suggest, rec.Body.String())
			}
		})
	}
}

// A measured slip melting point is checked against the palm oil range
// (CXS 210 Appendix: 33-39 °C, recalled and so warned about); without one
// there is no slip-point verdict, since the composition alone does not
// fix it.
func TestConformitySlipMeltingPoint(t *testing.T) {
	got := conform(t, `{"specification":"palm","profile":{"acids":`+palmAcids+`}}`)
	require.Nil(t, got.SlipMeltingPointC)
	got = conform(t, `{"specification":"palm","measured":{"slip_melting_point_c":36.4},"profile":{"acids":`+palmAcids+`}}`)
	require.NotNil(t, got.SlipMeltingPointC)
	require.Equal(t, "within", got.SlipMeltingPointC.Verdict)
	require.Equal(t, "conforms", got.Verdict)
	recalled := false
	for _, w := range got.Warnings {
		recalled = recalled || w.Code == "ranges_recalled"
	}
	require.True(t, recalled)
	got = conform(t, `{"specification":"palm","measured":{"slip_melting_point_c":41},"profile":{"acids":`+palmAcids+`}}`)
	require.Equal(t, "above", got.SlipMeltingPointC.Verdict)
	require.InDelta(t, -2.0, got.SlipMeltingPointC.Margin, 1e-9)
	require.Equal(t, "does_not_conform", got.Verdict)
}
