package service

import (
	"bytes"
	"context"
	"errors"
	"fmt"
	"io"
	"mime"
	"net/http"
	"regexp"
	"sort"
	"strings"

	"github.com/getkin/kin-openapi/openapi3"
	"github.com/getkin/kin-openapi/openapi3filter"
	"github.com/getkin/kin-openapi/routers"
	"github.com/labstack/echo/v4"

	"lipidsvc/api"
)

// LoadSpec parses and validates the OpenAPI document; the service refuses to
// start with an invalid contract.
func LoadSpec(ctx context.Context, raw []byte) (*openapi3.T, error) {
	loader := openapi3.NewLoader()
	doc, err := loader.LoadFromData(raw)
	if err != nil {
		return nil, fmt.Errorf("parsing openapi.yaml: %w", err)
	}
	if err := doc.Validate(ctx); err != nil {
		return nil, fmt.Errorf("validating openapi.yaml: %w", err)
	}
	return doc, nil
}

// openAPIToEchoPath turns an OpenAPI path (/v1/x/{id}) into the form of
// echo's route templates (/v1/x/:id).
func openAPIToEchoPath(p string) string {
	parts := strings.Split(p, "/")
	for i, s := range parts {
		if strings.HasPrefix(s, "{") && strings.HasSuffix(s, "}") {
			parts[i] = ":" + s[1:len(s)-1]
		}
	}
	return strings.Join(parts, "/")
}

// operationRoutes indexes every documented operation by echo route template
// and method, built once so that a request only does a map lookup.
func operationRoutes(doc *openapi3.T) map[string]*routers.Route {
	out := map[string]*routers.Route{}
	for path, item := range doc.Paths.Map() {
		for method, op := range item.Operations() {
			out[method+" "+openAPIToEchoPath(path)] = &routers.Route{
				Spec: doc, Path: path, PathItem: item, Method: method, Operation: op,
			}
		}
	}
	return out
}

// validateRequests checks each request against the operation echo routed it
// to: media type, then body and parameters against the schema. Routing is
// echo's, so no servers: host matching gets in the way behind an ingress.
func validateRequests(doc *openapi3.T) echo.MiddlewareFunc {
	opts := &openapi3filter.Options{
		MultiError:          true,
		SkipSettingDefaults: true,
		AuthenticationFunc:  openapi3filter.NoopAuthenticationFunc,
	}
	routes := operationRoutes(doc)
	return func(next echo.HandlerFunc) echo.HandlerFunc {
		return func(c echo.Context) error {
			req := c.Request()
			route := routes[req.Method+" "+c.Path()]
			if route == nil {
				return next(c) // undocumented: routing answers 404 or 405
			}
			var body []byte
			if route.Operation.RequestBody != nil {
				if err := checkMediaType(req); err != nil {
					return err
				}
				var err error
				body, err = io.ReadAll(req.Body)
				if err != nil {
					var mbe *http.MaxBytesError
					if errors.As(err, &mbe) {
						return err // the error handler answers 413
					}
					return api.NewError(api.KindMalformed, "the request body could not be read")
				}
				req.Body = io.NopCloser(bytes.NewReader(body))
				if len(bytes.TrimSpace(body)) == 0 {
					return api.NewError(api.KindMalformed, "the request body is empty", api.FieldError{Pointer: "", Reason: "a JSON object is required"})
				}
			}
			input := &openapi3filter.RequestValidationInput{
				Request: req,
				Route:   route,
				Options: opts,
			}
			if err := openapi3filter.ValidateRequest(req.Context(), input); err != nil {
				return contractError(err)
			}
			if body != nil {
				req.Body = io.NopCloser(bytes.NewReader(body))
			}
			return next(c)
		}
	}
}

// checkMediaType accepts application/json (any charset parameter) with no
// content coding; anything else is 415 (RFC 9110 §15.5.16, RFC 7694).
func checkMediaType(req *http.Request) error {
	ct := req.Header.Get(echo.HeaderContentType)
	mt, _, err := mime.ParseMediaType(ct)
	if ct == "" || err != nil || mt != "application/json" {
		return api.NewError(api.KindUnsupportedMedia,
			fmt.Sprintf("the request body must be application/json, not %q", ct))
	}
	if enc := req.Header.Get("Content-Encoding"); enc != "" && !strings.EqualFold(enc, "identity") {
		return api.NewError(api.KindUnsupportedMedia,
			fmt.Sprintf("the request body must not be encoded (Content-Encoding %q)", enc))
	}
	return nil
}

// contractError turns kin-openapi's validation errors into one malformed-
// request error with a JSON pointer per failure; the schema's own text is
// never echoed.
func contractError(err error) error {
	var fields []api.FieldError
	collectFieldErrors(err, &fields)
	sort.SliceStable(fields, func(i, j int) bool { return fields[i].Pointer < fields[j].Pointer })
	fields = dedupe(fields)
	detail := "the request does not match the contract"
	if len(fields) == 1 {
		detail += ": " + fields[0].Reason
	}
	return api.NewError(api.KindMalformed, detail, fields...)
}

func dedupe(in []api.FieldError) []api.FieldError {
	var out []api.FieldError
	seen := map[string]bool{}
	for _, f := range in {
		k := f.Pointer + "\x00" + f.Reason
		if !seen[k] {
			seen[k] = true
			out = append(out, f)
		}
	}
	return out
}

func collectFieldErrors(err error, out *[]api.FieldError) {
	var multi openapi3.MultiError
	if errors.As(err, &multi) {
		for _, e := range multi {
			collectFieldErrors(e, out)
		}
		return
	}
	var reqErr *openapi3filter.RequestError
	if errors.As(err, &reqErr) && reqErr.Err != nil {
		var parseErr *openapi3filter.ParseError
		if errors.As(reqErr.Err, &parseErr) {
			*out = append(*out, api.FieldError{Pointer: "", Reason: "the body is not valid JSON: " + rootCause(parseErr)})
			return
		}
		if reqErr.Parameter != nil {
			*out = append(*out, api.FieldError{Pointer: "", Reason: fmt.Sprintf("parameter %q: %s", reqErr.Parameter.Name, reqErr.Reason)})
			return
		}
		collectFieldErrors(reqErr.Err, out)
		return
	}
	var schemaErr *openapi3.SchemaError
	if errors.As(err, &schemaErr) {
		path := toAny(schemaErr.JSONPointer())
		// An unknown property is reported at its parent; point at the
		// property itself.
		if m := unsupportedRe.FindStringSubmatch(schemaErr.Reason); m != nil {
			path = append(path, m[1])
		}
		*out = append(*out, api.FieldError{Pointer: api.Pointer(path...), Reason: schemaErr.Reason})
		return
	}
	*out = append(*out, api.FieldError{Pointer: "", Reason: "the request does not match the contract"})
}

var unsupportedRe = regexp.MustCompile(`^property "(.+)" is unsupported$`)

func rootCause(err error) string {
	for {
		u := errors.Unwrap(err)
		if u == nil {
			return err.Error()
		}
		err = u
	}
}

func toAny(ss []string) []any {
	out := make([]any, len(ss))
	for i, s := range ss {
		out[i] = s
	}
	return out
}
