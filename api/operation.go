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

// runPart runs an operation on a request assembled from parts of another
// (a batch sample with the batch's options, a plot's samples): the
// assembled body is validated against the operation's contract first,
// and the pointers of its problems are mapped back into the outer request
// with mapPtr. The batch and the plots share it, so a part is checked and
// answered exactly as the operation's own route would.
func (d *Deps) runPart(ctx context.Context, op string, run operation, body []byte, mapPtr func(string) string) (traced, error) {
	remap := func(e *Error) *Error {
		for i := range e.Fields {
			e.Fields[i].Pointer = mapPtr(e.Fields[i].Pointer)
		}
		return e
	}
	if d.Validate != nil {
		violations, err := d.Validate(op, body)
		if err != nil {
			return nil, NewError(KindMalformed, "the request body is not valid JSON", FieldError{Pointer: "", Reason: err.Error()})
		}
		if len(violations) > 0 {
			return nil, remap(ContractError(violations))
		}
	}
	ans, err := run(ctx, body)
	if err != nil {
		return nil, remap(classify(err))
	}
	return ans, nil
}
