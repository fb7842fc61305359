package api

import (
	"bytes"
	"encoding/json"
	"errors"
)

// A JSON object that names a member twice is refused: encoding/json would
// keep the last silently, and a value silently dropped is a wrong
// certificate. DuplicateMember finds such a member. Its fast path is a
// single allocation-free pass over the bytes that keeps each open object's
// keys as offsets into the body and compares them byte for byte; keys that
// could be equal without being byte-equal (escapes, non-ASCII bytes, which
// the decoder may rewrite) and bodies nested or wide beyond its fixed
// buffers go to the exact check, a walk over encoding/json's tokens, which
// also builds the pointer of a duplicate. Both stop at the first syntax
// error and report only what comes before it, so they agree on every input
// (FuzzDuplicateMember checks it); malformed JSON is left to the decoder's
// message.

// Limits of the fast path's fixed buffers.
const (
	scanMaxDepth = 64
	scanMaxKeys  = 512
)

// DuplicateMember reports the JSON pointer of the first member of an
// object that repeats an earlier key of the same object, and whether there
// is one, in the first JSON value of body.
func DuplicateMember(body []byte) (pointer string, found bool) {
	switch fastScan(body) {
	case scanClean:
		return "", false
	default: // scanDuplicate, scanNeedsExact: the exact walk decides and names it
		return exactDuplicate(body)
	}
}

type scanOutcome int

const (
	scanClean scanOutcome = iota
	scanDuplicate
	scanNeedsExact
)

type keyRef struct{ start, end int32 }

// scanner is the fast path's state; it lives on the caller's stack.
type scanner struct {
	b      []byte
	i      int
	keys   [scanMaxKeys]keyRef
	nkeys  int
	frames [scanMaxDepth]int // index into keys where each open object's keys start
	depth  int
	result scanOutcome
}

// errScanStop ends the fast pass (a syntax error, a duplicate, or a body the
// exact check must see); s.result says which.
var errScanStop = errors.New("stop")

func fastScan(body []byte) scanOutcome {
	var s scanner
	s.b = body
	s.skipSpace()
	if err := s.value(); err != nil {
		return s.result
	}
	return scanClean
}

func (s *scanner) skipSpace() {
	for s.i < len(s.b) {
		switch s.b[s.i] {
		case ' ', '\t', '\n', '\r':
			s.i++
		default:
			return
		}
	}
}

// fail ends the scan; a syntax error is clean as far as duplicates go.
func (s *scanner) fail(r scanOutcome) error {
	s.result = r
	return errScanStop
}

func (s *scanner) value() error {
	if s.i >= len(s.b) {
		return s.fail(scanClean)
	}
	switch c := s.b[s.i]; {
	case c == '{':
		return s.object()
	case c == '[':
		return s.array()
	case c == '"':
		_, _, err := s.str()
		return err
	case c == '-' || (c >= '0' && c <= '9'):
		return s.number()
	case c == 't':
		return s.literal("true")
	case c == 'f':
		return s.literal("false")
	case c == 'n':
		return s.literal("null")
	}
	return s.fail(scanClean)
}

func (s *scanner) literal(word string) error {
	if !bytes.HasPrefix(s.b[s.i:], []byte(word)) {
		return s.fail(scanClean)
	}
	s.i += len(word)
	return nil
}

// number checks the RFC 8259 number grammar.
func (s *scanner) number() error {
	end, ok := JSONNumberEnd(s.b, s.i)
	if !ok {
		return s.fail(scanClean)
	}
	s.i = end
	return nil
}

// JSONNumberEnd reads a number by the grammar of RFC 8259 from b[i:] and
// returns the index after it; ok is false (and end the offending byte)
// when the bytes there are not a number.
func JSONNumberEnd(b []byte, i int) (end int, ok bool) {
	digits := func() {
		for i < len(b) && b[i] >= '0' && b[i] <= '9' {
			i++
		}
	}
	if i < len(b) && b[i] == '-' {
		i++
	}
	switch {
	case i < len(b) && b[i] == '0':
		i++
	case i < len(b) && b[i] >= '1' && b[i] <= '9':
		digits()
	default:
		return i, false
	}
	if i < len(b) && b[i] == '.' {
		i++
		if i >= len(b) || b[i] < '0' || b[i] > '9' {
			return i, false
		}
		digits()
	}
	if i < len(b) && (b[i] == 'e' || b[i] == 'E') {
		i++
		if i < len(b) && (b[i] == '+' || b[i] == '-') {
			i++
		}
		if i >= len(b) || b[i] < '0' || b[i] > '9' {
			return i, false
		}
		digits()
	}
	return i, true
}

// str reads a string; plain reports whether its bytes are its value
// (printable ASCII without escapes).
func (s *scanner) str() (start, end int, err error) {
	b := s.b
	i := s.i + 1
	start = i
	plain := true
	for i < len(b) {
		c := b[i]
		switch {
		case c == '"':
			s.i = i + 1
			if !plain {
				return start, i, s.fail(scanNeedsExact)
			}
			return start, i, nil
		case c < 0x20:
			return 0, 0, s.fail(scanClean)
		case c == '\\':
			plain = false
			i++
			if i >= len(b) {
				return 0, 0, s.fail(scanClean)
			}
			switch b[i] {
			case '"', '\\', '/', 'b', 'f', 'n', 'r', 't':
				i++
			case 'u':
				if i+4 >= len(b) {
					return 0, 0, s.fail(scanClean)
				}
				for _, h := range b[i+1 : i+5] {
					if !isHex(h) {
						return 0, 0, s.fail(scanClean)
					}
				}
				i += 5
			default:
				return 0, 0, s.fail(scanClean)
			}
		case c >= 0x80:
			plain = false
			i++
		default:
			i++
		}
	}
	return 0, 0, s.fail(scanClean)
}

func isHex(c byte) bool {
	return (c >= '0' && c <= '9') || (c >= 'a' && c <= 'f') || (c >= 'A' && c <= 'F')
}

func (s *scanner) object() error {
	if s.depth >= scanMaxDepth {
		return s.fail(scanNeedsExact)
	}
	s.frames[s.depth] = s.nkeys
	s.depth++
	s.i++ // '{'
	s.skipSpace()
	if s.i < len(s.b) && s.b[s.i] == '}' {
		s.i++
		s.depth--
		return nil
	}
	for {
		if s.i >= len(s.b) || s.b[s.i] != '"' {
			return s.fail(scanClean)
		}
		// A key that is not plain ends the pass in str (the exact walk
		// compares decoded keys).
		start, end, err := s.str()
		if err != nil {
			return err
		}
		key := s.b[start:end]
		for _, k := range s.keys[s.frames[s.depth-1]:s.nkeys] {
			if bytes.Equal(s.b[k.start:k.end], key) {
				return s.fail(scanDuplicate)
			}
		}
		if s.nkeys == scanMaxKeys {
			return s.fail(scanNeedsExact)
		}
		s.keys[s.nkeys] = keyRef{int32(start), int32(end)}
		s.nkeys++
		s.skipSpace()
		if s.i >= len(s.b) || s.b[s.i] != ':' {
			return s.fail(scanClean)
		}
		s.i++
		s.skipSpace()
		if err := s.value(); err != nil {
			return err
		}
		s.skipSpace()
		if s.i >= len(s.b) {
			return s.fail(scanClean)
		}
		switch s.b[s.i] {
		case ',':
			s.i++
			s.skipSpace()
		case '}':
			s.i++
			s.depth--
			s.nkeys = s.frames[s.depth]
			return nil
		default:
			return s.fail(scanClean)
		}
	}
}

func (s *scanner) array() error {
	if s.depth >= scanMaxDepth {
		return s.fail(scanNeedsExact)
	}
	s.depth++
	s.frames[s.depth-1] = s.nkeys
	s.i++ // '['
	s.skipSpace()
	if s.i < len(s.b) && s.b[s.i] == ']' {
		s.i++
		s.depth--
		return nil
	}
	for {
		if err := s.value(); err != nil {
			return err
		}
		s.skipSpace()
		if s.i >= len(s.b) {
			return s.fail(scanClean)
		}
		switch s.b[s.i] {
		case ',':
			s.i++
			s.skipSpace()
		case ']':
			s.i++
			s.depth--
			return nil
		default:
			return s.fail(scanClean)
		}
	}
}

// errWalkStop ends the exact walk at a syntax error: what follows is the
// decoder's to report.
var errWalkStop = errors.New("stop")

// duplicateError carries the pointer of a duplicate out of the walk.
type duplicateError struct{ pointer string }

func (e *duplicateError) Error() string { return "duplicate member at " + e.pointer }

// exactDuplicate is the exact check: a walk over encoding/json's tokens
// with a set of decoded keys per object. The path is one stack shared by
// the walk, so deep nesting costs linear time.
func exactDuplicate(body []byte) (string, bool) {
	dec := json.NewDecoder(bytes.NewReader(body))
	dec.UseNumber()
	var path []any
	var walk func() error
	walk = func() error {
		tok, err := dec.Token()
		if err != nil {
			return errWalkStop
		}
		switch tok {
		case json.Delim('{'):
			seen := map[string]bool{}
			for dec.More() {
				kt, err := dec.Token()
				if err != nil {
					return errWalkStop
				}
				key, _ := kt.(string)
				path = append(path, key)
				if seen[key] {
					return &duplicateError{Pointer(path...)}
				}
				seen[key] = true
				if err := walk(); err != nil {
					return err
				}
				path = path[:len(path)-1]
			}
			if _, err := dec.Token(); err != nil {
				return errWalkStop
			}
		case json.Delim('['):
			for i := 0; dec.More(); i++ {
				path = append(path, i)
				if err := walk(); err != nil {
					return err
				}
				path = path[:len(path)-1]
			}
			if _, err := dec.Token(); err != nil {
				return errWalkStop
			}
		}
		return nil
	}
	var d *duplicateError
	if errors.As(walk(), &d) {
		return d.pointer, true
	}
	return "", false
}
