package api

import (
	"bufio"
	"bytes"
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"mime"
	"net/http"
	"sort"
	"strconv"
	"strings"

	"github.com/labstack/echo/v4"
	segjson "github.com/segmentio/encoding/json"
)

// The batch formats: which body and answer types a request asks for, the
// readers of JSON and NDJSON batches, and the writers of their answers.

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
