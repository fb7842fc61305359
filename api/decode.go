package api

import (
	"bytes"
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"math"
	"net/http"
	"reflect"
	"strings"

	"github.com/labstack/echo/v4"
)

// decodeStrict reads the JSON body into v, rejecting unknown fields,
// trailing data and anything that does not fit the Go types. It is the
// second validation layer after the OpenAPI schema, and protects handlers
// even when they are mounted without the validator.
func decodeStrict(c echo.Context, v any) error {
	body, err := io.ReadAll(c.Request().Body)
	if err != nil {
		var mbe *http.MaxBytesError
		if errors.As(err, &mbe) {
			return err
		}
		return NewError(KindMalformed, "the request body could not be read")
	}
	if err := checkDuplicateKeys(body); err != nil {
		return err
	}
	dec := json.NewDecoder(bytes.NewReader(body))
	dec.DisallowUnknownFields()
	if err := dec.Decode(v); err != nil {
		return jsonError(err)
	}
	if dec.More() {
		return NewError(KindMalformed, "the request body has data after the JSON value", FieldError{Pointer: "", Reason: "trailing data after the JSON value"})
	}
	var extra json.RawMessage
	if err := dec.Decode(&extra); err != io.EOF {
		return NewError(KindMalformed, "the request body has data after the JSON value", FieldError{Pointer: "", Reason: "trailing data after the JSON value"})
	}
	return nil
}

func jsonError(err error) *Error {
	var syn *json.SyntaxError
	var typ *json.UnmarshalTypeError
	switch {
	case errors.As(err, &syn):
		return NewError(KindMalformed, fmt.Sprintf("the request body is not valid JSON (at byte %d)", syn.Offset),
			FieldError{Pointer: "", Reason: syn.Error()})
	case errors.As(err, &typ):
		ptr := ""
		if typ.Field != "" {
			ptr = "/" + strings.ReplaceAll(typ.Field, ".", "/")
		}
		return NewError(KindMalformed, "a field has the wrong type",
			FieldError{Pointer: ptr, Reason: fmt.Sprintf("expected %s, got JSON %s", typ.Type, typ.Value)})
	case errors.Is(err, io.EOF), errors.Is(err, io.ErrUnexpectedEOF):
		return NewError(KindMalformed, "the request body is empty or cut short", FieldError{Pointer: "", Reason: "incomplete JSON"})
	case strings.HasPrefix(err.Error(), "json: unknown field "):
		name := strings.Trim(strings.TrimPrefix(err.Error(), "json: unknown field "), `"`)
		return NewError(KindMalformed, "the request has a field the contract does not define",
			FieldError{Pointer: "", Reason: "unknown field " + name})
	}
	return NewError(KindMalformed, "the request body is not valid JSON", FieldError{Pointer: "", Reason: err.Error()})
}

// respond writes a JSON success body. Encoding fails on NaN or ±Inf, which
// the error handler then answers as an internal error, so a non-finite
// number never reaches a client.
func respond(c echo.Context, status int, v any) error {
	body, err := json.Marshal(v)
	if err != nil {
		return fmt.Errorf("encoding response: %w", err)
	}
	return c.JSONBlob(status, body)
}

// checkDuplicateKeys rejects an object that names the same member twice:
// encoding/json would keep the last silently, and a value silently dropped
// is a wrong certificate. Malformed JSON is left to the decoder's message.
func checkDuplicateKeys(body []byte) error {
	dec := json.NewDecoder(bytes.NewReader(body))
	dec.UseNumber()
	var walk func(path []any) error
	walk = func(path []any) error {
		tok, err := dec.Token()
		if err != nil {
			return nil
		}
		switch tok {
		case json.Delim('{'):
			seen := map[string]bool{}
			for dec.More() {
				kt, err := dec.Token()
				if err != nil {
					return nil
				}
				key, _ := kt.(string)
				p := append(append([]any{}, path...), key)
				if seen[key] {
					return NewError(KindMalformed, "the request names a field twice",
						FieldError{Pointer: Pointer(p...), Reason: "duplicate member " + key})
				}
				seen[key] = true
				if err := walk(p); err != nil {
					return err
				}
			}
			_, _ = dec.Token()
		case json.Delim('['):
			for i := 0; dec.More(); i++ {
				if err := walk(append(append([]any{}, path...), i)); err != nil {
					return err
				}
			}
			_, _ = dec.Token()
		}
		return nil
	}
	return walk(nil)
}

// enumValue reads an enumerated field through its name table; an unknown
// name is a malformed request pointing at the field. (The OpenAPI schema
// rejects it first; this keeps handlers safe without the validator.)
func enumValue[T any](m map[string]T, s, pointer, reason string) (T, error) {
	v, ok := m[s]
	if !ok {
		var zero T
		return zero, NewError(KindMalformed, "unknown value", FieldError{Pointer: pointer, Reason: reason})
	}
	return v, nil
}

// Integer is a request integer. JSON Schema's "integer" (and so the
// contract's validator) accepts a whole number in any JSON spelling — 3,
// 3.0, 3e0 — which Go's int decoding would refuse; Integer takes them all.
// The validator has already checked that the value is whole and in range.
type Integer int

// UnmarshalJSON reads a whole JSON number.
func (n *Integer) UnmarshalJSON(b []byte) error {
	var f float64
	if err := json.Unmarshal(b, &f); err != nil {
		return err
	}
	if f != math.Trunc(f) || math.Abs(f) > 1<<53 {
		return &json.UnmarshalTypeError{Value: "number " + string(b), Type: reflect.TypeFor[int]()}
	}
	*n = Integer(f)
	return nil
}
