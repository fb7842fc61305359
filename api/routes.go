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
	// Spec is the OpenAPI document served at /openapi.yaml, SpecJSON the
	// same as JSON at /openapi.json.
	Spec, SpecJSON []byte
	// Ready reports whether the instance takes traffic.
	Ready    func() bool
	Recorder Recorder
	Logger   *slog.Logger
	// Version is the service version provenance records name.
	Version string
	// Validate checks parts of streamed bodies against the contract; nil
	// disables the streamed routes' part validation (tests of the handlers
	// alone).
	Validate Validator
	// Batch bounds POST /v1/batch.
	Batch BatchLimits
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
	e.GET("/openapi.json", handleSpecJSON(d.SpecJSON))
	e.GET("/", handlePage(tryItPage, tryItCSP))
	e.GET("/docs", handlePage(docsPage, docsCSP))

	e.GET("/v1/fatty-acids", handleFattyAcids(d.Catalogue))
	e.POST("/v1/properties", d.handle("POST /v1/properties", runProperties(d.Catalogue, d.Recorder)))
	e.POST("/v1/hydrogen-demand", d.handle("POST /v1/hydrogen-demand", runHydrogenDemand(d.Catalogue, d.Recorder)))
	e.POST("/v1/hardening/forecast", d.handle("POST /v1/hardening/forecast", runForecast(d.Catalogue, d.Recorder)))
	e.GET("/v1/hardening/presets", handlePresets())
	e.POST("/v1/hardening/fit", d.handle("POST /v1/hardening/fit", runFit(d.Catalogue, d.Recorder)))
	e.POST("/v1/melting", d.handle("POST /v1/melting", runMelting(d.Catalogue, d.Recorder)))
	e.POST("/v1/melting/calibrate", d.handle("POST /v1/melting/calibrate", runCalibrate(d.Catalogue, d.Recorder)))
	e.GET("/v1/reference-oils", handleReferenceOils(d.Library))
	e.GET("/v1/reference-oils/:id", handleReferenceOil(d.Library))
	e.POST("/v1/conformity", d.handle("POST /v1/conformity", runConformity(d.Catalogue, d.Library, d.Recorder)))
	e.POST("/v1/blends", d.handle("POST /v1/blends", runBlend(d.Catalogue, d.Library, d.Recorder)))
	e.POST("/v1/blends/optimize", d.handle("POST /v1/blends/optimize", runOptimize(d.Catalogue, d.Library, d.Recorder)))
	e.POST("/v1/batch", d.handleBatch())
	e.POST("/v1/plots/solid-fat", d.handleSolidFatPlot())
	e.POST("/v1/plots/hardening-path", d.handleHardeningPathPlot())
	e.POST("/v1/plots/composition", d.handleCompositionPlot())
}
