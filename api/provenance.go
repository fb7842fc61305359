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
// body is not an object.
func parametersOf(body []byte) json.RawMessage {
	dec := json.NewDecoder(bytes.NewReader(body))
	if t, err := dec.Token(); err != nil || t != json.Delim('{') {
		return json.RawMessage("{}")
	}
	type member struct {
		key string
		val json.RawMessage
	}
	var ms []member
	for dec.More() {
		t, err := dec.Token()
		if err != nil {
			return json.RawMessage("{}")
		}
		key, _ := t.(string)
		var v json.RawMessage
		if err := dec.Decode(&v); err != nil {
			return json.RawMessage("{}")
		}
		if !dataMembers[key] {
			ms = append(ms, member{key, v})
		}
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

// traced is a response that carries a provenance record.
type traced interface {
	setProvenance(p *Provenance)
	// methods lists the published methods the answer's figures follow.
	methods() []string
}
