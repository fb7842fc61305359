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
