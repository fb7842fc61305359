package chem

import (
	"errors"
	"fmt"
)

// ErrorKind classifies a domain error so that an adapter (the HTTP API) can
// map it to its own vocabulary without parsing messages.
type ErrorKind int

const (
	// KindInvalid: the input is well formed but breaks a domain rule
	// (an unknown acid label, a profile whose sum is off, a negative mass).
	KindInvalid ErrorKind = iota + 1
	// KindOutOfDomain: the input is valid, but the requested calculation is
	// outside what the model can answer (a target above the feed, nothing to
	// harden).
	KindOutOfDomain
	// KindNoConvergence: an iterative solver hit its iteration cap.
	KindNoConvergence
	// KindMalformed: the input does not have the shape the entry point
	// takes: a required part is missing, a name is not one of the allowed
	// values, or parts that exclude each other are given together. An
	// adapter that validates its own contract first rarely sees it; a
	// caller of the package without one gets the same answer.
	KindMalformed
	// KindWorkCap: the request asks for more work than one request may do
	// (iterations times problem size beyond the entry point's cap).
	KindWorkCap
)

// String names the kind for logs and tests.
func (k ErrorKind) String() string {
	switch k {
	case KindInvalid:
		return "invalid"
	case KindOutOfDomain:
		return "out_of_domain"
	case KindNoConvergence:
		return "no_convergence"
	case KindMalformed:
		return "malformed"
	case KindWorkCap:
		return "work_cap"
	default:
		return "unknown"
	}
}

// FieldError points at one offending part of the input. Path is a list of
// field names and indices in the caller's vocabulary (for example
// ["acids", 3, "acid"]); the adapter turns it into a JSON pointer.
type FieldError struct {
	Path   []any
	Reason string
	// Suggestions are known values close to the rejected one, best first.
	Suggestions []string
}

// Error is the one error type chem returns for bad input or an impossible
// calculation. Message is safe to show to a client.
type Error struct {
	Kind    ErrorKind
	Message string
	Fields  []FieldError
	// Suggestions are known values close to a rejected one (for example
	// catalogue labels near an unknown acid label), best first.
	Suggestions []string
}

// Error implements the error interface.
func (e *Error) Error() string {
	if len(e.Fields) == 0 {
		return fmt.Sprintf("%s: %s", e.Kind, e.Message)
	}
	return fmt.Sprintf("%s: %s (%s)", e.Kind, e.Message, e.Fields[0].Reason)
}

// Errorf builds an *Error of the given kind with a formatted message.
func Errorf(kind ErrorKind, format string, args ...any) *Error {
	return &Error{Kind: kind, Message: fmt.Sprintf(format, args...)}
}

// WithField returns e with one more field error attached and returns e for
// chaining.
func (e *Error) WithField(reason string, path ...any) *Error {
	e.Fields = append(e.Fields, FieldError{Path: path, Reason: reason})
	return e
}

// Prefix returns a copy of e whose field paths all start with prefix; a
// caller that embeds a profile under a field uses it to keep the pointers
// right.
func (e *Error) Prefix(prefix ...any) *Error {
	out := &Error{Kind: e.Kind, Message: e.Message, Fields: make([]FieldError, len(e.Fields)), Suggestions: e.Suggestions}
	for i, f := range e.Fields {
		p := make([]any, 0, len(prefix)+len(f.Path))
		p = append(p, prefix...)
		p = append(p, f.Path...)
		out.Fields[i] = FieldError{Path: p, Reason: f.Reason, Suggestions: f.Suggestions}
	}
	return out
}

// AsError reports whether err is (or wraps) a chem *Error and returns it.
func AsError(err error) (*Error, bool) {
	var ce *Error
	if errors.As(err, &ce) {
		return ce, true
	}
	return nil, false
}

// FieldErrors gathers the problems of one input so that a single error
// names them all. The zero value is ready to use.
type FieldErrors struct {
	fields []FieldError
	kinds  []ErrorKind
}

// Add records one problem of the given kind at path.
func (e *FieldErrors) Add(kind ErrorKind, reason string, path ...any) {
	e.fields = append(e.fields, FieldError{Path: path, Reason: reason})
	e.kinds = append(e.kinds, kind)
}

// AddSuggested records one problem with suggestions (known values close to
// the rejected one, best first).
func (e *FieldErrors) AddSuggested(kind ErrorKind, reason string, suggestions []string, path ...any) {
	e.fields = append(e.fields, FieldError{Path: path, Reason: reason, Suggestions: suggestions})
	e.kinds = append(e.kinds, kind)
}

// Malformed records a problem of kind KindMalformed.
func (e *FieldErrors) Malformed(reason string, path ...any) { e.Add(KindMalformed, reason, path...) }

// Invalid records a problem of kind KindInvalid.
func (e *FieldErrors) Invalid(reason string, path ...any) { e.Add(KindInvalid, reason, path...) }

// OutOfDomain records a problem of kind KindOutOfDomain.
func (e *FieldErrors) OutOfDomain(reason string, path ...any) {
	e.Add(KindOutOfDomain, reason, path...)
}

// Len is the number of problems recorded.
func (e *FieldErrors) Len() int { return len(e.fields) }

// Merge adds the field errors of err (a *Error; anything else is ignored)
// under prefix and reports whether err was one.
func (e *FieldErrors) Merge(err error, prefix ...any) bool {
	ce, ok := AsError(err)
	if !ok {
		return false
	}
	ce = ce.Prefix(prefix...)
	if len(ce.Fields) == 0 {
		e.AddSuggested(ce.Kind, ce.Message, ce.Suggestions, prefix...)
		return true
	}
	for _, f := range ce.Fields {
		e.AddSuggested(ce.Kind, f.Reason, f.Suggestions, f.Path...)
	}
	return true
}

// Err returns nil when nothing was recorded, and otherwise one *Error
// listing every problem. Its kind is the most basic one recorded:
// malformed before invalid before outside the model's domain before no
// convergence, because a client must mend the shape of a request before its
// values mean anything. Its message is summary (when not empty) with the
// one problem's reason or the number of problems.
func (e *FieldErrors) Err(summary string) error {
	if len(e.fields) == 0 {
		return nil
	}
	kind := e.kinds[0]
	for _, k := range e.kinds[1:] {
		if kindRank(k) < kindRank(kind) {
			kind = k
		}
	}
	var msg string
	switch {
	case len(e.fields) == 1 && summary == "":
		msg = e.fields[0].Reason
	case len(e.fields) == 1:
		msg = summary + ": " + e.fields[0].Reason
	case summary == "":
		msg = fmt.Sprintf("the input has %d problems", len(e.fields))
	default:
		msg = fmt.Sprintf("%s (%d problems)", summary, len(e.fields))
	}
	return &Error{Kind: kind, Message: msg, Fields: append([]FieldError(nil), e.fields...)}
}

func kindRank(k ErrorKind) int {
	switch k {
	case KindMalformed:
		return 0
	case KindInvalid:
		return 1
	case KindOutOfDomain:
		return 2
	default:
		return 3
	}
}

// PrefixError returns err with its field paths under prefix when it is a
// *Error, and err unchanged otherwise (a context's error, say).
func PrefixError(err error, prefix ...any) error {
	if ce, ok := AsError(err); ok && len(prefix) > 0 {
		return ce.Prefix(prefix...)
	}
	return err
}

// PrefixWarnings returns the warnings with their paths under prefix; a
// warning without a path stays without one. The new paths share one
// backing array (every request prefixes its profile's warnings, most of
// them one per acid).
func PrefixWarnings(ws []Warning, prefix ...any) []Warning {
	out := make([]Warning, len(ws))
	copy(out, ws)
	if len(prefix) == 0 {
		return out
	}
	n := 0
	for _, w := range ws {
		if len(w.Path) > 0 {
			n += len(prefix) + len(w.Path)
		}
	}
	buf := make([]any, 0, n)
	for i, w := range ws {
		if len(w.Path) == 0 {
			continue
		}
		start := len(buf)
		buf = append(append(buf, prefix...), w.Path...)
		out[i].Path = buf[start:len(buf):len(buf)]
	}
	return out
}
