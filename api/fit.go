package api

import (
	"context"
	"math"

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
	Provenance          *Provenance            `json:"provenance,omitempty"`
	Warnings            []WarningBody          `json:"warnings"`
}

// finiteOrNil turns an undefined (NaN or infinite) figure into null.
func finiteOrNil(v float64) *float64 {
	if math.IsNaN(v) || math.IsInf(v, 0) {
		return nil
	}
	return &v
}

// input copies the request into the science's shape.
func (b *FitRequest) input() hardening.FitInput {
	in := hardening.FitInput{
		Feed:           b.Feed.input(),
		Observations:   make([]hardening.FitObservationInput, len(b.Observations)),
		FreeParameters: b.FreeParameters,
		MaxIterations:  intPtr(b.MaxIterations),
	}
	if b.Initial != nil {
		in.Initial = b.Initial.input()
	}
	for i, o := range b.Observations {
		in.Observations[i] = hardening.FitObservationInput{Profile: o.Profile.input(), IodineValue: o.IodineValue}
	}
	return in
}

func runFit(cat *chem.Catalogue, rec Recorder) operation {
	return func(ctx context.Context, b []byte) (traced, error) {
		var body FitRequest
		if err := decodeBytes(b, &body); err != nil {
			return nil, err
		}
		res, err := hardening.Fit(ctx, cat, body.input())
		if err != nil {
			return nil, err
		}
		rec.Calculation("hardening_fit")
		rec.SolverIterations("hardening_fit", res.Iterations)
		out := fromFit(res)
		return &out, nil
	}
}

func fromFit(a *hardening.FitAnswer) FitResponse {
	r := a.FitResult
	out := FitResponse{
		Catalyst:            fromCatalyst(r.Catalyst),
		RMSPercentagePoints: r.RMSPercentagePoints,
		RSquared:            finiteOrNil(r.RSquared),
		Iterations:          r.Iterations,
		Evaluations:         r.Evaluations,
		Warnings:            toWarnings(a.Warnings),
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
