package service

import (
	"log/slog"
	"os"
	"path/filepath"
	"testing"
	"time"

	"github.com/stretchr/testify/require"

	"lipidsvc/chem/identity"
)

func env(m map[string]string) func(string) string {
	return func(k string) string { return m[k] }
}

func TestConfigDefaults(t *testing.T) {
	cfg, err := LoadConfig(nil, env(nil))
	require.NoError(t, err)
	require.Equal(t, ":8080", cfg.Addr)
	require.Equal(t, ":9090", cfg.MetricsAddr)
	require.Equal(t, int64(512<<10), cfg.BodyLimitBytes, "sized to the largest legitimate request (a 5,000-species TAG list is about 0.35 MB)")
	require.Equal(t, slog.LevelInfo, cfg.LogLevel)
}

func TestConfigFromEnvironmentAndFlags(t *testing.T) {
	cfg, err := LoadConfig([]string{"-addr", "127.0.0.1:1"}, env(map[string]string{
		"LIPIDSVC_ADDR":             ":7000",
		"LIPIDSVC_METRICS_ADDR":     "127.0.0.1:7001",
		"LIPIDSVC_LOG_LEVEL":        "debug",
		"LIPIDSVC_BODY_LIMIT_BYTES": "2048",
		"LIPIDSVC_REQUEST_TIMEOUT":  "3s",
		"LIPIDSVC_DRAIN_DELAY":      "0s",
	}))
	require.NoError(t, err)
	require.Equal(t, "127.0.0.1:1", cfg.Addr, "flags win over the environment")
	require.Equal(t, "127.0.0.1:7001", cfg.MetricsAddr)
	require.Equal(t, slog.LevelDebug, cfg.LogLevel)
	require.Equal(t, int64(2048), cfg.BodyLimitBytes)
	require.Equal(t, 3*time.Second, cfg.RequestTimeout)
	require.Zero(t, cfg.DrainDelay)
}

func TestConfigMetricsOff(t *testing.T) {
	cfg, err := LoadConfig(nil, env(map[string]string{"LIPIDSVC_METRICS_ADDR": "off"}))
	require.NoError(t, err)
	require.Empty(t, cfg.MetricsAddr)
}

func TestMethodLabelBounded(t *testing.T) {
	require.Equal(t, "POST", methodLabel("POST"))
	require.Equal(t, "OTHER", methodLabel("FOO1"))
}

func TestConfigRejectsBadValues(t *testing.T) {
	cases := map[string]string{
		"LIPIDSVC_LOG_LEVEL":        "loud",
		"LIPIDSVC_BODY_LIMIT_BYTES": "12",
		"LIPIDSVC_REQUEST_TIMEOUT":  "soon",
		"LIPIDSVC_WRITE_TIMEOUT":    "1s",
		"LIPIDSVC_SHUTDOWN_TIMEOUT": "2s",
	}
	for k, v := range cases {
		_, err := LoadConfig(nil, env(map[string]string{k: v}))
		require.Error(t, err, k)
		require.Contains(t, err.Error(), k)
	}
	_, err := LoadConfig([]string{"extra"}, env(nil))
	require.Error(t, err)
}

func TestRequestIDValidation(t *testing.T) {
	require.True(t, validRequestID("lims-42"))
	require.False(t, validRequestID(""))
	require.False(t, validRequestID("has space"))
	require.False(t, validRequestID(string(make([]byte, 129))))
	require.Len(t, newRequestID(), 32)
}

func TestMetricsRecordDomainEvents(t *testing.T) {
	m := NewMetrics()
	m.Calculation("properties")
	m.Rejection("unprocessable")
	m.SolverIterations("hardening_fit", 9)
	m.observe("FOO1", "/v1/properties", 200, time.Millisecond)
	families, err := m.registry.Gather()
	require.NoError(t, err)
	seen := map[string]bool{}
	for _, f := range families {
		seen[f.GetName()] = true
		if f.GetName() == "lipidsvc_http_requests_total" {
			require.Equal(t, "OTHER", f.GetMetric()[0].GetLabel()[1].GetValue()) // labels sorted: code, method, route
		}
	}
	for _, name := range []string{"lipidsvc_calculations_total", "lipidsvc_rejected_requests_total", "lipidsvc_solver_iterations",
		"lipidsvc_http_requests_total", "lipidsvc_http_request_duration_seconds", "go_goroutines"} {
		require.True(t, seen[name], name)
	}
}

// A plant specification file adds and replaces specifications; a bad one
// stops start-up with the line and field at fault.
func TestConfigSpecificationFile(t *testing.T) {
	dir := t.TempDir()
	good := filepath.Join(dir, "specs.json")
	require.NoError(t, os.WriteFile(good, []byte(`{"specifications": [
  {"id": "nb-soy-intake", "name": "Northbay crude soybean oil intake",
   "acids": [{"acid": "C18:3", "max": 8.0}], "iodine_value": {"min": 128, "max": 138}},
  {"id": "palm", "name": "Palm oil, Northbay intake", "acids": [{"acid": "C16:0", "min": 42, "max": 46}]}
]}`), 0o644))
	cfg, err := LoadConfig(nil, env(map[string]string{"LIPIDSVC_SPEC_FILE": good}))
	require.NoError(t, err)
	require.Len(t, cfg.PlantSpecifications, 2)
	lib := identity.NewLibrary(cfg.PlantSpecifications)
	palm, ok := lib.ByID("palm")
	require.True(t, ok)
	require.True(t, palm.Plant, "the plant's palm replaces the reference one")
	require.Len(t, palm.Acids, 1)
	_, ok = lib.ByID("nb-soy-intake")
	require.True(t, ok)
	_, ok = lib.ByID("soybean")
	require.True(t, ok, "the references the file does not name stay")

	bad := filepath.Join(dir, "bad.json")
	require.NoError(t, os.WriteFile(bad, []byte(`{"specifications": [
  {"id": "nb-soy-intake", "name": "Northbay crude soybean oil intake",
   "acids": [
     {"acid": "C18:3", "max": 8.0},
     {"acid": "C16:0", "min": 14, "max": 9}
   ]}
]}`), 0o644))
	_, err = LoadConfig(nil, env(map[string]string{"LIPIDSVC_SPEC_FILE": bad}))
	require.Error(t, err)
	require.Contains(t, err.Error(), "LIPIDSVC_SPEC_FILE")
	require.Contains(t, err.Error(), "line 5, /specifications/0/acids/1/max")

	_, err = LoadConfig(nil, env(map[string]string{"LIPIDSVC_SPEC_FILE": filepath.Join(dir, "missing.json")}))
	require.ErrorContains(t, err, "LIPIDSVC_SPEC_FILE")
}
