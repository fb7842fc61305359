package chem

import (
	"testing"

	"github.com/stretchr/testify/require"
)

// TestResolveSpellings covers how laboratories write acids: plain shorthand,
// the "C" prefix of FAME-standard exports, n-x/ω-x (IUPAC-IUBMB), Δ and cis/
// trans locants, E/Z in parentheses and the LIPID MAPS "FA" form, and common
// or systematic names.
func TestResolveSpellings(t *testing.T) {
	cat := NewCatalogue()
	cases := []struct {
		label   string
		want    string
		assumed bool
	}{
		{"16:0", "16:0", false},
		{"C16:0", "16:0", false},
		{"c16:0", "16:0", false},
		{" 18:0 ", "18:0", false},
		{"C4:0", "4:0", false},
		{"15:0", "15:0", false},
		{"C17:0", "17:0", false},
		{"C24:0", "24:0", false},
		{"C18:1n9", "18:1 c9", false},
		{"C18:1n9c", "18:1 c9", false},
		{"C18:1n9t", "18:1 t9", false},
		// Older systematic names with cis/trans locants, as FAME standard
		// lists write them, and Δ locants with the geometry before or after.
		{"cis-9-octadecenoic acid", "18:1 c9", false},
		{"trans-9-octadecenoic", "18:1 t9", false},
		{"methyl cis-11-eicosenoate", "20:1 c11", false},
		{"cis,cis-9,12-octadecadienoic acid", "18:2 c9,c12", false},
		{"cis-9,cis-12-octadecadienoic", "18:2 c9,c12", false},
		{"cis-9,trans-11-octadecadienoic acid", "18:2 c9,t11", false},
		{"18:1 cis-Δ9", "18:1 c9", false},
		{"18:1 Δ9-cis", "18:1 c9", false},
		{"18:1 9-cis", "18:1 c9", false},
		{"18:1 n-9", "18:1 c9", false},
		{"18:1 ω-9", "18:1 c9", false},
		{"18:1 omega-9", "18:1 c9", false},
		{"18:1 w9", "18:1 c9", false},
		{"18:1 c9", "18:1 c9", false},
		{"18:1 cis-9", "18:1 c9", false},
		{"C18:2 cis-9,12", "18:2 c9,c12", false},
		{"18:2 trans-9,12", "18:2 t9,t12", false},
		{"18:3 cis-9,12,15", "18:3 c9,c12,c15", false},
		{"18:1 Δ9c", "18:1 c9", false},
		{"18:1 t9", "18:1 t9", false},
		{"18:1 trans-9", "18:1 t9", false},
		{"18:1 trans", "18:1 t", false},
		{"C18:1t", "18:1 t", false},
		{"18:1 TRANS", "18:1 t", false},
		{"18:1(9Z)", "18:1 c9", false},
		{"FA 18:1(9Z)", "18:1 c9", false},
		{"FA 18:1(9E)", "18:1 t9", false},
		{"18:1 (11Z)", "18:1 c11", false},
		{"18:1 n-7 trans", "18:1 t11", false},
		{"18:1 c6", "18:1 c6", false},
		{"18:2 c9,t12", "18:2 c9,t12", false},
		{"18:2 (9Z,12Z)", "18:2 c9,c12", false},
		{"FA 18:2(9Z,11E)", "18:2 c9,t11", false},
		{"18:2 t9,t12", "18:2 t9,t12", false},
		{"C18:2n6c", "18:2 c9,c12", false},
		{"C18:2n6t", "18:2 t9,t12", true},
		{"18:2 trans", "18:2 t", false},
		{"C18:3n3", "18:3 c9,c12,c15", false},
		{"C18:3n6", "18:3 c6,c9,c12", false},
		{"18:3 ω-3", "18:3 c9,c12,c15", false},
		{"C20:1n9", "20:1 c11", false},
		{"C22:1n9", "22:1 c13", false},
		{"C24:1n9", "24:1 c15", false},
		{"C20:4n6", "20:4 c5,c8,c11,c14", false},
		{"C20:5n3", "20:5 c5,c8,c11,c14,c17", false},
		{"C22:5n3", "22:5 c7,c10,c13,c16,c19", false},
		{"C22:6n3", "22:6 c4,c7,c10,c13,c16,c19", false},
		{"18:1 c9 12-OH", "18:1 c9 12-OH", false},
		{"18:1 12-OH", "18:1 c9 12-OH", false},
		{"oleic", "18:1 c9", false},
		{"Oleic acid", "18:1 c9", false},
		{"methyl oleate", "18:1 c9", false},
		{"linoleic", "18:2 c9,c12", false},
		{"α-linolenic", "18:3 c9,c12,c15", false},
		{"alpha-linolenic acid", "18:3 c9,c12,c15", false},
		{"γ-linolenic", "18:3 c6,c9,c12", false},
		{"EPA", "20:5 c5,c8,c11,c14,c17", false},
		{"DHA", "22:6 c4,c7,c10,c13,c16,c19", false},
		{"elaidic", "18:1 t9", false},
		{"Erucic", "22:1 c13", false},
		{"ricinoleic", "18:1 c9 12-OH", false},
		{"palmitate", "16:0", false},
		{"hexadecanoic acid", "16:0", false},
		{"petroselinic", "18:1 c6", false},
		{"18:1", "18:1 c9", true},
		{"C18:2", "18:2 c9,c12", true},
		{"18:3", "18:3 c9,c12,c15", true},
		{"16:1", "16:1 c9", true},
		{"18:1 cis", "18:1 c9", true},
		{"18:4", "18:4 c6,c9,c12,c15", true}, // the only 18:4 catalogued, and said so
		{"C18:1Δ9c", "18:1 c9", false},
		{"α linolenic acid", "18:3 c9,c12,c15", false},
		{"DPA n-3", "22:5 c7,c10,c13,c16,c19", false},
		{"trans-vaccenic", "18:1 t11", false},
	}
	require.GreaterOrEqual(t, len(cases), 40)
	for _, c := range cases {
		r, err := cat.Resolve(c.label)
		require.NoError(t, err, c.label)
		require.NotNil(t, r.Acid, c.label)
		require.Equal(t, c.want, r.Acid.ID, c.label)
		require.Equal(t, c.assumed, r.Assumption != "", "%s: assumption %q", c.label, r.Assumption)
	}
}

func TestResolveUnidentified(t *testing.T) {
	cat := NewCatalogue()
	for _, l := range []string{"unidentified", "Others", "OTHER", "unknowns", "n.i."} {
		r, err := cat.Resolve(l)
		require.NoError(t, err, l)
		require.True(t, r.Unidentified, l)
		require.Nil(t, r.Acid, l)
	}
}

// TestResolveBadLabels: unknown and ambiguous labels are invalid input that
// name the label and carry suggestions.
func TestResolveBadLabels(t *testing.T) {
	cat := NewCatalogue()
	cases := []struct {
		label   string
		suggest string // one suggestion that must be offered
	}{
		{"18:5", "18:4 c6,c9,c12,c15"},
		{"18:1 c10", "18:1 c9"},
		{"18:1 n-5", "18:1 c9"},
		{"20:3", "20:3 c8,c11,c14"},         // ambiguous n-6 / n-3
		{"22:5", "22:5 c7,c10,c13,c16,c19"}, // ambiguous n-3 / n-6
		{"18:1 Δ9", "18:1 t9"},              // position without geometry: c9 or t9
		{"9-octadecenoic acid", ""},         // position without geometry
		{"18:2 n-7", "18:2 c9,t11"},         // n-x names cis, methylene-interrupted acids; rumenic is neither
		{"oleik", "18:1 c9"},                // misspelt
		{"linolenik", "18:3 c9,c12,c15"},    // misspelt
		{"palmitic-ish", "16:0"},            // not a name
		{"26:0", "24:0"},                    // outside the catalogue
		{"18:2 c9", "18:2 c9,c12"},          // too few positions
		{"18:1 cis trans", "18:1 c9"},       // contradictory
		{"C18:1 n9 x", "18:1 c9"},           // unreadable qualifier
		{"", ""},                            // empty
		{"12:0 5-OH", "12:0"},               // hydroxy lauric not catalogued
	}
	require.GreaterOrEqual(t, len(cases), 10)
	for _, c := range cases {
		_, err := cat.Resolve(c.label)
		require.Error(t, err, c.label)
		ce, ok := AsError(err)
		require.True(t, ok, c.label)
		require.Equal(t, KindInvalid, ce.Kind, c.label)
		if c.label != "" {
			require.Contains(t, ce.Message, c.label, "message names the label")
		}
		if c.suggest != "" {
			require.Contains(t, ce.Suggestions, c.suggest, "%s: suggestions %v", c.label, ce.Suggestions)
		}
	}
}

// TestEveryIDResolvesToItself keeps the ID grammar and the parser in step.
func TestEveryIDResolvesToItself(t *testing.T) {
	cat := NewCatalogue()
	for _, a := range cat.Acids() {
		r, err := cat.Resolve(a.ID)
		require.NoError(t, err, a.ID)
		require.Same(t, a, r.Acid, a.ID)
		if a.CommonName != "" {
			r, err = cat.Resolve(a.CommonName)
			require.NoError(t, err, a.CommonName)
			require.Same(t, a, r.Acid, a.CommonName)
		}
	}
}

// TestResolveExportForms covers the lines chromatography software exports
// besides plain labels: unknown peaks numbered, summed or named by
// retention time (all unidentified), annotated labels, "FAME" prefixes,
// co-eluting trans isomers, the acids of fish, dairy and ruminant fats, and
// summary lines, which are refused with a way forward.
func TestResolveExportForms(t *testing.T) {
	cat := NewCatalogue()
	for _, l := range []string{"unknown peaks", "unk", "Unknown 1", "unknown peak #3", "Sum unknowns", "Others (sum)",
		"RT 23.45", "rt=23.45 min", "23.4 min", "n.i. 2", "unidentified (total)"} {
		r, err := cat.Resolve(l)
		require.NoError(t, err, l)
		require.True(t, r.Unidentified, l)
	}
	cases := []struct {
		label, want string
		assumed     bool
	}{
		{"C18:1 trans (total)", "18:1 t", false},
		{"C20:5 n-3 (EPA)", "20:5 c5,c8,c11,c14,c17", false},
		{"C18:1 cis-9 (oleic)", "18:1 c9", false},
		{"FAME C18:1n9c", "18:1 c9", false},
		{"18:1 (petroselinic)", "18:1 c6", false},
		{"C18:2 c9,t11 (CLA)", "18:2 c9,t11", false},
		{"16:2 n-4", "16:2 c9,c12", false},
		{"16:3 n-4", "16:3 c6,c9,c12", false},
		{"16:4 n-1", "16:4 c6,c9,c12,c15", false},
		{"21:5 n-3", "21:5 c6,c9,c12,c15,c18", false},
		{"i15:0", "15:0 iso", false},
		{"iso-C15:0", "15:0 iso", false},
		{"a15:0", "15:0 anteiso", false},
		{"anteiso-17:0", "17:0 anteiso", false},
		{"17:0 iso", "17:0 iso", false},
		{"15:0", "15:0", false},
		{"12:1", "12:1 c9", true},
		{"CLA", "18:2 c9,t11", true},
		{"18:1 t6-t8", "18:1 t", true},
		{"C18:1 trans 6-8", "18:1 t", true},
		{"18:1 t10", "18:1 t10", false},
		{"18:1 t7", "18:1 t7", false},
	}
	for _, c := range cases {
		r, err := cat.Resolve(c.label)
		require.NoError(t, err, c.label)
		require.Equal(t, c.want, r.Acid.ID, c.label)
		require.Equal(t, c.assumed, r.Assumption != "", "%s: %q", c.label, r.Assumption)
	}
	// Branched and straight chains have the same formula.
	iso, _ := cat.ByID("15:0 iso")
	straight, _ := cat.ByID("15:0")
	require.InDelta(t, straight.MolarMass(), iso.MolarMass(), 1e-12)
	require.Equal(t, Iso, iso.Branch)

	for _, c := range []struct{ label, says string }{
		{"total trans", "18:1 t"},
		{"Total SFA", "computes the saturated"},
		{"n-3 PUFA", "summary line"},
		{"18:2 (oleic)", "names two acids"},
	} {
		_, err := cat.Resolve(c.label)
		require.Error(t, err, c.label)
		require.Contains(t, err.Error(), c.says, c.label)
	}
}
