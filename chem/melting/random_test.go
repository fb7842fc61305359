package melting

import (
	"math"
	"math/rand/v2"
	"testing"

	"github.com/stretchr/testify/require"

	"lipidsvc/chem"
	"lipidsvc/chem/chemtest"
)

// TestRandomProfilesKeepInvariants runs the melting model on random
// profiles drawn from the whole catalogue (1–25 acids, any share) under
// every solid model, polymorph and distribution, and checks what must hold
// whatever the fat: no error, SFC finite and within 0–100 %, non-increasing
// in temperature, the slip melting point at the threshold and not above the
// clear point, and no solid above the clear point. First principles, no
// external values: these are the model's invariants.
func TestRandomProfilesKeepInvariants(t *testing.T) {
	cat := chem.NewCatalogue()
	rng := rand.New(rand.NewPCG(20261201, 4))
	n := 150
	if testing.Short() {
		n = 30
	}
	models := []SolidModel{MultiplePureSolids, IdealSolidSolution, SolidSolutionFamilies}
	polys := []Polymorph{Alpha, BetaPrime, Beta}
	for k := 0; k < n; k++ {
		entries := chemtest.RandomEntries(rng, cat, 25)
		p, err := chem.NewProfile(cat, chem.BasisFAMEWeight, entries, 0.5)
		require.NoError(t, err)
		opt := Options{SolidModel: models[k%3], Polymorph: polys[(k/3)%3]}
		switch k % 4 {
		case 1:
			opt.Composition.SN2 = SN2Palm
		case 2:
			opt.Composition.Distribution = FullRandom
		case 3:
			opt.Composition.NoPooling = true
		}
		r, err := MeltProfile(p, opt)
		require.NoError(t, err, "case %d: %v %+v", k, entries, opt)
		for i, pt := range r.Curve {
			require.False(t, math.IsNaN(pt.SolidFatPercent), "case %d", k)
			require.GreaterOrEqual(t, pt.SolidFatPercent, 0.0, "case %d", k)
			require.LessOrEqual(t, pt.SolidFatPercent, 100.0, "case %d", k)
			if i > 0 {
				require.LessOrEqual(t, pt.SolidFatPercent, r.Curve[i-1].SolidFatPercent+1e-9,
					"case %d: SFC rises at %g °C (%v %+v)", k, pt.TemperatureC, entries, opt)
			}
		}
		f, err := Prepare(p, opt)
		require.NoError(t, err)
		if r.SlipMeltingPointDefined {
			require.LessOrEqual(t, r.SlipMeltingPointC, r.ClearPointC, "case %d", k)
			// The SFC crosses the threshold at the slip point; a fat of
			// one species melts in a step, so look just either side.
			thr := r.Parameters.SlipThresholdPercent
			below, err := f.SolidFatContent(math.Max(r.SlipMeltingPointC-1e-5, MinTemperatureC))
			require.NoError(t, err)
			above, err := f.SolidFatContent(r.SlipMeltingPointC + 1e-5)
			require.NoError(t, err)
			require.GreaterOrEqual(t, below, thr-1e-3, "case %d: slip point off the threshold (%v %+v)", k, entries, opt)
			require.LessOrEqual(t, above, thr+1e-3, "case %d: slip point off the threshold (%v %+v)", k, entries, opt)
		}
		if r.ClearPointC+1e-6 <= MaxTemperatureC && r.ClearPointC >= MinTemperatureC {
			v, err := f.SolidFatContent(r.ClearPointC + 1e-6)
			require.NoError(t, err)
			require.InDelta(t, 0, v, 1e-9, "case %d: solid above the clear point", k)
		}
	}
}
