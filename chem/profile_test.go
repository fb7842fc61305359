package chem

import (
	"math"
	"testing"

	"github.com/stretchr/testify/require"
)

func warningCodes(ws []Warning) []string {
	out := make([]string, len(ws))
	for i, w := range ws {
		out[i] = w.Code
	}
	return out
}

func TestProfileNormalisesWithinTolerance(t *testing.T) {
	cat := NewCatalogue()
	p, err := NewProfile(cat, BasisFAMEWeight, []Entry{{"16:0", 50.2}, {"18:1 c9", 50}}, 0.5)
	require.NoError(t, err)
	require.InDelta(t, 100.2, p.InputSum, 1e-9)
	require.InDelta(t, 100*50.2/100.2, p.Components[0].Percent, 1e-9)
	require.Contains(t, warningCodes(p.Warnings), WarnNormalised)

	_, err = NewProfile(cat, BasisFAMEWeight, []Entry{{"16:0", 50.6}, {"18:1 c9", 50}}, 0.5)
	ce, ok := AsError(err)
	require.True(t, ok)
	require.Equal(t, KindInvalid, ce.Kind)
	require.Equal(t, []any{"acids"}, ce.Fields[0].Path)

	// A wider tolerance, set per request, accepts it.
	_, err = NewProfile(cat, BasisFAMEWeight, []Entry{{"16:0", 50.6}, {"18:1 c9", 50}}, 1)
	require.NoError(t, err)
}

func TestProfileExactSumHasNoWarning(t *testing.T) {
	cat := NewCatalogue()
	p, err := NewProfile(cat, BasisFAMEWeight, []Entry{{"16:0", 40}, {"18:1 c9", 60}}, 0)
	require.NoError(t, err)
	require.Empty(t, p.Warnings)
}

func TestProfileSumsDuplicates(t *testing.T) {
	cat := NewCatalogue()
	p, err := NewProfile(cat, BasisFAMEWeight, []Entry{{"16:0", 30}, {"C16:0", 10}, {"oleic", 60}}, 0)
	require.NoError(t, err)
	require.Len(t, p.Components, 2)
	require.InDelta(t, 40, p.Components[0].Percent, 1e-9)
	require.Contains(t, warningCodes(p.Warnings), WarnDuplicateAcid)
	require.Equal(t, []any{"acids", 1, "acid"}, p.Warnings[0].Path)
}

func TestProfileUnidentifiedCountsButIsExcluded(t *testing.T) {
	cat := NewCatalogue()
	p, err := NewProfile(cat, BasisFAMEWeight, []Entry{{"16:0", 49}, {"18:1 c9", 49}, {"others", 2}}, 0)
	require.NoError(t, err)
	require.InDelta(t, 2, p.UnidentifiedPercent, 1e-9)
	require.InDelta(t, 50, p.Components[0].Percent, 1e-9)
	require.Contains(t, warningCodes(p.Warnings), WarnUnidentified)

	// An unidentified share may not push the sum out of tolerance.
	_, err = NewProfile(cat, BasisFAMEWeight, []Entry{{"16:0", 49}, {"18:1 c9", 49}, {"others", 5}}, 0.5)
	require.Error(t, err)
}

func TestProfileRejectsBadEntries(t *testing.T) {
	cat := NewCatalogue()
	cases := []struct {
		name    string
		entries []Entry
		path    []any
	}{
		{"empty", nil, []any{"acids"}},
		{"negative", []Entry{{"16:0", -1}, {"18:1", 101}}, []any{"acids", 0, "percent"}},
		{"nan", []Entry{{"16:0", math.NaN()}}, []any{"acids", 0, "percent"}},
		{"inf", []Entry{{"16:0", math.Inf(1)}}, []any{"acids", 0, "percent"}},
		{"unknown label", []Entry{{"16:0", 50}, {"blubber", 50}}, []any{"acids", 1, "acid"}},
		{"only unidentified", []Entry{{"others", 100}}, []any{"acids"}},
		{"all zero", []Entry{{"16:0", 0}}, []any{"acids"}},
	}
	for _, c := range cases {
		_, err := NewProfile(cat, BasisFAMEWeight, c.entries, DefaultSumTolerance)
		ce, ok := AsError(err)
		require.True(t, ok, c.name)
		require.Equal(t, KindInvalid, ce.Kind, c.name)
		require.Equal(t, c.path, ce.Fields[0].Path, c.name)
	}
}

func TestProfileReportsEveryBadLabel(t *testing.T) {
	cat := NewCatalogue()
	_, err := NewProfile(cat, BasisFAMEWeight, []Entry{{"x1", 50}, {"16:0", 25}, {"x2", 25}}, 0)
	ce, ok := AsError(err)
	require.True(t, ok)
	require.Len(t, ce.Fields, 2)
	require.Equal(t, []any{"acids", 2, "acid"}, ce.Fields[1].Path)
}

func TestFromMoleFractionsRoundTrip(t *testing.T) {
	cat := NewCatalogue()
	src, err := NewProfile(cat, BasisFAMEWeight, []Entry{{"16:0", 10}, {"18:0", 5}, {"18:1", 25}, {"18:2", 60}}, 0)
	require.NoError(t, err)
	acids := make([]*FattyAcid, len(src.Components))
	x := make([]float64, len(src.Components))
	for i, c := range src.Components {
		acids[i], x[i] = c.Acid, 3*c.MoleFraction // unnormalised on purpose
	}
	got := FromMoleFractions(acids, x, BasisFAMEWeight)
	for i := range acids {
		require.InDelta(t, src.Components[i].Percent, got.Components[i].Percent, 1e-9)
	}
	require.InDelta(t, IodineValue(src, MaterialTAG), IodineValue(got, MaterialTAG), 1e-9)
}
