package melting

import (
	"encoding/json"
	"fmt"
	"math"
	"os"
	"path/filepath"
	"slices"
	"sort"
	"strings"
	"testing"

	"github.com/stretchr/testify/require"

	"lipidsvc/chem"
)

type validationCase struct {
	Name              string             `json:"name"`
	Composition       map[string]float64 `json:"composition"`
	CompositionSource string             `json:"composition_source"`
	SN2               string             `json:"sn2_estimate"`
	SlipRange         [2]float64         `json:"slip_range_c"`
	SlipTarget        float64            `json:"slip_target_c"`
	SlipSource        string             `json:"slip_source"`
	SFCMemory         [][2]float64       `json:"sfc_memory"`
	SFCTolerance      float64            `json:"sfc_memory_tolerance"`
	SFCSource         string             `json:"sfc_source"`
	// SFCIndicative are published single SFC points (°C, %) whose method or
	// sample is not stated: reported beside the prediction, never scored.
	SFCIndicative       [][2]float64 `json:"sfc_indicative"`
	SFCIndicativeSource string       `json:"sfc_indicative_source"`
	// IVMeasured is the published (Wijs) iodine value of the same sample,
	// when known: the table sets the calculated one beside it, a check that
	// composition and slip melting point describe one fat.
	IVMeasured float64 `json:"iodine_value_measured"`
	// NotScored, with its reason, keeps a case out of the error statistics
	// and the choice of defaults; its prediction is still reported.
	NotScored       bool   `json:"not_scored"`
	NotScoredReason string `json:"not_scored_reason"`
}

// scoredCases are the cases the statistics and the defaults rest on.
func scoredCases(all []validationCase) (scored, reported []validationCase) {
	for _, c := range all {
		if c.NotScored {
			reported = append(reported, c)
		} else {
			scored = append(scored, c)
		}
	}
	return scored, reported
}

func loadValidationCases(t testing.TB) []validationCase {
	t.Helper()
	raw, err := os.ReadFile(filepath.Join(testdataDir, "validation_cases.json"))
	require.NoError(t, err)
	var f struct {
		Cases []validationCase `json:"cases"`
	}
	require.NoError(t, json.Unmarshal(raw, &f))
	return f.Cases
}

func (c validationCase) profile(t testing.TB) *chem.Profile {
	var lines []acidPct
	for l, v := range c.Composition {
		lines = append(lines, acidPct{l, v})
	}
	sort.Slice(lines, func(i, j int) bool { return lines[i].label < lines[j].label })
	return profileOf(t, lines...)
}

func (c validationCase) sn2(t testing.TB) SN2Estimate {
	for _, e := range []SN2Estimate{SN2SeedOil, SN2Palm, SN2Automatic} {
		if e.String() == c.SN2 {
			return e
		}
	}
	t.Fatalf("sn-2 estimate %q", c.SN2)
	return 0
}

// configResult is one validation run of a configuration.
type configResult struct {
	model     SolidModel
	polymorph Polymorph
	threshold float64
	slip      []float64 // per case, °C
	inside    int
	mae       float64 // mean |slip − target|, K
	sfcMAE    float64 // mean |SFC − memory value| over the memory points
	sfcMax    float64
	sfcOK     bool // every memory point within its tolerance
}

var validationThresholds = []float64{3, 4, 5}

func runValidation(t testing.TB, cases []validationCase) []configResult {
	var out []configResult
	for _, model := range []SolidModel{MultiplePureSolids, IdealSolidSolution, SolidSolutionFamilies} {
		for _, poly := range []Polymorph{Alpha, BetaPrime, Beta} {
			for _, thr := range validationThresholds {
				cr := configResult{model: model, polymorph: poly, threshold: thr, sfcOK: true}
				var sfcN int
				for _, c := range cases {
					opt := Options{Polymorph: poly, SolidModel: model, SlipThresholdPercent: thr,
						Composition: CompositionOptions{SN2: c.sn2(t)}}
					r, err := MeltProfile(c.profile(t), opt)
					require.NoError(t, err)
					s := r.SlipMeltingPointC
					cr.slip = append(cr.slip, s)
					if s >= c.SlipRange[0] && s <= c.SlipRange[1] {
						cr.inside++
					}
					cr.mae += math.Abs(s - c.SlipTarget)
					if len(c.SFCMemory) > 0 {
						f, err := Prepare(c.profile(t), opt)
						require.NoError(t, err)
						for _, pt := range c.SFCMemory {
							v, err := f.SolidFatContent(pt[0])
							require.NoError(t, err)
							d := math.Abs(v - pt[1])
							cr.sfcMAE += d
							cr.sfcMax = math.Max(cr.sfcMax, d)
							if d > c.SFCTolerance {
								cr.sfcOK = false
							}
							sfcN++
						}
					}
				}
				cr.mae /= float64(len(cases))
				if sfcN > 0 {
					cr.sfcMAE /= float64(sfcN)
				}
				out = append(out, cr)
			}
		}
	}
	return out
}

// chooseDefaults applies the documented rule: the polymorph is β′ (the
// package documentation: unstabilised SFC of hardened and palm-based fats reflects β′; lauric
// fats are β′-stable too); among the solid models and the thresholds of the
// trade's 3–5 % range [practice], the smallest mean absolute slip-point
// error against the published targets wins. The [memory] palm SFC values
// are reported beside it but do not decide: they are recalled, not
// published.
func chooseDefaults(results []configResult) configResult {
	best := configResult{mae: math.Inf(1)}
	for _, r := range results {
		if r.polymorph != DefaultPolymorph {
			continue
		}
		if r.mae < best.mae-1e-9 {
			best = r
		}
	}
	return best
}

func TestValidation(t *testing.T) {
	cases, reported := scoredCases(loadValidationCases(t))
	results := runValidation(t, cases)
	chosen := chooseDefaults(results)
	require.Equal(t, DefaultSolidModel, chosen.model, "the default solid model is the one validation picks")
	require.Equal(t, DefaultSlipThresholdPercent, chosen.threshold, "the default threshold is the one validation picks")

	doc := validationMarkdown(t, cases, reported, results, chosen)
	path := filepath.Join(testdataDir, "VALIDATION.md")
	doc += carriedPlausibility(t, path)
	if *update {
		require.NoError(t, os.WriteFile(path, []byte(doc), 0o644))
	}
	published, err := os.ReadFile(path)
	require.NoError(t, err)
	require.Equal(t, doc, string(published), "VALIDATION.md is stale; run go test ./chem/melting -run TestValidation -update")

	// The default beats the 4.5 °C mean absolute melting-point error that
	// Teles dos Santos reports for thermodynamic SLE predictions of nine fats
	// (OCL 25:D107, 2018, abstract), and puts at least the palm and palm
	// kernel cases inside their published ranges.
	require.Less(t, chosen.mae, 4.5)
	require.GreaterOrEqual(t, chosen.inside, 2)
}

// Markers of the plausibility section of VALIDATION.md, which
// TestPlausibility writes and TestValidation carries over.
const (
	PlausibilityBegin = "<!-- plausibility section: written by TestPlausibility -->\n"
	PlausibilityEnd   = "<!-- end of plausibility section -->\n"
)

// carriedPlausibility is the plausibility section of the published
// VALIDATION.md, markers included (empty markers when there is none yet).
func carriedPlausibility(t testing.TB, path string) string {
	t.Helper()
	published, err := os.ReadFile(path)
	if err != nil {
		return "\n" + PlausibilityBegin + PlausibilityEnd
	}
	s := string(published)
	i, j := strings.Index(s, PlausibilityBegin), strings.Index(s, PlausibilityEnd)
	if i < 0 || j < i {
		return "\n" + PlausibilityBegin + PlausibilityEnd
	}
	return "\n" + s[i:j+len(PlausibilityEnd)]
}

func validationMarkdown(t testing.TB, cases, reported []validationCase, results []configResult, chosen configResult) string {
	var b strings.Builder
	w := func(format string, a ...any) { fmt.Fprintf(&b, format, a...) }
	w("# Melting model validation\n\n")
	w("Generated by `go test ./chem/melting -run TestValidation -update` (chem/melting/validation_test.go) from\n")
	w("`validation_cases.json`; do not edit by hand. Predictions use the fitted pure-TAG correlation\n")
	w("(`fit_coefficients.json`) with measured overrides, the 1,3-random-2-random distribution with the sn-2 rule\n")
	w("named per case, and species pooled below a mole fraction of %g (%g for %s, which pools within families).\n\n",
		DefaultPoolFloorMoleFraction, DefaultFamiliesPoolFloorMoleFraction, SolidSolutionFamilies)

	w("## Cases and sources\n\n| case | composition (FAME wt %%) | sn-2 rule | IV calculated / published | published slip melting point | source |\n|---|---|---|---|---|---|\n")
	for _, c := range append(slices.Clone(cases), reported...) {
		var keys []string
		for k := range c.Composition {
			keys = append(keys, k)
		}
		sort.Slice(keys, func(i, j int) bool { return acidOrder(keys[i]) < acidOrder(keys[j]) })
		var parts []string
		for _, k := range keys {
			parts = append(parts, fmt.Sprintf("%s %g", k, c.Composition[k]))
		}
		iv := fmt.Sprintf("%.2f / –", chem.PropertiesOf(c.profile(t), chem.MaterialTAG).IodineValue)
		if c.IVMeasured > 0 {
			iv = fmt.Sprintf("%.2f / %g", chem.PropertiesOf(c.profile(t), chem.MaterialTAG).IodineValue, c.IVMeasured)
		}
		name := c.Name
		if c.NotScored {
			name += " (reported, not scored)"
		}
		w("| %s | %s (%s) | %s | %s | %g–%g °C, target %g °C | %s |\n", name, strings.Join(parts, ", "), c.CompositionSource,
			c.SN2, iv, c.SlipRange[0], c.SlipRange[1], c.SlipTarget, c.SlipSource)
	}
	for _, c := range cases {
		if len(c.SFCMemory) > 0 {
			w("\nSFC check values for %s: ", c.Name)
			var parts []string
			for _, pt := range c.SFCMemory {
				parts = append(parts, fmt.Sprintf("%g %% at %g °C", pt[1], pt[0]))
			}
			w("%s, ±%g points — %s.\n", strings.Join(parts, ", "), c.SFCTolerance, c.SFCSource)
		}
	}
	for _, c := range cases {
		for _, pt := range c.SFCIndicative {
			f, err := Prepare(c.profile(t), Options{Composition: CompositionOptions{SN2: c.sn2(t)}})
			require.NoError(t, err)
			v, err := f.SolidFatContent(pt[0])
			require.NoError(t, err)
			w("\nIndicative published point for %s (not scored): SFC %g %% at %g °C — %s. The default predicts %.1f %%.\n",
				c.Name, pt[1], pt[0], c.SFCIndicativeSource, v)
		}
	}
	w("\nNo published SFC curve could be retrieved for these oils, so no SFC error on published data is claimed;\n")
	w("the palm SFC deviations below are from the [memory] values only and are not comparable with published SFC errors.\n")

	w("\n## Defaults and how they were chosen\n\n")
	w("Rule (chooseDefaults in validation_test.go): the polymorph is β′, because unstabilised SFC of hardened and\n")
	w("palm-based fats mostly reflects β′ (the melting package documentation) and lauric fats are β′-stable too; among the three solid models\n")
	w("and the slip thresholds of the trade's 3–5 %% range [practice], the smallest mean absolute slip-point error\n")
	w("against the published targets wins. The [memory] palm SFC values are reported beside each configuration but do\n")
	w("not decide. (The rule used before this table also dropped configurations whose palm SFC missed a [memory]\n")
	if chosen.sfcMax > 10 {
		w("value by more than 10 points; under it the chosen model would be dropped for its palm SFC, see below.)\n\n")
	} else {
		w("value by more than 10 points; the chosen configuration passes that rule too.)\n\n")
	}
	w("Chosen: **%s, %s, slip threshold %g %%**. Mean absolute slip-point error %.1f K, %d of %d cases inside their\n",
		chosen.model, chosen.polymorph, chosen.threshold, chosen.mae, chosen.inside, len(cases))
	w("published range, palm SFC mean absolute deviation from the [memory] values %.1f points (max %.1f).\n\n", chosen.sfcMAE, chosen.sfcMax)
	var prev configResult
	for _, r := range results {
		if r.model == MultiplePureSolids && r.polymorph == BetaPrime && r.threshold == 3 {
			prev = r
		}
	}
	w("Previous default: %s, %s, %g %% — mean error %.1f K, %d of %d inside, slip points %.0f–%.0f K low.\n\n",
		prev.model, prev.polymorph, prev.threshold, prev.mae, prev.inside, len(cases), minAbs(prev, cases), maxAbs(prev, cases))
	w("Why the families model. Natural fats neither crystallise every TAG as its own pure phase nor all TAGs in one\n")
	w("solid: TAGs of nearly the same shape form mixed crystals, others stay apart (POP/OOP, trilaurin/SOS, PPP/SSS and\n")
	w("LaLaLa/MMM are eutectic; PPP/PPS-type pairs are highly miscible; sources in chem/melting/families.go). The model\n")
	w("groups the species into fixed families — same numbers of cis- and trans-unsaturated chains, total acyl carbons\n")
	w("in one 6-carbon band centred on a monoacid TAG (…, 36, 42, 48, 54) — each an ideal solid solution, the families\n")
	w("mutually immiscible. Nothing in the rule was fitted to these cases. In the lauric oils the many dilute lauric\n")
	w("TAGs (LaLaLa, LaLaM, CLaLa, …) now crystallise together, which the pure-solids model could not express: their\n")
	w("slip points rise from about 16 °C to 28–30 °C. Palm oil moves from 30 °C into its range.\n\n")
	w("Pure-TAG correlation. The refit that counts cis-monoene chains at sn-2 and at sn-1/3 separately and gives the\n")
	w("sn-2 and outer chain-length mismatches their own terms (fit_coefficients.json) reproduces the published tristearin,\n")
	w("trielaidin, POP, POS and SOS anchors within 2 K; before it the correlation put SOS β 3.7 K high and triolein\n")
	w("12 K low. For these oils it changed the default's slip points by less than 1 K (palm 34.6 → 35.1 °C, coconut\n")
	w("30.1 → 30.7 °C) and lowered the palm SFC at 20 °C from 42.6 to 31.7 %%: the β′ correlation now meets the\n")
	w("[memory] SOS β′ value (36.5 °C, before 40.0), which takes POP β′ from 32.1 to 28.4 °C.\n\n")
	var coconut []string
	for i, c := range cases {
		if strings.HasPrefix(c.Name, "coconut") {
			coconut = append(coconut, fmt.Sprintf("%.1f", chosen.slip[i]))
		}
	}
	w("Known misses, reported as they are: the coconut cases come out **%s °C**, above the 23–26 °C Codex range\n",
		strings.Join(coconut, " and "))
	w("and near the top of the 20–28 °C Belitz range; the palm curve still falls steeply between 20 and 25 °C (the POP\n")
	w("family melts as a block). Ideal mixing inside a family is the likely cause (real mixed crystals of unequal TAGs\n")
	w("have positive excess energy, so they melt lower and over a wider range). The published form of the non-ideal\n")
	w("solid is known — Margules two-suffix excess Gibbs energy for β and β′ with predictive binary-parameter\n")
	w("correlations, α and the liquid ideal (Teles dos Santos, Le Roux & Gerbaud, JAOCS 88:223, 2011, abstract; after\n")
	w("Wesdorp 1990) — but its parameter values could not be retrieved, so none are used and none were tuned to these\n")
	w("cases. A second search (December 2026) found neither the constants nor equilibrium binary data for close\n")
	w("lauric TAG pairs to fit them on: the only lauric pair found, LaLaLa–MMM, is eutectic near x(LaLaLa) = 0.7 from\n")
	w("5 °C/min scans (Crystals 14:807, 2024, abstract), which the families model already treats as two phases. A\n")
	w("uniform interaction energy inside each family does not close the gap either (tried, not kept: 1–4 kJ/mol\n")
	w("lowers coconut by at most 2.5 K, because the myristic/palmitic family LaLaP, LaMM, MLaM, … melts on its own\n")
	w("near 30 °C), so the fix needs pair-specific parameters across the family bands, not a new tuning knob.\n")

	w("\n## Slip melting points, °C (error = predicted − target, K)\n\n| model | polymorph | threshold %% |")
	for _, c := range cases {
		w(" %s |", c.Name)
	}
	w(" mean abs error K | inside range | palm SFC MAD (max) vs [memory] |\n|---|---|---|")
	for range cases {
		w("---|")
	}
	w("---|---|---|\n")
	for _, r := range results {
		mark := ""
		if r.model == chosen.model && r.polymorph == chosen.polymorph && r.threshold == chosen.threshold {
			mark = " **(default)**"
		}
		w("| %s%s | %s | %g |", r.model, mark, r.polymorph, r.threshold)
		for i, c := range cases {
			w(" %.1f (%+.1f) |", r.slip[i], r.slip[i]-c.SlipTarget)
		}
		w(" %.1f | %d/%d | %.1f (%.1f) |\n", r.mae, r.inside, len(cases), r.sfcMAE, r.sfcMax)
	}
	if len(reported) > 0 {
		w("\n## Reported, not scored (default configuration)\n\n| case | published target °C | predicted °C | error K | why not scored |\n|---|---|---|---|---|\n")
		for _, c := range reported {
			r, err := MeltProfile(c.profile(t), Options{Composition: CompositionOptions{SN2: c.sn2(t)}})
			require.NoError(t, err)
			w("| %s | %g | %.1f | %+.1f | %s |\n", c.Name, c.SlipTarget, r.SlipMeltingPointC, r.SlipMeltingPointC-c.SlipTarget, c.NotScoredReason)
		}
		// What scoring them would do, so that leaving them out hides nothing.
		all := append(slices.Clone(cases), reported...)
		alt := chooseDefaults(runValidation(t, all))
		w("\nScored with the others, these cases would make the rule pick %s, %s, %g %% (mean absolute error %.1f K over\n",
			alt.model, alt.polymorph, alt.threshold, alt.mae)
		var palm []string
		for i, c := range all {
			if strings.Contains(c.Name, "palm oil") {
				palm = append(palm, fmt.Sprintf("%.1f", alt.slip[i]))
			}
		}
		w("%d cases, %d inside their ranges), with the whole palm oils at %s °C.\n", len(all), alt.inside, strings.Join(palm, " and "))
	}
	w("\nLeft out altogether: the programme's palm stearin. Its consensus composition (Tarmizi et al. 2008) gives a\n")
	w("calculated IV of 45.5 and its consensus Wijs IV is 33.76 (PMC2701170), so the two abstracts describe different\n")
	w("stearins and its slip melting point (53.4 °C) cannot be paired with that composition.\n")
	w("\n## SFC curves, %%: default (%s) and previous default (%s), both β′\n\n", DefaultSolidModel, MultiplePureSolids)
	w("| case | model | 10 °C | 20 °C | 25 °C | 30 °C | 35 °C | 37 °C | 40 °C | slip °C | clear point °C |\n|---|---|---|---|---|---|---|---|---|---|---|\n")
	for _, c := range append(slices.Clone(cases), reported...) {
		for _, model := range []SolidModel{DefaultSolidModel, MultiplePureSolids} {
			opt := Options{Composition: CompositionOptions{SN2: c.sn2(t)}}
			if model != DefaultSolidModel {
				opt.SolidModel, opt.SlipThresholdPercent = model, 3
			}
			r, err := MeltProfile(c.profile(t), opt)
			require.NoError(t, err)
			at := map[float64]float64{}
			for _, p := range r.ReportingPoints {
				at[p.TemperatureC] = p.SolidFatPercent
			}
			w("| %s | %s | %.1f | %.1f | %.1f | %.1f | %.1f | %.1f | %.1f | %.1f | %.1f |\n", c.Name, model,
				at[10], at[20], at[25], at[30], at[35], at[37], at[40], r.SlipMeltingPointC, r.ClearPointC)
		}
	}
	return b.String()
}

func minAbs(r configResult, cases []validationCase) float64 {
	m := math.Inf(1)
	for i, c := range cases {
		m = math.Min(m, math.Abs(r.slip[i]-c.SlipTarget))
	}
	return m
}

func maxAbs(r configResult, cases []validationCase) float64 {
	var m float64
	for i, c := range cases {
		m = math.Max(m, math.Abs(r.slip[i]-c.SlipTarget))
	}
	return m
}

// acidOrder sorts labels such as "8:0", "18:1" by carbons then bonds.
func acidOrder(label string) float64 {
	var c, d int
	fmt.Sscanf(label, "%d:%d", &c, &d)
	return float64(c) + float64(d)/10
}
