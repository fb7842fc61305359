package api

import (
	"bytes"
	"encoding/json"
	"fmt"
	"io"
	"strconv"
	"strings"

	"lipidsvc/chem"
	"lipidsvc/chem/identity"
)

// A specification document is JSON: {"specifications": [ … ]}, each
// specification an object with the fields of identity.SpecificationInput in
// snake_case ("id", "name", "kind", "standard", "edition", "table",
// "source", "recalled", "notes", "basis", "material", "acids", "iodine_value",
// "saponification_value", "slip_melting_point_c"); an acid row is {"acid":
// "C16:0", "min": 8, "max": 13.5} or {"acid": "C6:0", "nd": true}; a
// range is {"min": …, "max": …}: the fields of an inline specification in a
// conformity request. A plant's specification file (LIPIDSVC_SPEC_FILE) has
// this format.

// SpecificationDocumentError is a problem in a specification document, located by line
// and JSON pointer.
type SpecificationDocumentError struct {
	Line    int
	Pointer string
	Reason  string
}

func (e SpecificationDocumentError) Error() string {
	if e.Pointer == "" {
		return fmt.Sprintf("line %d: %s", e.Line, e.Reason)
	}
	return fmt.Sprintf("line %d, %s: %s", e.Line, e.Pointer, e.Reason)
}

// SpecificationDocumentErrors are all the problems of one document.
type SpecificationDocumentErrors []SpecificationDocumentError

func (es SpecificationDocumentErrors) Error() string {
	parts := make([]string, len(es))
	for i, e := range es {
		parts[i] = e.Error()
	}
	return strings.Join(parts, "; ")
}

// ParseSpecificationDocument reads a specification document. Every problem is reported,
// each with its line and the JSON pointer of the offending field, as
// SpecificationDocumentErrors.
func ParseSpecificationDocument(data []byte) ([]*identity.Specification, error) {
	data = bytes.TrimPrefix(data, []byte{0xEF, 0xBB, 0xBF})
	var root any
	dec := json.NewDecoder(bytes.NewReader(data))
	if err := dec.Decode(&root); err != nil {
		line := 1
		if se, ok := err.(*json.SyntaxError); ok {
			line = specLineAt(data, int(se.Offset))
		}
		return nil, SpecificationDocumentErrors{{Line: line, Reason: "not valid JSON: " + err.Error()}}
	}
	if _, err := dec.Token(); err != io.EOF {
		return nil, SpecificationDocumentErrors{{Line: specLineAt(data, int(dec.InputOffset())), Reason: "data after the document"}}
	}
	offsets := specLocate(data)
	var bad chem.FieldErrors
	obj, ok := root.(map[string]any)
	if !ok {
		bad.Invalid("the document must be an object with a \"specifications\" array")
		return nil, specDocumentErrors(bad.Err(""), data, offsets)
	}
	for k := range obj {
		if k != "specifications" && k != "about" {
			bad.Invalid("unknown field (a document has \"specifications\" and an optional \"about\")", k)
		}
	}
	list, ok := obj["specifications"].([]any)
	if !ok {
		bad.Invalid("must be an array of specifications", "specifications")
		return nil, specDocumentErrors(bad.Err(""), data, offsets)
	}
	var out []*identity.Specification
	ids := map[string]int{}
	for i, v := range list {
		in := decodeSpecDoc(&bad, v, "specifications", i)
		if in == nil {
			continue
		}
		s, err := in.Build()
		if err != nil {
			bad.Merge(err, "specifications", i)
			continue
		}
		if j, dup := ids[s.ID]; dup {
			bad.Invalid(fmt.Sprintf("id %q is also specification %d", s.ID, j), "specifications", i, "id")
			continue
		}
		ids[s.ID] = i
		out = append(out, s)
	}
	if err := bad.Err(""); err != nil {
		return nil, specDocumentErrors(err, data, offsets)
	}
	return out, nil
}

// decodeSpecDoc reads one specification object into its input form,
// recording problems at path.
func decodeSpecDoc(bad *chem.FieldErrors, v any, path ...any) *identity.SpecificationInput {
	obj, ok := v.(map[string]any)
	if !ok {
		bad.Invalid("must be an object", path...)
		return nil
	}
	at := func(p ...any) []any { return append(append([]any{}, path...), p...) }
	in := &identity.SpecificationInput{}
	str := func(key string, dst *string) {
		if x, ok := obj[key]; ok {
			if s, ok := x.(string); ok {
				*dst = s
			} else {
				bad.Invalid("must be a string", at(key)...)
			}
		}
	}
	for k, x := range obj {
		switch k {
		case "id", "name", "standard", "edition", "table", "source", "notes", "basis", "material", "kind":
		case "recalled":
			b, ok := x.(bool)
			if !ok {
				bad.Invalid("must be true or false", at(k)...)
			}
			in.Recalled = b
		case "acids":
			rows, ok := x.([]any)
			if !ok {
				bad.Invalid("must be an array of acid rows", at(k)...)
				continue
			}
			for i, r := range rows {
				if row, ok := decodeSpecRow(bad, r, at(k, i)...); ok {
					in.Acids = append(in.Acids, row)
				}
			}
		case "iodine_value", "saponification_value", "slip_melting_point_c":
			r := decodeSpecRange(bad, x, at(k)...)
			switch k {
			case "iodine_value":
				in.IodineValue = r
			case "saponification_value":
				in.SaponificationValue = r
			default:
				in.SlipMeltingPointC = r
			}
		default:
			bad.Invalid("unknown field", at(k)...)
		}
	}
	str("id", &in.ID)
	str("name", &in.Name)
	str("standard", &in.Standard)
	str("edition", &in.Edition)
	str("table", &in.Table)
	str("source", &in.Source)
	str("notes", &in.Notes)
	str("basis", &in.Basis)
	str("material", &in.Material)
	str("kind", &in.Kind)
	return in
}

func decodeSpecRow(bad *chem.FieldErrors, v any, path ...any) (identity.RowInput, bool) {
	obj, ok := v.(map[string]any)
	if !ok {
		bad.Invalid("must be an object such as {\"acid\": \"C16:0\", \"min\": 8, \"max\": 13.5}", path...)
		return identity.RowInput{}, false
	}
	at := func(p ...any) []any { return append(append([]any{}, path...), p...) }
	var r identity.RowInput
	okRow := true
	for k, x := range obj {
		switch k {
		case "acid":
			s, ok := x.(string)
			if !ok {
				bad.Invalid("must be a string", at(k)...)
				okRow = false
			}
			r.Acid = s
		case "min", "max":
			f, ok := x.(float64)
			if !ok {
				bad.Invalid("must be a number", at(k)...)
				okRow = false
				continue
			}
			if k == "min" {
				r.Min = &f
			} else {
				r.Max = &f
			}
		case "nd":
			b, ok := x.(bool)
			if !ok {
				bad.Invalid("must be true or false", at(k)...)
				okRow = false
			}
			r.NotDetected = b
		default:
			bad.Invalid("unknown field (a row has acid, min, max, nd)", at(k)...)
			okRow = false
		}
	}
	if _, has := obj["acid"]; !has {
		bad.Invalid("an acid row needs \"acid\"", path...)
		okRow = false
	}
	return r, okRow
}

func decodeSpecRange(bad *chem.FieldErrors, v any, path ...any) *identity.RangeInput {
	obj, ok := v.(map[string]any)
	if !ok {
		bad.Invalid("must be an object {\"min\": …, \"max\": …}", path...)
		return nil
	}
	r := &identity.RangeInput{}
	for k, x := range obj {
		f, isNum := x.(float64)
		switch {
		case (k == "min" || k == "max") && !isNum:
			bad.Invalid("must be a number", append(append([]any{}, path...), k)...)
		case k == "min":
			r.Min = &f
		case k == "max":
			r.Max = &f
		default:
			bad.Invalid("unknown field (a range has min and max)", append(append([]any{}, path...), k)...)
		}
	}
	return r
}

// specDocumentErrors turns a *chem.Error into located document errors.
func specDocumentErrors(err error, data []byte, offsets map[string]int) error {
	ce, ok := chem.AsError(err)
	if !ok {
		return err
	}
	var out SpecificationDocumentErrors
	for _, f := range ce.Fields {
		ptr := specPointer(f.Path)
		// The nearest located ancestor (a missing field is located by its
		// object).
		line := 1
		for p := ptr; ; {
			if off, ok := offsets[p]; ok {
				line = specLineAt(data, off)
				break
			}
			i := strings.LastIndexByte(p, '/')
			if i < 0 {
				break
			}
			p = p[:i]
		}
		out = append(out, SpecificationDocumentError{Line: line, Pointer: ptr, Reason: f.Reason})
	}
	if len(out) == 0 {
		out = append(out, SpecificationDocumentError{Line: 1, Reason: ce.Message})
	}
	return out
}

// specPointer is the RFC 6901 pointer of a path.
func specPointer(path []any) string {
	var b strings.Builder
	for _, p := range path {
		b.WriteByte('/')
		switch v := p.(type) {
		case int:
			b.WriteString(strconv.Itoa(v))
		default:
			s := fmt.Sprint(v)
			s = strings.ReplaceAll(strings.ReplaceAll(s, "~", "~0"), "/", "~1")
			b.WriteString(s)
		}
	}
	return b.String()
}

// specLocate maps the JSON pointer of every value in data to the byte offset
// where it starts.
func specLocate(data []byte) map[string]int {
	out := map[string]int{}
	dec := json.NewDecoder(bytes.NewReader(data))
	var stack []specLocFrame
	path := func() string {
		var b strings.Builder
		for _, f := range stack {
			b.WriteByte('/')
			if f.array {
				b.WriteString(strconv.Itoa(f.index))
			} else {
				b.WriteString(strings.ReplaceAll(strings.ReplaceAll(f.key, "~", "~0"), "/", "~1"))
			}
		}
		return b.String()
	}
	for {
		start := int(dec.InputOffset())
		tok, err := dec.Token()
		if err != nil {
			return out
		}
		if d, ok := tok.(json.Delim); ok && (d == '}' || d == ']') {
			stack = stack[:len(stack)-1]
			if n := len(stack); n > 0 {
				stack[n-1].advance()
			}
			continue
		}
		if n := len(stack); n > 0 && !stack[n-1].array && stack[n-1].want {
			stack[n-1].key, stack[n-1].want = tok.(string), false
			continue
		}
		out[path()] = specSkipSeparators(data, start)
		switch tok {
		case json.Delim('{'):
			stack = append(stack, specLocFrame{want: true})
		case json.Delim('['):
			stack = append(stack, specLocFrame{array: true})
		default:
			if n := len(stack); n > 0 {
				stack[n-1].advance()
			}
		}
	}
}

// specLocFrame is one open object or array while locating values.
type specLocFrame struct {
	array bool
	index int
	key   string
	want  bool // an object expects a key next
}

// advance moves past one value: the next index, or the next key.
func (f *specLocFrame) advance() {
	if f.array {
		f.index++
	} else {
		f.want = true
	}
}

// specSkipSeparators moves past whitespace, commas and colons to where the
// value itself starts.
func specSkipSeparators(data []byte, i int) int {
	for i < len(data) && strings.IndexByte(" \t\r\n,:", data[i]) >= 0 {
		i++
	}
	return i
}

// specLineAt is the 1-based line of a byte offset.
func specLineAt(data []byte, off int) int {
	if off > len(data) {
		off = len(data)
	}
	return bytes.Count(data[:off], []byte{'\n'}) + 1
}
