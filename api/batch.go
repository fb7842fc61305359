package api

import (
	"bufio"
	"bytes"
	"context"
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"mime"
	"net/http"
	"runtime"
	"sort"
	"strconv"
	"strings"
	"time"

	"github.com/labstack/echo/v4"
	segjson "github.com/segmentio/encoding/json"
)

// POST /v1/batch runs the same evaluations on many samples: JSON in and
// out, newline-delimited JSON (NDJSON) streamed in and out, or CSV in with
// JSON, NDJSON or CSV out by Accept. Each sample is evaluated exactly as the
// single routes would evaluate the equivalent request (the sample's
// profile and measured values, the batch's options for that evaluation),
// so a batch and single requests give the same numbers. A bad sample gets
// its own problem object and never fails the others; a bad envelope or bad
// options fail the whole batch before any sample is read.
//
// Samples are read, evaluated on Workers goroutines and written in order
// through a window of a few samples per worker, so memory stays flat
// however long an NDJSON stream is. The route is streamed (the contract's
// x-lipidsvc-streamed): it reads its own body, validates each part
// against the contract with Deps.Validate, and extends the connection's
// read and write deadlines part by part instead of living within the
// request time limit; each sample has SampleTimeout, the whole batch
// Timeout.

// Validator checks a JSON document against a schema of the contract: an
// operation's request body ("POST /v1/properties") or a component schema
// ("#/components/schemas/BatchSample"). It returns the violations with
// pointers relative to the document, or an error when the bytes are not
// JSON.
type Validator func(schema string, body []byte) ([]FieldError, error)

// BatchLimits bound POST /v1/batch.
type BatchLimits struct {
	// MaxSamples caps a JSON or CSV batch; BodyLimitBytes its body.
	MaxSamples     int
	BodyLimitBytes int64
	// LineLimitBytes caps one NDJSON line.
	LineLimitBytes int64
	// Timeout bounds the whole batch; SampleTimeout one sample's
	// evaluations.
	Timeout, SampleTimeout time.Duration
	// ReadTimeout and WriteTimeout are extended for each part read or
	// written; 0 leaves the server's deadlines alone.
	ReadTimeout, WriteTimeout time.Duration
	// Workers is how many samples are evaluated at once; 0 means one per
	// core.
	Workers int
}

// Media types of the batch route.
const (
	mimeNDJSON = "application/x-ndjson"
	mimeCSV    = "text/csv"
)

// Evaluation names.
const (
	evalProperties = "properties"
	evalConformity = "conformity"
	evalMelting    = "melting"
	evalForecast   = "forecast"
)

// evaluationOrder is the order evaluations run and are reported in.
var evaluationOrder = []string{evalProperties, evalConformity, evalMelting, evalForecast}

// evaluationDef ties an evaluation to the operation it is.
type evaluationDef struct {
	operation string
	// measured are the sample measured values the operation takes.
	measured map[string]bool
	run      func(d *Deps) operation
}

var evaluationDefs = map[string]evaluationDef{
	evalProperties: {"POST /v1/properties", map[string]bool{"iodine_value": true, "saponification_value": true},
		func(d *Deps) operation { return runProperties(d.Catalogue, d.Recorder) }},
	evalConformity: {"POST /v1/conformity", map[string]bool{"iodine_value": true, "saponification_value": true, "slip_melting_point_c": true},
		func(d *Deps) operation { return runConformity(d.Catalogue, d.Library, d.Recorder) }},
	evalMelting: {"POST /v1/melting", nil,
		func(d *Deps) operation { return runMelting(d.Catalogue, d.Recorder) }},
	evalForecast: {"POST /v1/hardening/forecast", nil,
		func(d *Deps) operation { return runForecast(d.Catalogue, d.Recorder) }},
}

// BatchRequest is the JSON body of POST /v1/batch.
type BatchRequest struct {
	Evaluations []string                   `json:"evaluations"`
	Options     map[string]json.RawMessage `json:"options,omitempty"`
	Samples     []json.RawMessage          `json:"samples"`
}

// BatchSample is one sample: its id, its profile and its measured values.
type BatchSample struct {
	SampleID string                     `json:"sample_id"`
	Profile  json.RawMessage            `json:"profile"`
	Measured map[string]json.RawMessage `json:"measured,omitempty"`
}

// BatchResult is one sample's outcome: the evaluations' answers, or the
// problem that stopped them.
type BatchResult struct {
	Index      int                 `json:"index"`
	SampleID   *string             `json:"sample_id"`
	Properties *PropertiesResponse `json:"properties,omitempty"`
	Conformity *ConformityResponse `json:"conformity,omitempty"`
	Melting    *MeltingResponse    `json:"melting,omitempty"`
	Forecast   *ForecastResponse   `json:"forecast,omitempty"`
	Problem    *Problem            `json:"problem,omitempty"`
	Provenance *Provenance         `json:"provenance"`
}

// BatchSummary counts a batch's outcomes.
type BatchSummary struct {
	Count     int `json:"count"`
	Succeeded int `json:"succeeded"`
	Failed    int `json:"failed"`
}

// BatchResponse is the JSON answer of POST /v1/batch. The results come
// first and the counts after them, so that the answer is written as the
// samples are evaluated.
type BatchResponse struct {
	Evaluations []string      `json:"evaluations"`
	Results     []BatchResult `json:"results"`
	BatchSummary
}

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

// sampleJob is one sample on its way through the pipeline.
type sampleJob struct {
	index int
	raw   []byte
	// pre is a problem found while reading (a CSV row, an over-long
	// line), which skips the evaluations.
	pre  *Error
	done chan struct{}
	out  BatchResult
	// csv marks a CSV row; acidCols and measuredCols map its sample's
	// acids and measured values back to their columns.
	csv          bool
	acidCols     []int
	measuredCols []csvColumn
}

// process evaluates one sample.
func (d *Deps) process(ctx context.Context, plan *batchPlan, j *sampleJob) {
	j.out = BatchResult{Index: j.index, Provenance: plan.provenance}
	sample := Pointer("samples", j.index)
	fail := func(err error, eval string, mapPtr func(string) string) {
		e := classify(err)
		pt := problemTypes[e.Kind]
		if pt.status >= 500 && e.Kind != KindUnavailable && d.Logger != nil {
			d.Logger.ErrorContext(ctx, "batch sample failed", "request_id", plan.provenance.RequestID,
				"index", j.index, "evaluation", eval, "cause", err.Error())
		}
		p := &Problem{Type: ProblemTypeBase + pt.slug, Title: pt.title, Status: pt.status, Detail: e.Detail,
			Instance: "/v1/batch", RequestID: plan.provenance.RequestID, Evaluation: eval}
		for _, f := range e.Fields {
			f.Pointer = mapPtr(f.Pointer)
			if j.csv {
				f.Pointer = j.csvPointer(f.Pointer)
			}
			p.Errors = append(p.Errors, f)
		}
		j.out.Problem = p
		if d.Recorder != nil {
			d.Recorder.Rejection(pt.slug)
		}
	}
	if j.pre != nil {
		fail(j.pre, "", func(p string) string { return p })
		return
	}
	toSample := func(p string) string { return sample + p }
	if d.Validate != nil {
		violations, err := d.Validate("#/components/schemas/BatchSample", j.raw)
		if err != nil {
			fail(NewError(KindMalformed, "the sample is not valid JSON", FieldError{Pointer: "", Reason: err.Error()}), "", toSample)
			return
		}
		if len(violations) > 0 {
			fail(NewError(KindMalformed, "the sample does not match the contract", violations...), "", toSample)
			return
		}
	}
	var s BatchSample
	if err := decodeBytes(j.raw, &s); err != nil {
		fail(err, "", toSample)
		return
	}
	if s.SampleID != "" {
		id := s.SampleID
		j.out.SampleID = &id
	}
	if len(s.Profile) == 0 {
		fail(NewError(KindMalformed, "the sample has no profile", FieldError{Pointer: "/profile", Reason: "required"}), "", toSample)
		return
	}
	ctx, cancel := context.WithTimeout(ctx, d.Batch.SampleTimeout)
	defer cancel()
	for _, pe := range plan.evals {
		ans, err := d.runPart(ctx, pe.def.operation, pe.run, pe.body(&s), func(p string) string { return pe.pointer(sample, &s, p) })
		if err != nil {
			fail(err, pe.name, func(p string) string { return p })
			return
		}
		switch v := ans.(type) {
		case *PropertiesResponse:
			j.out.Properties = v
		case *ConformityResponse:
			j.out.Conformity = v
		case *MeltingResponse:
			j.out.Melting = v
		case *ForecastResponse:
			j.out.Forecast = v
		}
	}
	if d.Recorder != nil {
		d.Recorder.Calculation("batch_sample")
	}
}

// ContractError is the one malformed-request error for a body, or a part
// of one, that does not match the contract: a pointer per violation (each
// once); the schema's own text is never echoed.
func ContractError(fields []FieldError) *Error {
	var out []FieldError
	seen := map[string]bool{}
	for _, f := range fields {
		if k := f.Pointer + "\x00" + f.Reason; !seen[k] {
			seen[k] = true
			out = append(out, f)
		}
	}
	detail := "the request does not match the contract"
	if len(out) == 1 {
		detail += ": " + out[0].Reason
	}
	return NewError(KindMalformed, detail, out...)
}

// batchWriter writes results in one of the output formats.
type batchWriter interface {
	begin(plan *batchPlan) error
	result(r *BatchResult) error
	end(s BatchSummary) error
}

// DefaultBatchLimits are the batch limits a zero field stands for (the
// service's configuration starts from them too).
func DefaultBatchLimits() BatchLimits {
	return BatchLimits{MaxSamples: 10000, BodyLimitBytes: 64 << 20, LineLimitBytes: 1 << 20,
		Timeout: 30 * time.Minute, SampleTimeout: 10 * time.Second}
}

// handleBatch is POST /v1/batch.
func (d *Deps) handleBatch() echo.HandlerFunc {
	def := DefaultBatchLimits()
	if d.Batch.Timeout <= 0 {
		d.Batch.Timeout = def.Timeout
	}
	if d.Batch.SampleTimeout <= 0 {
		d.Batch.SampleTimeout = def.SampleTimeout
	}
	if d.Batch.MaxSamples <= 0 {
		d.Batch.MaxSamples = def.MaxSamples
	}
	if d.Batch.BodyLimitBytes <= 0 {
		d.Batch.BodyLimitBytes = def.BodyLimitBytes
	}
	if d.Batch.LineLimitBytes <= 0 {
		d.Batch.LineLimitBytes = def.LineLimitBytes
	}
	return func(c echo.Context) error {
		req := c.Request()
		in, err := batchInputType(req)
		if err != nil {
			return err
		}
		ctx, cancel := context.WithTimeout(req.Context(), d.Batch.Timeout)
		defer cancel()
		rc := http.NewResponseController(c.Response())
		d.extendRead(rc)

		var plan *batchPlan
		var next func() (*sampleJob, error) // nil job at the end
		switch in {
		case MIMEApplicationJSON:
			plan, next, err = d.readJSONBatch(c)
		case mimeNDJSON:
			plan, next, err = d.readNDJSONBatch(c, rc)
		case mimeCSV:
			plan, next, err = d.readCSVBatch(c)
		}
		if err != nil {
			return err
		}
		out := batchOutputType(req.Header.Get(echo.HeaderAccept), in)
		bw := bufio.NewWriterSize(c.Response(), 32<<10)
		var w batchWriter
		switch out {
		case mimeCSV:
			w = newCSVWriter(bw, plan)
		case mimeNDJSON:
			w = &ndjsonWriter{w: bw}
		default:
			w = &jsonBatchWriter{w: bw}
		}
		h := c.Response().Header()
		h.Set(echo.HeaderContentType, out)
		c.Response().WriteHeader(http.StatusOK)
		flush := func() error {
			d.extendWrite(rc)
			if err := bw.Flush(); err != nil {
				return err
			}
			_ = rc.Flush()
			return nil
		}
		if err := w.begin(plan); err != nil {
			return nil
		}
		sum, err := d.pipeline(ctx, plan, next, func(r *BatchResult) error {
			if err := w.result(r); err != nil {
				return err
			}
			if out == mimeNDJSON || bw.Buffered() > 16<<10 {
				return flush()
			}
			return nil
		})
		if err != nil {
			// The status line is sent: a failure now can only end the
			// stream early, which the missing summary shows.
			if d.Logger != nil {
				d.Logger.WarnContext(ctx, "batch ended early", "request_id", RequestID(c), "cause", err.Error(), "written", sum.Count)
			}
			_ = flush()
			return nil
		}
		_ = w.end(sum)
		_ = flush()
		return nil
	}
}

// pipeline reads samples with next, evaluates them on the workers and
// hands the results to emit in order. It stops at the first read or emit
// error (a read error after the first sample ends the stream: the samples
// before it are answered).
func (d *Deps) pipeline(ctx context.Context, plan *batchPlan, next func() (*sampleJob, error), emit func(*BatchResult) error) (BatchSummary, error) {
	workers := d.Batch.Workers
	if workers <= 0 {
		workers = runtime.GOMAXPROCS(0)
	}
	ctx, cancel := context.WithCancel(ctx)
	defer cancel()
	jobs := make(chan *sampleJob, workers)
	order := make(chan *sampleJob, 4*workers)
	readErr := make(chan error, 1)
	go func() {
		defer close(jobs)
		defer close(order)
		for {
			j, err := next()
			if err != nil || j == nil {
				readErr <- err
				return
			}
			j.done = make(chan struct{})
			select {
			case order <- j:
			case <-ctx.Done():
				readErr <- ctx.Err()
				return
			}
			select {
			case jobs <- j:
			case <-ctx.Done():
				readErr <- ctx.Err()
				return
			}
		}
	}()
	for range workers {
		go func() {
			for j := range jobs {
				d.process(ctx, plan, j)
				close(j.done)
			}
		}()
	}
	var sum BatchSummary
	for j := range order {
		select {
		case <-j.done:
		case <-ctx.Done():
			return sum, ctx.Err()
		}
		sum.Count++
		if j.out.Problem != nil {
			sum.Failed++
		} else {
			sum.Succeeded++
		}
		if err := emit(&j.out); err != nil {
			return sum, err
		}
		j.out = BatchResult{} // let the answer go
	}
	if err := <-readErr; err != nil {
		return sum, err
	}
	return sum, nil
}

// extendRead and extendWrite push the connection's deadlines on by the
// server's timeouts, part by part.
func (d *Deps) extendRead(rc *http.ResponseController) {
	if d.Batch.ReadTimeout > 0 {
		_ = rc.SetReadDeadline(time.Now().Add(d.Batch.ReadTimeout))
	}
}

func (d *Deps) extendWrite(rc *http.ResponseController) {
	if d.Batch.WriteTimeout > 0 {
		_ = rc.SetWriteDeadline(time.Now().Add(d.Batch.WriteTimeout))
	}
}

// MIMEApplicationJSON is the JSON media type.
const MIMEApplicationJSON = "application/json"

// batchInputType checks the request's media type: JSON, NDJSON or CSV,
// UTF-8, not encoded.
func batchInputType(req *http.Request) (string, error) {
	ct := req.Header.Get(echo.HeaderContentType)
	mt, params, err := mime.ParseMediaType(ct)
	if err != nil {
		mt = ""
	}
	switch mt {
	case MIMEApplicationJSON, mimeNDJSON, mimeCSV:
	case "application/jsonl", "application/x-jsonlines":
		mt = mimeNDJSON
	default:
		return "", NewError(KindUnsupportedMedia, fmt.Sprintf(
			"a batch is application/json, application/x-ndjson or text/csv, not %q", ct))
	}
	if cs, ok := params["charset"]; ok && !strings.EqualFold(cs, "utf-8") && !strings.EqualFold(cs, "utf8") {
		return "", NewError(KindUnsupportedMedia, fmt.Sprintf("the batch must be UTF-8, not charset %q", cs))
	}
	if enc := req.Header.Get("Content-Encoding"); enc != "" && !strings.EqualFold(enc, "identity") {
		return "", NewError(KindUnsupportedMedia, fmt.Sprintf("the batch must not be encoded (Content-Encoding %q)", enc))
	}
	return mt, nil
}

// batchOutputType picks the answer's format from Accept: the first of
// text/csv, application/x-ndjson and application/json it names (q-values
// above 0, in order of preference); otherwise NDJSON for NDJSON input and
// JSON for the rest.
func batchOutputType(accept, in string) string {
	type choice struct {
		mt string
		q  float64
		at int
	}
	var cs []choice
	for i, part := range strings.Split(accept, ",") {
		mt, params, err := mime.ParseMediaType(strings.TrimSpace(part))
		if err != nil {
			continue
		}
		q := 1.0
		if v, ok := params["q"]; ok {
			if _, err := fmt.Sscanf(v, "%g", &q); err != nil {
				q = 0
			}
		}
		switch mt {
		case mimeCSV, mimeNDJSON, MIMEApplicationJSON:
			if q > 0 {
				cs = append(cs, choice{mt, q, i})
			}
		}
	}
	sort.SliceStable(cs, func(i, j int) bool { return cs[i].q > cs[j].q })
	if len(cs) > 0 {
		return cs[0].mt
	}
	if in == mimeNDJSON {
		return mimeNDJSON
	}
	return MIMEApplicationJSON
}

// readJSONBatch reads and checks a JSON batch: the body within its limit,
// the envelope against the contract, the evaluations and options; the
// samples are then handed out one by one.
func (d *Deps) readJSONBatch(c echo.Context) (*batchPlan, func() (*sampleJob, error), error) {
	if len(c.QueryParams()) > 0 {
		return nil, nil, NewError(KindMalformed, "a JSON batch gives its evaluations and options in the body",
			FieldError{Pointer: "", Reason: "query parameters are for NDJSON and CSV batches"})
	}
	body, err := readLimited(c.Request(), d.Batch.BodyLimitBytes)
	if err != nil {
		return nil, nil, err
	}
	if body, err = CheckEncoding(body); err != nil {
		return nil, nil, err
	}
	if d.Validate != nil {
		violations, err := d.Validate("POST /v1/batch", body)
		if err != nil {
			return nil, nil, NewError(KindMalformed, "the request body is not valid JSON", FieldError{Pointer: "", Reason: err.Error()})
		}
		if len(violations) > 0 {
			return nil, nil, ContractError(violations)
		}
	}
	var br BatchRequest
	if err := decodeBytes(body, &br); err != nil {
		return nil, nil, err
	}
	if len(br.Samples) > d.Batch.MaxSamples {
		return nil, nil, NewError(KindTooLarge, fmt.Sprintf(
			"the batch has %d samples, more than the limit of %d; send it as NDJSON, which has no limit, or in parts", len(br.Samples), d.Batch.MaxSamples))
	}
	plan, err := d.prepare(br.Evaluations, br.Options, RequestID(c))
	if err != nil {
		return nil, nil, err
	}
	i := 0
	return plan, func() (*sampleJob, error) {
		if i >= len(br.Samples) {
			return nil, nil
		}
		j := &sampleJob{index: i, raw: br.Samples[i]}
		br.Samples[i] = nil
		i++
		return j, nil
	}, nil
}

// queryPlan reads the evaluations and options of an NDJSON or CSV batch
// from the query: evaluations=properties,conformity and options={…} (JSON,
// URL-encoded).
func (d *Deps) queryPlan(c echo.Context, extra map[string]bool) (*batchPlan, error) {
	q := c.QueryParams()
	for k := range q {
		if k != "evaluations" && k != "options" && !extra[k] {
			return nil, NewError(KindMalformed, "unknown query parameter", FieldError{Pointer: "", Reason: fmt.Sprintf(
				"unknown query parameter %q (evaluations, options%s)", k, extraNames(extra))})
		}
	}
	var names []string
	for _, part := range strings.Split(q.Get("evaluations"), ",") {
		if p := strings.TrimSpace(part); p != "" {
			names = append(names, p)
		}
	}
	var options map[string]json.RawMessage
	if raw := q.Get("options"); raw != "" {
		if err := json.Unmarshal([]byte(raw), &options); err != nil {
			return nil, NewError(KindMalformed, "the options query parameter is not a JSON object",
				FieldError{Pointer: "/options", Reason: err.Error()})
		}
	}
	plan, err := d.prepare(names, options, RequestID(c))
	if err != nil {
		return nil, err
	}
	return plan, nil
}

func extraNames(extra map[string]bool) string {
	var ks []string
	for k := range extra {
		ks = append(ks, k)
	}
	sort.Strings(ks)
	if len(ks) == 0 {
		return ""
	}
	return ", " + strings.Join(ks, ", ")
}

// readNDJSONBatch streams an NDJSON batch: one sample per line, blank
// lines skipped; a line over the limit becomes that sample's problem.
func (d *Deps) readNDJSONBatch(c echo.Context, rc *http.ResponseController) (*batchPlan, func() (*sampleJob, error), error) {
	plan, err := d.queryPlan(c, nil)
	if err != nil {
		return nil, nil, err
	}
	// Answers go out while the stream still comes in.
	_ = rc.EnableFullDuplex()
	limit := int(d.Batch.LineLimitBytes)
	r := bufio.NewReaderSize(c.Request().Body, 64<<10)
	index, line := 0, 0
	return plan, func() (*sampleJob, error) {
		for {
			d.extendRead(rc)
			raw, tooLong, err := readLine(r, limit)
			line++
			if err != nil && !(errors.Is(err, io.EOF) && (len(raw) > 0 || tooLong)) {
				if errors.Is(err, io.EOF) {
					return nil, nil
				}
				return nil, err
			}
			if tooLong {
				j := &sampleJob{index: index, pre: NewError(KindTooLarge, fmt.Sprintf("line %d is longer than %d bytes", line, limit))}
				index++
				return j, nil
			}
			raw = bytes.TrimSpace(raw)
			if line == 1 {
				raw = bytes.TrimPrefix(raw, bomUTF8)
			}
			if len(raw) == 0 {
				if errors.Is(err, io.EOF) {
					return nil, nil
				}
				continue
			}
			j := &sampleJob{index: index, raw: raw}
			if _, encErr := CheckEncoding(raw); encErr != nil {
				j.pre = classify(encErr)
			}
			index++
			return j, nil
		}
	}, nil
}

// readLine reads one line of at most limit bytes (without its newline),
// copied; a longer line is skipped to its end and reported.
func readLine(r *bufio.Reader, limit int) (line []byte, tooLong bool, err error) {
	var buf []byte
	for {
		chunk, err := r.ReadSlice('\n')
		if len(buf)+len(chunk) > limit+1 {
			tooLong = true
		} else {
			buf = append(buf, chunk...)
		}
		if errors.Is(err, bufio.ErrBufferFull) {
			continue
		}
		if tooLong {
			return nil, true, err
		}
		return bytes.TrimSuffix(buf, []byte("\n")), false, err
	}
}

// readLimited reads a body of at most limit bytes.
func readLimited(req *http.Request, limit int64) ([]byte, error) {
	if req.ContentLength > limit {
		return nil, NewError(KindTooLarge, fmt.Sprintf("the batch exceeds the limit of %d bytes; send it as NDJSON, which is streamed", limit))
	}
	body, err := io.ReadAll(io.LimitReader(req.Body, limit+1))
	if err != nil {
		return nil, NewError(KindMalformed, "the request body could not be read")
	}
	if int64(len(body)) > limit {
		return nil, NewError(KindTooLarge, fmt.Sprintf("the batch exceeds the limit of %d bytes; send it as NDJSON, which is streamed", limit))
	}
	return body, nil
}

// jsonBatchWriter writes BatchResponse as the results come.
type jsonBatchWriter struct {
	w *bufio.Writer
	n int
}

func (j *jsonBatchWriter) begin(plan *batchPlan) error {
	names, _ := json.Marshal(plan.names)
	j.w.WriteString(`{"evaluations":`)
	j.w.Write(names)
	_, err := j.w.WriteString(`,"results":[`)
	return err
}

func (j *jsonBatchWriter) result(r *BatchResult) error {
	b, err := appendBatchResult(nil, r)
	if err != nil {
		return err
	}
	if j.n > 0 {
		j.w.WriteByte(',')
	}
	j.n++
	_, err = j.w.Write(b)
	return err
}

func (j *jsonBatchWriter) end(s BatchSummary) error {
	_, err := fmt.Fprintf(j.w, `],"count":%d,"succeeded":%d,"failed":%d}`, s.Count, s.Succeeded, s.Failed)
	return err
}

// ndjsonWriter writes one result per line and a summary line at the end:
// {"summary": {…}}. A stream without its summary line was cut short.
type ndjsonWriter struct{ w *bufio.Writer }

func (n *ndjsonWriter) begin(*batchPlan) error { return nil }

func (n *ndjsonWriter) result(r *BatchResult) error {
	b, err := appendBatchResult(nil, r)
	if err != nil {
		return err
	}
	n.w.Write(b)
	return n.w.WriteByte('\n')
}

func (n *ndjsonWriter) end(s BatchSummary) error {
	b, _ := json.Marshal(struct {
		Summary BatchSummary `json:"summary"`
	}{s})
	n.w.Write(b)
	return n.w.WriteByte('\n')
}

// appendBatchResult encodes a result as the JSON codec would, writing the
// properties answer with its own encoder (encoding it through the codec's
// Marshaler path re-scans its bytes and cost a third of a batch's time).
func appendBatchResult(b []byte, r *BatchResult) ([]byte, error) {
	b = append(b, `{"index":`...)
	b = strconv.AppendInt(b, int64(r.Index), 10)
	b = append(b, `,"sample_id":`...)
	if r.SampleID == nil {
		b = append(b, "null"...)
	} else {
		b = appendJSONString(b, *r.SampleID)
	}
	var err error
	if r.Properties != nil {
		b = append(b, `,"properties":`...)
		if b, err = r.Properties.AppendJSON(b); err != nil {
			return nil, err
		}
	}
	for _, part := range []struct {
		key string
		v   any
		ok  bool
	}{
		{"conformity", r.Conformity, r.Conformity != nil},
		{"melting", r.Melting, r.Melting != nil},
		{"forecast", r.Forecast, r.Forecast != nil},
		{"problem", r.Problem, r.Problem != nil},
	} {
		if !part.ok {
			continue
		}
		b = append(b, ',')
		b = appendJSONString(b, part.key)
		b = append(b, ':')
		if b, err = segjson.Append(b, part.v, segjson.SortMapKeys); err != nil {
			return nil, err
		}
	}
	b = append(b, `,"provenance":`...)
	if r.Provenance == nil {
		b = append(b, "null"...)
	} else {
		w := jsonWriter{b: b}
		w.provenance(r.Provenance)
		b = w.b
	}
	return append(b, '}'), nil
}
