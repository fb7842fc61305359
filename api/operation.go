package api

import (
	"context"
	"net/http"

	"github.com/labstack/echo/v4"
)

// operation computes one calculation's answer from its request body (read
// and validated against the contract): the whole of what a POST route
// does between the bytes in and the answer out, shared by the route and by
// the batch evaluations.
type operation func(ctx context.Context, body []byte) (traced, error)

// handle mounts an operation as a route: the body the middleware read, the
// calculation, the provenance record, the answer.
func (d *Deps) handle(name string, run operation) echo.HandlerFunc {
	return func(c echo.Context) error {
		body, err := Body(c)
		if err != nil {
			return err
		}
		ans, err := run(c.Request().Context(), body)
		if err != nil {
			return err
		}
		ans.setProvenance(d.provenance(name, RequestID(c), parametersOf(body), ans.methods()))
		return respond(c, http.StatusOK, ans)
	}
}

// provenance is the record of one answer.
func (d *Deps) provenance(operation, requestID string, params []byte, methods []string) *Provenance {
	return &Provenance{Service: ServiceName, Version: d.Version, RequestID: requestID, Operation: operation,
		Methods: methods, Parameters: params}
}
