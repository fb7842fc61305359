package api

import (
	"bufio"
	"context"
	"encoding/json"
	"net/http"
	"runtime"
	"time"

	"github.com/labstack/echo/v4"
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
