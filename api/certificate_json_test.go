package api

import (
	"bytes"
	"encoding/json"
	"math"
	"testing"
	"unicode/utf8"

	"github.com/stretchr/testify/require"

	"lipidsvc/chem"
)

// stdJSON encodes v with encoding/json, without HTML escaping, as the
// reference the hand-written encoder must equal.
func stdJSON(t testing.TB, v any) []byte {
	t.Helper()
	var buf bytes.Buffer
	enc := json.NewEncoder(&buf)
	enc.SetEscapeHTML(false)
	require.NoError(t, enc.Encode(v))
	return bytes.TrimSuffix(buf.Bytes(), []byte("\n"))
}

func TestPropertiesJSONMatchesEncoder(t *testing.T) {
	cat := chem.NewCatalogue()
	for _, in := range []chem.PropertiesInput{
		{Profile: &chem.ProfileInput{Acids: []chem.Entry{{Acid: "16:0", Percent: 10.5}, {Acid: "18:1", Percent: 23}, {Acid: "18:2", Percent: 53.7},
			{Acid: "18:3", Percent: 7.6}, {Acid: "18:0", Percent: 4}, {Acid: "others", Percent: 1.2}}}},
		{Profile: &chem.ProfileInput{Acids: []chem.Entry{{Acid: "EPA", Percent: 50}, {Acid: "DHA", Percent: 50}}}, Material: "methyl_esters"},
		{Profile: &chem.ProfileInput{Basis: "mole_percent", Acids: []chem.Entry{{Acid: "stearic", Percent: 100}}}, Material: "free_fatty_acids"},
		{Profile: &chem.ProfileInput{Acids: []chem.Entry{{Acid: "18:1 t9", Percent: 60}, {Acid: "18:2 c9,t11", Percent: 40.3}}}},
		{Profile: &chem.ProfileInput{Acids: []chem.Entry{{Acid: "16:0", Percent: 40}, {Acid: "18:1", Percent: 60}}},
			Measured: &chem.MeasuredInput{IodineValue: ptr(49.0), SaponificationValue: ptr(200.0)}},
		{Profile: &chem.ProfileInput{Acids: []chem.Entry{{Acid: "16:0", Percent: 40}, {Acid: "18:1", Percent: 60}}},
			Measured: &chem.MeasuredInput{SaponificationValue: ptr(190.5)}},
		{Profile: &chem.ProfileInput{Acids: []chem.Entry{{Acid: "16:0", Percent: 30}, {Acid: "18:1 t9", Percent: 20}, {Acid: "EPA", Percent: 50}}},
			Nutrition: &chem.NutritionInput{}},
		{Profile: &chem.ProfileInput{Acids: []chem.Entry{{Acid: "16:0", Percent: 40}, {Acid: "18:1", Percent: 60}}},
			Nutrition: &chem.NutritionInput{FoodClass: "milk_products", FatGPer100gFood: ptr(3.5)}},
	} {
		p, err := chem.ComputeProperties(cat, in)
		require.NoError(t, err)
		r := fromProperties(p)
		got, err := r.AppendJSON(nil)
		require.NoError(t, err)
		require.Equal(t, string(stdJSON(t, r.plain())), string(got))
	}
	// Edge values: tiny and huge numbers, nil lists, escapes.
	tiny := 3e-9
	r := PropertiesResponse{IodineValue: 1e22, SaponificationValue: -0.0000005, Sums: CompositionSums{N6ToN3Ratio: &tiny},
		AOCS:     AOCSIodineValue{Note: "quote \" back \\ tab \t nl \n bell \x07 \u2028 é ω <&>"},
		Warnings: []WarningBody{{Code: "c", Message: "m\x1f"}}}
	got, err := r.AppendJSON(nil)
	require.NoError(t, err)
	require.Equal(t, string(stdJSON(t, r.plain())), string(got))
	r.IodineValue = math.NaN()
	_, err = r.AppendJSON(nil)
	require.ErrorIs(t, err, errNonFinite)
}

// plain is r as a type without the hand-written encoder, so that
// encoding/json encodes it by reflection.
func (r PropertiesResponse) plain() any {
	type noMethods PropertiesResponse
	return noMethods(r)
}

func FuzzJSONString(f *testing.F) {
	for _, s := range []string{"", "abc", "\"\\", "\x00\x1f\x7f", "é\u2028\u2029", "\xff\xfe", "a\xc3"} {
		f.Add(s)
	}
	f.Fuzz(func(t *testing.T, s string) {
		got := appendJSONString(nil, s)
		want := stdJSON(t, s)
		if utf8.ValidString(s) && !bytes.Equal(got, want) {
			t.Fatalf("%q: got %s, want %s", s, got, want)
		}
		// Invalid UTF-8 becomes U+FFFD; whether escaped as \ufffd or
		// written raw differs between Go releases, so only the meaning
		// is compared.
		var a, b string
		if err := json.Unmarshal(got, &a); err != nil {
			t.Fatalf("%q: %s is not a JSON string: %v", s, got, err)
		}
		if err := json.Unmarshal(want, &b); err != nil || a != b {
			t.Fatalf("%q: got %s, want %s", s, got, want)
		}
		if !utf8.Valid(got) {
			t.Fatalf("invalid UTF-8 out of %q", s)
		}
	})
}

func ptr(v float64) *float64 { return &v }

// A batch result written by hand matches the codec's encoding of the same
// value, with and without each part.
func TestBatchResultJSONMatchesEncoder(t *testing.T) {
	cat := chem.NewCatalogue()
	p, err := chem.ComputeProperties(cat, chem.PropertiesInput{Profile: &chem.ProfileInput{Acids: []chem.Entry{{Acid: "16:0", Percent: 40}, {Acid: "18:1", Percent: 60}}}})
	require.NoError(t, err)
	props := fromProperties(p)
	id := `NB "7" <a&b>`
	prov := &Provenance{Service: ServiceName, Version: "v1", RequestID: "r", Operation: "POST /v1/batch",
		Methods: []string{"x <y>"}, Parameters: json.RawMessage(`{"evaluations":["properties"]}`)}
	for _, r := range []BatchResult{
		{Index: 3, SampleID: &id, Properties: &props, Provenance: prov},
		{Index: 4, Problem: &Problem{Type: "t", Title: "T", Status: 422, Detail: "d", Errors: []FieldError{{Pointer: "/a", Reason: "r"}}}, Provenance: prov},
		{Index: 5, Conformity: &ConformityResponse{Verdict: "conforms", Acids: []RowVerdictBody{}}, Provenance: prov},
	} {
		got, err := appendBatchResult(nil, &r)
		require.NoError(t, err)
		require.JSONEq(t, string(stdJSON(t, r)), string(got))
	}
}
