package chem

import (
	"testing"

	"github.com/stretchr/testify/require"
)

func nutritionOf(t *testing.T, entries []Entry, m Material, in NutritionInput) Nutrition {
	t.Helper()
	p, err := NewProfile(NewCatalogue(), BasisFAMEWeight, entries, 0.5)
	require.NoError(t, err)
	n, err := NutritionOf(p, m, in)
	require.NoError(t, err)
	return n
}

// The composition factor of a pure triacylglycerol fat is 3 M(acid)/M(TAG)
// [first principles]: triolein 3 × 282.468/885.453 = 0.95703. FAO (2003)
// Table A5.1 gives 0.956 for "fats and oils, all except coconut oil" and
// 0.942 for coconut oil; the composition factor of a C18 oil and of a
// lauric oil must land within 0.003 of those.
func TestCompositionFactor(t *testing.T) {
	n := nutritionOf(t, []Entry{{"18:1 c9", 100}}, MaterialTAG, NutritionInput{})
	require.InDelta(t, 0.95703, n.Factor, 5e-5)
	require.Equal(t, FactorFromComposition, n.FactorSource)
	require.Equal(t, WarnFactorFromComposition, n.Warnings[0].Code)

	soy := []Entry{{"16:0", 10.5}, {"18:0", 4}, {"18:1 c9", 23.4}, {"18:2 c9,c12", 54.5}, {"18:3 c9,c12,c15", 7.6}}
	require.InDelta(t, 0.956, nutritionOf(t, soy, MaterialTAG, NutritionInput{}).Factor, 0.003)
	// A coconut oil inside the Codex CXS 210 ranges.
	coconut := []Entry{{"8:0", 7.5}, {"10:0", 6}, {"12:0", 47.5}, {"14:0", 18.5}, {"16:0", 9}, {"18:0", 3},
		{"18:1 c9", 6.5}, {"18:2 c9,c12", 1.8}, {"6:0", 0.2}}
	require.InDelta(t, 0.942, nutritionOf(t, coconut, MaterialTAG, NutritionInput{}).Factor, 0.003)

	// Free acids are all fatty acid; methyl esters lose the CH2.
	require.Equal(t, 1.0, nutritionOf(t, soy, MaterialFreeAcid, NutritionInput{}).Factor)
	require.InDelta(t, 282.468/296.495, nutritionOf(t, []Entry{{"18:1 c9", 100}}, MaterialMethylEster, NutritionInput{}).Factor, 1e-5)
}

// FAO (2003) Annex 5 works the example of goat milk with 4.5 g fat per
// 100 g: 4.5 × 0.945 = 4.25 g total fatty acids per 100 g.
func TestNutritionPerFoodFAOExample(t *testing.T) {
	fat := 4.5
	milk := []Entry{{"4:0", 2.5}, {"6:0", 2.5}, {"8:0", 2.7}, {"10:0", 9.5}, {"12:0", 4.5}, {"14:0", 10.5},
		{"16:0", 27}, {"18:0", 9.5}, {"18:1 c9", 24}, {"18:2 c9,c12", 3.2}, {"18:1 t11", 2.0}, {"18:3 c9,c12,c15", 1.1}, {"16:1 c9", 1.0}}
	n := nutritionOf(t, milk, MaterialTAG, NutritionInput{FatGPer100gFood: &fat, FoodClass: "milk_products"})
	require.Equal(t, 0.945, n.Factor)
	require.Equal(t, FactorFromFoodClass, n.FactorSource)
	require.Empty(t, n.Warnings)
	require.InDelta(t, 94.5, n.PerFat.TotalFattyAcids, 1e-9)
	require.InDelta(t, 4.2525, n.PerFood.TotalFattyAcids, 1e-9)
	f := n.PerFat
	require.InDelta(t, f.TotalFattyAcids, f.Saturated+f.Monounsaturated+f.Polyunsaturated+f.Trans+f.OtherUnsaturated, 1e-9)
	require.InDelta(t, f.Trans, f.Trans181+f.Trans182+f.Trans183+f.TransOther, 1e-12)
	require.Greater(t, f.Trans181, 1.5) // vaccenic acid, as grams of free acid: ~2 % of 94.5 g
	require.Zero(t, f.Trans182)
}

// A fat made of nothing but EPA triacylglycerol holds 1000 mg EPA per g
// as triacylglycerol equivalent, and the factor times 1000 as free acid
// [first principles].
func TestEPADHA(t *testing.T) {
	n := nutritionOf(t, []Entry{{"20:5 n-3", 100}}, MaterialTAG, NutritionInput{})
	require.InDelta(t, 1000, n.EPADHAAsTAGPerGFat, 1e-9)
	require.InDelta(t, n.Factor*1000, n.EPADHAPerGFat, 1e-9)

	// A fish oil at 18 % EPA and 12 % DHA (FAME weight) carries about
	// 300 mg/g as triacylglycerols: per chain, the ester (M + 14.03) and
	// the acylglycerol share (M + 12.68) differ by under 0.5 %, so the
	// FAME weight share and the triacylglycerol weight share agree to
	// within about 1 mg/g (first principles).
	fish := []Entry{{"14:0", 7}, {"16:0", 17}, {"16:1 c9", 9}, {"18:0", 4}, {"18:1 c9", 13}, {"18:2 c9,c12", 2},
		{"18:3 c9,c12,c15", 1}, {"20:1 c11", 2}, {"20:5 n-3", 18}, {"22:1 c13", 2}, {"22:5 n-3", 2}, {"22:6 n-3", 12}, {"18:4 n-3", 3}, {"16:4 n-1", 8}}
	oil := nutritionOf(t, fish, MaterialTAG, NutritionInput{})
	require.InDelta(t, 300, oil.EPADHAAsTAGPerGFat, 1.5)
	require.InDelta(t, (oil.PerFat.EPA+oil.PerFat.DHA)*10, oil.EPADHAPerGFat, 1e-9)
	require.Less(t, oil.EPADHAPerGFat, oil.EPADHAAsTAGPerGFat, "free acids weigh less than their acylglycerol share")
	require.Nil(t, oil.PerFood)

	// The same acids as the lipid of fish flesh: the FAO factor 0.90 says
	// a tenth of that lipid is not fatty acid (phospholipid head groups,
	// sterols), so every figure per gram of lipid scales by 0.90 over the
	// oil's composition factor.
	flesh := nutritionOf(t, fish, MaterialTAG, NutritionInput{FoodClass: "fish_fatty"})
	require.Equal(t, 0.90, flesh.Factor)
	require.InDelta(t, oil.EPADHAAsTAGPerGFat*0.90/oil.Factor, flesh.EPADHAAsTAGPerGFat, 1e-9)
}

func TestNutritionBadInput(t *testing.T) {
	p, err := NewProfile(NewCatalogue(), BasisFAMEWeight, []Entry{{"16:0", 100}}, 0.5)
	require.NoError(t, err)
	neg, big := -1.0, 1.2
	for _, c := range []struct {
		in   NutritionInput
		path string
	}{
		{NutritionInput{FatGPer100gFood: &neg}, "fat_g_per_100g_food"},
		{NutritionInput{ConversionFactor: &big}, "conversion_factor"},
		{NutritionInput{FoodClass: "cheese"}, "food_class"},
		{NutritionInput{FoodClass: "eggs", ConversionFactor: &big}, "conversion_factor"},
	} {
		_, err := NutritionOf(p, MaterialTAG, c.in)
		ce, ok := AsError(err)
		require.True(t, ok, c.path)
		require.Equal(t, c.path, ce.Fields[0].Path[0], c.path)
	}
}
