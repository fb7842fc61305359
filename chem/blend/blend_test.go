package blend

import (
	"testing"

	"github.com/stretchr/testify/require"

	"lipidsvc/chem"
	"lipidsvc/chem/melting"
)

func profileOf(t testing.TB, entries ...chem.Entry) *chem.Profile {
	t.Helper()
	p, err := chem.NewProfile(chem.NewCatalogue(), chem.BasisFAMEWeight, entries, 0.5)
	require.NoError(t, err)
	return p
}

// soybean and fully hardened soybean oil (FHSBO), typical compositions
// (common practice, no source; FHSBO is soybean oil with every double bond
// saturated, so its 18:0 is soybean's C18 chains).
func soybean(t testing.TB) *chem.Profile {
	return profileOf(t, chem.Entry{Acid: "16:0", Percent: 10.5}, chem.Entry{Acid: "18:0", Percent: 4.2}, chem.Entry{Acid: "18:1 c9", Percent: 23.4},
		chem.Entry{Acid: "18:2 c9,c12", Percent: 53.5}, chem.Entry{Acid: "18:3 c9,c12,c15", Percent: 7.5}, chem.Entry{Acid: "20:0", Percent: 0.5},
		chem.Entry{Acid: "22:0", Percent: 0.4})
}

func hardSoybean(t testing.TB) *chem.Profile {
	return profileOf(t, chem.Entry{Acid: "16:0", Percent: 10.7}, chem.Entry{Acid: "18:0", Percent: 88.3}, chem.Entry{Acid: "20:0", Percent: 0.6},
		chem.Entry{Acid: "22:0", Percent: 0.4})
}

// Interesterifying a blend of fully hardened soybean oil and soybean oil
// lowers its slip melting point and its solids at 30 °C: the trisaturated
// TAGs of the hard stock are spread into mixed saturated–unsaturated ones
// (published practice: Mahjoob et al., Food Sci. Biotechnol. 27:343, 2018,
// on fully hydrogenated palm olein/soybean oil blends, "interesterification
// ... decreased ... SFC and SMP"; List et al., JAOCS 54:408, 1977, on
// soybean oil/soy trisaturate blends, recalled). Soybean oil on its own
// goes the other way: its natural TAGs keep saturated acids out of sn-2,
// randomisation makes a few trisaturated TAGs, and its melting point rises
// (Daniels, Kim & Min, J. Agric. Food Chem. 54:6011, 2006).
func TestInteresterificationAgainstPhysicalBlend(t *testing.T) {
	comps := []Component{{ID: "fhsbo", Profile: hardSoybean(t)}, {ID: "sbo", Profile: soybean(t)}}
	at := func(f float64, mode Mode) (slip, sfc30 float64) {
		b, err := New(comps, []float64{f, 1 - f}, mode, melting.Options{})
		require.NoError(t, err)
		slip, ok, err := b.Fat.SlipMeltingPointC()
		require.NoError(t, err)
		require.True(t, ok)
		sfc30, err = b.Fat.SolidFatContent(30)
		require.NoError(t, err)
		return slip, sfc30
	}
	for _, f := range []float64{0.2, 0.3, 0.4, 0.5} {
		ps, p30 := at(f, Physical)
		is, i30 := at(f, Interesterified)
		require.Less(t, is, ps-3, "%.0f %% hard stock: interesterified slip %.1f against physical %.1f", 100*f, is, ps)
		require.Less(t, i30, p30, "%.0f %% hard stock", 100*f)
	}
	soy := []Component{{ID: "sbo", Profile: soybean(t)}}
	natural, err := New(soy, []float64{1}, Physical, melting.Options{})
	require.NoError(t, err)
	random, err := New(soy, []float64{1}, Interesterified, melting.Options{})
	require.NoError(t, err)
	ns, _, err := natural.Fat.SlipMeltingPointC()
	require.NoError(t, err)
	rs, _, err := random.Fat.SlipMeltingPointC()
	require.NoError(t, err)
	require.Greater(t, rs, ns, "randomised soybean oil melts higher")
}

// The blended profile pools chains by moles [first principles]: the
// iodine value, which is per 100 g, is the mass average of the
// components' (exactly, whatever their molar masses), a component blended
// with itself is unchanged, and the physical blend of one oil is that oil.
func TestBlendedProfileIsExact(t *testing.T) {
	cat := chem.NewCatalogue()
	_ = cat
	soy, hard := soybean(t), hardSoybean(t)
	lauric := profileOf(t, chem.Entry{Acid: "12:0", Percent: 48}, chem.Entry{Acid: "14:0", Percent: 18}, chem.Entry{Acid: "18:1 c9", Percent: 34})
	comps := []Component{{ID: "sbo", Profile: soy}, {ID: "lauric", Profile: lauric}, {ID: "fhsbo", Profile: hard}}
	w := []float64{0.5, 0.3, 0.2}
	b, err := New(comps, w, Physical, melting.Options{})
	require.NoError(t, err)
	want := 0.5*chem.IodineValue(soy, chem.MaterialTAG) + 0.3*chem.IodineValue(lauric, chem.MaterialTAG) + 0.2*chem.IodineValue(hard, chem.MaterialTAG)
	require.InDelta(t, want, chem.IodineValue(b.Profile, chem.MaterialTAG), 1e-9)
	wantSV := 0.5*chem.SaponificationValue(soy, chem.MaterialTAG) + 0.3*chem.SaponificationValue(lauric, chem.MaterialTAG) + 0.2*chem.SaponificationValue(hard, chem.MaterialTAG)
	require.InDelta(t, wantSV, chem.SaponificationValue(b.Profile, chem.MaterialTAG), 1e-9)

	twice, err := New([]Component{{ID: "a", Profile: soy}, {ID: "b", Profile: soy}}, []float64{0.4, 0.6}, Physical, melting.Options{})
	require.NoError(t, err)
	one, err := New([]Component{{ID: "a", Profile: soy}}, []float64{1}, Physical, melting.Options{})
	require.NoError(t, err)
	for _, tc := range []float64{0, 10, 20} {
		a, err := twice.Fat.SolidFatContent(tc)
		require.NoError(t, err)
		c, err := one.Fat.SolidFatContent(tc)
		require.NoError(t, err)
		require.InDelta(t, c, a, 1e-9)
	}
	for i, c := range twice.Profile.Components {
		require.InDelta(t, one.Profile.Components[i].Percent, c.Percent, 1e-9, c.Acid.ID)
	}

	_, err = New(comps, []float64{0.5, 0.3, 0.3}, Physical, melting.Options{})
	ce, ok := chem.AsError(err)
	require.True(t, ok)
	require.Equal(t, "components", ce.Fields[0].Path[0])
}
