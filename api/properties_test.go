package api_test

import (
	"bytes"
	"fmt"
	"net/http"
	"net/http/httptest"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"github.com/stretchr/testify/require"

	"lipidsvc/api"
)

const soyLike = `{"profile":{"acids":[
 {"acid":"16:0","percent":10.5},{"acid":"16:1","percent":0.1},{"acid":"18:0","percent":4.0},
 {"acid":"18:1","percent":23.0},{"acid":"18:2","percent":53.7},{"acid":"18:3","percent":7.6},
 {"acid":"20:0","percent":0.4},{"acid":"20:1","percent":0.3},{"acid":"22:0","percent":0.4}]}}`

// TestPropertiesSoyLike checks the certificate values through the whole
// HTTP stack against the chem package documentation [calc]: IV exact 132.98, AOCS Cd 1c-85
// 133.001, SV 192.65, mean molar masses 278.552 / 292.579 / 873.705,
// Cox 7.40, AI 0.124.
func TestPropertiesSoyLike(t *testing.T) {
	app := newApp(t)
	rec := do(t, app, call{method: http.MethodPost, path: "/v1/properties", body: soyLike})
	require.Equal(t, http.StatusOK, rec.Code, rec.Body.String())
	got := decode[api.PropertiesResponse](t, rec)
	require.InDelta(t, 132.98, got.IodineValue, 0.01)
	require.InDelta(t, 133.001, *got.AOCS.IodineValue, 0.01)
	require.Equal(t, "triacylglycerol", *got.AOCS.FactorSet)
	require.InDelta(t, 192.65, got.SaponificationValue, 0.02)
	require.InDelta(t, 278.552, got.MeanMolarMass.AcidGPerMol, 0.005)
	require.InDelta(t, 292.579, got.MeanMolarMass.MethylEsterGPerMol, 0.005)
	require.InDelta(t, 873.705, got.MeanMolarMass.TriacylglycerolGPerMol, 0.005)
	require.InDelta(t, 7.40, got.Indices.CalculatedOxidizability, 0.01)
	require.InDelta(t, 0.124, *got.Indices.AtherogenicIndex, 0.01)
	require.Len(t, got.Acids, 9)

	// The bare labels were read as the common isomers, each said so with a
	// pointer at the label.
	pointers := map[string]bool{}
	for _, w := range got.Warnings {
		if w.Code == "assumed_isomer" {
			pointers[w.Pointer] = true
		}
	}
	for _, i := range []int{1, 3, 4, 5, 7} { // 16:1, 18:1, 18:2, 18:3, 20:1
		require.True(t, pointers[fmt.Sprintf("/profile/acids/%d/acid", i)], "warning for entry %d in %v", i, got.Warnings)
	}
	require.NotEmpty(t, rec.Header().Get("X-Request-ID"))
}

func TestPropertiesDemoRequest(t *testing.T) {
	app := newApp(t)
	rec := do(t, app, call{method: http.MethodPost, path: "/v1/properties", body: readFile(t, "testdata", "demo", "properties-request.json")})
	require.Equal(t, http.StatusOK, rec.Code, rec.Body.String())
	got := decode[api.PropertiesResponse](t, rec)
	// A soybean-type profile: inside Codex CXS 210 soybean IV 124-139.
	require.Greater(t, got.IodineValue, 124.0)
	require.Less(t, got.IodineValue, 139.0)
	require.InDelta(t, 0.3, got.UnidentifiedPercent, 1e-9)
	var codes []string
	for _, w := range got.Warnings {
		codes = append(codes, w.Code)
	}
	require.Contains(t, codes, "unidentified_excluded")
}

func TestPropertiesMaterials(t *testing.T) {
	app := newApp(t)
	body := func(material string) string {
		return `{"material":"` + material + `","profile":{"acids":[{"acid":"oleic","percent":100}]}}`
	}
	// Pure compounds [calc]: triolein 85.99, oleic acid 89.85,
	// methyl oleate 85.60.
	cases := []struct {
		material string
		iv       float64
		aocs     bool
	}{
		{"triacylglycerols", 85.99, true},
		{"free_fatty_acids", 89.85, true},
		{"methyl_esters", 85.60, false},
	}
	for _, c := range cases {
		rec := do(t, app, call{method: http.MethodPost, path: "/v1/properties", body: body(c.material)})
		require.Equal(t, http.StatusOK, rec.Code, rec.Body.String())
		got := decode[api.PropertiesResponse](t, rec)
		require.InDelta(t, c.iv, got.IodineValue, 0.01, c.material)
		require.Equal(t, c.aocs, got.AOCS.Applies, c.material)
		if !c.aocs {
			require.Nil(t, got.AOCS.IodineValue)
			require.Nil(t, got.AOCS.FactorSet)
		}
	}
}

func TestRequestIDHonoured(t *testing.T) {
	app := newApp(t)
	rec := do(t, app, call{method: http.MethodPost, path: "/v1/properties", body: `{}`,
		header: map[string]string{"X-Request-ID": "nb-lims-0042"}})
	require.Equal(t, "nb-lims-0042", rec.Header().Get("X-Request-ID"))
	require.Equal(t, "nb-lims-0042", decode[api.Problem](t, rec).RequestID)
	// An unusable id is replaced.
	rec = do(t, app, call{method: http.MethodGet, path: "/healthz", header: map[string]string{"X-Request-ID": strings.Repeat("x", 200)}})
	require.Len(t, rec.Header().Get("X-Request-ID"), 32)
}

func entries(n int) string {
	parts := make([]string, n)
	for i := range parts {
		parts[i] = fmt.Sprintf(`{"acid":"16:0","percent":%g}`, 100/float64(n))
	}
	return strings.Join(parts, ",")
}

// TestBadRequests: every malformed or impossible request gets the right 4xx
// problem document, pointing at the field at fault, and never a 5xx.
func TestBadRequests(t *testing.T) {
	app := newApp(t)
	ok := `{"acid":"16:0","percent":100}`
	prof := func(acids string) string { return `{"profile":{"acids":[` + acids + `]}}` }
	huge := `{"profile":{"acids":[` + ok + `]},"material":"` + strings.Repeat("x", 1<<20) + `"}`
	cases := []struct {
		name    string
		c       call
		status  int
		pointer string // "-" when no pointer is expected
	}{
		{"malformed JSON", call{body: `{"profile":`}, 400, ""},
		{"not JSON", call{body: `hello`}, 400, ""},
		{"trailing object", call{body: prof(ok) + `{}`}, 400, ""},
		{"trailing garbage", call{body: prof(ok) + ` x`}, 400, ""},
		{"JSON array", call{body: `[1,2]`}, 400, ""},
		{"JSON null", call{body: `null`}, 400, "-"},
		{"empty body", call{body: ` `}, 400, ""},
		{"duplicate key", call{body: prof(`{"acid":"16:0","percent":50,"percent":100}`)}, 400, "/profile/acids/0/percent"},
		{"unknown top-level field", call{body: `{"profile":{"acids":[` + ok + `]},"colour":"red"}`}, 400, "/colour"},
		{"unknown entry field", call{body: prof(`{"acid":"16:0","percent":100,"note":"x"}`)}, 400, "/profile/acids/0/note"},
		{"percent as string", call{body: prof(`{"acid":"16:0","percent":"ten"}`)}, 400, "/profile/acids/0/percent"},
		{"acids as object", call{body: `{"profile":{"acids":{"16:0":100}}}`}, 400, "/profile/acids"},
		{"profile as string", call{body: `{"profile":"16:0 100"}`}, 400, "/profile"},
		{"acid as number", call{body: prof(`{"acid":16,"percent":100}`)}, 400, "/profile/acids/0/acid"},
		{"NaN token", call{body: prof(`{"acid":"16:0","percent":NaN}`)}, 400, ""},
		{"Infinity token", call{body: prof(`{"acid":"16:0","percent":Infinity}`)}, 400, ""},
		{"1e400", call{body: prof(`{"acid":"16:0","percent":1e400}`)}, 400, "/profile/acids/0/percent"},
		{"negative percent", call{body: prof(`{"acid":"16:0","percent":-1},{"acid":"18:0","percent":101}`)}, 400, "/profile/acids/0/percent"},
		{"percent above 100 + tolerance", call{body: prof(`{"acid":"16:0","percent":100.6}`)}, 422, "/profile/acids/0/percent"},
		{"percent above the contract's maximum", call{body: prof(`{"acid":"16:0","percent":111}`)}, 400, "/profile/acids/0/percent"},
		{"empty list", call{body: prof(``)}, 400, "/profile/acids"},
		{"more than 300 entries", call{body: prof(entries(301))}, 400, "/profile/acids"},
		{"missing profile", call{body: `{"material":"triacylglycerols"}`}, 400, "/profile"},
		{"missing percent", call{body: prof(`{"acid":"16:0"}`)}, 400, "/profile/acids/0/percent"},
		{"empty label", call{body: prof(`{"acid":"","percent":100}`)}, 400, "/profile/acids/0/acid"},
		{"label too long", call{body: prof(`{"acid":"` + strings.Repeat("9", 65) + `","percent":100}`)}, 400, "/profile/acids/0/acid"},
		{"unknown basis", call{body: `{"profile":{"basis":"volume_percent","acids":[` + ok + `]}}`}, 400, "/profile/basis"},
		{"unknown material", call{body: `{"material":"soap","profile":{"acids":[` + ok + `]}}`}, 400, "/material"},
		{"tolerance out of range", call{body: `{"profile":{"sum_tolerance_percent":50,"acids":[` + ok + `]}}`}, 400, "/profile/sum_tolerance_percent"},
		{"sum outside tolerance", call{body: prof(`{"acid":"16:0","percent":60},{"acid":"18:1 c9","percent":41}`)}, 422, "/profile/acids"},
		{"unknown label", call{body: prof(`{"acid":"16:0","percent":50},{"acid":"oleik","percent":50}`)}, 422, "/profile/acids/1/acid"},
		{"ambiguous label", call{body: prof(`{"acid":"16:0","percent":50},{"acid":"20:3","percent":50}`)}, 422, "/profile/acids/1/acid"},
		{"only unidentified", call{body: prof(`{"acid":"others","percent":100}`)}, 422, "/profile/acids"},
		{"99.9 % unidentified", call{body: prof(`{"acid":"16:0","percent":0.1},{"acid":"unknown peaks","percent":99.9}`)}, 422, "/profile/acids"},
		{"unidentified above the limit", call{body: prof(`{"acid":"16:0","percent":89},{"acid":"unk","percent":11}`)}, 422, "/profile/acids"},
		{"unidentified limit out of range", call{body: `{"profile":{"max_unidentified_percent":101,"acids":[` + ok + `]}}`}, 400, "/profile/max_unidentified_percent"},
		{"body over the limit", call{body: huge}, 413, "-"},
		{"text/plain", call{body: prof(ok), header: map[string]string{"Content-Type": "text/plain"}}, 415, "-"},
		{"no content type", call{body: prof(ok), header: map[string]string{"Content-Type": ""}}, 415, "-"},
		{"form content type", call{body: prof(ok), header: map[string]string{"Content-Type": "application/x-www-form-urlencoded"}}, 415, "-"},
		{"merge-patch content type", call{body: prof(ok), header: map[string]string{"Content-Type": "application/merge-patch+json"}}, 415, "-"},
		{"Latin-1 charset", call{body: prof(ok), header: map[string]string{"Content-Type": "application/json; charset=iso-8859-1"}}, 415, "-"},
		{"UTF-16 byte-order mark", call{body: "\xff\xfe" + prof(ok)}, 415, "-"},
		{"invalid UTF-8", call{body: prof(`{"acid":"16:0","percent":50},{"acid":"\xe9","percent":50}`)}, 400, ""},
		{"gzip content coding", call{body: prof(ok), header: map[string]string{"Content-Encoding": "gzip"}}, 415, "-"},
		{"wrong method", call{method: http.MethodGet}, 405, "-"},
		{"wrong method PUT", call{method: http.MethodPut, body: prof(ok)}, 405, "-"},
		{"unknown route", call{method: http.MethodPost, path: "/v1/propertys", body: prof(ok)}, 404, "-"},
		{"unknown route GET", call{method: http.MethodGet, path: "/v2/fatty-acids"}, 404, "-"},
	}
	require.GreaterOrEqual(t, len(cases), 25)
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			c := tc.c
			if c.method == "" {
				c.method = http.MethodPost
			}
			if c.path == "" {
				c.path = "/v1/properties"
			}
			rec := do(t, app, c)
			require.Equal(t, tc.status, rec.Code, rec.Body.String())
			require.Equal(t, "application/problem+json", rec.Header().Get("Content-Type"))
			p := decode[api.Problem](t, rec)
			require.Equal(t, tc.status, p.Status)
			require.True(t, strings.HasPrefix(p.Type, api.ProblemTypeBase), p.Type)
			require.NotEmpty(t, p.Title)
			require.NotEmpty(t, p.Detail)
			require.Equal(t, c.path, p.Instance)
			require.NotEmpty(t, p.RequestID)
			switch tc.pointer {
			case "-":
			case "":
				require.NotEmpty(t, p.Errors, "errors list")
			default:
				var ptrs []string
				for _, e := range p.Errors {
					ptrs = append(ptrs, e.Pointer)
				}
				require.Contains(t, ptrs, tc.pointer)
			}
		})
	}
}

func TestUnknownLabelSuggests(t *testing.T) {
	app := newApp(t)
	rec := do(t, app, call{method: http.MethodPost, path: "/v1/properties",
		body: `{"profile":{"acids":[{"acid":"18:1 c10","percent":100}]}}`})
	require.Equal(t, http.StatusUnprocessableEntity, rec.Code)
	p := decode[api.Problem](t, rec)
	require.Len(t, p.Errors, 1)
	require.Contains(t, p.Errors[0].Reason, `"18:1 c10"`)
	require.Contains(t, p.Errors[0].Suggestions, "18:1 c9")
}

func BenchmarkPropertiesHTTP(b *testing.B) {
	app := newApp(b)
	b.ReportAllocs()
	for b.Loop() {
		req := newJSONRequest(soyLike)
		rec := newRecorder()
		app.Echo.ServeHTTP(rec, req)
		if rec.Code != http.StatusOK {
			b.Fatal(rec.Code, rec.Body.String())
		}
	}
}

// TestBadLabelsAre422WithSuggestions: unknown and ambiguous labels answer
// 422, name the label and offer catalogue ids.
func TestBadLabelsAre422WithSuggestions(t *testing.T) {
	app := newApp(t)
	labels := []string{"18:5", "18:1 c10", "18:1 n-5", "20:3", "22:5", "18:1 Δ9", "oleik", "linolenik",
		"palmitic-ish", "26:0", "18:2 c9", "18:1 cis trans"}
	require.GreaterOrEqual(t, len(labels), 10)
	for _, l := range labels {
		body := fmt.Sprintf(`{"profile":{"acids":[{"acid":"16:0","percent":50},{"acid":%q,"percent":50}]}}`, l)
		rec := do(t, app, call{method: http.MethodPost, path: "/v1/properties", body: body})
		require.Equal(t, http.StatusUnprocessableEntity, rec.Code, l)
		p := decode[api.Problem](t, rec)
		require.Len(t, p.Errors, 1, l)
		require.Equal(t, "/profile/acids/1/acid", p.Errors[0].Pointer, l)
		require.Contains(t, p.Errors[0].Reason, l)
		require.NotEmpty(t, p.Errors[0].Suggestions, l)
	}
}

// TestNegativeZeroShare: -0 is valid JSON for a zero share; it must not
// come back as "-0" in the per-acid figures (found in review).
func TestNegativeZeroShare(t *testing.T) {
	rec := do(t, newApp(t), call{method: http.MethodPost, path: "/v1/properties",
		body: `{"profile":{"acids":[{"acid":"16:0","percent":-0},{"acid":"18:1 c9","percent":100}]}}`})
	require.Equal(t, http.StatusOK, rec.Code, rec.Body.String())
	require.NotContains(t, rec.Body.String(), "-0,")
	require.NotContains(t, rec.Body.String(), ":-0}")
}

// TestPureStandardSlightlyOver100: a single acid read at 100.2 % (a pure
// reference standard) is within the sum tolerance and is scaled to 100 with
// a warning, as a profile of several acids summing to 100.2 would be.
func TestPureStandardSlightlyOver100(t *testing.T) {
	rec := do(t, newApp(t), call{method: http.MethodPost, path: "/v1/properties",
		body: `{"profile":{"acids":[{"acid":"18:1 c9","percent":100.2}]}}`})
	require.Equal(t, http.StatusOK, rec.Code, rec.Body.String())
	require.Contains(t, rec.Body.String(), `"profile_normalised"`)
}

// Exports from spreadsheets and LIMS often start with a UTF-8 byte-order
// mark, and some clients name the charset: both are UTF-8 and accepted.
func TestUTF8BodiesAccepted(t *testing.T) {
	app := newApp(t)
	for name, c := range map[string]call{
		"byte-order mark": {body: "\xef\xbb\xbf" + soyLike},
		"charset utf-8":   {body: soyLike, header: map[string]string{"Content-Type": "application/json; charset=UTF-8"}},
	} {
		c.method, c.path = http.MethodPost, "/v1/properties"
		rec := do(t, app, c)
		require.Equal(t, http.StatusOK, rec.Code, "%s: %s", name, rec.Body.String())
	}
}

// Between 2 % and the limit the unidentified share is answered with a
// warning; the limit is the client's to raise.
func TestUnidentifiedShare(t *testing.T) {
	app := newApp(t)
	body := func(extra string, unk float64) string {
		return fmt.Sprintf(`{"profile":{%s"acids":[{"acid":"16:0","percent":%g},{"acid":"18:1 c9","percent":50},{"acid":"Sum unknowns","percent":%g}]}}`,
			extra, 50-unk, unk)
	}
	codes := func(rec *httptest.ResponseRecorder) []string {
		var out []string
		for _, w := range decode[api.PropertiesResponse](t, rec).Warnings {
			out = append(out, w.Code)
		}
		return out
	}
	rec := do(t, app, call{method: http.MethodPost, path: "/v1/properties", body: body("", 1)})
	require.Equal(t, http.StatusOK, rec.Code, rec.Body.String())
	require.NotContains(t, codes(rec), "unidentified_share_high")
	rec = do(t, app, call{method: http.MethodPost, path: "/v1/properties", body: body("", 5)})
	require.Equal(t, http.StatusOK, rec.Code, rec.Body.String())
	require.Contains(t, codes(rec), "unidentified_share_high")
	rec = do(t, app, call{method: http.MethodPost, path: "/v1/properties", body: body("", 15)})
	require.Equal(t, http.StatusUnprocessableEntity, rec.Code, rec.Body.String())
	rec = do(t, app, call{method: http.MethodPost, path: "/v1/properties", body: body(`"max_unidentified_percent":20,`, 15)})
	require.Equal(t, http.StatusOK, rec.Code, rec.Body.String())
	require.Contains(t, codes(rec), "unidentified_share_high")
}

// A measured iodine value is checked against the calculated one. The
// refined palm oil sample of a published table (composition and Wijs
// IV 53.3 from the same table; see testdata/melting/validation_cases.json)
// agrees within the default tolerance; a value typed for another oil does
// not, and the warning points at it.
func TestMeasuredValuesChecked(t *testing.T) {
	app := newApp(t)
	palm := `{"acids":[{"acid":"12:0","percent":0.2},{"acid":"14:0","percent":1.1},{"acid":"16:0","percent":44},
		{"acid":"16:1 c9","percent":0.1},{"acid":"18:0","percent":4.5},{"acid":"18:1 c9","percent":39.2},
		{"acid":"18:2 c9,c12","percent":10.1},{"acid":"18:3 c9,c12,c15","percent":0.4},{"acid":"20:0","percent":0.4}]}`
	post := func(measured string) api.PropertiesResponse {
		rec := do(t, app, call{method: http.MethodPost, path: "/v1/properties", body: `{"profile":` + palm + `,"measured":` + measured + `}`})
		require.Equal(t, http.StatusOK, rec.Code, rec.Body.String())
		return decode[api.PropertiesResponse](t, rec)
	}
	got := post(`{"iodine_value":53.3}`)
	require.NotNil(t, got.MeasuredComparison)
	iv := got.MeasuredComparison.IodineValue
	require.NotNil(t, iv)
	require.True(t, iv.Agrees)
	require.InDelta(t, 53.3-got.IodineValue, iv.Difference, 0.011)
	require.Nil(t, got.MeasuredComparison.SaponificationValue)
	for _, w := range got.Warnings {
		require.NotEqual(t, "measured_disagrees", w.Code)
	}

	got = post(`{"iodine_value":130,"saponification_value":192,"saponification_value_tolerance":10}`)
	require.False(t, got.MeasuredComparison.IodineValue.Agrees)
	require.True(t, got.MeasuredComparison.SaponificationValue.Agrees)
	var ptrs []string
	for _, w := range got.Warnings {
		if w.Code == "measured_disagrees" {
			ptrs = append(ptrs, w.Pointer)
		}
	}
	require.Equal(t, []string{"/measured/iodine_value"}, ptrs)

	rec := do(t, app, call{method: http.MethodPost, path: "/v1/properties", body: `{"profile":` + palm + `,"measured":{}}`})
	require.Equal(t, http.StatusBadRequest, rec.Code, rec.Body.String())
}

// Nutrition-label figures through the API: the FAO (2003, Annex 5) goat
// milk example (4.5 g fat per 100 g × 0.945 = 4.25 g fatty acids per 100 g
// of milk), a vegetable oil whose factor comes from its composition, and
// the refusals.
func TestNutritionFigures(t *testing.T) {
	app := newApp(t)
	milk := `{"acids":[{"acid":"4:0","percent":2.5},{"acid":"6:0","percent":2.5},{"acid":"8:0","percent":2.7},
		{"acid":"10:0","percent":9.5},{"acid":"12:0","percent":4.5},{"acid":"14:0","percent":10.5},{"acid":"16:0","percent":27},
		{"acid":"18:0","percent":9.5},{"acid":"18:1 c9","percent":24},{"acid":"18:2 c9,c12","percent":3.2},
		{"acid":"C18:1 t11","percent":2.0},{"acid":"18:3 c9,c12,c15","percent":1.1},{"acid":"16:1 c9","percent":1.0}]}`
	rec := do(t, app, call{method: http.MethodPost, path: "/v1/properties",
		body: `{"profile":` + milk + `,"nutrition":{"fat_g_per_100g_food":4.5,"food_class":"milk_products"}}`})
	require.Equal(t, http.StatusOK, rec.Code, rec.Body.String())
	got := decode[api.PropertiesResponse](t, rec)
	n := got.Nutrition
	require.NotNil(t, n)
	require.Equal(t, 0.945, n.ConversionFactor)
	require.Equal(t, "food_class", n.ConversionFactorSource)
	require.Equal(t, "milk_products", n.FoodClass.ID)
	require.Equal(t, 94.5, n.Per100gFat.TotalFattyAcidsG)
	require.NotNil(t, n.Per100gFood)
	require.Equal(t, 4.25, n.Per100gFood.TotalFattyAcidsG)
	require.Greater(t, n.Per100gFood.Trans181G, 0.0)
	require.Zero(t, n.Per100gFood.Trans182G)
	for _, w := range got.Warnings {
		require.NotEqual(t, "conversion_factor_from_composition", w.Code)
	}

	rec = do(t, app, call{method: http.MethodPost, path: "/v1/properties", body: `{"profile":{"acids":[{"acid":"16:0","percent":11},
		{"acid":"18:0","percent":4},{"acid":"18:1 c9","percent":23},{"acid":"18:2 c9,c12","percent":54},{"acid":"18:3 c9,c12,c15","percent":8}]},"nutrition":{}}`})
	require.Equal(t, http.StatusOK, rec.Code, rec.Body.String())
	got = decode[api.PropertiesResponse](t, rec)
	require.InDelta(t, 0.956, got.Nutrition.ConversionFactor, 0.003, "FAO Table A5.1, fats and oils")
	require.Nil(t, got.Nutrition.Per100gFood)
	var codes []string
	for _, w := range got.Warnings {
		codes = append(codes, w.Code+" "+w.Pointer)
	}
	require.Contains(t, codes, "conversion_factor_from_composition /nutrition/food_class")

	rec = do(t, app, call{method: http.MethodPost, path: "/v1/properties", body: `{"profile":{"acids":[{"acid":"16:0","percent":100}]}}`})
	require.Nil(t, decode[api.PropertiesResponse](t, rec).Nutrition, "no figures unless asked")

	for body, ptr := range map[string]string{
		`{"food_class":"cheese"}`:                       "/nutrition/food_class",
		`{"conversion_factor":0}`:                       "/nutrition/conversion_factor",
		`{"fat_g_per_100g_food":101}`:                   "/nutrition/fat_g_per_100g_food",
		`{"food_class":"eggs","conversion_factor":0.8}`: "/nutrition/conversion_factor",
	} {
		rec := do(t, app, call{method: http.MethodPost, path: "/v1/properties", body: `{"profile":{"acids":[{"acid":"16:0","percent":100}]},"nutrition":` + body + `}`})
		require.Contains(t, []int{http.StatusBadRequest, http.StatusUnprocessableEntity}, rec.Code, body)
		require.Contains(t, rec.Body.String(), ptr, body)
	}
}

// BenchmarkEndpointHTTP runs the load harness's request bodies through the
// whole middleware chain (httptest), for profiling an endpoint without the
// network: go test -run XXX -bench EndpointHTTP -cpuprofile cpu.out ./api/
func BenchmarkEndpointHTTP(b *testing.B) {
	app := newApp(b)
	for _, c := range []struct{ name, path, file string }{
		{"forecast", "/v1/hardening/forecast", "forecast.json"},
		{"melting", "/v1/melting", "melting.json"},
		{"hydrogen_demand", "/v1/hydrogen-demand", "hydrogen-demand.json"},
	} {
		body, err := os.ReadFile(filepath.Join("..", "testdata", "load", c.file))
		require.NoError(b, err)
		b.Run(c.name, func(b *testing.B) {
			b.ReportAllocs()
			for b.Loop() {
				req := httptest.NewRequest(http.MethodPost, c.path, bytes.NewReader(body))
				req.Header.Set("Content-Type", "application/json")
				rec := httptest.NewRecorder()
				app.Echo.ServeHTTP(rec, req)
				if rec.Code != http.StatusOK {
					b.Fatal(rec.Code, rec.Body.String())
				}
			}
		})
	}
}
