package api

import (
	"log/slog"

	"github.com/labstack/echo/v4"

	"lipidsvc/chem"
	"lipidsvc/chem/identity"
)

// Deps are what the handlers need.
type Deps struct {
	Catalogue *chem.Catalogue
	// Library is the reference and plant specifications; nil means the
	// embedded references alone.
	Library *identity.Library
	// Spec is the OpenAPI document served at /openapi.yaml.
	Spec []byte
	// Ready reports whether the instance takes traffic.
	Ready    func() bool
	Recorder Recorder
	Logger   *slog.Logger
}

// Routes registers every route of the API. It is the one place that shows
// the whole surface; openapi.yaml documents the same list.
func Routes(e *echo.Echo, d Deps) {
	if d.Recorder == nil {
		d.Recorder = NopRecorder{}
	}
	if d.Library == nil {
		d.Library = identity.NewLibrary(nil)
	}
	e.GET("/healthz", handleLiveness())
	e.GET("/readyz", handleReadiness(d.Ready))
	e.GET("/openapi.yaml", handleSpec(d.Spec))

	e.GET("/v1/fatty-acids", handleFattyAcids(d.Catalogue))
	e.POST("/v1/properties", handleProperties(d.Catalogue, d.Recorder))
	e.POST("/v1/hydrogen-demand", handleHydrogenDemand(d.Catalogue, d.Recorder))
	e.POST("/v1/hardening/forecast", handleForecast(d.Catalogue, d.Recorder))
	e.GET("/v1/hardening/presets", handlePresets())
	e.POST("/v1/hardening/fit", handleFit(d.Catalogue, d.Recorder))
	e.POST("/v1/melting", handleMelting(d.Catalogue, d.Recorder))
	e.POST("/v1/melting/calibrate", handleCalibrate(d.Catalogue, d.Recorder))
	e.GET("/v1/reference-oils", handleReferenceOils(d.Library))
	e.GET("/v1/reference-oils/:id", handleReferenceOil(d.Library))
	e.POST("/v1/conformity", handleConformity(d.Catalogue, d.Library, d.Recorder))
}
