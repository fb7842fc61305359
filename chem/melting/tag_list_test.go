package melting

import (
	"context"
	"math"
	"testing"

	"github.com/stretchr/testify/require"

	"lipidsvc/chem"
)

// TestExplicitTAGsMatchEnumeratedProfile: a fat given as the TAG list its
// profile enumerates melts exactly as the profile does.
func TestExplicitTAGsMatchEnumeratedProfile(t *testing.T) {
	cat := chem.NewCatalogue()
	p, err := chem.NewProfile(cat, chem.BasisFAMEWeight, []chem.Entry{
		{Acid: "16:0", Percent: 44}, {Acid: "18:0", Percent: 5}, {Acid: "18:1 c9", Percent: 40}, {Acid: "18:2 c9,c12", Percent: 11},
	}, 0)
	require.NoError(t, err)
	for _, model := range []SolidModel{SolidSolutionFamilies, MultiplePureSolids, IdealSolidSolution} {
		opt := Options{SolidModel: model, Composition: CompositionOptions{Distribution: FullRandom, NoPooling: true}}
		fromProfile, err := Prepare(p, opt)
		require.NoError(t, err)
		var list []TAGAmount
		for _, s := range fromProfile.Composition().Species {
			list = append(list, TAGAmount{Outer1: s.Outer1, Middle: s.Middle, Outer2: s.Outer2, MolePercent: 100 * s.MoleFraction})
		}
		explicitOpt := Options{SolidModel: model, Composition: CompositionOptions{NoPooling: true}}
		explicit, err := PrepareTAGs(list, explicitOpt, 0.5)
		require.NoError(t, err)
		a, err := fromProfile.Melt()
		require.NoError(t, err)
		b, err := explicit.Melt()
		require.NoError(t, err)
		for i := range a.Curve {
			require.InDelta(t, a.Curve[i].SolidFatPercent, b.Curve[i].SolidFatPercent, 1e-9, "%s at %g °C", model, a.Curve[i].TemperatureC)
		}
		require.InDelta(t, a.SlipMeltingPointC, b.SlipMeltingPointC, 1e-6)
		require.InDelta(t, a.ClearPointC, b.ClearPointC, 1e-6)
		require.Equal(t, "explicit_tags", b.Parameters.Distribution.String())
		require.Len(t, explicit.Composition().Species, len(list))
	}
}

func TestExplicitTAGsRejects(t *testing.T) {
	cat := chem.NewCatalogue()
	pal, _ := cat.ByID("16:0")
	ole, _ := cat.ByID("18:1 c9")
	cases := []struct {
		name string
		list []TAGAmount
		opt  Options
		path []any
	}{
		{"empty", nil, Options{}, []any{"triacylglycerols"}},
		{"missing acid", []TAGAmount{{Outer1: pal, Middle: nil, Outer2: pal, MolePercent: 100}}, Options{}, []any{"triacylglycerols", 0}},
		{"negative", []TAGAmount{{pal, ole, pal, -1}, {pal, pal, pal, 101}}, Options{}, []any{"triacylglycerols", 0, "mole_percent"}},
		{"sum off", []TAGAmount{{pal, ole, pal, 50}, {ole, ole, ole, 40}}, Options{}, []any{"triacylglycerols"}},
		{"distribution", []TAGAmount{{pal, ole, pal, 100}}, Options{Composition: CompositionOptions{Distribution: FullRandom}}, []any{"distribution"}},
	}
	for _, c := range cases {
		_, err := PrepareTAGs(c.list, c.opt, 0.5)
		ce, ok := chem.AsError(err)
		require.True(t, ok, c.name)
		require.Equal(t, c.path, ce.Fields[0].Path, c.name)
	}
	// Duplicates (in either outer order) are summed and the shares scaled.
	f, err := PrepareTAGs([]TAGAmount{{pal, ole, pal, 60}, {ole, ole, pal, 20}, {pal, ole, ole, 20.2}}, Options{}, 0.5)
	require.NoError(t, err)
	var codes []string
	for _, w := range f.Warnings() {
		codes = append(codes, w.Code)
	}
	require.Contains(t, codes, chem.WarnDuplicateAcid)
	require.Contains(t, codes, chem.WarnNormalised)
	require.Len(t, f.Composition().Species, 2)
}

// TestTraceAcidsUnderflow: an acid whose TAG shares underflow to zero is
// left out instead of making a pooled component 0/0 (which once turned the
// clear point into NaN and the slip search into an endless loop).
func TestTraceAcidsUnderflow(t *testing.T) {
	cat := chem.NewCatalogue()
	p, err := chem.NewProfile(cat, chem.BasisFAMEWeight, []chem.Entry{
		{Acid: "16:0", Percent: 50}, {Acid: "18:1 c9", Percent: 50}, {Acid: "18:3 c9,c12,c15", Percent: 1e-120},
	}, 0)
	require.NoError(t, err)
	for _, model := range []SolidModel{SolidSolutionFamilies, MultiplePureSolids, IdealSolidSolution} {
		r, err := MeltProfile(p, Options{SolidModel: model})
		require.NoError(t, err, model)
		require.False(t, math.IsNaN(r.ClearPointC), model)
		require.False(t, math.IsNaN(r.SlipMeltingPointC), model)
		for _, pt := range r.Curve {
			require.False(t, math.IsNaN(pt.SolidFatPercent), model)
		}
	}
}

// TestCompareMatchesCalibrationReport: a fat prepared with the fitted
// calibration compares with the measurements exactly as the report's
// "after" says.
func TestCompareMatchesCalibrationReport(t *testing.T) {
	cat := chem.NewCatalogue()
	p, err := chem.NewProfile(cat, chem.BasisFAMEWeight, []chem.Entry{
		{Acid: "16:0", Percent: 44}, {Acid: "18:0", Percent: 5}, {Acid: "18:1 c9", Percent: 40}, {Acid: "18:2 c9,c12", Percent: 11},
	}, 0)
	require.NoError(t, err)
	// Invented measurements for the test, not published data.
	m := Measurements{SFC: []SFCPoint{{10, 50}, {20, 25}, {30, 8}}, SlipMeltingPointC: 35, HasSlipMeltingPoint: true}
	rep, err := CalibrateProfile(context.Background(), p, Options{}, m)
	require.NoError(t, err)
	f, err := Prepare(p, Options{Calibration: rep.Calibration})
	require.NoError(t, err)
	got, err := f.Compare(m)
	require.NoError(t, err)
	require.Equal(t, rep.After.SFCPoints, got.SFCPoints)
	require.InDelta(t, rep.After.SFCRMSErrorPercent, got.SFCRMSErrorPercent, 1e-6)
	require.InDelta(t, rep.After.SFCMaxAbsErrorPercent, got.SFCMaxAbsErrorPercent, 1e-6)
	require.InDelta(t, rep.After.SlipErrorK, got.SlipErrorK, 1e-6)
}

// TestExplicitTAGsKeyAcidsByID: the same species given through acids of two
// catalogue instances is one species (summed, with its measured melting
// point), as acids are matched by canonical ID everywhere. Found in review.
func TestExplicitTAGsKeyAcidsByID(t *testing.T) {
	c1, c2 := chem.NewCatalogue(), chem.NewCatalogue()
	acid := func(c *chem.Catalogue, id string) *chem.FattyAcid {
		a, ok := c.ByID(id)
		require.True(t, ok, id)
		return a
	}
	list := []TAGAmount{
		{Outer1: acid(c1, "16:0"), Middle: acid(c1, "18:1 c9"), Outer2: acid(c1, "16:0"), MolePercent: 50},
		{Outer1: acid(c2, "16:0"), Middle: acid(c2, "18:1 c9"), Outer2: acid(c2, "16:0"), MolePercent: 50},
	}
	f, err := PrepareTAGs(list, Options{Polymorph: Beta}, 0.5)
	require.NoError(t, err)
	r, err := f.Melt()
	require.NoError(t, err)
	require.Equal(t, 1, r.SpeciesCount)
	require.Len(t, r.MainSpecies, 1)
	require.True(t, r.MainSpecies[0].MeltingPointMeasured, "POP β has a measured melting point")
	require.InDelta(t, 100, r.MainSpecies[0].MolePercent, 1e-9)
}
