package chem

import (
	"testing"

	"github.com/stretchr/testify/require"
)

func TestCatalogueCoverage(t *testing.T) {
	cat := NewCatalogue()
	require.GreaterOrEqual(t, cat.Len(), 45)
	// The acids the foundation issue names.
	for _, id := range []string{
		"4:0", "6:0", "8:0", "10:0", "12:0", "14:0", "15:0", "16:0", "17:0", "18:0", "20:0", "22:0", "24:0",
		"14:1 c9", "16:1 c9", "17:1 c10", "18:1 c9", "18:1 t9", "18:1 c11", "18:1 t11", "18:1 c6",
		"20:1 c11", "22:1 c13", "24:1 c15", "18:2 c9,c12", "18:2 t9,t12", "18:2 c9,t12", "18:2 t9,c12",
		"18:2 c9,t11", "18:2 t10,c12", "18:3 c9,c12,c15", "18:3 c6,c9,c12", "20:2 c11,c14",
		"20:3 c8,c11,c14", "20:4 c5,c8,c11,c14", "18:4 c6,c9,c12,c15", "20:5 c5,c8,c11,c14,c17",
		"22:5 c7,c10,c13,c16,c19", "22:6 c4,c7,c10,c13,c16,c19", "18:1 c9 12-OH",
	} {
		_, ok := cat.ByID(id)
		require.True(t, ok, id)
	}
}

// TestOmegaClasses checks n-x families against the IUPAC-IUBMB definitions.
func TestOmegaClasses(t *testing.T) {
	cat := NewCatalogue()
	cases := map[string]int{
		"oleic": 9, "erucic": 9, "nervonic": 9, "gondoic": 9, "palmitoleic": 7, "cis-vaccenic": 7,
		"linoleic": 6, "gamma-linolenic": 6, "arachidonic": 6, "alpha-linolenic": 3, "EPA": 3, "DHA": 3,
		"stearidonic": 3, "petroselinic": 12,
		// Trans and conjugated acids belong to no nutritional family.
		"elaidic": 0, "rumenic": 0, "linoelaidic": 0, "stearic": 0, "18:1 trans": 0,
		// A hydroxy acid is not counted in a nutritional family.
		"ricinoleic": 0,
	}
	for label, want := range cases {
		require.Equal(t, want, mustAcid(t, cat, label).OmegaFamily(), label)
	}
}

func TestStructureFlags(t *testing.T) {
	cat := NewCatalogue()
	require.True(t, mustAcid(t, cat, "rumenic").Conjugated())
	require.False(t, mustAcid(t, cat, "linoleic").Conjugated())
	require.True(t, mustAcid(t, cat, "18:1 trans").HasTrans())
	require.True(t, mustAcid(t, cat, "18:2 c9,t12").HasTrans())
	require.False(t, mustAcid(t, cat, "oleic").HasTrans())
	require.Equal(t, Polyunsaturated, mustAcid(t, cat, "DHA").Class())
	require.Equal(t, Monounsaturated, mustAcid(t, cat, "ricinoleic").Class())
	c, h, o := mustAcid(t, cat, "ricinoleic").Formula()
	require.Equal(t, [3]int{18, 34, 3}, [3]int{c, h, o}) // C18H34O3
}

// TestChainsFollowAcidsOrder: Chains gives, for every C:D, exactly the
// non-hydroxy entries of Acids with that structure, in the same order.
func TestChainsFollowAcidsOrder(t *testing.T) {
	cat := NewCatalogue()
	want := map[[2]int][]*FattyAcid{}
	for _, a := range cat.Acids() {
		if a.HydroxyPosition == 0 {
			k := [2]int{a.Carbons, a.DoubleBondCount}
			want[k] = append(want[k], a)
		}
	}
	require.NotEmpty(t, want)
	for k, list := range want {
		require.Equal(t, list, cat.Chains(k[0], k[1]), "%d:%d", k[0], k[1])
	}
	require.Empty(t, cat.Chains(18, 7))
}
