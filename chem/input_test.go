package chem

import (
	"fmt"
	"testing"

	"github.com/stretchr/testify/require"
)

// requireFields checks an error's kind and the paths of its fields.
func requireFields(t *testing.T, err error, kind ErrorKind, paths ...[]any) {
	t.Helper()
	ce, ok := AsError(err)
	require.True(t, ok, "want a *chem.Error, got %v", err)
	require.Equal(t, kind, ce.Kind, ce.Error())
	got := make([][]any, len(ce.Fields))
	for i, f := range ce.Fields {
		got[i] = f.Path
	}
	require.Equal(t, paths, got, ce.Error())
}

// TestComputePropertiesBadInput calls the request-shaped entry point
// directly, as a caller without the HTTP layer would: the checks and the
// paths are the ones an HTTP client gets.
func TestComputePropertiesBadInput(t *testing.T) {
	cat := NewCatalogue()
	ok := &ProfileInput{Acids: []Entry{{"16:0", 100}}}
	cases := []struct {
		name  string
		in    PropertiesInput
		kind  ErrorKind
		paths [][]any
	}{
		{"no profile", PropertiesInput{}, KindMalformed, [][]any{{"profile"}}},
		{"unknown material", PropertiesInput{Profile: ok, Material: "soap"}, KindMalformed, [][]any{{"material"}}},
		{"unknown basis", PropertiesInput{Profile: &ProfileInput{Basis: "volume", Acids: ok.Acids}}, KindMalformed, [][]any{{"profile", "basis"}}},
		{"no acids", PropertiesInput{Profile: &ProfileInput{}}, KindInvalid, [][]any{{"profile", "acids"}}},
		{"unknown label", PropertiesInput{Profile: &ProfileInput{Acids: []Entry{{"16:0", 50}, {"blubber", 50}}}}, KindInvalid, [][]any{{"profile", "acids", 1, "acid"}}},
		{"sum off", PropertiesInput{Profile: &ProfileInput{Acids: []Entry{{"16:0", 50}, {"18:0", 40}}}}, KindInvalid, [][]any{{"profile", "acids"}}},
		{"negative tolerance", PropertiesInput{Profile: &ProfileInput{SumTolerancePercent: ptr(-1), Acids: ok.Acids}}, KindInvalid, [][]any{{"profile", "sum_tolerance_percent"}}},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			_, err := ComputeProperties(cat, c.in)
			requireFields(t, err, c.kind, c.paths...)
		})
	}
	// A good request: warnings point into the request.
	p, err := ComputeProperties(cat, PropertiesInput{Profile: &ProfileInput{Acids: []Entry{{"16:0", 50}, {"18:1", 50.2}}}})
	require.NoError(t, err)
	var paths []string
	for _, w := range p.Warnings {
		paths = append(paths, fmt.Sprint(w.Path))
	}
	require.Contains(t, paths, "[profile acids 1 acid]") // the bare 18:1
	require.Contains(t, paths, "[profile acids]")        // normalised
}

func ptr(v float64) *float64 { return &v }

// TestLabelMemo: a label read from the memo is read exactly as the first
// time, and the memo stops growing at its bound.
func TestLabelMemo(t *testing.T) {
	cat := NewCatalogue()
	first, err := cat.Resolve("C18:1n9c")
	require.NoError(t, err)
	again, err := cat.Resolve("C18:1n9c")
	require.NoError(t, err)
	require.Equal(t, first, again)
	bare, err := cat.Resolve("18:1")
	require.NoError(t, err)
	require.NotEmpty(t, bare.Assumption, "the memo keeps the assumption")
	memo, err := cat.Resolve("18:1")
	require.NoError(t, err)
	require.Equal(t, bare, memo)
	// Failures are not memoised and still suggest.
	_, err = cat.Resolve("18:1 c10")
	require.Error(t, err)
	ce, _ := AsError(err)
	require.NotEmpty(t, ce.Suggestions)

	// Fill past the bound with distinct spellings that all read as palmitic acid.
	for i := 0; i < LabelCacheSize+100; i++ {
		_, err := cat.Resolve(fmt.Sprintf("C16:0%s", spaces(i)))
		require.NoError(t, err)
	}
	require.LessOrEqual(t, cat.labelCount.Load(), int64(LabelCacheSize))
}

// spaces is a distinct run of trailing blanks and tabs for each i, which
// the label reader ignores.
func spaces(i int) string {
	out := make([]byte, 0, 16)
	for ; i > 0; i /= 2 {
		if i%2 == 1 {
			out = append(out, '\t')
		} else {
			out = append(out, ' ')
		}
	}
	return string(out) + " "
}
