package api_test

import (
	"bytes"
	"context"
	"fmt"
	"log/slog"
	"net/http"
	"net/http/httptest"
	"strings"
	"testing"

	"github.com/labstack/echo/v4"
	"github.com/stretchr/testify/require"

	"lipidsvc/api"
)

func newJSONRequest(body string) *http.Request {
	req := httptest.NewRequest(http.MethodPost, "/v1/properties", strings.NewReader(body))
	req.Header.Set("Content-Type", "application/json")
	return req
}

func newRecorder() *httptest.ResponseRecorder { return httptest.NewRecorder() }

func TestFattyAcidCatalogue(t *testing.T) {
	app := newApp(t)
	rec := do(t, app, call{method: http.MethodGet, path: "/v1/fatty-acids"})
	require.Equal(t, http.StatusOK, rec.Code)
	list := decode[api.FattyAcidList](t, rec)
	require.GreaterOrEqual(t, list.Count, 45)
	require.Len(t, list.Acids, list.Count)
	byID := map[string]api.FattyAcidBody{}
	for _, a := range list.Acids {
		byID[a.ID] = a
	}
	oleic := byID["18:1 c9"]
	require.Equal(t, "oleic", oleic.CommonName)
	require.InDelta(t, 282.468, oleic.MolarMassGPerMol, 0.005) // [calc]
	require.Equal(t, 9, *oleic.OmegaFamily)
	require.True(t, oleic.DefaultForShorthand)
	require.True(t, byID["18:1 t9"].Trans)
	require.True(t, byID["18:2 c9,t11"].Conjugated)
	require.Equal(t, 12, *byID["18:1 c9 12-OH"].HydroxyPosition)
}

func TestProbesAndSpec(t *testing.T) {
	app := newApp(t)
	require.Equal(t, http.StatusOK, do(t, app, call{method: http.MethodGet, path: "/healthz"}).Code)
	require.Equal(t, http.StatusOK, do(t, app, call{method: http.MethodGet, path: "/readyz"}).Code)
	rec := do(t, app, call{method: http.MethodGet, path: "/openapi.yaml"})
	require.Equal(t, http.StatusOK, rec.Code)
	require.Contains(t, rec.Body.String(), "openapi: 3.0.3")

	app.SetReady(false)
	rec = do(t, app, call{method: http.MethodGet, path: "/readyz"})
	require.Equal(t, http.StatusServiceUnavailable, rec.Code)
	require.Equal(t, "shutting_down", decode[api.Health](t, rec).Status)
	// Liveness is unaffected by shutdown.
	require.Equal(t, http.StatusOK, do(t, app, call{method: http.MethodGet, path: "/healthz"}).Code)
}

// countingRecorder counts rejections.
type countingRecorder struct {
	api.NopRecorder
	rejections int
}

func (r *countingRecorder) Rejection(string) { r.rejections++ }

// TestClientClosedIsNotAFailure: a request whose client went away (its
// context cancelled) is recorded as 499, neither logged as a failure of the
// service nor counted as a rejected request; a deadline is still a 503.
func TestClientClosedIsNotAFailure(t *testing.T) {
	var logs bytes.Buffer
	rec := &countingRecorder{}
	h := api.ErrorHandler(slog.New(slog.NewJSONHandler(&logs, nil)), rec)
	e := echo.New()
	for _, c := range []struct {
		err    error
		status int
		logged bool
	}{
		{fmt.Errorf("melting: %w", context.Canceled), api.StatusClientClosed, false},
		{fmt.Errorf("melting: %w", context.DeadlineExceeded), http.StatusServiceUnavailable, true},
	} {
		logs.Reset()
		w := httptest.NewRecorder()
		h(c.err, e.NewContext(httptest.NewRequest(http.MethodPost, "/v1/melting", nil), w))
		require.Equal(t, c.status, w.Code)
		require.Equal(t, c.logged, logs.Len() > 0, logs.String())
	}
	require.Zero(t, rec.rejections)
}
