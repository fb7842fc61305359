package hardening

import (
	"context"
	"math"
	"math/rand/v2"
	"testing"

	"github.com/stretchr/testify/require"

	"lipidsvc/chem"
	"lipidsvc/chem/chemtest"
)

// TestRandomFeedsKeepInvariants hardens random feeds drawn from the whole
// catalogue (1–20 acids, shares over four decades) with every preset to a
// random iodine value between the feed's and zero, and checks what must hold
// for any feed: the forecast either answers or refuses with a documented
// kind; an answer meets its target within 1e-8, keeps every share
// non-negative and summing to 100, never lowers the saturated mole fraction, and
// along the path the iodine value falls while the hydrogen rises. First
// principles (mass balance, monotone hydrogenation), no external values.
func TestRandomFeedsKeepInvariants(t *testing.T) {
	cat := chem.NewCatalogue()
	presets := Presets()
	rng := rand.New(rand.NewPCG(20261201, 7))
	n := 80
	if testing.Short() {
		n = 20
	}
	answered := 0
	for k := 0; k < n; k++ {
		entries := chemtest.RandomEntries(rng, cat, 20)
		feed, err := chem.NewProfile(cat, chem.BasisFAMEWeight, entries, 0.5)
		require.NoError(t, err)
		feedIV := chem.PropertiesOf(feed, chem.MaterialTAG).IodineValue
		target := feedIV * (0.05 + 0.9*rng.Float64())
		preset := presets[k%len(presets)]
		req := NewForecastRequest(feed, FinalIodineValue(target), preset.Catalyst)
		res, err := ForecastOf(context.Background(), cat, req)
		if err != nil {
			ce, ok := chem.AsError(err)
			require.True(t, ok, "case %d: %v", k, err)
			require.Contains(t, []chem.ErrorKind{chem.KindOutOfDomain}, ce.Kind, "case %d (%v, IV %g → %g, %s): %v",
				k, entries, feedIV, target, preset.Name, err)
			continue
		}
		answered++
		require.InDelta(t, target, res.FinalIodineValue, 1e-8, "case %d", k)
		// Saturated chains never lose ground in moles (in weight they can:
		// the unsaturated chains gain the hydrogen's mass).
		require.GreaterOrEqual(t, saturatedMoleFraction(res.Product), saturatedMoleFraction(feed)-1e-12, "case %d", k)
		require.Greater(t, res.Hydrogen.HydrogenKgPerTonne, 0.0, "case %d", k)
		prevIV, prevH := math.Inf(1), -1.0
		for i, pt := range res.Path {
			var s float64
			for _, v := range pt.Percent {
				require.GreaterOrEqual(t, v, 0.0, "case %d point %d", k, i)
				s += v
			}
			require.InDelta(t, 100, s, 1e-9, "case %d point %d", k, i)
			require.Less(t, pt.IodineValue, prevIV, "case %d point %d", k, i)
			require.Greater(t, pt.HydrogenKgPerTonne, prevH, "case %d point %d", k, i)
			prevIV, prevH = pt.IodineValue, pt.HydrogenKgPerTonne
		}
	}
	t.Logf("answered %d of %d", answered, n)
	require.Greater(t, answered, n/2, "most random feeds can be hardened")
}

func saturatedMoleFraction(p *chem.Profile) float64 {
	var s float64
	for _, c := range p.Components {
		if c.Acid.DoubleBondCount == 0 {
			s += c.MoleFraction
		}
	}
	return s
}
