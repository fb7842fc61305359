package hardening

import (
	"context"
	"math"
	"math/rand/v2"
	"testing"

	"github.com/stretchr/testify/require"

	"lipidsvc/chem"
)

// syntheticTruth is the catalyst the synthetic plant batches are made with.
// It differs from the fit's starting point (the selective-nickel preset) by
// 25–60 % in every parameter but K, which the default fit holds at the
// preset's literature value, 2.
var syntheticTruth = Catalyst{
	LinolenicSelectivity: 2.6,
	LinoleicSelectivity:  25,
	TransShare:           0.4,
	IsomerisationRate:    1.4,
	TransCisEquilibrium:  2,
	TransSaturationRate:  0.6,
}

// syntheticDesign is the sampling plan of one synthetic batch: every 10
// iodine-value units from 125 to 5, covering the triene and diene stage
// (selectivities, trans share) and the monoene stage (isomerisation and
// trans saturation). The noisy test pools two such batches, as a plant
// calibrating on its own records would pool batches; predicted relative
// standard errors at ±0.3 pp noise are then at most 2.5 % for every free
// parameter (1.6 % S_Ln, 1.4 % S_R, 0.5 % φ, 2.3 % ι, 2.5 % ρ), so the
// 10 % requirement sits at four standard errors.
var syntheticDesign = []float64{125, 115, 105, 95, 85, 75, 65, 55, 45, 35, 25, 15, 5}

// syntheticObservations forecasts the design with the true catalyst for
// each of batches batches. With noise > 0 every reported acid above 0.05 %
// (a GC detection limit) is perturbed by a uniform error in ±noise
// percentage points from a seeded generator, clamped at 0; the profile is
// then normalised as a laboratory profile would be. Iodine values are kept
// exact.
func syntheticObservations(t testing.TB, cat *chem.Catalogue, feed *chem.Profile, batches int, noise float64, seed uint64) []Observation {
	t.Helper()
	rng := rand.New(rand.NewPCG(seed, 2024))
	var obs []Observation
	for range batches {
		for _, iv := range syntheticDesign {
			res := mustForecast(t, cat, NewForecastRequest(feed, FinalIodineValue(iv), syntheticTruth))
			prof := res.Product
			if noise > 0 {
				var entries []chem.Entry
				for _, c := range res.Product.Components {
					v := c.Percent
					if v > 0.05 {
						v = math.Max(0, v+noise*(2*rng.Float64()-1))
					}
					entries = append(entries, chem.Entry{Acid: c.Acid.ID, Percent: v})
				}
				var err error
				prof, err = chem.NewProfile(cat, feed.Basis, entries, 10)
				require.NoError(t, err)
			}
			obs = append(obs, Observation{Profile: prof, IodineValue: res.FinalIodineValue})
		}
	}
	return obs
}

func requireRecovered(t *testing.T, res *FitResult, params []Parameter, tol float64) {
	t.Helper()
	for _, p := range params {
		want, got := syntheticTruth.Value(p), res.Catalyst.Value(p)
		require.InEpsilon(t, want, got, tol, "%s: want %g, got %g", p, want, got)
	}
}

// TestFitRecoversExactData: parameters used to make noise-free synthetic
// products are recovered within 2 % (in fact to about 1e-6), with residuals
// at rounding level. With exact data even all six parameters, K included,
// are determined; a single batch of 13 samples is enough.
func TestFitRecoversExactData(t *testing.T) {
	cat := chem.NewCatalogue()
	feed := testFeed(t, cat, "soy-like")
	obs := syntheticObservations(t, cat, feed, 1, 0, 0)

	t.Run("default free parameters", func(t *testing.T) {
		res, err := FitOf(context.Background(), cat, NewFitRequest(feed, obs))
		require.NoError(t, err)
		t.Logf("%+v iterations %d evaluations %d rms %.3g", res.Catalyst, res.Iterations, res.Evaluations, res.RMSPercentagePoints)
		requireRecovered(t, res, AllParameters(), 0.02)
		requireRecovered(t, res, AllParameters(), 1e-5)
		require.Less(t, res.RMSPercentagePoints, 1e-6)
		require.InDelta(t, 1, res.RSquared, 1e-12)
		require.Len(t, res.Parameters, 6)
		for _, p := range res.Parameters {
			require.Equal(t, p.Parameter != ParamTransCisEquilibrium, p.Free, p.Parameter.String())
			require.Equal(t, p.Free, p.StandardError != nil, p.Parameter.String())
		}
		require.Len(t, res.Observations, len(syntheticDesign))
		require.Empty(t, res.Warnings)

		// The fitted catalyst is ready for the forecast.
		_, err = ForecastOf(context.Background(), cat, NewForecastRequest(feed, FinalIodineValue(70), res.Catalyst))
		require.NoError(t, err)
	})

	t.Run("all six free", func(t *testing.T) {
		req := NewFitRequest(feed, obs)
		req.Free = AllParameters()
		req.Initial.TransCisEquilibrium = 3 // start K away from the truth too
		res, err := FitOf(context.Background(), cat, req)
		require.NoError(t, err)
		t.Logf("%+v iterations %d evaluations %d rms %.3g", res.Catalyst, res.Iterations, res.Evaluations, res.RMSPercentagePoints)
		requireRecovered(t, res, AllParameters(), 0.02)
	})
}

// TestFitRecoversNoisyData: with ±0.3 percentage-point noise on every
// reported acid (two batches of the design, three seeds) the free
// parameters are recovered within 10 %, and the residual RMS is the size of
// the noise (uniform ±0.3 has an RMS of 0.3/√3 ≈ 0.17).
func TestFitRecoversNoisyData(t *testing.T) {
	cat := chem.NewCatalogue()
	feed := testFeed(t, cat, "soy-like")
	for _, seed := range []uint64{1, 2, 3} {
		req := NewFitRequest(feed, syntheticObservations(t, cat, feed, 2, 0.3, seed))
		res, err := FitOf(context.Background(), cat, req)
		require.NoError(t, err)
		t.Logf("seed %d: %+v iterations %d evaluations %d rms %.3g R² %.6f", seed, res.Catalyst, res.Iterations, res.Evaluations, res.RMSPercentagePoints, res.RSquared)
		for _, p := range res.Parameters {
			if p.StandardError != nil {
				t.Logf("  %s = %.4g ± %.2g (truth %g)", p.Parameter, p.Value, *p.StandardError, syntheticTruth.Value(p.Parameter))
			}
		}
		requireRecovered(t, res, DefaultFreeParameters(), 0.10)
		require.InDelta(t, 0.3/math.Sqrt(3), res.RMSPercentagePoints, 0.05)
		require.Greater(t, res.RSquared, 0.999)
	}
}

// TestFitGroupsIsomers: a laboratory that reports elaidic and vaccenic acid
// separately is compared group-wise with the model's lumped trans pool.
func TestFitGroupsIsomers(t *testing.T) {
	cat := chem.NewCatalogue()
	feed := testFeed(t, cat, "soy-like")
	truth := mustForecast(t, cat, NewForecastRequest(feed, FinalIodineValue(70), syntheticTruth))
	var entries []chem.Entry
	for _, c := range truth.Product.Components {
		switch c.Acid.ID {
		case "18:1 t":
			entries = append(entries,
				chem.Entry{Acid: "elaidic", Percent: c.Percent * 0.4},
				chem.Entry{Acid: "18:1 t11", Percent: c.Percent * 0.6})
		default:
			entries = append(entries, chem.Entry{Acid: c.Acid.ID, Percent: c.Percent})
		}
	}
	prof, err := chem.NewProfile(cat, chem.BasisFAMEWeight, entries, 0.01)
	require.NoError(t, err)
	req := NewFitRequest(feed, []Observation{{Profile: prof, IodineValue: 70}})
	req.Initial = syntheticTruth
	req.Free = []Parameter{ParamTransShare}
	res, err := FitOf(context.Background(), cat, req)
	require.NoError(t, err)
	require.InEpsilon(t, syntheticTruth.TransShare, res.Catalyst.TransShare, 1e-5)
	var names []string
	for _, g := range res.Observations[0].Residuals {
		names = append(names, g.Group)
		require.InDelta(t, 0, g.Residual, 1e-6, g.Group)
	}
	require.Contains(t, names, "18:1 trans")
	require.Contains(t, names, "18:1 cis")
	require.Contains(t, names, "18:0")
	require.NotContains(t, names, "18:1 t9")
}

// TestFitHoldsLinolenicSelectivityWithoutTrienes: with no triene in the
// feed S_Ln cannot be determined; the default fit holds it and says so.
func TestFitHoldsLinolenicSelectivityWithoutTrienes(t *testing.T) {
	cat := chem.NewCatalogue()
	// An invented high-oleic, triene-free oil (not measured data).
	feed := profileOf(t, cat, chem.BasisFAMEWeight, "16:0", 4, "18:0", 3, "18:1", 80, "18:2", 13)
	var obs []Observation
	for _, iv := range []float64{80, 70, 60, 50, 40, 30, 20} {
		res := mustForecast(t, cat, NewForecastRequest(feed, FinalIodineValue(iv), syntheticTruth))
		obs = append(obs, Observation{Profile: res.Product, IodineValue: res.FinalIodineValue})
	}
	res, err := FitOf(context.Background(), cat, NewFitRequest(feed, obs))
	require.NoError(t, err)
	require.Len(t, res.Warnings, 1)
	require.Equal(t, []any{"free_parameters"}, res.Warnings[0].Path)
	start, _ := PresetByName(PresetNickelSelective)
	require.Equal(t, start.Catalyst.LinolenicSelectivity, res.Catalyst.LinolenicSelectivity)
	require.False(t, res.Parameters[0].Free)
	requireRecovered(t, res, []Parameter{ParamLinoleicSelectivity, ParamTransShare, ParamIsomerisationRate, ParamTransSaturationRate}, 1e-4)
}

// TestFitRejects lists malformed and impossible fit requests.
func TestFitRejects(t *testing.T) {
	cat := chem.NewCatalogue()
	feed := testFeed(t, cat, "soy-like")
	one := mustForecast(t, cat, NewForecastRequest(feed, FinalIodineValue(70), syntheticTruth))
	obs := []Observation{{Profile: one.Product, IodineValue: 70}}
	cases := []struct {
		name  string
		edit  func(r *FitRequest)
		kind  chem.ErrorKind
		paths [][]any
	}{
		{"no feed", func(r *FitRequest) { r.Feed = nil }, chem.KindInvalid, [][]any{{"feed"}}},
		{"no observations", func(r *FitRequest) { r.Observations = nil }, chem.KindInvalid, [][]any{{"observations"}}},
		{"too many observations", func(r *FitRequest) {
			r.Observations = make([]Observation, MaxObservations+1)
			for i := range r.Observations {
				r.Observations[i] = obs[0]
			}
		}, chem.KindInvalid, [][]any{{"observations"}}},
		{"missing profile", func(r *FitRequest) { r.Observations = []Observation{{IodineValue: 70}} }, chem.KindInvalid,
			[][]any{{"observations", 0, "profile"}}},
		{"NaN iodine value", func(r *FitRequest) { r.Observations = []Observation{{Profile: one.Product, IodineValue: math.NaN()}} },
			chem.KindInvalid, [][]any{{"observations", 0, "iodine_value"}}},
		{"iodine value above feed", func(r *FitRequest) {
			r.Observations = []Observation{obs[0], {Profile: one.Product, IodineValue: 150}}
		}, chem.KindOutOfDomain, [][]any{{"observations", 1, "iodine_value"}}},
		{"iodine value zero", func(r *FitRequest) { r.Observations = []Observation{{Profile: one.Product, IodineValue: 0}} },
			chem.KindOutOfDomain, [][]any{{"observations", 0, "iodine_value"}}},
		{"bad initial", func(r *FitRequest) { r.Initial.LinoleicSelectivity = 0 }, chem.KindInvalid,
			[][]any{{"initial", "linoleic_selectivity"}}},
		{"empty free list", func(r *FitRequest) { r.Free = []Parameter{} }, chem.KindInvalid, [][]any{{"free_parameters"}}},
		{"duplicate free", func(r *FitRequest) { r.Free = []Parameter{ParamTransShare, ParamTransShare} }, chem.KindInvalid,
			[][]any{{"free_parameters", 1}}},
		{"unknown free", func(r *FitRequest) { r.Free = []Parameter{Parameter(42)} }, chem.KindInvalid, [][]any{{"free_parameters", 0}}},
		{"iteration cap", func(r *FitRequest) { r.MaxIterations = MaxFitIterations + 1 }, chem.KindInvalid, [][]any{{"max_iterations"}}},
		{"nothing to harden", func(r *FitRequest) { r.Feed = profileOf(t, cat, chem.BasisFAMEWeight, "16:0", 50, "18:0", 50) },
			chem.KindOutOfDomain, [][]any{{"feed", "acids"}}},
	}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			req := NewFitRequest(feed, obs)
			tc.edit(&req)
			_, err := FitOf(context.Background(), cat, req)
			requireFieldError(t, err, tc.kind, tc.paths...)
		})
	}
}

// TestFitTooFewData: one observation of a two-acid oil carries two
// independent values, too few for five parameters freed explicitly.
func TestFitTooFewData(t *testing.T) {
	cat := chem.NewCatalogue()
	feed := profileOf(t, cat, chem.BasisFAMEWeight, "18:0", 20, "18:1", 80)
	res := mustForecast(t, cat, NewForecastRequest(feed, FinalIodineValue(40), syntheticTruth))
	// The product holds 18:0, 18:1 cis and 18:1 trans: two independent values.
	req := NewFitRequest(feed, []Observation{{Profile: res.Product, IodineValue: 40}})
	req.Free = DefaultFreeParameters()
	_, err := FitOf(context.Background(), cat, req)
	requireFieldError(t, err, chem.KindOutOfDomain, []any{"observations"})
}

// TestFitHoldsPolyeneParametersWithoutPolyenes: a feed without dienes or
// trienes cannot tell S_Ln, S_R or the trans share; the default fit holds
// them at their initial values, says so, and fits the monoene parameters
// (isomerisation, trans saturation) on exact data.
func TestFitHoldsPolyeneParametersWithoutPolyenes(t *testing.T) {
	cat := chem.NewCatalogue()
	feed := profileOf(t, cat, chem.BasisFAMEWeight, "16:0", 10, "18:0", 5, "18:1", 85)
	var obs []Observation
	for _, iv := range []float64{70, 55, 40, 25, 10} {
		res := mustForecast(t, cat, NewForecastRequest(feed, FinalIodineValue(iv), syntheticTruth))
		obs = append(obs, Observation{Profile: res.Product, IodineValue: iv})
	}
	res, err := FitOf(context.Background(), cat, NewFitRequest(feed, obs))
	require.NoError(t, err)
	var msgs []string
	for _, w := range res.Warnings {
		msgs = append(msgs, w.Message)
	}
	require.Len(t, msgs, 2, "%v", msgs)
	require.Contains(t, msgs[1], "linoleic_selectivity")
	require.Contains(t, msgs[1], "trans_share")
	for _, p := range res.Parameters {
		require.Equal(t, p.Parameter == ParamIsomerisationRate || p.Parameter == ParamTransSaturationRate, p.Free, p.Parameter.String())
	}
	require.InEpsilon(t, syntheticTruth.IsomerisationRate, res.Catalyst.IsomerisationRate, 0.02)
	require.InEpsilon(t, syntheticTruth.TransSaturationRate, res.Catalyst.TransSaturationRate, 0.02)
}

// TestFitIterationCap: a cap too small to converge is a KindNoConvergence
// error, not a silently unconverged answer.
func TestFitIterationCap(t *testing.T) {
	cat := chem.NewCatalogue()
	feed := testFeed(t, cat, "soy-like")
	req := NewFitRequest(feed, syntheticObservations(t, cat, feed, 1, 0, 0))
	req.MaxIterations = 1
	_, err := FitOf(context.Background(), cat, req)
	requireFieldError(t, err, chem.KindNoConvergence, []any{"max_iterations"})
}

// TestFitContext: a cancelled context stops the fit.
func TestFitContext(t *testing.T) {
	cat := chem.NewCatalogue()
	feed := testFeed(t, cat, "soy-like")
	ctx, cancel := context.WithCancel(context.Background())
	cancel()
	_, err := FitOf(ctx, cat, NewFitRequest(feed, syntheticObservations(t, cat, feed, 1, 0, 0)))
	require.ErrorIs(t, err, context.Canceled)
}

// TestFitRecoversFromPoorStarts: from starting points that run Gauss–Newton
// into a parameter bound (a preset of another metal, a trans share or
// selectivity at the edge of its range, no isomerisation), the fit still
// recovers the exact synthetic catalyst, restarting from the presets when
// the first run ends at a bound. Before review it returned RMS errors of
// 0.9–5.5 points on these exact data as a converged fit.
func TestFitRecoversFromPoorStarts(t *testing.T) {
	cat := chem.NewCatalogue()
	feed := testFeed(t, cat, "soy-like")
	obs := syntheticObservations(t, cat, feed, 1, 0, 0)
	nickel := mustPreset(t, PresetNickelSelective)
	starts := map[string]Catalyst{
		"platinum preset":  mustPreset(t, PresetPlatinum),
		"trans share 0":    nickel.With(ParamTransShare, 0),
		"S_R 0.1":          nickel.With(ParamLinoleicSelectivity, 0.1),
		"no isomerisation": nickel.With(ParamIsomerisationRate, 0),
	}
	for name, start := range starts {
		t.Run(name, func(t *testing.T) {
			req := NewFitRequest(feed, obs)
			req.Initial = start
			res, err := FitOf(context.Background(), cat, req)
			require.NoError(t, err)
			requireRecovered(t, res, DefaultFreeParameters(), 0.02)
			require.Less(t, res.RMSPercentagePoints, 1e-4)
		})
	}
}
