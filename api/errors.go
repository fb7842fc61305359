package api

import (
	"context"
	"encoding/json"
	"errors"
	"fmt"
	"log/slog"
	"net/http"
	"strconv"

	"github.com/labstack/echo/v4"

	"lipidsvc/chem"
)

// Kind is the API's small error vocabulary.
type Kind int

const (
	// KindInternal is anything unexpected; its cause is logged, never shown.
	KindInternal Kind = iota
	// KindMalformed: the request does not match the contract.
	KindMalformed
	// KindTooLarge: the body exceeds the configured limit.
	KindTooLarge
	// KindUnsupportedMedia: the body is not JSON.
	KindUnsupportedMedia
	// KindInvalidInput: the request matches the contract but breaks a
	// domain rule (an unknown acid label, a profile whose sum is off).
	KindInvalidInput
	// KindOutsideModel: the request is valid but asks for something outside
	// what the model can answer (a target above the feed, nothing to harden).
	KindOutsideModel
	// KindNoConvergence: a solver hit its iteration cap.
	KindNoConvergence
	// KindNotFound: no such route.
	KindNotFound
	// KindMethodNotAllowed: the route exists for other methods.
	KindMethodNotAllowed
	// KindUnavailable: the request ran out of time or the instance is
	// shutting down.
	KindUnavailable
	// KindClientClosed: the client went away before the answer was ready
	// (its request context was cancelled). Nobody reads the answer; the
	// status 499 (a common proxy convention, not an HTTP status) keeps such
	// requests apart from the service's own failures in logs and metrics.
	KindClientClosed
	// KindUnauthorized: no API key, or one that is not valid.
	KindUnauthorized
	// KindOverloaded: the request's cost class is at its in-flight limit;
	// retry after the Retry-After header's seconds.
	KindOverloaded
	// KindWorkCap: the request asks for more work than the service does
	// for one request (iterations × problem size).
	KindWorkCap
)

// StatusClientClosed is the status recorded for KindClientClosed.
const StatusClientClosed = 499

// problemTypes is the only table from error kind to HTTP status.
var problemTypes = map[Kind]struct {
	status int
	slug   string
	title  string
}{
	KindInternal:         {http.StatusInternalServerError, "internal", "Internal error"},
	KindMalformed:        {http.StatusBadRequest, "malformed-request", "The request does not match the contract"},
	KindTooLarge:         {http.StatusRequestEntityTooLarge, "body-too-large", "The request body is too large"},
	KindUnsupportedMedia: {http.StatusUnsupportedMediaType, "unsupported-media-type", "The request body must be application/json"},
	KindInvalidInput:     {http.StatusUnprocessableEntity, "invalid-input", "The request breaks a rule of the science"},
	KindOutsideModel:     {http.StatusUnprocessableEntity, "outside-model-domain", "The request is outside what the model can answer"},
	KindNoConvergence:    {http.StatusUnprocessableEntity, "no-convergence", "The solver did not converge"},
	KindNotFound:         {http.StatusNotFound, "not-found", "No such resource"},
	KindMethodNotAllowed: {http.StatusMethodNotAllowed, "method-not-allowed", "Method not allowed on this resource"},
	KindUnavailable:      {http.StatusServiceUnavailable, "unavailable", "The service could not answer in time"},
	KindClientClosed:     {StatusClientClosed, "client-closed", "The client closed the request"},
	KindUnauthorized:     {http.StatusUnauthorized, "unauthorized", "A valid API key is required"},
	KindOverloaded:       {http.StatusServiceUnavailable, "overloaded", "The service is at its limit for this kind of request"},
	KindWorkCap:          {http.StatusUnprocessableEntity, "work-cap-exceeded", "The request asks for more work than one request may do"},
}

// RetryAfterSeconds is the Retry-After of an overloaded answer.
const RetryAfterSeconds = 1

// ProblemTypeBase prefixes every problem type URI.
const ProblemTypeBase = "urn:lipidsvc:problem:"

// FieldError points at one offending part of the request body.
type FieldError struct {
	Pointer     string   `json:"pointer"`
	Reason      string   `json:"reason"`
	Suggestions []string `json:"suggestions,omitempty"`
}

// Error is an error the API answers with a problem document.
type Error struct {
	Kind   Kind
	Detail string
	Fields []FieldError
	// Cause is logged for internal errors and never shown to the client.
	Cause error
}

// Error implements error.
func (e *Error) Error() string {
	if e.Cause != nil {
		return fmt.Sprintf("%s: %v", e.Detail, e.Cause)
	}
	return e.Detail
}

// Unwrap exposes the cause.
func (e *Error) Unwrap() error { return e.Cause }

// NewError builds an *Error.
func NewError(kind Kind, detail string, fields ...FieldError) *Error {
	return &Error{Kind: kind, Detail: detail, Fields: fields}
}

// Problem is an RFC 9457 problem details document.
type Problem struct {
	Type      string       `json:"type"`
	Title     string       `json:"title"`
	Status    int          `json:"status"`
	Detail    string       `json:"detail"`
	Instance  string       `json:"instance"`
	RequestID string       `json:"request_id"`
	Errors    []FieldError `json:"errors,omitempty"`
	// Evaluation names the batch evaluation that failed, in a batch
	// sample's problem.
	Evaluation string `json:"evaluation,omitempty"`
}

// ContextKeyRequestID is where the request-id middleware leaves the id in
// the echo context.
const ContextKeyRequestID = "lipidsvc.request_id"

// RequestID returns the request's id, or "" if none was set.
func RequestID(c echo.Context) string {
	id, _ := c.Get(ContextKeyRequestID).(string)
	return id
}

// Recorder counts domain events for metrics. The service supplies a
// Prometheus implementation; NopRecorder does nothing.
type Recorder interface {
	// Calculation counts one completed calculation of the given kind.
	Calculation(kind string)
	// Rejection counts one request answered with a 4xx problem of the given
	// problem slug.
	Rejection(slug string)
	// SolverIterations records how many iterations (or model evaluations)
	// an iterative solver of the given kind needed.
	SolverIterations(kind string, n int)
}

// NopRecorder is a Recorder that records nothing.
type NopRecorder struct{}

// Calculation implements Recorder.
func (NopRecorder) Calculation(string) {}

// Rejection implements Recorder.
func (NopRecorder) Rejection(string) {}

// SolverIterations implements Recorder.
func (NopRecorder) SolverIterations(string, int) {}

// classify turns any error into an *Error.
func classify(err error) *Error {
	var ae *Error
	if errors.As(err, &ae) {
		return ae
	}
	if ce, ok := chem.AsError(err); ok {
		return fromChem(ce)
	}
	var he *echo.HTTPError
	if errors.As(err, &he) {
		detail := http.StatusText(he.Code)
		if m, ok := he.Message.(string); ok && m != "" {
			detail = m
		}
		switch he.Code {
		case http.StatusNotFound:
			return NewError(KindNotFound, "no route matches this path")
		case http.StatusMethodNotAllowed:
			return NewError(KindMethodNotAllowed, "this route does not accept the method")
		case http.StatusRequestEntityTooLarge:
			return NewError(KindTooLarge, "the request body exceeds the configured limit")
		case http.StatusUnsupportedMediaType:
			return NewError(KindUnsupportedMedia, detail)
		case http.StatusBadRequest:
			return NewError(KindMalformed, detail)
		case http.StatusServiceUnavailable:
			return NewError(KindUnavailable, detail)
		}
		return &Error{Kind: KindInternal, Detail: "internal error", Cause: err}
	}
	var mbe *http.MaxBytesError
	if errors.As(err, &mbe) {
		return NewError(KindTooLarge, fmt.Sprintf("the request body exceeds the limit of %d bytes", mbe.Limit))
	}
	if errors.Is(err, context.DeadlineExceeded) {
		return &Error{Kind: KindUnavailable, Detail: "the calculation ran past the request time limit", Cause: err}
	}
	if errors.Is(err, context.Canceled) {
		return &Error{Kind: KindClientClosed, Detail: "the client closed the request before the answer was ready", Cause: err}
	}
	return &Error{Kind: KindInternal, Detail: "internal error", Cause: err}
}

// chemKinds maps the science's error kinds onto the API's.
var chemKinds = map[chem.ErrorKind]Kind{
	chem.KindMalformed:     KindMalformed,
	chem.KindInvalid:       KindInvalidInput,
	chem.KindOutOfDomain:   KindOutsideModel,
	chem.KindNoConvergence: KindNoConvergence,
	chem.KindWorkCap:       KindWorkCap,
}

// fromChem maps a domain error; its field paths, which name the request's
// fields, become JSON pointers.
func fromChem(ce *chem.Error) *Error {
	kind, ok := chemKinds[ce.Kind]
	if !ok {
		kind = KindInvalidInput
	}
	e := &Error{Kind: kind, Detail: ce.Message}
	if ce.Kind == chem.KindNoConvergence {
		e.Detail = "the solver did not converge: " + ce.Message
	}
	for _, f := range ce.Fields {
		e.Fields = append(e.Fields, FieldError{Pointer: Pointer(f.Path...), Reason: f.Reason, Suggestions: f.Suggestions})
	}
	if len(e.Fields) == 0 && len(ce.Suggestions) > 0 {
		e.Fields = append(e.Fields, FieldError{Pointer: "", Reason: ce.Message, Suggestions: ce.Suggestions})
	}
	return e
}

// Pointer builds an RFC 6901 JSON pointer from path elements ("~" and "/"
// in a member name escaped as "~0" and "~1"). It runs for every warning of
// every answer, so it appends into one buffer and allocates once.
func Pointer(path ...any) string {
	if len(path) == 0 {
		return ""
	}
	var stack [96]byte
	b := stack[:0]
	for _, p := range path {
		b = append(b, '/')
		switch v := p.(type) {
		case string:
			b = appendPointerToken(b, v)
		case int:
			b = strconv.AppendInt(b, int64(v), 10)
		default:
			b = appendPointerToken(b, fmt.Sprint(v))
		}
	}
	return string(b)
}

func appendPointerToken(b []byte, s string) []byte {
	for i := 0; i < len(s); i++ {
		switch c := s[i]; c {
		case '~':
			b = append(b, '~', '0')
		case '/':
			b = append(b, '~', '1')
		default:
			b = append(b, c)
		}
	}
	return b
}

// ErrorHandler is the echo error handler: the one place that writes error
// bodies. 5xx answers are logged with their cause; 4xx are counted.
func ErrorHandler(logger *slog.Logger, rec Recorder) echo.HTTPErrorHandler {
	return func(err error, c echo.Context) {
		if c.Response().Committed {
			return
		}
		e := classify(err)
		pt := problemTypes[e.Kind]
		p := Problem{
			Type:      ProblemTypeBase + pt.slug,
			Title:     pt.title,
			Status:    pt.status,
			Detail:    e.Detail,
			Instance:  c.Request().URL.Path,
			RequestID: RequestID(c),
			Errors:    e.Fields,
		}
		switch {
		case e.Kind == KindClientClosed:
			// Not a failure of ours: the access log records the 499.
		case e.Kind == KindOverloaded:
			// Deliberate shedding, counted by its own metric.
		case pt.status >= 500:
			logger.ErrorContext(c.Request().Context(), "request failed",
				"request_id", p.RequestID, "status", pt.status, "path", p.Instance, "cause", err.Error())
		default:
			rec.Rejection(pt.slug)
		}
		body, merr := json.Marshal(p)
		if merr != nil {
			body = []byte(`{"type":"` + ProblemTypeBase + `internal","title":"Internal error","status":500,"detail":"internal error","instance":"","request_id":""}`)
			pt.status = http.StatusInternalServerError
		}
		switch e.Kind {
		case KindOverloaded:
			c.Response().Header().Set("Retry-After", strconv.Itoa(RetryAfterSeconds))
		case KindUnauthorized:
			c.Response().Header().Set("WWW-Authenticate", `Bearer realm="lipidsvc"`)
		}
		if c.Request().Method == http.MethodHead {
			_ = c.NoContent(pt.status)
			return
		}
		_ = c.Blob(pt.status, "application/problem+json", body)
	}
}
