package service

import (
	"bytes"
	"context"
	"errors"
	"fmt"
	"io"
	"mime"
	"net/http"
	"strings"

	"github.com/getkin/kin-openapi/openapi3"
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
	if _, err := compileBodies(doc); err != nil {
		return nil, fmt.Errorf("compiling the request schemas of openapi.yaml: %w", err)
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

// readBodies is the one place a request body is read. For each documented
// operation with a body it checks the media type, reads the body once
// (after the size limit, which bodyLimit set), refuses an empty body and a
// member named twice in one object, validates the bytes against the
// operation's compiled schema, and leaves them in the context for the
// handler, which decodes them once. Routing is echo's, so no servers: host
// matching gets in the way behind an ingress; undocumented routes pass to
// routing, which answers 404 or 405.
func readBodies(schemas map[string]*schemaNode) echo.MiddlewareFunc {
	return func(next echo.HandlerFunc) echo.HandlerFunc {
		return func(c echo.Context) error {
			req := c.Request()
			schema := schemas[req.Method+" "+c.Path()]
			if schema == nil {
				return next(c)
			}
			if err := checkMediaType(req); err != nil {
				return err
			}
			body, err := readBody(req)
			if err != nil {
				return err
			}
			if body, err = api.CheckEncoding(body); err != nil {
				return err
			}
			if len(bytes.TrimSpace(body)) == 0 {
				return api.NewError(api.KindMalformed, "the request body is empty", api.FieldError{Pointer: "", Reason: "a JSON object is required"})
			}
			violations, unchecked, err := validateBody(schema, body)
			if err != nil {
				return api.NewError(api.KindMalformed, "the request body is not valid JSON",
					api.FieldError{Pointer: "", Reason: "the body is not valid JSON: " + err.Error()})
			}
			if unchecked {
				// Objects the schema does not name the fields of: the
				// scan finds duplicates there.
				if err := api.CheckDuplicateMembers(body); err != nil {
					return err
				}
			}
			if len(violations) > 0 {
				return api.ContractError(violations)
			}
			if release, ok := c.Get(contextKeyReleaseBody).(func()); ok {
				release() // read and checked: the slot goes to the next body
			}
			c.Set(api.ContextKeyBody, body)
			return next(c)
		}
	}
}

// readBody reads the whole body, in one allocation when its length is
// declared. An over-long body (http.MaxBytesReader) is handed to the error
// handler, which answers 413.
func readBody(req *http.Request) ([]byte, error) {
	var body []byte
	var err error
	if n := req.ContentLength; n > 0 {
		body = make([]byte, n)
		_, err = io.ReadFull(req.Body, body)
		if err == nil {
			// A body longer than declared is a framing error net/http
			// already refuses; read to EOF to surface a limit error.
			var one [1]byte
			if k, rerr := req.Body.Read(one[:]); k > 0 {
				err = errors.New("body longer than its Content-Length")
			} else if rerr != nil && rerr != io.EOF {
				err = rerr
			}
		}
	} else {
		body, err = io.ReadAll(req.Body)
	}
	if err != nil {
		var mbe *http.MaxBytesError
		if errors.As(err, &mbe) {
			return nil, err
		}
		return nil, api.NewError(api.KindMalformed, "the request body could not be read")
	}
	return body, nil
}

// checkMediaType accepts application/json, in UTF-8 (no charset, or
// charset utf-8), with no content coding; anything else is 415 (RFC 9110
// §15.5.16, RFC 7694). JSON exchanged between systems is UTF-8 (RFC 8259
// §8.1), so another charset is refused rather than guessed at.
func checkMediaType(req *http.Request) error {
	ct := req.Header.Get(echo.HeaderContentType)
	mt, params, err := mime.ParseMediaType(ct)
	if ct == "" || err != nil || mt != "application/json" {
		return api.NewError(api.KindUnsupportedMedia,
			fmt.Sprintf("the request body must be application/json, not %q", ct))
	}
	if cs, ok := params["charset"]; ok && !strings.EqualFold(cs, "utf-8") && !strings.EqualFold(cs, "utf8") {
		return api.NewError(api.KindUnsupportedMedia,
			fmt.Sprintf("the request body must be UTF-8 JSON, not charset %q; convert the export to UTF-8 and send it without a charset or with charset=utf-8", cs))
	}
	if enc := req.Header.Get("Content-Encoding"); enc != "" && !strings.EqualFold(enc, "identity") {
		return api.NewError(api.KindUnsupportedMedia,
			fmt.Sprintf("the request body must not be encoded (Content-Encoding %q)", enc))
	}
	return nil
}
