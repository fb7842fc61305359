package melting

import (
	"testing"

	"github.com/stretchr/testify/require"

	"lipidsvc/chem"
)

// moleProfile builds a profile from mol % (the basis of stereospecific
// analyses).
func moleProfile(t testing.TB, lines ...acidPct) *chem.Profile {
	t.Helper()
	entries := make([]chem.Entry, len(lines))
	for i, l := range lines {
		entries[i] = chem.Entry{Acid: l.label, Percent: l.pct}
	}
	p, err := chem.NewProfile(chem.NewCatalogue(), chem.BasisMole, entries, 2)
	require.NoError(t, err)
	return p
}

// atSN2 is the automatic estimate's sn-2 composition (mole fraction of the
// sn-2 chains) and each acid's share of its chains at sn-2, by acid id, with
// the rule chosen.
func atSN2(t *testing.T, p *chem.Profile) (comp, share map[string]float64, rule SN2Estimate) {
	t.Helper()
	c, err := TAGComposition(p, CompositionOptions{})
	require.NoError(t, err)
	require.True(t, c.SN2Chosen)
	comp, share = map[string]float64{}, map[string]float64{}
	for i, a := range c.Acids {
		comp[a.ID] += c.SN2[i]
		share[a.ID] = c.SN2[i] / (3 * c.Total[i])
	}
	return comp, share, c.SN2Estimate
}

// The automatic estimate against published positional analyses that were
// not used to set it.
func TestAutomaticSN2AgainstPublishedAnalyses(t *testing.T) {
	t.Run("cocoa butter", func(t *testing.T) {
		// Overall composition = mean of the three positions of the same
		// analysis [Ong A.S.H. & Goh S.H., Food Nutr. Bull. 23(1):11, 2002,
		// Table 2: sn-1/sn-2/sn-3 mol % 16:0 34/2/37, 18:0 50/2/53, 18:1
		// 12/87/9, 18:2 1/9/–]; sn-2 reported 16:0 2, 18:0 2, 18:1 87,
		// 18:2 9.
		p := moleProfile(t, acidPct{"16:0", 73.0 / 3}, acidPct{"18:0", 105.0 / 3}, acidPct{"18:1", 108.0 / 3}, acidPct{"18:2", 10.0 / 3})
		comp, _, rule := atSN2(t, p)
		require.Equal(t, SN2SeedOil, rule)
		require.InDelta(t, 0.87, comp["18:1 c9"], 0.05)
		require.InDelta(t, 0.09, comp["18:2 c9,c12"], 0.03)
		require.InDelta(t, 0.04, comp["16:0"]+comp["18:0"], 0.04)
	})
	t.Run("lard", func(t *testing.T) {
		// A typical lard [memory]. The published share of palmitic acid at
		// sn-2 ranges from 61 % (Michalski et al., Prog. Lipid Res. 52:354,
		// 2013, Table 1, the source of the rule) to over 80 % (Barford et
		// al., JAOCS 1965, abstract: "> 80 % for adipose fats"; Ong & Goh
		// 2002 Table 2 report 72 mol % palmitic acid at sn-2 against 10 at
		// sn-1). Renormalised to a full sn-2 position the rule must land in
		// that range, and keep most stearic and oleic acid outside.
		p := profileOf(t, acidPct{"14:0", 1.5}, acidPct{"16:0", 25.0}, acidPct{"16:1", 3.0}, acidPct{"18:0", 13.5},
			acidPct{"18:1", 43.5}, acidPct{"18:2", 10.5}, acidPct{"18:3", 1.0}, acidPct{"20:1", 1.0}, acidPct{"17:0", 0.5}, acidPct{"20:0", 0.5})
		_, share, rule := atSN2(t, p)
		require.Equal(t, SN2Lard, rule)
		require.GreaterOrEqual(t, share["16:0"], 0.61)
		require.LessOrEqual(t, share["16:0"], 0.85)
		require.Less(t, share["18:0"], 0.15)
		require.Less(t, share["18:1 c9"], 0.20)
	})
	t.Run("beef tallow", func(t *testing.T) {
		// A typical beef tallow [memory]; published shares at sn-2: palmitic
		// 21 %, stearic 18 %, oleic 42 %, linoleic 36 % (Michalski et al.
		// 2013, Table 1). A composition other than the source's moves the
		// renormalised shares a little.
		p := profileOf(t, acidPct{"14:0", 3.0}, acidPct{"16:0", 25.0}, acidPct{"16:1", 3.0}, acidPct{"17:0", 1.5}, acidPct{"18:0", 20.0},
			acidPct{"18:1", 40.0}, acidPct{"18:1 t", 3.5}, acidPct{"18:2", 2.5}, acidPct{"18:3", 0.5}, acidPct{"15:0", 0.5}, acidPct{"20:0", 0.5})
		_, share, rule := atSN2(t, p)
		require.Equal(t, SN2Tallow, rule)
		require.InDelta(t, 0.21, share["16:0"], 0.05)
		require.InDelta(t, 0.18, share["18:0"], 0.05)
		require.InDelta(t, 0.42, share["18:1 c9"], 0.06)
	})
	t.Run("coconut oil", func(t *testing.T) {
		// Belitz, Grosch & Schieberle, Food Chemistry, 4th ed. (2009), Table
		// 14.8. A sn-1,3-lipase study reports 48.33 % for "the
		// distribution of lauric acid in sn-2 position" of virgin coconut
		// oil (Silalahi et al., Indonesian J. Pharm. Clin. Res. 1(2),
		// doi:10.32734/idjpcr.v1i2.605, abstract; read here as the share of
		// lauric acid at sn-2, the reading is ours). A weak check, with a
		// wide tolerance.
		p := profileOf(t, acidPct{"8:0", 8}, acidPct{"10:0", 6}, acidPct{"12:0", 47}, acidPct{"14:0", 18}, acidPct{"16:0", 9},
			acidPct{"18:0", 2.5}, acidPct{"18:1", 7}, acidPct{"18:2", 2.5})
		comp, share, rule := atSN2(t, p)
		require.Equal(t, SN2Lauric, rule)
		require.InDelta(t, 0.48, share["12:0"], 0.10)
		require.InDelta(t, 1.0, share["18:1 c9"], 1e-9, "the unsaturated acids sit wholly at sn-2")
		require.Zero(t, comp["16:0"]+comp["18:0"]+comp["14:0"])
	})
}

// The rules keep their bookkeeping: sn-2 sums to one, no acid above
// 3·x_i.
func TestSN2RulesAreDistributions(t *testing.T) {
	p := profileOf(t, acidPct{"4:0", 3.5}, acidPct{"6:0", 2.2}, acidPct{"8:0", 1.3}, acidPct{"10:0", 2.9}, acidPct{"12:0", 3.3},
		acidPct{"14:0", 11}, acidPct{"15:0", 1.2}, acidPct{"16:0", 29}, acidPct{"16:1", 1.7}, acidPct{"18:0", 11}, acidPct{"18:1", 26},
		acidPct{"18:1 t", 2.5}, acidPct{"18:2", 2.5}, acidPct{"18:3", 0.6}, acidPct{"20:0", 1.3})
	for _, rule := range []SN2Estimate{SN2SeedOil, SN2Palm, SN2Lauric, SN2Lard, SN2Tallow, SN2MilkFat, SN2Hardened} {
		c, err := TAGComposition(p, CompositionOptions{SN2: rule})
		require.NoError(t, err, rule.String())
		var sum float64
		for i := range c.Acids {
			sum += c.SN2[i]
			require.LessOrEqual(t, c.SN2[i], 3*c.Total[i]+1e-12, "%s %s", rule, c.Acids[i].ID)
			require.GreaterOrEqual(t, c.SN2[i], 0.0)
		}
		require.InDelta(t, 1, sum, 1e-12, rule.String())
	}
}
