package api_test

import (
	"bufio"
	"bytes"
	"encoding/csv"
	"encoding/json"
	"fmt"
	"net/http"
	"net/url"
	"strings"
	"testing"

	"github.com/stretchr/testify/require"

	"lipidsvc/api"
)

// batchSoy is the i-th sample of an invented day of Northbay soybean oil
// lots: the profile drifts a little from lot to lot.
func batchSoy(i int) string {
	d := float64(i%10) / 10
	return fmt.Sprintf(`{"sample_id":"NB-26-12%02d-T%d","profile":{"acids":[{"acid":"C16:0","percent":%.2f},{"acid":"C18:0","percent":4.0},`+
		`{"acid":"C18:1n9c","percent":%.2f},{"acid":"C18:2n6c","percent":53.7},{"acid":"C18:3n3","percent":7.6},`+
		`{"acid":"C20:0","percent":0.4},{"acid":"others","percent":0.3}]}}`, i/10, i%10, 10.5+d, 23.5-d)
}

func batchBody(samples []string, evaluations, options string) string {
	return `{"evaluations":` + evaluations + `,"options":` + options + `,"samples":[` + strings.Join(samples, ",") + `]}`
}

// A JSON batch of 100 with one bad sample answers 99 results and one
// problem, in order, the problem pointing into that sample; every result
// equals the single route's answer for the same sample.
func TestBatchJSONOneBadSample(t *testing.T) {
	app := newApp(t)
	var samples []string
	for i := range 100 {
		samples = append(samples, batchSoy(i))
	}
	samples[37] = strings.Replace(samples[37], `"C18:0"`, `"C18:7"`, 1)
	rec := do(t, app, call{method: http.MethodPost, path: "/v1/batch", body: batchBody(samples, `["properties"]`, `{}`),
		header: map[string]string{"X-Request-ID": "batch-test-1"}})
	require.Equal(t, http.StatusOK, rec.Code, rec.Body.String())
	got := decode[api.BatchResponse](t, rec)
	require.Equal(t, []string{"properties"}, got.Evaluations)
	require.Len(t, got.Results, 100)
	require.Equal(t, 100, got.Count)
	require.Equal(t, 99, got.Succeeded)
	require.Equal(t, 1, got.Failed)
	for i, r := range got.Results {
		require.Equal(t, i, r.Index)
		require.Equal(t, fmt.Sprintf("NB-26-12%02d-T%d", i/10, i%10), *r.SampleID)
		require.Equal(t, "batch-test-1", r.Provenance.RequestID)
		require.Equal(t, "POST /v1/batch", r.Provenance.Operation)
		if i == 37 {
			require.Nil(t, r.Properties)
			require.NotNil(t, r.Problem)
			require.Equal(t, "properties", r.Problem.Evaluation)
			require.Equal(t, 422, r.Problem.Status)
			require.Equal(t, "/samples/37/profile/acids/1/acid", r.Problem.Errors[0].Pointer)
			continue
		}
		require.Nil(t, r.Problem, "%d", i)
		require.NotNil(t, r.Properties)
	}

	// The same numbers as the single route.
	var s struct {
		Profile json.RawMessage `json:"profile"`
	}
	require.NoError(t, json.Unmarshal([]byte(samples[12]), &s))
	single := decode[api.PropertiesResponse](t, do(t, app, call{method: http.MethodPost, path: "/v1/properties", body: `{"profile":` + string(s.Profile) + `}`}))
	batched := *got.Results[12].Properties
	single.Provenance, batched.Provenance = nil, nil
	require.Equal(t, single, batched)
}

// Every evaluation at once, with options; the samples' measured values
// reach properties and conformity.
func TestBatchAllEvaluations(t *testing.T) {
	app := newApp(t)
	s0 := strings.Replace(batchSoy(0), `}]}}`, `}]},"measured":{"iodine_value":150}}`, 1)
	body := batchBody([]string{s0, batchSoy(1)}, `["properties","conformity","melting","forecast"]`,
		`{"conformity":{"specification":"soybean"},"melting":{"temperatures_c":[10,20,30]},
		  "forecast":{"target":{"iodine_value":80},"catalyst":{"preset":"nickel_selective"},"path_points":5}}`)
	rec := do(t, app, call{method: http.MethodPost, path: "/v1/batch", body: body})
	require.Equal(t, http.StatusOK, rec.Code, rec.Body.String())
	got := decode[api.BatchResponse](t, rec)
	require.Equal(t, 2, got.Succeeded, rec.Body.String())
	r := got.Results[0]
	require.NotNil(t, r.Properties.MeasuredComparison)
	require.False(t, r.Properties.MeasuredComparison.IodineValue.Agrees)
	require.Equal(t, "does_not_conform", r.Conformity.Verdict, "a measured IV of 150 is above the soybean range")
	require.Equal(t, "conforms", got.Results[1].Conformity.Verdict)
	require.Len(t, r.Melting.Curve, 3)
	require.InDelta(t, 80, r.Forecast.IodineValue, 0.5)
	require.Contains(t, r.Provenance.Methods, "forecast: POST /v1/hardening/forecast")
}

// Bad envelopes and options fail the whole batch before any sample.
func TestBatchBadRequests(t *testing.T) {
	app := newApp(t)
	one := []string{batchSoy(0)}
	for name, c := range map[string]struct {
		body, pointer string
		status        int
	}{
		"unknown evaluation":     {batchBody(one, `["viscosity"]`, `{}`), "/evaluations/0", 400},
		"no evaluations":         {batchBody(one, `[]`, `{}`), "/evaluations", 400},
		"conformity without id":  {batchBody(one, `["conformity"]`, `{}`), "/options", 400},
		"options not asked for":  {batchBody(one, `["properties"]`, `{"melting":{}}`), "/options/melting", 400},
		"profile in the options": {batchBody(one, `["properties"]`, `{"properties":{"profile":{}}}`), "/options/properties/profile", 400},
		"bad option":             {batchBody(one, `["properties"]`, `{"properties":{"material":"soap"}}`), "/options/properties/material", 400},
		"no samples":             {`{"evaluations":["properties"],"samples":[]}`, "/samples", 400},
		"not json":               {`{"evaluations":`, "", 400},
	} {
		rec := do(t, app, call{method: http.MethodPost, path: "/v1/batch", body: c.body})
		require.Equal(t, c.status, rec.Code, "%s: %s", name, rec.Body.String())
		var p api.Problem
		require.NoError(t, json.Unmarshal(rec.Body.Bytes(), &p))
		var ptrs []string
		for _, e := range p.Errors {
			ptrs = append(ptrs, e.Pointer)
		}
		require.Contains(t, ptrs, c.pointer, "%s: %s", name, rec.Body.String())
	}
	rec := do(t, app, call{method: http.MethodPost, path: "/v1/batch", body: "x", header: map[string]string{"Content-Type": "text/xml"}})
	require.Equal(t, http.StatusUnsupportedMediaType, rec.Code)
}

// NDJSON in and out: one result per line in order, a bad line is its own
// problem, the summary comes last, and every line matches the contract.
func TestBatchNDJSON(t *testing.T) {
	app := newApp(t)
	_, doc := loadSpec(t)
	lines := []string{batchSoy(0), `{"sample_id":"broken",`, "", batchSoy(2), `{"sample_id":"x","profile":{"acids":[]}}`}
	q := url.Values{"evaluations": {"properties,conformity"}, "options": {`{"conformity":{"specification":"soybean"}}`}}
	rec := do(t, app, call{method: http.MethodPost, path: "/v1/batch?" + q.Encode(), body: strings.Join(lines, "\n") + "\n",
		header: map[string]string{"Content-Type": "application/x-ndjson"}})
	require.Equal(t, http.StatusOK, rec.Code, rec.Body.String())
	require.Equal(t, "application/x-ndjson", rec.Header().Get("Content-Type"))
	sc := bufio.NewScanner(rec.Body)
	sc.Buffer(make([]byte, 1<<20), 1<<20)
	var results []api.BatchResult
	var summary *api.BatchSummary
	for sc.Scan() {
		var v any
		require.NoError(t, json.Unmarshal(sc.Bytes(), &v))
		if m := v.(map[string]any); m["summary"] != nil {
			var s struct{ Summary api.BatchSummary }
			require.NoError(t, json.Unmarshal(sc.Bytes(), &s))
			summary = &s.Summary
			continue
		}
		require.Nil(t, summary, "nothing after the summary")
		require.NoError(t, doc.Components.Schemas["BatchResult"].Value.VisitJSON(v), sc.Text())
		var r api.BatchResult
		require.NoError(t, json.Unmarshal(sc.Bytes(), &r))
		results = append(results, r)
	}
	require.Len(t, results, 4)
	require.NotNil(t, summary)
	require.Equal(t, api.BatchSummary{Count: 4, Succeeded: 2, Failed: 2}, *summary)
	require.NotNil(t, results[0].Conformity)
	require.NotNil(t, results[1].Problem)
	require.Equal(t, 400, results[1].Problem.Status)
	require.Equal(t, "NB-26-1200-T2", *results[2].SampleID)
	require.NotNil(t, results[3].Problem, "an empty profile")
	require.Equal(t, "/samples/3/profile/acids", results[3].Problem.Errors[0].Pointer)

	// NDJSON in, JSON out by Accept.
	rec = do(t, app, call{method: http.MethodPost, path: "/v1/batch?evaluations=properties", body: batchSoy(0) + "\n" + batchSoy(1),
		header: map[string]string{"Content-Type": "application/x-ndjson", "Accept": "application/json"}})
	require.Equal(t, http.StatusOK, rec.Code, rec.Body.String())
	require.Len(t, decode[api.BatchResponse](t, rec).Results, 2)
}

// csvBatch is a semicolon-separated export with a decimal comma and mixed
// label spellings, as a European GC station writes it.
func csvBatch(n int) string {
	var b strings.Builder
	b.WriteString("Sample Name;C16:0;18:0;C18:1n9c;C18:2 cis-9,12;alpha-linolenic;C20:0 (arachidic);Others (sum);IV\n")
	for i := range n {
		d := float64(i%10) / 10
		row := fmt.Sprintf("NB-CSV-%03d;%.2f;4,0;%.2f;53,7;7,6;0,4;0,3;%.1f\n", i, 10.5+d, 23.5-d, 130+d)
		b.WriteString(strings.ReplaceAll(strings.ReplaceAll(row, ".", ","), "NB-CSV-", "NB-CSV-"))
	}
	return b.String()
}

// A CSV round trip: 100 rows in, 100 rows out, the same iodine values as
// the JSON answer; a broken header fails the batch naming the column; a
// broken row is that row's problem, naming the cell.
func TestBatchCSV(t *testing.T) {
	app := newApp(t)
	body := csvBatch(100)
	csvCall := func(body, accept string) *bytesRecorder {
		rec := do(t, app, call{method: http.MethodPost, path: "/v1/batch?evaluations=properties", body: body,
			header: map[string]string{"Content-Type": "text/csv; charset=utf-8", "Accept": accept}})
		return &bytesRecorder{rec.Code, rec.Body.Bytes(), rec.Header().Get("Content-Type")}
	}
	js := csvCall(body, "application/json")
	require.Equal(t, http.StatusOK, js.code, string(js.body))
	var jr api.BatchResponse
	require.NoError(t, json.Unmarshal(js.body, &jr))
	require.Equal(t, 100, jr.Succeeded, string(js.body[:min(len(js.body), 2000)]))

	out := csvCall(body, "text/csv")
	require.Equal(t, http.StatusOK, out.code, string(out.body))
	require.Equal(t, "text/csv", out.ctype)
	rows, err := csv.NewReader(bytes.NewReader(out.body)).ReadAll()
	require.NoError(t, err)
	require.Len(t, rows, 101)
	col := map[string]int{}
	for i, h := range rows[0] {
		col[h] = i
	}
	for i, row := range rows[1:] {
		require.Equal(t, fmt.Sprintf("NB-CSV-%03d", i), row[col["sample_id"]])
		require.Equal(t, "ok", row[col["status"]])
		require.Equal(t, fmt.Sprint(jr.Results[i].Properties.IodineValue), row[col["iodine_value"]])
		require.Equal(t, fmt.Sprint(jr.Results[i].Properties.Sums.SaturatedPercent), row[col["saturated_percent"]])
	}
	// The measured IV column reached the comparison.
	require.NotNil(t, jr.Results[0].Properties.MeasuredComparison)

	bad := strings.Replace(body, "18:0;", "C18:7;", 1)
	rec := csvCall(bad, "")
	require.Equal(t, http.StatusUnprocessableEntity, rec.code, string(rec.body))
	var p api.Problem
	require.NoError(t, json.Unmarshal(rec.body, &p))
	require.Equal(t, "/header/2", p.Errors[0].Pointer)
	require.Contains(t, p.Errors[0].Reason, `column 3 "C18:7"`)
	require.NotEmpty(t, p.Errors[0].Suggestions)

	lines := strings.Split(body, "\n")
	lines[6] = strings.Replace(lines[6], ";53,7;", ";5x,7;", 1)
	lines[9] = lines[9] + ";1"
	rec = csvCall(strings.Join(lines, "\n"), "application/json")
	require.Equal(t, http.StatusOK, rec.code)
	require.NoError(t, json.Unmarshal(rec.body, &jr))
	require.Equal(t, 98, jr.Succeeded)
	r5 := jr.Results[5].Problem
	require.NotNil(t, r5)
	require.Equal(t, "/rows/5/columns/4", r5.Errors[0].Pointer)
	require.Contains(t, r5.Errors[0].Reason, "line 7, column 5 (C18:2 cis-9,12)")
	require.Equal(t, "/rows/8", jr.Results[8].Problem.Errors[0].Pointer)
	require.Contains(t, jr.Results[8].Problem.Errors[0].Reason, "line 10 has 10 fields, the header 9")
}

type bytesRecorder struct {
	code  int
	body  []byte
	ctype string
}

// A cell that parses as a float but is not a finite number (NaN, Inf) is
// that row's problem, naming the cell, like any cell that is not a number.
func TestBatchCSVNonFiniteCell(t *testing.T) {
	app := newApp(t)
	body := "sample_id;C16:0;C18:1n9c\nA;10;90\nB;NaN;90\nC;Inf;90\n"
	rec := do(t, app, call{method: http.MethodPost, path: "/v1/batch?evaluations=properties", body: body,
		header: map[string]string{"Content-Type": "text/csv"}})
	require.Equal(t, http.StatusOK, rec.Code, rec.Body.String())
	got := decode[api.BatchResponse](t, rec)
	require.Equal(t, 1, got.Succeeded)
	for _, i := range []int{1, 2} {
		p := got.Results[i].Problem
		require.NotNil(t, p)
		require.Equal(t, api.Pointer("rows", i, "columns", 1), p.Errors[0].Pointer)
		require.Contains(t, p.Errors[0].Reason, "not a finite number")
	}
}
