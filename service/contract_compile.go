package service

import (
	"errors"
	"fmt"
	"sort"
	"strings"

	"github.com/getkin/kin-openapi/openapi3"
)

// The contract's request-body schemas are compiled once, at start-up, into
// a tree that validates a body straight from its bytes in one pass: no
// generic decode into maps, no allocation on a valid body. The subset of
// OpenAPI 3.0 schema keywords it knows is the one openapi.yaml uses (type,
// nullable, enum, minimum/maximum with exclusive bounds, integer,
// minLength/maxLength, minItems/maxItems, uniqueItems on scalar items,
// properties, required, additionalProperties, minProperties/maxProperties,
// allOf as a wrapper around one schema, and oneOf over alternatives that
// admit disjoint JSON kinds — a string or an object, say — where the kind
// of the value picks the one alternative it can match); compiling a schema with any
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

	// oneOf holds the alternatives of a oneOf, each admitting kinds no
	// other admits; kinds is their union.
	oneOf []*schemaNode

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
	if len(s.OneOf) > 0 {
		return c.compileOneOf(s, at)
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

// compileOneOf compiles a oneOf whose alternatives admit disjoint kinds
// (null aside), with no constraints of its own.
func (c *compiler) compileOneOf(s *openapi3.Schema, at string) (*schemaNode, error) {
	if hasOwnConstraints(s) || len(s.AnyOf) > 0 || len(s.AllOf) > 0 || s.Not != nil || s.Nullable {
		return nil, fmt.Errorf("%s: oneOf is supported only on its own", at)
	}
	n := &schemaNode{}
	c.done[s] = n
	for i, ref := range s.OneOf {
		if ref.Value == nil {
			return nil, fmt.Errorf("%s/oneOf/%d: unresolved", at, i)
		}
		alt, err := c.compile(ref.Value, fmt.Sprintf("%s/oneOf/%d", at, i))
		if err != nil {
			return nil, err
		}
		k := alt.kinds &^ kindNull
		if alt.any || k == 0 || n.kinds&k != 0 || alt.kinds&kindNull != 0 {
			return nil, fmt.Errorf("%s: oneOf is supported only over non-nullable alternatives of disjoint JSON kinds", at)
		}
		n.kinds |= k
		n.oneOf = append(n.oneOf, alt)
	}
	return n, nil
}

// unsupported names a validation keyword the compiler does not know.
func unsupported(s *openapi3.Schema) error {
	switch {
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
