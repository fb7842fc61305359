package api

import (
	"bytes"
	"encoding/json"
	"fmt"
	"sort"
	"strings"
)

// The batch plan: the evaluations a batch asks for, their options merged
// once, and the request body of each sample built from them.

// preparedEval is one evaluation with the batch's options for it.
type preparedEval struct {
	name string
	def  evaluationDef
	run  operation
	// members are the option members other than measured, by key,
	// written into every sample's request; measured holds the options'
	// measured members (tolerances, say).
	members  []optionMember
	measured []optionMember
}

type optionMember struct {
	key string
	val json.RawMessage
}

// batchPlan is a validated envelope: what to run on every sample.
type batchPlan struct {
	evals      []*preparedEval
	names      []string
	provenance *Provenance
	// csv describes CSV input, nil for JSON and NDJSON.
	csv *csvInput
}

// probeProfile stands in for a sample while the options are checked on
// their own.
var probeProfile = json.RawMessage(`{"acids":[{"acid":"16:0","percent":20},{"acid":"18:1 c9","percent":80}]}`)

// prepare checks the evaluations and options once: an unknown evaluation,
// options for an evaluation not asked for, a profile among the options, or
// options the operation's contract refuses fail the batch (400).
func (d *Deps) prepare(names []string, options map[string]json.RawMessage, requestID string) (*batchPlan, error) {
	var bad []FieldError
	asked := map[string]bool{}
	for i, n := range names {
		if _, ok := evaluationDefs[n]; !ok {
			bad = append(bad, FieldError{Pointer: Pointer("evaluations", i),
				Reason: fmt.Sprintf("unknown evaluation %q; one of %s", n, strings.Join(evaluationOrder, ", "))})
			continue
		}
		if asked[n] {
			bad = append(bad, FieldError{Pointer: Pointer("evaluations", i), Reason: fmt.Sprintf("%q is listed twice", n)})
		}
		asked[n] = true
	}
	if len(names) == 0 {
		bad = append(bad, FieldError{Pointer: "/evaluations", Reason: "name at least one evaluation: " + strings.Join(evaluationOrder, ", ")})
	}
	for k := range options {
		if !asked[k] {
			bad = append(bad, FieldError{Pointer: Pointer("options", k), Reason: fmt.Sprintf("options for %q, which is not among the evaluations", k)})
		}
	}
	if asked[evalConformity] && len(options[evalConformity]) == 0 {
		bad = append(bad, FieldError{Pointer: "/options", Reason: "conformity needs options.conformity.specification (an id or an inline specification)"})
	}
	if asked[evalForecast] && len(options[evalForecast]) == 0 {
		bad = append(bad, FieldError{Pointer: "/options", Reason: "forecast needs options.forecast with its target and catalyst"})
	}
	if len(bad) > 0 {
		return nil, NewError(KindMalformed, "the batch's evaluations or options are not valid", bad...)
	}
	plan := &batchPlan{}
	var methods []string
	for _, n := range evaluationOrder {
		if !asked[n] {
			continue
		}
		pe := &preparedEval{name: n, def: evaluationDefs[n]}
		pe.run = pe.def.run(d)
		if raw := options[n]; len(raw) > 0 {
			var obj map[string]json.RawMessage
			if err := json.Unmarshal(raw, &obj); err != nil || obj == nil {
				bad = append(bad, FieldError{Pointer: Pointer("options", n), Reason: "must be an object: the request of " + pe.def.operation + " without its profile"})
				continue
			}
			for k, v := range obj {
				switch k {
				case "profile":
					bad = append(bad, FieldError{Pointer: Pointer("options", n, k), Reason: "the profile comes from each sample, not from the options"})
				case "measured":
					var m map[string]json.RawMessage
					if err := json.Unmarshal(v, &m); err != nil || m == nil {
						bad = append(bad, FieldError{Pointer: Pointer("options", n, k), Reason: "must be an object"})
						continue
					}
					for mk, mv := range m {
						pe.measured = append(pe.measured, optionMember{mk, mv})
					}
				default:
					pe.members = append(pe.members, optionMember{k, v})
				}
			}
			sort.Slice(pe.members, func(i, j int) bool { return pe.members[i].key < pe.members[j].key })
			sort.Slice(pe.measured, func(i, j int) bool { return pe.measured[i].key < pe.measured[j].key })
		}
		// The options on their own, with a stand-in profile: what the
		// operation's contract refuses here is the options' fault.
		if d.Validate != nil {
			probe := pe.body(&BatchSample{Profile: probeProfile})
			violations, err := d.Validate(pe.def.operation, probe)
			if err != nil {
				bad = append(bad, FieldError{Pointer: Pointer("options", n), Reason: "not valid JSON: " + err.Error()})
			}
			for _, v := range violations {
				if !strings.HasPrefix(v.Pointer, "/profile") {
					bad = append(bad, FieldError{Pointer: "/options/" + n + v.Pointer, Reason: v.Reason, Suggestions: v.Suggestions})
				}
			}
		}
		plan.evals = append(plan.evals, pe)
		plan.names = append(plan.names, n)
		methods = append(methods, n+": "+pe.def.operation)
	}
	if len(bad) > 0 {
		return nil, NewError(KindMalformed, "the batch's options are not valid", bad...)
	}
	params, _ := json.Marshal(struct {
		Evaluations []string                   `json:"evaluations"`
		Options     map[string]json.RawMessage `json:"options"`
	}{plan.names, compactAll(options)})
	plan.provenance = d.provenance("POST /v1/batch", requestID, params, methods)
	return plan, nil
}

// compactAll compacts every option value, so the provenance record is one
// line.
func compactAll(in map[string]json.RawMessage) map[string]json.RawMessage {
	out := make(map[string]json.RawMessage, len(in))
	for k, v := range in {
		var b bytes.Buffer
		if json.Compact(&b, v) == nil {
			out[k] = b.Bytes()
		}
	}
	return out
}

// body is the request of the evaluation's operation for one sample: its
// profile, its measured values the operation takes (over the options'),
// and the options.
func (pe *preparedEval) body(s *BatchSample) []byte {
	var b bytes.Buffer
	b.WriteString(`{"profile":`)
	b.Write(s.Profile)
	var measured []optionMember
	for _, m := range pe.measured {
		if _, own := s.Measured[m.key]; !own || !pe.def.measured[m.key] {
			measured = append(measured, m)
		}
	}
	for k, v := range s.Measured {
		if pe.def.measured[k] {
			measured = append(measured, optionMember{k, v})
		}
	}
	if len(measured) > 0 {
		sort.Slice(measured, func(i, j int) bool { return measured[i].key < measured[j].key })
		b.WriteString(`,"measured":{`)
		for i, m := range measured {
			writeMember(&b, i > 0, m.key, m.val)
		}
		b.WriteByte('}')
	}
	for _, m := range pe.members {
		writeMember(&b, true, m.key, m.val)
	}
	b.WriteByte('}')
	return b.Bytes()
}

// writeMember writes "key":value to an object being built, after a comma
// unless it is the first member; the value is written as it is.
func writeMember(b *bytes.Buffer, comma bool, key string, val json.RawMessage) {
	if comma {
		b.WriteByte(',')
	}
	k, _ := json.Marshal(key)
	b.Write(k)
	b.WriteByte(':')
	b.Write(val)
}

// pointer maps a pointer into the evaluation's request back into the
// batch: the profile and the sample's own measured values to the sample,
// the rest to the options.
func (pe *preparedEval) pointer(sample string, s *BatchSample, ptr string) string {
	switch {
	case ptr == "/profile" || strings.HasPrefix(ptr, "/profile/"):
		return sample + ptr
	case strings.HasPrefix(ptr, "/measured/"):
		key := strings.SplitN(ptr[len("/measured/"):], "/", 2)[0]
		if _, own := s.Measured[key]; own && pe.def.measured[key] {
			return sample + ptr
		}
	case ptr == "/measured" && len(s.Measured) > 0:
		return sample + ptr
	}
	return "/options/" + pe.name + ptr
}
