package service

import (
	"fmt"

	"github.com/getkin/kin-openapi/openapi3"

	"lipidsvc/api"
)

// Streamed operations (the extension x-lipidsvc-streamed: true) read and
// validate their own bodies, part by part, with the validator below: a
// batch is checked sample by sample, so that one bad sample gets its own
// problem instead of failing the others, and a stream is never held whole.
// The body-reading middleware, the body limit and the request time limit
// pass them by; the handler applies its own limits.
const streamedExtension = "x-lipidsvc-streamed"

// streamedRoutes lists the streamed operations by method and echo route
// template.
func streamedRoutes(doc *openapi3.T) map[string]bool {
	out := map[string]bool{}
	for path, item := range doc.Paths.Map() {
		for method, op := range item.Operations() {
			if v, ok := op.Extensions[streamedExtension].(bool); ok && v {
				out[method+" "+openAPIToEchoPath(path)] = true
			}
		}
	}
	return out
}

// compileContract compiles, once at start-up, every schema a request or a
// part of one is validated against: "POST /v1/properties" is an
// operation's request body (echo route template),
// "#/components/schemas/Name" a component schema.
func compileContract(doc *openapi3.T) (map[string]*schemaNode, error) {
	bodies, err := compileBodies(doc)
	if err != nil {
		return nil, err
	}
	c := &compiler{done: map[*openapi3.Schema]*schemaNode{}}
	for name, ref := range doc.Components.Schemas {
		if ref == nil || ref.Value == nil {
			continue
		}
		n, err := c.compile(ref.Value, "#/components/schemas/"+name)
		if err != nil {
			// A response-only schema may use keywords the request
			// validator does not know; it is never validated here.
			continue
		}
		bodies["#/components/schemas/"+name] = n
	}
	return bodies, nil
}

// newValidator is the validator the handlers check parts of a body with,
// over the compiled schemas.
func newValidator(bodies map[string]*schemaNode) api.Validator {
	return func(schema string, body []byte) ([]api.FieldError, error) {
		n := bodies[schema]
		if n == nil {
			return nil, fmt.Errorf("service: no compiled schema %q", schema)
		}
		violations, unchecked, err := validateBody(n, body)
		if err != nil {
			return nil, err
		}
		if unchecked {
			if ptr, dup := api.DuplicateMember(body); dup {
				violations = append(violations, api.FieldError{Pointer: ptr, Reason: "duplicate member"})
			}
		}
		return violations, nil
	}
}
