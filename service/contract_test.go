package service

import (
	"bytes"
	"context"
	"encoding/json"
	"net/http"
	"os"
	"path/filepath"
	"sort"
	"strings"
	"testing"

	"github.com/getkin/kin-openapi/openapi3"
	"github.com/getkin/kin-openapi/openapi3filter"
	"github.com/getkin/kin-openapi/routers"
	"github.com/stretchr/testify/require"

	"lipidsvc/api"
)

func loadContract(t testing.TB) *openapi3.T {
	t.Helper()
	raw, err := os.ReadFile(filepath.Join("..", "openapi.yaml"))
	require.NoError(t, err)
	doc, err := LoadSpec(context.Background(), raw)
	require.NoError(t, err)
	return doc
}

// seedBodies are valid requests, one or more per operation with a body.
func seedBodies(t testing.TB) map[string][]string {
	t.Helper()
	read := func(parts ...string) string {
		b, err := os.ReadFile(filepath.Join(append([]string{"..", "testdata"}, parts...)...))
		require.NoError(t, err)
		return string(b)
	}
	soy := `{"acids":[{"acid":"16:0","percent":10.5},{"acid":"18:0","percent":4},{"acid":"18:1 c9","percent":23.4},{"acid":"18:2 c9,c12","percent":54.5},{"acid":"18:3 n-3","percent":7.6}]}`
	return map[string][]string{
		"POST /v1/properties": {read("demo", "properties-request.json"),
			`{"profile":{"basis":"mole_percent","sum_tolerance_percent":1,"acids":[{"acid":"oleic","percent":100}]},"material":"methyl_esters"}`},
		"POST /v1/hydrogen-demand": {read("load", "hydrogen-demand.json"),
			`{"feed":{"iodine_value":133},"target":{"iodine_value_drop":40},"batch_mass_kg":1000,"gas":{"reference":"custom","temperature_c":20,"pressure_kpa":300},"heat":{"reaction_enthalpy_kj_per_mol":-110,"heat_capacity_intercept_kj_per_kg_k":2.4,"heat_capacity_slope_kj_per_kg_k2":0}}`},
		"POST /v1/hardening/forecast": {read("load", "forecast.json"),
			`{"profile":` + soy + `,"sn2_profile":` + soy + `,"target":{"slip_melting_point_c":36},"catalyst":{"linolenic_selectivity":2,"linoleic_selectivity":7,"trans_share":0.4,"isomerisation_rate":0.3,"trans_cis_equilibrium":2,"trans_saturation_rate":0.86},"melting":{"polymorph":"beta","calibration":{"temperature_shift_k":1,"slip_threshold_percent":4}}}`},
		"POST /v1/hardening/fit": {`{"feed":` + soy + `,"observations":[{"profile":` + soy + `,"iodine_value":100}],"initial":{"preset":"nickel_selective"},"free_parameters":["linoleic_selectivity","trans_share"],"max_iterations":50}`},
		"POST /v1/melting": {read("load", "melting.json"),
			`{"triacylglycerols":[{"sn1":"16:0","sn2":"18:1","sn3":"16:0","mole_percent":100}],"temperatures_c":[10,20],"main_species_count":3,"measured":{"sfc_points":[{"temperature_c":20,"solid_fat_percent":30}],"slip_melting_point_c":35}}`,
			`{"profile":` + soy + `,"sn2_enrichment_factors":[{"acid":"18:1 c9","factor":1}],"solid_model":"ideal_solid_solution","slip_threshold_percent":4}`},
		"POST /v1/melting/calibrate": {`{"profile":` + soy + `,"distribution":"full_random","measured":{"slip_melting_point_c":20}}`,
			`{"polymorph":"beta","fats":[{"profile":` + soy + `,"sn2_estimate":"palm_rule","measured":{"sfc_points":[{"temperature_c":10,"solid_fat_percent":5}]}},{"profile":` + soy + `,"measured":{"slip_melting_point_c":20}}]}`},
	}
}

// kinVerdict validates body with kin-openapi, the reference.
func kinVerdict(t testing.TB, route *routers.Route, body []byte) error {
	t.Helper()
	req, err := http.NewRequest(route.Method, "http://x"+route.Path, bytes.NewReader(body))
	require.NoError(t, err)
	req.Header.Set("Content-Type", "application/json")
	return openapi3filter.ValidateRequest(context.Background(), &openapi3filter.RequestValidationInput{
		Request: req, Route: route,
		Options: &openapi3filter.Options{MultiError: true, SkipSettingDefaults: true, AuthenticationFunc: openapi3filter.NoopAuthenticationFunc},
	})
}

// ourVerdict is the compiled validator's: a syntax error or violations.
func ourVerdict(n *schemaNode, body []byte) ([]api.FieldError, bool) {
	v, _, err := validateBody(n, body)
	return v, err == nil && len(v) == 0
}

// mutations returns variants of a valid body: every member removed, set
// to values of every kind and to out-of-range numbers, and an unknown
// member added to every object.
func mutations(t testing.TB, body string) [][]byte {
	t.Helper()
	var root any
	require.NoError(t, json.Unmarshal([]byte(body), &root))
	replacements := []any{nil, "x", "", -1.0, 0.0, 0.5, 3.0, 1e9, -1e9, true, []any{}, map[string]any{}, []any{"x"}, strings.Repeat("y", 70)}
	var out [][]byte
	emit := func() {
		b, err := json.Marshal(root)
		require.NoError(t, err)
		out = append(out, b)
	}
	var walk func(v any)
	walk = func(v any) {
		switch x := v.(type) {
		case map[string]any:
			keys := make([]string, 0, len(x))
			for k := range x {
				keys = append(keys, k)
			}
			sort.Strings(keys)
			for _, k := range keys {
				orig := x[k]
				delete(x, k)
				emit()
				for _, r := range replacements {
					x[k] = r
					emit()
				}
				x[k] = orig
				walk(orig)
			}
			x["unexpected_member"] = 1.0
			emit()
			delete(x, "unexpected_member")
		case []any:
			for i, orig := range x {
				for _, r := range replacements {
					x[i] = r
					emit()
				}
				x[i] = orig
				walk(orig)
			}
		}
	}
	walk(root)
	return out
}

// TestCompiledValidatorAgreesWithKinOpenAPI: on every valid seed and on
// thousands of structured mutations of them, the compiled validator
// accepts exactly what kin-openapi accepts, and where both refuse, the
// pointers it names are among the places kin-openapi points to (or within
// them).
func TestCompiledValidatorAgreesWithKinOpenAPI(t *testing.T) {
	doc := loadContract(t)
	schemas, err := compileBodies(doc)
	require.NoError(t, err)
	routes := operationRoutes(doc)
	n := 0
	for op, bodies := range seedBodies(t) {
		schema, route := schemas[op], routes[op]
		require.NotNil(t, schema, op)
		require.NotNil(t, route, op)
		for _, seed := range bodies {
			_, ok := ourVerdict(schema, []byte(seed))
			require.True(t, ok, "seed of %s must be valid", op)
			require.NoError(t, kinVerdict(t, route, []byte(seed)), op)
			for _, body := range mutations(t, seed) {
				n++
				kinErr := kinVerdict(t, route, body)
				violations, ok := ourVerdict(schema, body)
				require.Equal(t, kinErr == nil, ok, "%s %s\nkin: %v\nours: %v", op, body, kinErr, violations)
			}
		}
	}
	t.Logf("%d mutated bodies agreed", n)
	require.Greater(t, n, 1000)
}

// FuzzCompiledValidator compares the verdicts on arbitrary bytes (bodies
// that name a member twice excluded: kin-openapi's decoder keeps the last,
// where the middleware refuses them first).
func FuzzCompiledValidator(f *testing.F) {
	doc := loadContract(f)
	schemas, err := compileBodies(doc)
	require.NoError(f, err)
	routes := operationRoutes(doc)
	var ops []string
	for op, bodies := range seedBodies(f) {
		ops = append(ops, op)
		for _, b := range bodies {
			f.Add(len(ops)-1, []byte(b))
		}
	}
	sort.Strings(ops)
	f.Fuzz(func(t *testing.T, which int, body []byte) {
		if which < 0 {
			which = -which
		}
		op := ops[which%len(ops)]
		if _, dup := api.DuplicateMember(body); dup {
			return
		}
		kinErr := kinVerdict(t, routes[op], body)
		violations, ok := ourVerdict(schemas[op], body)
		if (kinErr == nil) != ok {
			t.Fatalf("%s %q\nkin: %v\nours: %v", op, body, kinErr, violations)
		}
	})
}

// TestValidBodyAllocatesNothing: validating an ordinary valid body
// allocates nothing (a property of the code, not a timing).
func TestValidBodyAllocatesNothing(t *testing.T) {
	doc := loadContract(t)
	schemas, err := compileBodies(doc)
	require.NoError(t, err)
	body, err := os.ReadFile(filepath.Join("..", "testdata", "demo", "properties-request.json"))
	require.NoError(t, err)
	schema := schemas["POST /v1/properties"]
	allocs := testing.AllocsPerRun(100, func() {
		if _, ok := ourVerdict(schema, body); !ok {
			t.Fatal("invalid")
		}
	})
	require.Zero(t, allocs)
}

// TestCompileRefusesUnknownKeywords: a contract that says more than the
// compiled validator checks does not start.
func TestCompileRefusesUnknownKeywords(t *testing.T) {
	for name, schema := range map[string]string{
		"pattern":        `{type: string, pattern: '^a'}`,
		"oneOf":          `{oneOf: [{type: string}, {type: string, maxLength: 3}]}`,
		"oneOf nullable": `{oneOf: [{type: string, nullable: true}, {type: number}]}`,
		"format":         `{type: string, format: date}`,
		"multiple":       `{type: number, multipleOf: 2}`,
		"allOf":          `{allOf: [{type: string}, {type: number}]}`,
	} {
		spec := `openapi: 3.0.3
info: {title: t, version: "1"}
paths:
  /x:
    post:
      requestBody:
        required: true
        content:
          application/json:
            schema: ` + schema + `
      responses:
        "200": {description: ok}
`
		_, err := LoadSpec(context.Background(), []byte(spec))
		require.Error(t, err, name)
		require.Contains(t, err.Error(), "compiling", name)
	}
}

// TestOneOfByKind: a oneOf over a string and an object hands each value to
// the alternative of its kind, as kin-openapi would decide it.
func TestOneOfByKind(t *testing.T) {
	spec := `openapi: 3.0.3
info: {title: t, version: "1"}
paths:
  /x:
    post:
      requestBody:
        required: true
        content:
          application/json:
            schema:
              type: object
              additionalProperties: false
              properties:
                s:
                  oneOf:
                    - {type: string, minLength: 1}
                    - {type: object, required: [id], additionalProperties: false, properties: {id: {type: string}}}
      responses:
        "200": {description: ok}
`
	doc, err := LoadSpec(context.Background(), []byte(spec))
	require.NoError(t, err)
	schemas, err := compileBodies(doc)
	require.NoError(t, err)
	n := schemas["POST /x"]
	for body, want := range map[string]string{
		`{"s":"soybean"}`:        "",
		`{"s":{"id":"x"}}`:       "",
		`{"s":""}`:               "/s",
		`{"s":5}`:                "/s",
		`{"s":{"id":1}}`:         "/s/id",
		`{"s":{"id":"x","y":1}}`: "/s/y",
		`{"s":null}`:             "/s",
	} {
		v, _, err := validateBody(n, []byte(body))
		require.NoError(t, err, body)
		if want == "" {
			require.Empty(t, v, body)
			continue
		}
		require.NotEmpty(t, v, body)
		require.Equal(t, want, v[0].Pointer, body)
	}
}

func TestValidatorPointers(t *testing.T) {
	doc := loadContract(t)
	schemas, err := compileBodies(doc)
	require.NoError(t, err)
	props := schemas["POST /v1/properties"]
	for _, c := range []struct {
		body     string
		pointers []string
	}{
		{`{"profile":{"acids":[{"acid":"16:0","percent":"ten"}]}}`, []string{"/profile/acids/0/percent"}},
		{`{"profile":{"acids":[{"acid":"16:0"}]}}`, []string{"/profile/acids/0/percent"}},
		{`{"profile":{"acids":[]},"colour":1}`, []string{"/colour", "/profile/acids"}},
		{`{"profile":{"acids":[{"acid":"16:0","percent":1e400}]}}`, []string{"/profile/acids/0/percent"}},
		{`{"profile":{"acids":[{"acid":"16:0","percent":50,"percent":100}]}}`, []string{"/profile/acids/0/percent"}},
		{`{"profile":null}`, []string{"/profile"}},
	} {
		v, ok := ourVerdict(props, []byte(c.body))
		require.False(t, ok, c.body)
		var ptrs []string
		for _, e := range v {
			ptrs = append(ptrs, e.Pointer)
		}
		require.Equal(t, c.pointers, ptrs, c.body)
	}
}
