package service

import (
	"errors"
	"fmt"
	"math"
	"sort"
	"strconv"
	"strings"
	"sync"
	"unicode/utf8"

	"github.com/getkin/kin-openapi/openapi3"

	"lipidsvc/api"
)

// The contract's request-body schemas are compiled once, at start-up, into
// a tree that validates a body straight from its bytes in one pass: no
// generic decode into maps, no allocation on a valid body. The subset of
// OpenAPI 3.0 schema keywords it knows is the one openapi.yaml uses (type,
// nullable, enum, minimum/maximum with exclusive bounds, integer,
// minLength/maxLength, minItems/maxItems, uniqueItems on scalar items,
// properties, required, additionalProperties, minProperties/maxProperties,
// and allOf as a wrapper around one schema); compiling a schema with any
// other validation keyword fails, so the contract can never say more than
// is checked. TestCompiledValidatorAgreesWithKinOpenAPI and its fuzz target
// hold the verdicts equal to kin-openapi's on the same bodies.

// JSON kinds a schema admits.
const (
	kindObject uint8 = 1 << iota
	kindArray
	kindString
	kindNumber
	kindBoolean
	kindNull
)

// maxNesting bounds how deep a body may nest, as encoding/json does.
const maxNesting = 10000

// schemaNode is one compiled schema.
type schemaNode struct {
	any      bool  // accepts every value (the empty schema)
	kinds    uint8 // admitted kinds; kindNull only through nullable
	integer  bool  // a number must be whole
	enum     []string
	enumText string // the enum for messages

	hasMin, hasMax   bool
	exclMin, exclMax bool
	min, max         float64

	minLen, maxLen uint64
	hasMaxLen      bool

	items              *schemaNode
	minItems, maxItems uint64
	hasMaxItems        bool
	unique             bool

	props              map[string]propNode
	required           []string
	noAdditional       bool
	additional         *schemaNode
	minProps, maxProps uint64
	hasMaxProps        bool
}

type propNode struct {
	schema *schemaNode
	bit    int // index among the required properties, or -1
	seen   int // index among all properties, for duplicate detection
}

// compiler builds nodes once per schema, so shared and recursive references
// compile to shared nodes.
type compiler struct {
	done map[*openapi3.Schema]*schemaNode
}

// compileBodies compiles the application/json request-body schema of every
// documented operation, keyed like operationRoutes.
func compileBodies(doc *openapi3.T) (map[string]*schemaNode, error) {
	c := &compiler{done: map[*openapi3.Schema]*schemaNode{}}
	out := map[string]*schemaNode{}
	for path, item := range doc.Paths.Map() {
		for method, op := range item.Operations() {
			if op.RequestBody == nil || op.RequestBody.Value == nil {
				continue
			}
			mt := op.RequestBody.Value.Content.Get("application/json")
			if mt == nil || mt.Schema == nil || mt.Schema.Value == nil {
				return nil, fmt.Errorf("%s %s: the request body has no application/json schema", method, path)
			}
			n, err := c.compile(mt.Schema.Value, method+" "+path)
			if err != nil {
				return nil, err
			}
			out[method+" "+openAPIToEchoPath(path)] = n
		}
	}
	return out, nil
}

func (c *compiler) compile(s *openapi3.Schema, at string) (*schemaNode, error) {
	if n, ok := c.done[s]; ok {
		return n, nil
	}
	if err := unsupported(s); err != nil {
		return nil, fmt.Errorf("%s: %w", at, err)
	}
	if len(s.AllOf) > 0 {
		// allOf as a wrapper that adds a description to one schema.
		if len(s.AllOf) != 1 || s.AllOf[0].Value == nil || hasOwnConstraints(s) {
			return nil, fmt.Errorf("%s: allOf is supported only as a wrapper around one schema", at)
		}
		inner, err := c.compile(s.AllOf[0].Value, at+"/allOf/0")
		if err != nil {
			return nil, err
		}
		if s.Nullable || inner.kinds&kindNull == 0 {
			return inner, nil
		}
		n := *inner
		n.kinds &^= kindNull // the wrapper is not nullable
		c.done[s] = &n
		return &n, nil
	}
	n := &schemaNode{}
	c.done[s] = n
	if s.IsEmpty() {
		n.any = true
		return n, nil
	}
	if s.Type == nil {
		n.kinds = kindObject | kindArray | kindString | kindNumber | kindBoolean
	}
	if s.Type != nil {
		for _, t := range *s.Type {
			switch t {
			case openapi3.TypeObject:
				n.kinds |= kindObject
			case openapi3.TypeArray:
				n.kinds |= kindArray
			case openapi3.TypeString:
				n.kinds |= kindString
			case openapi3.TypeNumber:
				n.kinds |= kindNumber
			case openapi3.TypeInteger:
				n.kinds |= kindNumber
				n.integer = !s.Type.Permits(openapi3.TypeNumber)
			case openapi3.TypeBoolean:
				n.kinds |= kindBoolean
			default:
				return nil, fmt.Errorf("%s: type %q is not supported", at, t)
			}
		}
	}
	if s.Nullable {
		n.kinds |= kindNull
	}
	for _, e := range s.Enum {
		str, ok := e.(string)
		if !ok {
			return nil, fmt.Errorf("%s: only string enums are supported", at)
		}
		n.enum = append(n.enum, str)
	}
	n.enumText = strings.Join(n.enum, ", ")
	if s.Min != nil {
		n.hasMin, n.min = true, *s.Min
		n.exclMin = s.ExclusiveMin.Bool != nil && *s.ExclusiveMin.Bool
	}
	if s.Max != nil {
		n.hasMax, n.max = true, *s.Max
		n.exclMax = s.ExclusiveMax.Bool != nil && *s.ExclusiveMax.Bool
	}
	if s.ExclusiveMin.Value != nil || s.ExclusiveMax.Value != nil {
		return nil, fmt.Errorf("%s: numeric exclusive bounds (OpenAPI 3.1) are not supported", at)
	}
	n.minLen = s.MinLength
	if s.MaxLength != nil {
		n.hasMaxLen, n.maxLen = true, *s.MaxLength
	}
	n.minItems = s.MinItems
	if s.MaxItems != nil {
		n.hasMaxItems, n.maxItems = true, *s.MaxItems
	}
	if s.Items != nil && s.Items.Value != nil {
		items, err := c.compile(s.Items.Value, at+"/items")
		if err != nil {
			return nil, err
		}
		n.items = items
	}
	if s.UniqueItems {
		if n.items == nil || n.items.kinds&(kindObject|kindArray) != 0 || n.items.any {
			return nil, fmt.Errorf("%s: uniqueItems is supported on arrays of scalars only", at)
		}
		n.unique = true
	}
	if len(s.Required) > 64 || len(s.Properties) > 64 {
		return nil, fmt.Errorf("%s: at most 64 properties are supported", at)
	}
	n.required = s.Required
	n.props = make(map[string]propNode, len(s.Properties))
	for _, name := range componentNames(s.Properties) {
		ref := s.Properties[name]
		if ref.Value == nil {
			return nil, fmt.Errorf("%s/properties/%s: unresolved reference", at, name)
		}
		if ref.Value.ReadOnly || ref.Value.WriteOnly {
			return nil, fmt.Errorf("%s/properties/%s: readOnly and writeOnly are not supported in requests", at, name)
		}
		p, err := c.compile(ref.Value, at+"/properties/"+name)
		if err != nil {
			return nil, err
		}
		n.props[name] = propNode{schema: p, bit: -1, seen: len(n.props)}
	}
	for i, name := range s.Required {
		p := n.props[name]
		p.bit = i
		n.props[name] = p
	}
	if has := s.AdditionalProperties.Has; has != nil && !*has {
		n.noAdditional = true
	}
	if ref := s.AdditionalProperties.Schema; ref != nil && ref.Value != nil {
		add, err := c.compile(ref.Value, at+"/additionalProperties")
		if err != nil {
			return nil, err
		}
		n.additional = add
	}
	n.minProps = s.MinProps
	if s.MaxProps != nil {
		n.hasMaxProps, n.maxProps = true, *s.MaxProps
	}
	return n, nil
}

// unsupported names a validation keyword the compiler does not know.
func unsupported(s *openapi3.Schema) error {
	switch {
	case len(s.OneOf) > 0:
		return errors.New("oneOf is not supported")
	case len(s.AnyOf) > 0:
		return errors.New("anyOf is not supported")
	case s.Not != nil:
		return errors.New("not is not supported")
	case s.Pattern != "":
		return errors.New("pattern is not supported")
	case s.Format != "":
		return errors.New("format is not supported")
	case s.MultipleOf != nil:
		return errors.New("multipleOf is not supported")
	case s.Discriminator != nil:
		return errors.New("discriminator is not supported")
	case s.Always != nil, s.Const != nil, len(s.PrefixItems) > 0, s.Contains != nil, len(s.PatternProperties) > 0,
		len(s.DependentSchemas) > 0, s.PropertyNames != nil, s.If != nil, len(s.DependentRequired) > 0,
		s.UnevaluatedItems.Has != nil || s.UnevaluatedItems.Schema != nil,
		s.UnevaluatedProperties.Has != nil || s.UnevaluatedProperties.Schema != nil:
		return errors.New("OpenAPI 3.1 keywords are not supported")
	}
	return nil
}

// hasOwnConstraints reports whether an allOf wrapper validates anything
// itself (beyond nullable, which is handled).
func hasOwnConstraints(s *openapi3.Schema) bool {
	return s.Type != nil || len(s.Enum) > 0 || s.Min != nil || s.Max != nil || s.MinLength != 0 || s.MaxLength != nil ||
		s.MinItems != 0 || s.MaxItems != nil || s.Items != nil || s.UniqueItems || len(s.Required) > 0 ||
		len(s.Properties) > 0 || s.AdditionalProperties.Has != nil || s.AdditionalProperties.Schema != nil ||
		s.MinProps != 0 || s.MaxProps != nil
}

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

// str reads a string and returns its raw bytes (plain: no escapes, so they
// are its value) or its decoded value.
func (v *validator) str() (s []byte, plain bool, err error) {
	b := v.b
	i := v.i + 1
	start := i
	plain = true
	for i < len(b) {
		c := b[i]
		switch {
		case c == '"':
			v.i = i + 1
			if plain {
				return b[start:i], true, nil
			}
			return jsonUnquote(b[start:i]), false, nil
		case c < 0x20:
			v.i = i
			return nil, false, v.syntax("control character in a string")
		case c == '\\':
			plain = false
			i++
			if i >= len(b) {
				v.i = i
				return nil, false, v.syntax("unexpected end of the body")
			}
			switch b[i] {
			case '"', '\\', '/', 'b', 'f', 'n', 'r', 't':
				i++
			case 'u':
				if i+4 >= len(b) || !isHex4(b[i+1:i+5]) {
					v.i = i
					return nil, false, v.syntax("invalid \\u escape")
				}
				i += 5
			default:
				v.i = i
				return nil, false, v.syntax("invalid escape")
			}
		default:
			i++
		}
	}
	v.i = i
	return nil, false, v.syntax("unexpected end of the body")
}

func isHex4(b []byte) bool {
	for _, c := range b {
		if !((c >= '0' && c <= '9') || (c >= 'a' && c <= 'f') || (c >= 'A' && c <= 'F')) {
			return false
		}
	}
	return true
}

// jsonUnquote decodes the inside of a JSON string whose escapes are known
// to be valid, as encoding/json does (a lone surrogate becomes U+FFFD).
func jsonUnquote(b []byte) []byte {
	out := make([]byte, 0, len(b))
	for i := 0; i < len(b); {
		if b[i] != '\\' {
			out = append(out, b[i])
			i++
			continue
		}
		switch b[i+1] {
		case 'b':
			out = append(out, '\b')
		case 'f':
			out = append(out, '\f')
		case 'n':
			out = append(out, '\n')
		case 'r':
			out = append(out, '\r')
		case 't':
			out = append(out, '\t')
		case 'u':
			r, _ := strconv.ParseUint(string(b[i+2:i+6]), 16, 32)
			rr := rune(r)
			i += 6
			if rr >= 0xD800 && rr < 0xDC00 && i+6 <= len(b) && b[i] == '\\' && b[i+1] == 'u' {
				if lo, err := strconv.ParseUint(string(b[i+2:i+6]), 16, 32); err == nil && lo >= 0xDC00 && lo < 0xE000 {
					rr = (rr-0xD800)<<10 + (rune(lo) - 0xDC00) + 0x10000
					i += 6
				}
			}
			if rr >= 0xD800 && rr < 0xE000 {
				rr = utf8.RuneError
			}
			out = utf8.AppendRune(out, rr)
			continue
		default: // " \ /
			out = append(out, b[i+1])
		}
		i += 2
	}
	return out
}

// runeCount counts a string's length as the validator of the contract
// does: in runes, each invalid UTF-8 byte one (encoding/json turns it into
// U+FFFD).
func runeCount(s []byte) uint64 { return uint64(utf8.RuneCount(s)) }

func (v *validator) checkString(n *schemaNode, s []byte, plain bool) {
	if len(n.enum) > 0 {
		ok := false
		for _, e := range n.enum {
			if string(s) == e && (plain || utf8.Valid(s)) {
				ok = true
				break
			}
		}
		if !ok {
			v.violation("must be one of: " + n.enumText)
			return
		}
	}
	if n.minLen > 0 || n.hasMaxLen {
		l := runeCount(s)
		if l < n.minLen {
			v.violation(fmt.Sprintf("must have at least %d characters", n.minLen))
		}
		if n.hasMaxLen && l > n.maxLen {
			v.violation(fmt.Sprintf("must have at most %d characters", n.maxLen))
		}
	}
}

// number reads a number by the JSON grammar and checks it.
func (v *validator) number(n *schemaNode) error {
	b, start := v.b, v.i
	i := start
	if b[i] == '-' {
		i++
	}
	switch {
	case i < len(b) && b[i] == '0':
		i++
	case i < len(b) && b[i] >= '1' && b[i] <= '9':
		for i < len(b) && b[i] >= '0' && b[i] <= '9' {
			i++
		}
	default:
		v.i = i
		return v.syntax("invalid number")
	}
	if i < len(b) && b[i] == '.' {
		i++
		if i >= len(b) || b[i] < '0' || b[i] > '9' {
			v.i = i
			return v.syntax("invalid number")
		}
		for i < len(b) && b[i] >= '0' && b[i] <= '9' {
			i++
		}
	}
	if i < len(b) && (b[i] == 'e' || b[i] == 'E') {
		i++
		if i < len(b) && (b[i] == '+' || b[i] == '-') {
			i++
		}
		if i >= len(b) || b[i] < '0' || b[i] > '9' {
			v.i = i
			return v.syntax("invalid number")
		}
		for i < len(b) && b[i] >= '0' && b[i] <= '9' {
			i++
		}
	}
	v.i = i
	if n.any {
		return nil
	}
	x, err := strconv.ParseFloat(string(b[start:i]), 64)
	if err != nil {
		v.violation("the number is outside the range of a 64-bit floating-point number")
		return nil
	}
	if len(n.enum) > 0 {
		v.violation("must be one of: " + n.enumText)
		return nil
	}
	if n.integer && x != math.Trunc(x) {
		v.violation("must be an integer")
	}
	switch {
	case n.hasMin && n.exclMin && !(x > n.min):
		v.violation(fmt.Sprintf("must be above %g", n.min))
	case n.hasMin && !n.exclMin && x < n.min:
		v.violation(fmt.Sprintf("must be at least %g", n.min))
	}
	switch {
	case n.hasMax && n.exclMax && !(x < n.max):
		v.violation(fmt.Sprintf("must be below %g", n.max))
	case n.hasMax && !n.exclMax && x > n.max:
		v.violation(fmt.Sprintf("must be at most %g", n.max))
	}
	return nil
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

// componentNames lists a schema's property names in order, so that the
// compiled indices do not depend on map iteration.
func componentNames(props openapi3.Schemas) []string {
	names := make([]string, 0, len(props))
	for name := range props {
		names = append(names, name)
	}
	sort.Strings(names)
	return names
}
