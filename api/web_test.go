package api_test

import (
	"encoding/json"
	"net/http"
	"strings"
	"testing"

	"github.com/stretchr/testify/require"
)

// The pages are served self-contained: HTML with no reference to another
// origin, under a policy that admits only their own inline blocks.
func TestPagesSelfContained(t *testing.T) {
	app := newApp(t)
	for _, path := range []string{"/", "/docs"} {
		rec := do(t, app, call{method: http.MethodGet, path: path})
		require.Equal(t, http.StatusOK, rec.Code)
		require.True(t, strings.HasPrefix(rec.Header().Get("Content-Type"), "text/html"))
		csp := rec.Header().Get("Content-Security-Policy")
		require.Contains(t, csp, "default-src 'none'")
		require.Contains(t, csp, "script-src 'sha256-")
		require.NotContains(t, csp, "unsafe-inline")
		body := rec.Body.String()
		for _, external := range []string{"http://", "https://", "//cdn", "<link", "src=\"http"} {
			require.NotContains(t, body, external, path)
		}
	}
	rec := do(t, app, call{method: http.MethodGet, path: "/openapi.json"})
	require.Equal(t, http.StatusOK, rec.Code)
	var doc map[string]any
	require.NoError(t, json.Unmarshal(rec.Body.Bytes(), &doc))
	require.Equal(t, "3.0.3", doc["openapi"])
}
