package service

import (
	"context"
	"io"
	"log/slog"
	"os"
	"path/filepath"
	"testing"

	"github.com/stretchr/testify/require"
)

// TestEveryRouteIsDocumented: each route the API registers has its
// operation in openapi.yaml, so the validator sees every request, and the
// contract lists nothing the service does not serve.
func TestEveryRouteIsDocumented(t *testing.T) {
	raw, err := os.ReadFile(filepath.Join("..", "openapi.yaml"))
	require.NoError(t, err)
	doc, err := LoadSpec(context.Background(), raw)
	require.NoError(t, err)
	routes := operationRoutes(doc)
	app := NewApp(DefaultConfig(), doc, raw, slog.New(slog.NewJSONHandler(io.Discard, nil)))
	served := map[string]bool{}
	for _, r := range app.Echo.Routes() {
		key := r.Method + " " + r.Path
		served[key] = true
		require.Contains(t, routes, key, "route not in openapi.yaml")
	}
	for key := range routes {
		require.True(t, served[key], "documented but not served: %s", key)
	}
	require.Equal(t, "/v1/x/:id/y", openAPIToEchoPath("/v1/x/{id}/y"))
}
