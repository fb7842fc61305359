package service

import (
	"context"
	"crypto/sha256"
	"encoding/hex"
	"encoding/json"
	"io"
	"log/slog"
	"net/http"
	"net/http/httptest"
	"os"
	"path/filepath"
	"regexp"
	"strings"
	"sync"
	"testing"
	"time"

	"github.com/prometheus/client_golang/prometheus"
	"github.com/stretchr/testify/require"
)

func testApp(t *testing.T, edit func(*Config)) *App {
	t.Helper()
	raw, err := os.ReadFile(filepath.Join("..", "openapi.yaml"))
	require.NoError(t, err)
	doc, err := LoadSpec(context.Background(), raw)
	require.NoError(t, err)
	cfg := DefaultConfig()
	if edit != nil {
		edit(&cfg)
	}
	return NewApp(cfg, doc, raw, slog.New(slog.NewJSONHandler(io.Discard, nil)))
}

const soyBody = `{"profile":{"acids":[{"acid":"16:0","percent":10.5},{"acid":"18:0","percent":4},{"acid":"18:1 c9","percent":23.4},{"acid":"18:2 c9,c12","percent":54.5},{"acid":"18:3 c9,c12,c15","percent":7.6}]}}`

func post(app *App, path, body string, header map[string]string) *httptest.ResponseRecorder {
	req := httptest.NewRequest(http.MethodPost, path, strings.NewReader(body))
	req.Header.Set("Content-Type", "application/json")
	for k, v := range header {
		req.Header.Set(k, v)
	}
	rec := httptest.NewRecorder()
	app.Echo.ServeHTTP(rec, req)
	return rec
}

func hashHex(key string) string {
	h := sha256.Sum256([]byte(key))
	return hex.EncodeToString(h[:])
}

// API keys: no key, a wrong key and a revoked key are refused with 401
// problem+json; the right key passes, by either header; the probes and
// the pages need none; the key's name, never the key, is counted.
func TestAPIKeys(t *testing.T) {
	file := filepath.Join(t.TempDir(), "keys")
	require.NoError(t, os.WriteFile(file, []byte("# Northbay clients\nnorthbay-lims "+hashHex("lims-secret-1")+"\n\nold-bridge "+hashHex("bridge-secret")+" revoked\n"), 0o600))
	cfg, err := LoadConfig(nil, env(map[string]string{"LIPIDSVC_API_KEYS_FILE": file}))
	require.NoError(t, err)
	require.Len(t, cfg.APIKeys, 2)
	app := testApp(t, func(c *Config) { *c = cfg })
	for name, header := range map[string]map[string]string{
		"no key":      nil,
		"wrong key":   {"Authorization": "Bearer lims-secret-2"},
		"revoked key": {"X-API-Key": "bridge-secret"},
		"empty":       {"Authorization": "Bearer "},
	} {
		rec := post(app, "/v1/properties", soyBody, header)
		require.Equal(t, http.StatusUnauthorized, rec.Code, name)
		require.Equal(t, "application/problem+json", rec.Header().Get("Content-Type"), name)
		require.Contains(t, rec.Header().Get("WWW-Authenticate"), "Bearer")
		var p map[string]any
		require.NoError(t, json.Unmarshal(rec.Body.Bytes(), &p))
		require.Equal(t, "urn:lipidsvc:problem:unauthorized", p["type"], name)
		require.NotContains(t, rec.Body.String(), "secret")
	}
	for _, h := range []map[string]string{{"Authorization": "Bearer lims-secret-1"}, {"X-API-Key": "lims-secret-1"}} {
		rec := post(app, "/v1/properties", soyBody, h)
		require.Equal(t, http.StatusOK, rec.Code, rec.Body.String())
	}
	for _, path := range []string{"/healthz", "/readyz", "/", "/openapi.yaml"} {
		rec := httptest.NewRecorder()
		app.Echo.ServeHTTP(rec, httptest.NewRequest(http.MethodGet, path, nil))
		require.Equal(t, http.StatusOK, rec.Code, path)
	}
	metrics := httptest.NewRecorder()
	app.Metrics.Handler().ServeHTTP(metrics, httptest.NewRequest(http.MethodGet, "/metrics", nil))
	require.Contains(t, metrics.Body.String(), `lipidsvc_client_requests_total{client="northbay-lims"} 2`)
	require.Contains(t, metrics.Body.String(), `lipidsvc_client_requests_total{client="unauthenticated"} 4`)

	for content, want := range map[string]string{
		"lims 1234\n":                  "line 1",
		"a " + hashHex("x") + " old\n": "line 1",
		"a " + hashHex("x") + "\na " + hashHex("y") + "\n": "also on line 1",
		"# nothing\n": "no keys",
	} {
		require.NoError(t, os.WriteFile(file, []byte(content), 0o600))
		_, err := LoadConfig(nil, env(map[string]string{"LIPIDSVC_API_KEYS_FILE": file}))
		require.ErrorContains(t, err, want)
	}
}

// Every answer carries the security headers; CORS answers only the
// origins configured.
func TestSecurityHeadersAndCORS(t *testing.T) {
	app := testApp(t, func(c *Config) { c.CORSOrigins = []string{"https://lims.northbay.example"} })
	rec := post(app, "/v1/properties", soyBody, map[string]string{"Origin": "https://lims.northbay.example"})
	require.Equal(t, http.StatusOK, rec.Code)
	h := rec.Header()
	require.Equal(t, "nosniff", h.Get("X-Content-Type-Options"))
	require.Equal(t, "DENY", h.Get("X-Frame-Options"))
	require.Equal(t, "no-store", h.Get("Cache-Control"))
	require.Contains(t, h.Get("Content-Security-Policy"), "default-src 'none'")
	require.Equal(t, "https://lims.northbay.example", h.Get("Access-Control-Allow-Origin"))
	rec = post(app, "/v1/properties", soyBody, map[string]string{"Origin": "https://elsewhere.example"})
	require.Empty(t, rec.Header().Get("Access-Control-Allow-Origin"))

	pre := httptest.NewRequest(http.MethodOptions, "/v1/properties", nil)
	pre.Header.Set("Origin", "https://lims.northbay.example")
	pre.Header.Set("Access-Control-Request-Method", "POST")
	rec = httptest.NewRecorder()
	app.Echo.ServeHTTP(rec, pre)
	require.Equal(t, http.StatusNoContent, rec.Code)
	require.Contains(t, rec.Header().Get("Access-Control-Allow-Headers"), "X-API-Key")

	off := testApp(t, nil)
	rec = post(off, "/v1/properties", soyBody, map[string]string{"Origin": "https://lims.northbay.example"})
	require.Empty(t, rec.Header().Get("Access-Control-Allow-Origin"), "CORS is off unless configured")

	_, err := LoadConfig(nil, env(map[string]string{"LIPIDSVC_CORS_ORIGINS": "*"}))
	require.ErrorContains(t, err, "no wildcard")
}

// Overload: with the expensive class at its limit, the next expensive
// request gets 503 with Retry-After at once, while cheap ones still pass.
func TestOverloadShedsWithRetryAfter(t *testing.T) {
	app := testApp(t, func(c *Config) { c.InFlight.Expensive = 1 })
	entered := make(chan struct{})
	// Hold the one expensive slot with a calibration whose body arrives
	// slowly: the slot is taken before the body is read.
	pr, pw := io.Pipe()
	var wg sync.WaitGroup
	wg.Add(1)
	go func() {
		defer wg.Done()
		req := httptest.NewRequest(http.MethodPost, "/v1/melting/calibrate", pr)
		req.Header.Set("Content-Type", "application/json")
		rec := httptest.NewRecorder()
		close(entered)
		app.Echo.ServeHTTP(rec, req)
	}()
	<-entered
	_, _ = pw.Write([]byte(`{"profile":`))
	time.Sleep(50 * time.Millisecond) // the request holds its slot, reading
	start := time.Now()
	rec := post(app, "/v1/hardening/fit", `{}`, nil)
	elapsed := time.Since(start)
	require.Equal(t, http.StatusServiceUnavailable, rec.Code, rec.Body.String())
	require.Equal(t, "1", rec.Header().Get("Retry-After"))
	require.Contains(t, rec.Body.String(), "urn:lipidsvc:problem:overloaded")
	t.Logf("shed in %v", elapsed)
	require.Equal(t, http.StatusOK, post(app, "/v1/properties", soyBody, nil).Code, "other classes are not affected")
	pw.CloseWithError(io.ErrUnexpectedEOF)
	wg.Wait()
	metrics := httptest.NewRecorder()
	app.Metrics.Handler().ServeHTTP(metrics, httptest.NewRequest(http.MethodGet, "/metrics", nil))
	require.Contains(t, metrics.Body.String(), `lipidsvc_shed_requests_total{class="expensive"} 1`)
}

// The Grafana dashboard in deploy/grafana queries only metrics the service
// exports (or the Go and process collectors it registers).
func TestDashboardQueriesExportedMetrics(t *testing.T) {
	raw, err := os.ReadFile(filepath.Join("..", "deploy", "grafana", "lipidsvc-dashboard.json"))
	require.NoError(t, err)
	var dash struct {
		Panels []struct {
			Title   string
			Targets []struct{ Expr string }
		}
	}
	require.NoError(t, json.Unmarshal(raw, &dash))
	require.NotEmpty(t, dash.Panels)
	m := NewMetrics()
	descs := make(chan *prometheus.Desc, 1000)
	go func() {
		m.registry.Describe(descs)
		close(descs)
	}()
	known := map[string]bool{}
	for d := range descs {
		s := d.String()
		i := strings.Index(s, `fqName: "`) + len(`fqName: "`)
		name := s[i : i+strings.Index(s[i:], `"`)]
		known[name] = true
		for _, suffix := range []string{"_bucket", "_sum", "_count"} {
			known[name+suffix] = true
		}
	}
	names := regexp.MustCompile(`\b(lipidsvc_[a-z0-9_]+|process_[a-z0-9_]+|go_[a-z0-9_]+)\b`)
	for _, p := range dash.Panels {
		require.NotEmpty(t, p.Targets, p.Title)
		for _, tg := range p.Targets {
			for _, n := range names.FindAllString(tg.Expr, -1) {
				require.True(t, known[n], "panel %q queries %s, which the service does not export", p.Title, n)
			}
		}
	}
}
