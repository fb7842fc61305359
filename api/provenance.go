package api

import (
	"bytes"
	"encoding/json"
	"sort"
)

// Provenance makes a stored result reproducible and traceable (ISO/IEC
// 17025 asks a laboratory to know which method and parameters produced a
// reported value): the service and its version, the request id that ties
// the result to its log line, the operation, the published methods the
// figures follow, and the request's parameters — everything it sent
// except the sample data (profiles, measurements, observations), which the
// caller holds with the result.
type Provenance struct {
	Service    string          `json:"service"`
	Version    string          `json:"version"`
	RequestID  string          `json:"request_id"`
	Operation  string          `json:"operation"`
	Methods    []string        `json:"methods"`
	Parameters json.RawMessage `json:"parameters"`
}

// ServiceName is the service's name in provenance records.
const ServiceName = "lipidsvc"

// dataMembers are the request members that carry sample data rather than
// parameters; provenance leaves them out.
var dataMembers = map[string]bool{
	"profile": true, "sn2_profile": true, "triacylglycerols": true, "measured": true,
	"feed": true, "observations": true, "fats": true, "samples": true,
}

// parametersOf returns the request's top-level members other than its
// data, as a JSON object with sorted keys; "{}" when there are none or the
// body is not an object. The body was validated: a single pass over its
// bytes finds the members without decoding the data.
func parametersOf(body []byte) json.RawMessage {
	type member struct {
		key string
		val []byte
	}
	var ms []member
	i := skipWS(body, 0)
	if i >= len(body) || body[i] != '{' {
		return json.RawMessage("{}")
	}
	i++
	for {
		i = skipWS(body, i)
		if i >= len(body) || body[i] == '}' {
			break
		}
		if body[i] == ',' {
			i++
			continue
		}
		ks := i
		ke := skipValue(body, i)
		if ke < 0 {
			return json.RawMessage("{}")
		}
		key, ok := plainKey(body[ks:ke])
		if !ok && json.Unmarshal(body[ks:ke], &key) != nil {
			return json.RawMessage("{}")
		}
		i = skipWS(body, ke)
		if i >= len(body) || body[i] != ':' {
			return json.RawMessage("{}")
		}
		vs := skipWS(body, i+1)
		ve := skipValue(body, vs)
		if ve < 0 {
			return json.RawMessage("{}")
		}
		if !dataMembers[key] {
			ms = append(ms, member{key, body[vs:ve]})
		}
		i = ve
	}
	if len(ms) == 0 {
		return json.RawMessage("{}")
	}
	sort.Slice(ms, func(i, j int) bool { return ms[i].key < ms[j].key })
	var b bytes.Buffer
	b.WriteByte('{')
	for i, m := range ms {
		var c bytes.Buffer
		if json.Compact(&c, m.val) != nil {
			return json.RawMessage("{}")
		}
		writeMember(&b, i > 0, m.key, c.Bytes())
	}
	b.WriteByte('}')
	return b.Bytes()
}

// plainKey returns a quoted member name of plain ASCII without escapes as
// it stands (the usual case, read without a decoder); ok is false
// otherwise, and the decoder reads it.
func plainKey(q []byte) (string, bool) {
	if len(q) < 2 || q[0] != '"' || q[len(q)-1] != '"' {
		return "", false
	}
	for _, c := range q[1 : len(q)-1] {
		if c == '\\' || c < 0x20 || c >= 0x80 {
			return "", false
		}
	}
	return string(q[1 : len(q)-1]), true
}

func skipWS(b []byte, i int) int {
	for i < len(b) && (b[i] == ' ' || b[i] == '\t' || b[i] == '\n' || b[i] == '\r') {
		i++
	}
	return i
}

// skipValue returns the index after the JSON value starting at b[i], or
// -1 when the bytes there are not one (strings, nesting and escapes are
// followed; the grammar inside was checked by the validator).
func skipValue(b []byte, i int) int {
	if i >= len(b) {
		return -1
	}
	depth := 0
	for ; i < len(b); i++ {
		switch c := b[i]; c {
		case '"':
			for i++; i < len(b) && b[i] != '"'; i++ {
				if b[i] == '\\' {
					i++
				}
			}
			if i >= len(b) {
				return -1
			}
			if depth == 0 {
				return i + 1
			}
		case '{', '[':
			depth++
		case '}', ']':
			if depth == 0 {
				return i // a scalar ends at its container's close
			}
			depth--
			if depth == 0 {
				return i + 1
			}
		case ',', ':', ' ', '\t', '\n', '\r':
			if depth == 0 {
				return i
			}
		}
	}
	if depth == 0 {
		return i
	}
	return -1
}

// traced is a response that carries a provenance record.
type traced interface {
	setProvenance(p *Provenance)
	// methods lists the published methods the answer's figures follow.
	methods() []string
}
