package api

import (
	"bytes"
	"encoding/csv"
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"math"
	"sort"
	"strconv"
	"strings"

	"github.com/labstack/echo/v4"

	"lipidsvc/chem"
)

// A CSV batch is one row per sample as GC software exports it: a header
// row, a sample-id column, one column per acid headed by any label the
// label reader accepts, and optionally the measured iodine value,
// saponification value and slip melting point. The separator is read from
// the header (comma, semicolon or tab); with semicolons or tabs a decimal
// comma is read as a decimal point, as European instruments write it. An
// empty cell, "-", "nd", "n.d." or "ND" is an acid not found. The profile
// settings come as query parameters (basis, sum_tolerance_percent,
// max_unidentified_percent), with evaluations and options as for NDJSON.
// Header problems fail the batch, one error per column (pointer
// /header/<column index>); a row's problems are that row's result
// (pointer /rows/<row index>/columns/<column index>, both from 0; the
// reason names the line and the column's header).

// csvInput describes the columns of a CSV batch.
type csvInput struct {
	header  []string
	idCol   int
	acids   []csvColumn // acid columns in order
	measure []csvColumn // measured-value columns
}

type csvColumn struct {
	col int
	key string // the acid label, or the measured value's key
}

// csvSampleHeaders are the headers read as the sample id.
var csvSampleHeaders = map[string]bool{
	"sample_id": true, "sample id": true, "sampleid": true, "sample": true, "sample name": true, "sample_name": true,
	"id": true, "lot": true, "lot number": true, "lot_number": true, "lot no": true, "batch": true, "name": true,
}

// csvMeasuredHeaders are the headers read as measured values.
var csvMeasuredHeaders = map[string]string{
	"iodine_value": "iodine_value", "iodine value": "iodine_value", "iv": "iodine_value", "measured iodine value": "iodine_value",
	"saponification_value": "saponification_value", "saponification value": "saponification_value", "sv": "saponification_value",
	"slip_melting_point_c": "slip_melting_point_c", "slip melting point": "slip_melting_point_c", "slip melting point c": "slip_melting_point_c",
	"smp": "slip_melting_point_c",
}

// csvNotFound are cells that mean the acid was not found.
var csvNotFound = map[string]bool{"": true, "-": true, "nd": true, "n.d.": true, "n.d": true, "not detected": true}

// readCSVBatch reads a CSV batch whole (within the batch body limit),
// checks its header and hands its rows out as samples.
func (d *Deps) readCSVBatch(c echo.Context) (*batchPlan, func() (*sampleJob, error), error) {
	profileParams := map[string]bool{"basis": true, "sum_tolerance_percent": true, "max_unidentified_percent": true}
	plan, err := d.queryPlan(c, profileParams)
	if err != nil {
		return nil, nil, err
	}
	body, err := readLimited(c.Request(), d.Batch.BodyLimitBytes)
	if err != nil {
		return nil, nil, err
	}
	if body, err = CheckEncoding(body); err != nil {
		return nil, nil, err
	}
	delim := csvDelimiter(body)
	decimalComma := delim != ','
	r := csv.NewReader(bytes.NewReader(body))
	r.Comma = delim
	r.FieldsPerRecord = -1
	r.TrimLeadingSpace = true
	r.ReuseRecord = false
	header, err := r.Read()
	if err != nil {
		return nil, nil, NewError(KindMalformed, "the CSV has no header row", FieldError{Pointer: "", Reason: csvReason(err)})
	}
	in, err := d.csvHeader(header)
	if err != nil {
		return nil, nil, err
	}
	plan.csv = in
	var settings []optionMember
	q := c.QueryParams()
	for k := range profileParams {
		v := q.Get(k)
		if v == "" {
			continue
		}
		if k == "basis" {
			b, _ := json.Marshal(v)
			settings = append(settings, optionMember{k, b})
			continue
		}
		f, err := strconv.ParseFloat(v, 64)
		if err != nil {
			return nil, nil, NewError(KindMalformed, "a query parameter is not a number", FieldError{Pointer: "", Reason: fmt.Sprintf("%s=%q is not a number", k, v)})
		}
		settings = append(settings, optionMember{k, json.RawMessage(strconv.FormatFloat(f, 'g', -1, 64))})
	}
	sort.Slice(settings, func(i, j int) bool { return settings[i].key < settings[j].key })

	var rows [][]string
	var lines []int
	for {
		rec, err := r.Read()
		if errors.Is(err, io.EOF) {
			break
		}
		if err != nil {
			return nil, nil, NewError(KindMalformed, "the CSV cannot be read", FieldError{Pointer: Pointer("rows", len(rows)), Reason: csvReason(err)})
		}
		line, _ := r.FieldPos(0)
		if len(rec) == 1 && strings.TrimSpace(rec[0]) == "" {
			continue // a blank line
		}
		rows = append(rows, rec)
		lines = append(lines, line)
		if len(rows) > d.Batch.MaxSamples {
			return nil, nil, NewError(KindTooLarge, fmt.Sprintf(
				"the CSV has more than %d rows; send it in parts or as NDJSON", d.Batch.MaxSamples))
		}
	}
	i := 0
	return plan, func() (*sampleJob, error) {
		if i >= len(rows) {
			return nil, nil
		}
		j := in.sample(i, lines[i], rows[i], decimalComma, settings)
		rows[i] = nil
		i++
		return j, nil
	}, nil
}

// csvReason is a CSV reading error in plain words.
func csvReason(err error) string {
	var pe *csv.ParseError
	if errors.As(err, &pe) {
		return fmt.Sprintf("line %d, column %d: %v", pe.Line, pe.Column, pe.Err)
	}
	return err.Error()
}

// csvDelimiter picks the separator the header line uses most: comma,
// semicolon or tab (commas win a tie).
func csvDelimiter(body []byte) rune {
	line := body
	if i := bytes.IndexByte(body, '\n'); i >= 0 {
		line = body[:i]
	}
	best, n := ',', 0
	for _, d := range []rune{',', ';', '\t'} {
		k, quoted := 0, false
		for _, b := range string(line) {
			switch {
			case b == '"':
				quoted = !quoted
			case b == d && !quoted:
				k++
			}
		}
		if k > n {
			best, n = d, k
		}
	}
	return best
}

// normaliseHeader folds a header for the sample-id and measured-value
// names.
func normaliseHeader(h string) string {
	h = strings.ToLower(strings.TrimSpace(h))
	h = strings.NewReplacer("(°c)", "c", "°c", "c", "(", "", ")", "", ".", "").Replace(h)
	return strings.Join(strings.Fields(h), " ")
}

// csvHeader classifies the columns; every column that is neither the
// sample id, a measured value nor a readable acid label is an error.
func (d *Deps) csvHeader(header []string) (*csvInput, error) {
	in := &csvInput{header: header, idCol: -1}
	var bad []FieldError
	for col, h := range header {
		h = strings.TrimSpace(strings.TrimPrefix(h, "\ufeff"))
		header[col] = h
		norm := normaliseHeader(h)
		switch {
		case h == "":
			bad = append(bad, FieldError{Pointer: Pointer("header", col), Reason: fmt.Sprintf("column %d has no header", col+1)})
		case csvSampleHeaders[norm]:
			if in.idCol >= 0 {
				bad = append(bad, FieldError{Pointer: Pointer("header", col), Reason: fmt.Sprintf(
					"column %d %q is a second sample-id column (column %d is the first)", col+1, h, in.idCol+1)})
				continue
			}
			in.idCol = col
		case csvMeasuredHeaders[norm] != "":
			in.measure = append(in.measure, csvColumn{col, csvMeasuredHeaders[norm]})
		default:
			if _, err := d.Catalogue.Resolve(h); err != nil {
				fe := FieldError{Pointer: Pointer("header", col), Reason: fmt.Sprintf("column %d %q: %s", col+1, h, labelReason(err))}
				if ce, ok := chem.AsError(err); ok {
					fe.Suggestions = ce.Suggestions
				}
				bad = append(bad, fe)
				continue
			}
			in.acids = append(in.acids, csvColumn{col, h})
		}
	}
	if in.idCol < 0 {
		bad = append(bad, FieldError{Pointer: "/header", Reason: "no sample-id column: head one column sample_id (or sample, lot, id)"})
	}
	if len(in.acids) == 0 {
		bad = append(bad, FieldError{Pointer: "/header", Reason: "no acid column: head each acid's column with its label (16:0, C18:1n9c, oleic …)"})
	}
	if len(bad) > 0 {
		return nil, NewError(KindInvalidInput, "the CSV header has columns the service cannot read", bad...)
	}
	return in, nil
}

// labelReason is the message of a label error without its suggestions,
// which the field error carries.
func labelReason(err error) string {
	if ce, ok := chem.AsError(err); ok {
		return ce.Message
	}
	return err.Error()
}

// sample turns one row into a sample job: its JSON for the evaluations,
// or the row's problems.
func (in *csvInput) sample(index, line int, rec []string, decimalComma bool, settings []optionMember) *sampleJob {
	j := &sampleJob{index: index, csv: true}
	var bad []FieldError
	cellErr := func(col int, reason string) {
		bad = append(bad, FieldError{Pointer: Pointer("rows", index, "columns", col),
			Reason: fmt.Sprintf("line %d, column %d (%s): %s", line, col+1, in.header[col], reason)})
	}
	if len(rec) != len(in.header) {
		bad = append(bad, FieldError{Pointer: Pointer("rows", index),
			Reason: fmt.Sprintf("line %d has %d fields, the header %d", line, len(rec), len(in.header))})
		j.pre = NewError(KindMalformed, "the CSV row does not fit the header", bad...)
		return j
	}
	number := func(col int) (float64, bool, bool) {
		s := strings.TrimSpace(rec[col])
		if csvNotFound[strings.ToLower(s)] {
			return 0, false, true
		}
		if decimalComma {
			s = strings.Replace(s, ",", ".", 1)
		}
		f, err := strconv.ParseFloat(s, 64)
		if err != nil || math.IsNaN(f) || math.IsInf(f, 0) {
			cellErr(col, fmt.Sprintf("%q is not a finite number", rec[col]))
			return 0, false, false
		}
		return f, true, true
	}
	var b bytes.Buffer
	id, _ := json.Marshal(strings.TrimSpace(rec[in.idCol]))
	b.WriteString(`{"sample_id":`)
	b.Write(id)
	b.WriteString(`,"profile":{`)
	for _, s := range settings {
		writeMember(&b, false, s.key, s.val)
		b.WriteByte(',')
	}
	b.WriteString(`"acids":[`)
	j.acidCols = j.acidCols[:0]
	for _, c := range in.acids {
		f, present, _ := number(c.col)
		if !present {
			continue
		}
		if len(j.acidCols) > 0 {
			b.WriteByte(',')
		}
		b.WriteByte('{')
		label, _ := json.Marshal(c.key)
		writeMember(&b, false, "acid", label)
		writeMember(&b, true, "percent", jsonNumber(f))
		b.WriteByte('}')
		j.acidCols = append(j.acidCols, c.col)
	}
	b.WriteString(`]}`)
	first := true
	for _, c := range in.measure {
		f, present, _ := number(c.col)
		if !present {
			continue
		}
		if first {
			b.WriteString(`,"measured":{`)
		}
		writeMember(&b, !first, c.key, jsonNumber(f))
		first = false
		j.measuredCols = append(j.measuredCols, c)
	}
	if !first {
		b.WriteByte('}')
	}
	b.WriteByte('}')
	if len(bad) > 0 {
		j.pre = NewError(KindMalformed, "the CSV row has cells that are not numbers", bad...)
		return j
	}
	if len(j.acidCols) == 0 {
		bad = append(bad, FieldError{Pointer: Pointer("rows", index), Reason: fmt.Sprintf("line %d has no acid value", line)})
		j.pre = NewError(KindInvalidInput, "the CSV row has no acid value", bad...)
		return j
	}
	j.raw = b.Bytes()
	return j
}

// jsonNumber writes a finite number as JSON.
func jsonNumber(f float64) []byte { return strconv.AppendFloat(nil, f, 'g', -1, 64) }

// csvPointer maps a pointer into a CSV sample's JSON back to its row and
// column.
func (j *sampleJob) csvPointer(ptr string) string {
	sample := Pointer("samples", j.index)
	if !strings.HasPrefix(ptr, sample) {
		return ptr
	}
	rest := ptr[len(sample):]
	row := Pointer("rows", j.index)
	var k int
	if n, _ := fmt.Sscanf(rest, "/profile/acids/%d", &k); n == 1 && k >= 0 && k < len(j.acidCols) {
		return row + Pointer("columns", j.acidCols[k])
	}
	for _, c := range j.measuredCols {
		if rest == "/measured/"+c.key {
			return row + Pointer("columns", c.col)
		}
	}
	return row
}
