package api_test

import (
	"bytes"
	"context"
	"encoding/json"
	"io"
	"log/slog"
	"net/http"
	"net/http/httptest"
	"os"
	"path/filepath"
	"strings"
	"sync"
	"testing"

	"github.com/getkin/kin-openapi/openapi3"
	"github.com/getkin/kin-openapi/openapi3filter"
	"github.com/getkin/kin-openapi/routers"
	"github.com/stretchr/testify/require"

	"lipidsvc/service"
)

var (
	specOnce sync.Once
	specRaw  []byte
	specDoc  *openapi3.T
	specErr  error
)

// loadSpec reads the contract from the repository root and validates it,
// as the service does at start-up.
func loadSpec(t testing.TB) ([]byte, *openapi3.T) {
	t.Helper()
	specOnce.Do(func() {
		specRaw, specErr = os.ReadFile(filepath.Join("..", "openapi.yaml"))
		if specErr != nil {
			return
		}
		specDoc, specErr = service.LoadSpec(context.Background(), specRaw)
		asString := func(r io.Reader, _ http.Header, _ *openapi3.SchemaRef, _ openapi3filter.EncodingFn) (any, error) {
			b, err := io.ReadAll(r)
			return string(b), err
		}
		// Bodies the contract types as strings; their parts are checked
		// by the tests that read them (NDJSON lines against BatchResult).
		openapi3filter.RegisterBodyDecoder("application/yaml", asString)
		openapi3filter.RegisterBodyDecoder("application/x-ndjson", asString)
		openapi3filter.RegisterBodyDecoder("image/svg+xml", asString)
		openapi3filter.RegisterBodyDecoder("image/png", asString)
		openapi3filter.RegisterBodyDecoder("text/html", asString)
	})
	require.NoError(t, specErr)
	return specRaw, specDoc
}

// newApp builds the real echo instance with every middleware.
func newApp(t testing.TB) *service.App {
	t.Helper()
	raw, doc := loadSpec(t)
	cfg := service.DefaultConfig()
	cfg.DrainDelay = 0
	return service.NewApp(cfg, doc, raw, slog.New(slog.NewJSONHandler(io.Discard, nil)))
}

type call struct {
	method, path, body string
	header             map[string]string
}

// do sends one request through the app and validates the response against
// openapi.yaml: declared status, content type and body schema.
func do(t testing.TB, app *service.App, c call) *httptest.ResponseRecorder {
	t.Helper()
	req := httptest.NewRequest(c.method, c.path, strings.NewReader(c.body))
	if c.body != "" {
		req.Header.Set("Content-Type", "application/json")
	}
	for k, v := range c.header {
		if v == "" {
			req.Header.Del(k)
		} else {
			req.Header.Set(k, v)
		}
	}
	rec := httptest.NewRecorder()
	app.Echo.ServeHTTP(rec, req)
	validateResponse(t, req, rec)
	return rec
}

func validateResponse(t testing.TB, req *http.Request, rec *httptest.ResponseRecorder) {
	t.Helper()
	_, doc := loadSpec(t)
	template, item := findPath(doc, req.URL.Path)
	var op *openapi3.Operation
	if item != nil {
		op = item.GetOperation(req.Method)
	}
	if op == nil || rec.Code == http.StatusMethodNotAllowed || rec.Code == http.StatusNotFound {
		// Outside the documented operations only problem documents may come back.
		require.Equal(t, "application/problem+json", rec.Header().Get("Content-Type"), rec.Body.String())
		var v any
		require.NoError(t, json.Unmarshal(rec.Body.Bytes(), &v))
		require.NoError(t, doc.Components.Schemas["Problem"].Value.VisitJSON(v), rec.Body.String())
		return
	}
	input := &openapi3filter.ResponseValidationInput{
		RequestValidationInput: &openapi3filter.RequestValidationInput{
			Request: req,
			Route:   &routers.Route{Spec: doc, Path: template, PathItem: item, Method: req.Method, Operation: op},
		},
		Status:  rec.Code,
		Header:  rec.Header(),
		Body:    io.NopCloser(bytes.NewReader(rec.Body.Bytes())),
		Options: &openapi3filter.Options{IncludeResponseStatus: true, MultiError: true},
	}
	require.NoError(t, openapi3filter.ValidateResponse(context.Background(), input),
		"response to %s %s does not match openapi.yaml: %s", req.Method, req.URL.Path, rec.Body.String())
}

// findPath is the contract's path item for a request path, matching
// templated segments such as {id}.
func findPath(doc *openapi3.T, path string) (string, *openapi3.PathItem) {
	if item := doc.Paths.Value(path); item != nil {
		return path, item
	}
	segs := strings.Split(path, "/")
	for template, item := range doc.Paths.Map() {
		ts := strings.Split(template, "/")
		if len(ts) != len(segs) {
			continue
		}
		match := true
		for i := range ts {
			if ts[i] != segs[i] && !(strings.HasPrefix(ts[i], "{") && strings.HasSuffix(ts[i], "}") && segs[i] != "") {
				match = false
				break
			}
		}
		if match {
			return template, item
		}
	}
	return path, nil
}

// decode reads a JSON response body.
func decode[T any](t testing.TB, rec *httptest.ResponseRecorder) T {
	t.Helper()
	var v T
	require.NoError(t, json.Unmarshal(rec.Body.Bytes(), &v), rec.Body.String())
	return v
}

func readFile(t testing.TB, parts ...string) string {
	t.Helper()
	b, err := os.ReadFile(filepath.Join(append([]string{".."}, parts...)...))
	require.NoError(t, err)
	return string(b)
}
