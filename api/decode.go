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
	"strconv"
	"strings"
	"sync"
	"unicode/utf8"

	"github.com/labstack/echo/v4"
	segjson "github.com/segmentio/encoding/json"
)

// ContextKeyBody is where the body-reading middleware leaves the request
// body it read (a []byte), so that nothing reads it twice.
const ContextKeyBody = "lipidsvc.body"

// Body returns the request body: the bytes the body-reading middleware left
// in the context, or, for a handler mounted without it, the body read now
// and checked for duplicate members (the middleware's duty otherwise).
func Body(c echo.Context) ([]byte, error) {
	if b, ok := c.Get(ContextKeyBody).([]byte); ok {
		return b, nil
	}
	body, err := io.ReadAll(c.Request().Body)
	if err != nil {
		var mbe *http.MaxBytesError
		if errors.As(err, &mbe) {
			return nil, err
		}
		return nil, NewError(KindMalformed, "the request body could not be read")
	}
	if err := CheckDuplicateMembers(body); err != nil {
		return nil, err
	}
	return body, nil
}

// CheckDuplicateMembers refuses a body that names a member of one object
// twice, pointing at the second.
func CheckDuplicateMembers(body []byte) error {
	if ptr, dup := DuplicateMember(body); dup {
		return NewError(KindMalformed, "the request names a field twice",
			FieldError{Pointer: ptr, Reason: "duplicate member " + lastToken(ptr)})
	}
	return nil
}

// lastToken is the last reference token of a JSON pointer, unescaped.
func lastToken(ptr string) string {
	t := ptr[strings.LastIndexByte(ptr, '/')+1:]
	return strings.ReplaceAll(strings.ReplaceAll(t, "~1", "/"), "~0", "~")
}

// decode reads the JSON body into v, once, rejecting unknown fields,
// trailing data and anything that does not fit the Go types. It is the
// strict layer after the contract's validation, and protects handlers even
// when they are mounted without it.
func decode(c echo.Context, v any) error {
	body, err := Body(c)
	if err != nil {
		return err
	}
	return decodeBytes(body, v)
}

// decodeBytes is decode's strict decoding of bytes already read.
func decodeBytes(body []byte, v any) error {
	rest, err := segjson.Parse(body, v, segjson.DisallowUnknownFields)
	if err != nil {
		return jsonError(err)
	}
	if len(rest) > 0 {
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
// number never reaches a client. The body is encoded into a pooled buffer
// and sent with its length declared, in one piece.
func respond(c echo.Context, status int, v any) error {
	bp := responseBuffers.Get().(*[]byte)
	defer func() {
		if cap(*bp) <= maxPooledResponse {
			responseBuffers.Put(bp)
		}
	}()
	var body []byte
	var err error
	if a, ok := v.(jsonAppender); ok {
		body, err = a.AppendJSON((*bp)[:0])
	} else {
		body, err = segjson.Append((*bp)[:0], v, segjson.SortMapKeys)
	}
	if err != nil {
		return fmt.Errorf("encoding response: %w", err)
	}
	*bp = body
	h := c.Response().Header()
	h.Set(echo.HeaderContentType, echo.MIMEApplicationJSON)
	h.Set(echo.HeaderContentLength, strconv.Itoa(len(body)))
	c.Response().WriteHeader(status)
	_, err = c.Response().Write(body)
	return err
}

// jsonAppender is a response that encodes itself (a hot path written by
// hand).
type jsonAppender interface {
	AppendJSON(b []byte) ([]byte, error)
}

// responseBuffers recycles encoding buffers; one larger than
// maxPooledResponse (a long path table, a big batch) is left to the
// collector rather than kept.
var responseBuffers = sync.Pool{New: func() any { b := make([]byte, 0, 8<<10); return &b }}

const maxPooledResponse = 256 << 10

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

// Byte-order marks: UTF-8's is dropped (spreadsheet and LIMS exports
// often start with one; RFC 8259 §8.1 lets a parser ignore it); UTF-16's
// means the body is not UTF-8 at all.
var (
	bomUTF8    = []byte{0xEF, 0xBB, 0xBF}
	bomUTF16BE = []byte{0xFE, 0xFF}
	bomUTF16LE = []byte{0xFF, 0xFE}
)

// CheckEncoding drops a UTF-8 byte-order mark and refuses a body that is
// not UTF-8, saying where.
func CheckEncoding(body []byte) ([]byte, error) {
	if bytes.HasPrefix(body, bomUTF16BE) || bytes.HasPrefix(body, bomUTF16LE) {
		return nil, NewError(KindUnsupportedMedia,
			"the request body is UTF-16 (it starts with a UTF-16 byte-order mark); send it as UTF-8")
	}
	body = bytes.TrimPrefix(body, bomUTF8)
	if !utf8.Valid(body) {
		at := 0
		for at < len(body) {
			r, n := utf8.DecodeRune(body[at:])
			if r == utf8.RuneError && n <= 1 {
				break
			}
			at += n
		}
		return nil, NewError(KindMalformed, "the request body is not valid UTF-8",
			FieldError{Pointer: "", Reason: fmt.Sprintf("invalid UTF-8 at byte %d; is the export in another encoding (for example Latin-1)? send it as UTF-8", at)})
	}
	return body, nil
}
