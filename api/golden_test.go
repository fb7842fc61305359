package api_test

import (
	"bytes"
	"encoding/json"
	"flag"
	"fmt"
	"math"
	"net/http"
	"os"
	"path/filepath"
	"sort"
	"testing"

	"github.com/stretchr/testify/require"
)

var updateGolden = flag.Bool("update", false, "rewrite the golden responses in testdata/golden")

// goldenCases are one answer per endpoint, from the demo and load bodies
// (invented data of the Northbay refinery).
var goldenCases = []struct {
	name, method, path, body string // body: a file under testdata, or inline JSON
}{
	{"fatty-acids", http.MethodGet, "/v1/fatty-acids", ""},
	{"presets", http.MethodGet, "/v1/hardening/presets", ""},
	{"properties", http.MethodPost, "/v1/properties", "demo/properties-request.json"},
	{"hydrogen-demand", http.MethodPost, "/v1/hydrogen-demand", "load/hydrogen-demand.json"},
	{"forecast", http.MethodPost, "/v1/hardening/forecast", "load/forecast.json"},
	{"fit", http.MethodPost, "/v1/hardening/fit", `{"feed":{"acids":[{"acid":"16:0","percent":10.5},{"acid":"18:0","percent":4},
		{"acid":"18:1 c9","percent":23.4},{"acid":"18:2 c9,c12","percent":54.5},{"acid":"18:3 c9,c12,c15","percent":7.6}]},
		"observations":[
		{"profile":{"acids":[{"acid":"16:0","percent":10.5},{"acid":"18:0","percent":6.1},{"acid":"18:1 c9","percent":35.2},{"acid":"18:1 t","percent":12.9},
		  {"acid":"18:2 c9,c12","percent":33.1},{"acid":"18:3 c9,c12,c15","percent":2.2}]},"iodine_value":100},
		{"profile":{"acids":[{"acid":"16:0","percent":10.5},{"acid":"18:0","percent":9.0},{"acid":"18:1 c9","percent":35.9},{"acid":"18:1 t","percent":36.1},
		  {"acid":"18:2 c9,c12","percent":8.3},{"acid":"18:3 c9,c12,c15","percent":0.2}]},"iodine_value":75}]}`},
	{"melting", http.MethodPost, "/v1/melting", "load/melting.json"},
	{"calibrate", http.MethodPost, "/v1/melting/calibrate", `{"profile":{"acids":[{"acid":"14:0","percent":1},{"acid":"16:0","percent":44},
		{"acid":"18:0","percent":4.5},{"acid":"18:1 c9","percent":40},{"acid":"18:2 c9,c12","percent":10.5}]},"sn2_estimate":"palm_rule",
		"measured":{"sfc_points":[{"temperature_c":20,"solid_fat_percent":26},{"temperature_c":30,"solid_fat_percent":8}],"slip_melting_point_c":36}}`},
	{"reference-oils", http.MethodGet, "/v1/reference-oils", ""},
	{"reference-oil", http.MethodGet, "/v1/reference-oils/sunflower_high_oleic", ""},
	{"conformity", http.MethodPost, "/v1/conformity", "demo/conformity-request.json"},
	{"batch", http.MethodPost, "/v1/batch", "demo/batch-request.json"},
	{"blend", http.MethodPost, "/v1/blends", "demo/blend-request.json"},
	{"optimize", http.MethodPost, "/v1/blends/optimize", "demo/optimize-request.json"},
	{"healthz", http.MethodGet, "/healthz", ""},
	{"readyz", http.MethodGet, "/readyz", ""},
}

// TestGoldenResponses holds one answer per endpoint to the file that
// records it, numbers to 1e-9 relative (so a platform's last bit of
// floating point does not count), everything else exactly. Run with
// -update after a deliberate change and read the diff.
func TestGoldenResponses(t *testing.T) {
	app := newApp(t)
	for _, c := range goldenCases {
		t.Run(c.name, func(t *testing.T) {
			body := c.body
			if body != "" && body[0] != '{' {
				body = readFile(t, "testdata", body)
			}
			rec := do(t, app, call{method: c.method, path: c.path, body: body,
				header: map[string]string{"X-Request-ID": "golden-" + c.name}})
			require.Equal(t, http.StatusOK, rec.Code, rec.Body.String())
			var got any
			require.NoError(t, json.Unmarshal(rec.Body.Bytes(), &got))
			file := filepath.Join("..", "testdata", "golden", c.name+".json")
			if *updateGolden {
				var out bytes.Buffer
				require.NoError(t, json.Indent(&out, rec.Body.Bytes(), "", "  "))
				out.WriteByte('\n')
				require.NoError(t, os.MkdirAll(filepath.Dir(file), 0o755))
				require.NoError(t, os.WriteFile(file, out.Bytes(), 0o644))
				return
			}
			raw, err := os.ReadFile(file)
			require.NoError(t, err, "run go test ./api -run TestGoldenResponses -update")
			var want any
			require.NoError(t, json.Unmarshal(raw, &want))
			if diffs := jsonDiff("", want, got, nil); len(diffs) > 0 {
				if len(diffs) > 20 {
					diffs = append(diffs[:20], fmt.Sprintf("… and %d more", len(diffs)-20))
				}
				t.Fatalf("the %s answer differs from %s (run with -update if the change is meant):\n%s", c.name, file, joinLines(diffs))
			}
		})
	}
}

func joinLines(ss []string) string {
	var b bytes.Buffer
	for _, s := range ss {
		b.WriteString(s)
		b.WriteByte('\n')
	}
	return b.String()
}

// jsonDiff lists where got differs from want.
func jsonDiff(path string, want, got any, out []string) []string {
	switch w := want.(type) {
	case map[string]any:
		g, ok := got.(map[string]any)
		if !ok {
			return append(out, fmt.Sprintf("%s: want an object, got %v", path, got))
		}
		keys := map[string]bool{}
		for k := range w {
			keys[k] = true
		}
		for k := range g {
			keys[k] = true
		}
		sorted := make([]string, 0, len(keys))
		for k := range keys {
			sorted = append(sorted, k)
		}
		sort.Strings(sorted)
		for _, k := range sorted {
			wv, wok := w[k]
			gv, gok := g[k]
			switch {
			case !wok:
				out = append(out, fmt.Sprintf("%s/%s: new member %v", path, k, gv))
			case !gok:
				out = append(out, fmt.Sprintf("%s/%s: missing", path, k))
			default:
				out = jsonDiff(path+"/"+k, wv, gv, out)
			}
		}
	case []any:
		g, ok := got.([]any)
		if !ok || len(g) != len(w) {
			return append(out, fmt.Sprintf("%s: want %d items, got %v", path, len(w), lenOf(got)))
		}
		for i := range w {
			out = jsonDiff(fmt.Sprintf("%s/%d", path, i), w[i], g[i], out)
		}
	case float64:
		g, ok := got.(float64)
		if !ok || math.Abs(g-w) > 1e-9*math.Max(math.Abs(w), 1e-3) {
			out = append(out, fmt.Sprintf("%s: want %v, got %v", path, w, got))
		}
	default:
		if fmt.Sprint(want) != fmt.Sprint(got) {
			out = append(out, fmt.Sprintf("%s: want %v, got %v", path, want, got))
		}
	}
	return out
}

func lenOf(v any) string {
	if a, ok := v.([]any); ok {
		return fmt.Sprintf("%d items", len(a))
	}
	return fmt.Sprint(v)
}
