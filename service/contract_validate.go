package service

import (
	"fmt"
	"sort"
	"strings"
	"sync"

	"lipidsvc/api"
)

// maxNesting bounds how deep a body may nest, as encoding/json does.
const maxNesting = 10000

// validator holds one validation's state.
type validator struct {
	b     []byte
	i     int
	path  []pathElem
	errs  []api.FieldError
	depth int
	// unchecked is set when an object was read whose members the schema
	// does not name (a map, or a value the schema does not look into):
	// duplicates there are for api.DuplicateMember to find.
	unchecked bool
}

// pathElem is one step of the path to the value being read: an object's
// field (key, its decoded name) or an array's index (key nil). Keeping the
// bytes, not a string, is what keeps a valid body free of allocations.
type pathElem struct {
	key   []byte
	index int
}

// pointer is the JSON pointer of the current path.
func (v *validator) pointer() string {
	parts := make([]any, len(v.path))
	for i, e := range v.path {
		if e.key != nil {
			parts[i] = string(e.key)
		} else {
			parts[i] = e.index
		}
	}
	return api.Pointer(parts...)
}

// errSyntax ends a validation: the body is not JSON (or nests too deep).
type errSyntax struct {
	reason string
	at     int
}

func (e *errSyntax) Error() string { return fmt.Sprintf("%s at byte %d", e.reason, e.at) }

// validateBody checks the first JSON value of body against n. It returns a
// syntax error for malformed JSON, and otherwise the schema violations,
// sorted by pointer (nil for a valid body). A member given twice in an
// object whose fields the schema names is a violation too; unchecked
// reports that the body holds other objects, whose duplicates
// api.DuplicateMember must look for. Data after the first value is left to
// the handler's strict decoding.
func validateBody(n *schemaNode, body []byte) (violations []api.FieldError, unchecked bool, err error) {
	v := validators.Get().(*validator)
	defer func() {
		path := v.path[:cap(v.path)]
		clear(path) // no reference to this body survives in the pool
		*v = validator{path: path[:0]}
		validators.Put(v)
	}()
	v.b = body
	v.space()
	if err := v.value(n); err != nil {
		return nil, false, err
	}
	sort.SliceStable(v.errs, func(i, j int) bool { return v.errs[i].Pointer < v.errs[j].Pointer })
	return v.errs, v.unchecked, nil
}

// validators recycles validation state, so that a valid body is read
// without a single allocation.
var validators = sync.Pool{New: func() any { return &validator{path: make([]pathElem, 0, 16)} }}

func (v *validator) syntax(reason string) error { return &errSyntax{reason: reason, at: v.i} }

func (v *validator) violation(reason string) {
	v.errs = append(v.errs, api.FieldError{Pointer: v.pointer(), Reason: reason})
}

func (v *validator) space() {
	for v.i < len(v.b) {
		switch v.b[v.i] {
		case ' ', '\t', '\n', '\r':
			v.i++
		default:
			return
		}
	}
}

// kindName is the word for a kind in messages.
func kindName(n *schemaNode) string {
	if n.integer {
		return "must be an integer"
	}
	var words []string
	for _, k := range []struct {
		bit  uint8
		word string
	}{{kindObject, "an object"}, {kindArray, "an array"}, {kindString, "a string"}, {kindNumber, "a number"}, {kindBoolean, "true or false"}} {
		if n.kinds&k.bit != 0 {
			words = append(words, k.word)
		}
	}
	return "must be " + strings.Join(words, " or ")
}

func (v *validator) value(n *schemaNode) error {
	if v.depth++; v.depth > maxNesting {
		return v.syntax("the body nests too deeply")
	}
	err := v.readValue(n)
	v.depth--
	return err
}

func (v *validator) readValue(n *schemaNode) error {
	if v.i >= len(v.b) {
		return v.syntax("unexpected end of the body")
	}
	c := v.b[v.i]
	kind := kindOf(c)
	if kind == 0 {
		return v.syntax(fmt.Sprintf("invalid character %q", c))
	}
	// A oneOf hands the value to the alternative of its kind.
	if len(n.oneOf) > 0 {
		for _, alt := range n.oneOf {
			if alt.kinds&kind != 0 {
				n = alt
				break
			}
		}
	}
	// A value of a kind the schema does not admit is still read through,
	// for syntax, without checking what is inside.
	admitted := n.any || n.kinds&kind != 0
	if !admitted {
		if kind == kindNull {
			v.violation("must not be null")
		} else {
			v.violation(kindName(n))
		}
		n = anySchema
	}
	switch kind {
	case kindObject:
		return v.object(n)
	case kindArray:
		return v.array(n)
	case kindString:
		s, plain, err := v.str()
		if err != nil {
			return err
		}
		if !n.any {
			v.checkString(n, s, plain)
		}
		return nil
	case kindNumber:
		return v.number(n)
	case kindBoolean:
		if v.lit("true") || v.lit("false") {
			if len(n.enum) > 0 {
				v.violation("must be one of: " + n.enumText)
			}
			return nil
		}
		return v.syntax("invalid literal")
	default:
		if v.lit("null") {
			return nil
		}
		return v.syntax("invalid literal")
	}
}

var anySchema = &schemaNode{any: true}

func kindOf(c byte) uint8 {
	switch {
	case c == '{':
		return kindObject
	case c == '[':
		return kindArray
	case c == '"':
		return kindString
	case c == '-' || (c >= '0' && c <= '9'):
		return kindNumber
	case c == 't' || c == 'f':
		return kindBoolean
	case c == 'n':
		return kindNull
	}
	return 0
}

func (v *validator) lit(word string) bool {
	if len(v.b)-v.i >= len(word) && string(v.b[v.i:v.i+len(word)]) == word {
		v.i += len(word)
		return true
	}
	return false
}

func (v *validator) array(n *schemaNode) error {
	v.i++ // '['
	v.space()
	var count uint64
	var seen [][]byte // for uniqueItems: the decoded scalars
	repeated := false
	if v.i < len(v.b) && v.b[v.i] == ']' {
		v.i++
	} else {
		items := anySchema
		if !n.any && n.items != nil {
			items = n.items
		}
		for {
			v.path = append(v.path, pathElem{index: int(count)})
			itemStart := v.i
			if err := v.value(items); err != nil {
				return err
			}
			if n.unique && !repeated {
				raw := canonicalScalar(v.b[itemStart:v.i])
				for _, s := range seen {
					if string(s) == string(raw) {
						repeated = true
						break
					}
				}
				seen = append(seen, raw)
			}
			v.path = v.path[:len(v.path)-1]
			count++
			v.space()
			if v.i >= len(v.b) {
				return v.syntax("unexpected end of the body")
			}
			if v.b[v.i] == ']' {
				v.i++
				break
			}
			if v.b[v.i] != ',' {
				return v.syntax(fmt.Sprintf("invalid character %q after an array item", v.b[v.i]))
			}
			v.i++
			v.space()
		}
	}
	if n.any {
		return nil
	}
	if count < n.minItems {
		v.violation(fmt.Sprintf("must have at least %d items", n.minItems))
	}
	if n.hasMaxItems && count > n.maxItems {
		v.violation(fmt.Sprintf("must have at most %d items", n.maxItems))
	}
	if repeated {
		v.violation("must not repeat an item")
	}
	return nil
}

// canonicalScalar is a scalar item in a form that compares as the
// contract's reference validator compares decoded items: strings by their
// decoded value, numbers and literals by their text.
func canonicalScalar(raw []byte) []byte {
	if len(raw) > 0 && raw[0] == '"' {
		return append([]byte{'s'}, jsonUnquote(raw[1:len(raw)-1])...)
	}
	return raw
}

func (v *validator) object(n *schemaNode) error {
	v.i++ // '{'
	v.space()
	var count uint64
	var present uint64 // bits of the required properties seen
	var seen uint64    // bits of all named properties seen
	if n.any || n.additional != nil || !n.noAdditional {
		v.unchecked = true
	}
	if v.i < len(v.b) && v.b[v.i] == '}' {
		v.i++
	} else {
		for {
			if v.i >= len(v.b) || v.b[v.i] != '"' {
				return v.syntax("expected a field name")
			}
			key, _, err := v.str()
			if err != nil {
				return err
			}
			v.space()
			if v.i >= len(v.b) || v.b[v.i] != ':' {
				return v.syntax("expected ':' after a field name")
			}
			v.i++
			v.space()
			sub := anySchema
			if !n.any {
				if p, ok := n.props[string(key)]; ok {
					sub = p.schema
					if p.bit >= 0 {
						present |= 1 << p.bit
					}
					if seen&(1<<p.seen) != 0 {
						v.path = append(v.path, pathElem{key: key})
						v.violation("duplicate member " + string(key))
						v.path = v.path[:len(v.path)-1]
					}
					seen |= 1 << p.seen
				} else if n.additional != nil {
					sub = n.additional
				} else if n.noAdditional {
					v.path = append(v.path, pathElem{key: key})
					v.violation("not a field of the contract")
					v.path = v.path[:len(v.path)-1]
				}
			}
			v.path = append(v.path, pathElem{key: key})
			if err := v.value(sub); err != nil {
				return err
			}
			v.path = v.path[:len(v.path)-1]
			count++
			v.space()
			if v.i >= len(v.b) {
				return v.syntax("unexpected end of the body")
			}
			if v.b[v.i] == '}' {
				v.i++
				break
			}
			if v.b[v.i] != ',' {
				return v.syntax(fmt.Sprintf("invalid character %q after a field", v.b[v.i]))
			}
			v.i++
			v.space()
		}
	}
	if n.any {
		return nil
	}
	if count < n.minProps {
		v.violation(fmt.Sprintf("must have at least %d fields", n.minProps))
	}
	if n.hasMaxProps && count > n.maxProps {
		v.violation(fmt.Sprintf("must have at most %d fields", n.maxProps))
	}
	for i, name := range n.required {
		if present&(1<<i) == 0 {
			v.path = append(v.path, pathElem{key: []byte(name)})
			v.violation("required")
			v.path = v.path[:len(v.path)-1]
		}
	}
	return nil
}
