package api

import (
	"fmt"
	"math"
	"net/http"

	"github.com/labstack/echo/v4"

	"lipidsvc/chem"
	"lipidsvc/chem/hardening"
)

// FitObservation is one observed product.
type FitObservation struct {
	Profile     *ProfileBody `json:"profile"`
	IodineValue *float64     `json:"iodine_value,omitempty"`
}

// FitRequest is the body of POST /v1/hardening/fit.
type FitRequest struct {
	Feed           *ProfileBody     `json:"feed"`
	Observations   []FitObservation `json:"observations"`
	Initial        *CatalystChoice  `json:"initial,omitempty"`
	FreeParameters []string         `json:"free_parameters,omitempty"`
	MaxIterations  *Integer         `json:"max_iterations,omitempty"`
}

// FitParameter is one fitted or held parameter.
type FitParameter struct {
	Name          string   `json:"name"`
	Value         float64  `json:"value"`
	Free          bool     `json:"free"`
	StandardError *float64 `json:"standard_error"`
}

// FitResidual compares one acid group of one observation.
type FitResidual struct {
	Group            string  `json:"group"`
	ObservedPercent  float64 `json:"observed_percent"`
	PredictedPercent float64 `json:"predicted_percent"`
	ResidualPercent  float64 `json:"residual_percent"`
}

// FitObservationResult is the fit at one observation.
type FitObservationResult struct {
	IodineValue         float64       `json:"iodine_value"`
	PathVariable        float64       `json:"path_variable"`
	RMSPercentagePoints float64       `json:"rms_percentage_points"`
	Residuals           []FitResidual `json:"residuals"`
}

// FitResponse is the answer of POST /v1/hardening/fit.
type FitResponse struct {
	Catalyst            CatalystParameters     `json:"catalyst"`
	Parameters          []FitParameter         `json:"parameters"`
	Observations        []FitObservationResult `json:"observations"`
	RMSPercentagePoints float64                `json:"rms_percentage_points"`
	RSquared            *float64               `json:"r_squared"`
	Iterations          int                    `json:"iterations"`
	Evaluations         int                    `json:"evaluations"`
	Warnings            []WarningBody          `json:"warnings"`
}

// finiteOrNil turns an undefined (NaN or infinite) figure into null.
func finiteOrNil(v float64) *float64 {
	if math.IsNaN(v) || math.IsInf(v, 0) {
		return nil
	}
	return &v
}

var fitPath = renameFirst(map[string]string{"free": "free_parameters"})

func handleFit(cat *chem.Catalogue, rec Recorder) echo.HandlerFunc {
	return func(c echo.Context) error {
		var body FitRequest
		if err := decodeStrict(c, &body); err != nil {
			return err
		}
		feed, err := toChemProfile(cat, body.Feed, "feed")
		if err != nil {
			return err
		}
		warnings := toWarnings(feed.Warnings, "feed")
		obs := make([]hardening.Observation, len(body.Observations))
		computed := make(map[int]bool) // observations whose iodine value came from the profile
		for i, o := range body.Observations {
			p, err := toChemProfile(cat, o.Profile, "observations", i, "profile")
			if err != nil {
				return err
			}
			warnings = append(warnings, toWarnings(p.Warnings, "observations", i, "profile")...)
			obs[i] = hardening.Observation{Profile: p}
			if o.IodineValue != nil {
				obs[i].IodineValue = *o.IodineValue
			} else {
				obs[i].IodineValue = chem.IodineValue(p, chem.MaterialTAG)
				computed[i] = true
				warnings = append(warnings, WarningBody{Code: "iodine_value_computed",
					Message: fmt.Sprintf("no iodine value given; the profile's exact iodine value %.2f was used", obs[i].IodineValue),
					Pointer: Pointer("observations", i, "iodine_value")})
			}
		}
		req := hardening.NewFitRequest(feed, obs)
		if body.Initial != nil {
			if req.Initial, _, err = toCatalyst(body.Initial, "/initial"); err != nil {
				return err
			}
		}
		for i, name := range body.FreeParameters {
			p, ok := hardening.ParseParameter(name)
			if !ok {
				return NewError(KindMalformed, "unknown parameter", FieldError{Pointer: Pointer("free_parameters", i), Reason: "not a catalyst parameter"})
			}
			req.Free = append(req.Free, p)
		}
		if body.MaxIterations != nil {
			req.MaxIterations = int(*body.MaxIterations)
		}
		res, err := hardening.Fit(c.Request().Context(), cat, req)
		if err != nil {
			// A computed iodine value is the profile's: point there, at
			// what the client sent.
			return mapErrorPaths(err, func(path []any) []any {
				if len(path) == 3 && path[0] == "observations" && path[2] == "iodine_value" {
					if i, ok := path[1].(int); ok && computed[i] {
						return []any{"observations", i, "profile"}
					}
				}
				return fitPath(path)
			})
		}
		rec.Calculation("hardening_fit")
		rec.SolverIterations("hardening_fit", res.Iterations)
		warnings = append(warnings, toWarnings(mapWarningPaths(res.Warnings, fitPath))...)
		return respond(c, http.StatusOK, fromFit(res, warnings))
	}
}

func fromFit(r *hardening.FitResult, warnings []WarningBody) FitResponse {
	out := FitResponse{
		Catalyst:            fromCatalyst(r.Catalyst),
		RMSPercentagePoints: r.RMSPercentagePoints,
		RSquared:            finiteOrNil(r.RSquared),
		Iterations:          r.Iterations,
		Evaluations:         r.Evaluations,
		Warnings:            warnings,
	}
	for _, p := range r.Parameters {
		out.Parameters = append(out.Parameters, FitParameter{
			Name: p.Parameter.String(), Value: p.Value, Free: p.Free, StandardError: p.StandardError,
		})
	}
	for _, o := range r.Observations {
		or := FitObservationResult{IodineValue: o.IodineValue, PathVariable: o.PathVariable, RMSPercentagePoints: o.RMSPercentagePoints}
		for _, g := range o.Residuals {
			or.Residuals = append(or.Residuals, FitResidual{
				Group: g.Group, ObservedPercent: g.Observed, PredictedPercent: g.Predicted, ResidualPercent: g.Residual,
			})
		}
		out.Observations = append(out.Observations, or)
	}
	return out
}
