package api_test

import (
	"encoding/json"
	"net/http"
	"testing"

	"github.com/stretchr/testify/require"
)

// fuzzRoutes are the POST operations the fuzz target drives. The fit is
// left out: each accepted body costs a least-squares fit, too slow for
// fuzzing, and its input checks are shared with the forecast's.
var fuzzRoutes = []string{
	"/v1/properties", "/v1/hydrogen-demand", "/v1/hardening/forecast", "/v1/melting", "/v1/melting/calibrate",
	"/v1/conformity", "/v1/batch", "/v1/plots/composition", "/v1/blends", "/v1/blends/optimize",
}

// FuzzPostBodies sends arbitrary bodies to every computing operation and
// holds the contract: never a 5xx, and every answer (success or problem
// document) matches openapi.yaml (do validates it). The seeds are the
// contract's own request examples plus a calibration body; `go test` runs
// only the seeds, `go test ./api -run '^$' -fuzz FuzzPostBodies` explores.
func FuzzPostBodies(f *testing.F) {
	_, doc := loadSpec(f)
	for i, path := range fuzzRoutes {
		item := doc.Paths.Find(path)
		require.NotNil(f, item, path)
		op := item.Post
		require.NotNil(f, op, path)
		if op.RequestBody != nil {
			if mt := op.RequestBody.Value.Content.Get("application/json"); mt != nil && mt.Example != nil {
				b, err := json.Marshal(mt.Example)
				require.NoError(f, err)
				f.Add(uint8(i), string(b))
			}
		}
	}
	f.Add(uint8(4), `{"profile":`+pkoBelitz+`,"measured":{"slip_melting_point_c":27.6,"sfc_points":[{"temperature_c":20,"solid_fat_percent":38}]}}`)
	f.Add(uint8(3), `{"profile":`+palmLike+`,"sn2_estimate":"palm_rule","temperatures_c":[-60,120]}`)
	f.Add(uint8(0), `{"profile":{"acids":[{"acid":"18:1","percent":1e308}]}}`)
	f.Add(uint8(5), `{"specification":{"id":"x","name":"x","acids":[{"acid":"C16:0+C18:0","max":16},{"acid":"trans","nd":true}]},"profile":`+palmLike+`}`)
	f.Add(uint8(6), `{"evaluations":["properties","conformity"],"options":{"conformity":{"specification":"soybean"}},"samples":[{"sample_id":"a","profile":`+palmLike+`},{"sample_id":"b","profile":{"acids":[]}},3]}`)
	f.Add(uint8(7), `{"samples":[{"label":"x","profile":`+palmLike+`}],"min_percent":50}`)
	app := newApp(f)
	f.Fuzz(func(t *testing.T, route uint8, body string) {
		path := fuzzRoutes[int(route)%len(fuzzRoutes)]
		rec := do(t, app, call{method: http.MethodPost, path: path, body: body})
		require.Less(t, rec.Code, 500, "%s %s: %s", path, body, rec.Body.String())
	})
}
