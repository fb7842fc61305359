package api

import (
	"net/http"

	"github.com/labstack/echo/v4"
)

// Health is the body of the probes.
type Health struct {
	Status string `json:"status"`
}

func handleLiveness() echo.HandlerFunc {
	return func(c echo.Context) error {
		return c.JSON(http.StatusOK, Health{Status: "ok"})
	}
}

// handleReadiness answers 503 once ready reports false, so that a load
// balancer stops sending traffic before the server closes.
func handleReadiness(ready func() bool) echo.HandlerFunc {
	return func(c echo.Context) error {
		if !ready() {
			return c.JSON(http.StatusServiceUnavailable, Health{Status: "shutting_down"})
		}
		return c.JSON(http.StatusOK, Health{Status: "ready"})
	}
}

func handleSpec(spec []byte) echo.HandlerFunc {
	return func(c echo.Context) error {
		return c.Blob(http.StatusOK, "application/yaml", spec)
	}
}
