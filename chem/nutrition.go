package chem

import (
	"fmt"
	"math"
	"sort"
)

// Nutrition-label figures. A label declares fatty acids as grams of free
// fatty acid per 100 g of food, while a laboratory reports them as shares
// of the methyl esters. Three steps connect the two:
//
//  1. The profile is converted to the free-acid weight basis (each share
//     times its acid's molar mass, renormalised).
//  2. The shares times a conversion factor — grams of fatty acids in one
//     gram of fat — give grams per 100 g of fat. For a fat that is all
//     triacylglycerol the factor follows from the composition: 3 M̄(acid) /
//     M̄(TAG), about 0.956 for C18 oils and 0.94 for lauric ones. Foods whose
//     fat carries phospholipids, sterols and other unsaponifiable matter
//     (milk, eggs, meat, fish, cereals) have lower factors; the service
//     holds the factors by food class of FAO, Food composition data, 4th
//     ed. (Greenfield & Southgate 2003), Annex 5, Table A5.1, which come
//     from Weihrauch, Posati, Anderson & Exler, JAOCS 54:36 (1977) and the
//     USDA reports it summarises.
//  3. Grams per 100 g of fat times the fat content (g per 100 g of food)
//     over 100 give grams per 100 g of food.
//
// The classes follow the labelling definitions of Regulation (EU) No
// 1169/2011, as the composition sums do (see Sums); trans fat is split by
// chain length (18:1, 18:2, 18:3, other chains) so a declaration of
// industrial against ruminant trans fat can be prepared. EPA (20:5 n-3)
// and DHA (22:6 n-3) are also given in milligrams per gram of fat, the
// unit of fish-oil specifications, both as free acids and as their
// triacylglycerol equivalent (each chain's mass plus a third of the
// glycerol backbone, first principles): fish-oil monographs state the
// content of omega-3 acids "as triglycerides" [recalled: European
// Pharmacopoeia 2.4.29].

// FoodClassFactor is a lipid conversion factor of a class of foods.
type FoodClassFactor struct {
	ID, Name string
	// Factor is grams of fatty acids per gram of total fat.
	Factor float64
}

// foodClassFactors are FAO (2003) Table A5.1, in its order.
var foodClassFactors = []FoodClassFactor{
	{"fats_and_oils", "fats and oils, all except coconut oil", 0.956},
	{"coconut_oil", "coconut oil", 0.942},
	{"milk_products", "milk and milk products", 0.945},
	{"eggs", "eggs", 0.83},
	{"beef_lean", "beef (lamb taken as beef), lean", 0.916},
	{"beef_fat", "beef (lamb taken as beef), fat", 0.953},
	{"pork_lean", "pork, lean", 0.910},
	{"pork_fat", "pork, fat", 0.953},
	{"poultry", "poultry", 0.945},
	{"fish_fatty", "fish, fatty", 0.90},
	{"fish_white", "fish, white", 0.70},
	{"nuts", "nuts", 0.956},
	{"avocado", "avocado pears", 0.956},
	{"vegetables_fruits", "vegetables and fruits", 0.80},
	{"cereal_wholegrain", "wheat, barley and rye, wholegrain", 0.72},
	{"cereal_flour", "wheat, barley and rye, flour", 0.67},
	{"cereal_bran", "wheat, barley and rye, bran", 0.82},
	{"oats_whole", "oats, whole", 0.94},
	{"rice_milled", "rice, milled", 0.85},
	{"brain", "brain", 0.561},
	{"heart", "heart", 0.789},
	{"kidney", "kidney", 0.747},
	{"liver", "liver", 0.741},
}

// FoodClassFactors returns the factors by food class.
func FoodClassFactors() []FoodClassFactor {
	return append([]FoodClassFactor(nil), foodClassFactors...)
}

// FoodClassIDs lists the food class ids, sorted.
func FoodClassIDs() []string {
	ids := make([]string, len(foodClassFactors))
	for i, f := range foodClassFactors {
		ids[i] = f.ID
	}
	sort.Strings(ids)
	return ids
}

// NutritionInput asks for the label figures. All fields are optional;
// paths in errors: "fat_g_per_100g_food", "food_class",
// "conversion_factor", relative to the nutrition request.
type NutritionInput struct {
	// FatGPer100gFood is the food's total fat, g per 100 g; nil for the
	// figures per 100 g of fat only.
	FatGPer100gFood *float64
	// FoodClass picks a factor of FoodClassFactors by id.
	FoodClass string
	// ConversionFactor gives the factor directly (g fatty acids per g fat).
	ConversionFactor *float64
}

// LabelFigures are the label's fatty-acid figures in grams (per 100 g of
// fat or of food).
type LabelFigures struct {
	TotalFattyAcids, Saturated, Monounsaturated, Polyunsaturated float64
	// Trans is all non-conjugated trans acids; Trans181, Trans182 and
	// Trans183 the C18 monoenes, dienes and trienes among them and
	// TransOther the rest (C16, C20, C22 trans acids).
	Trans, Trans181, Trans182, Trans183, TransOther float64
	OtherUnsaturated                                float64
	N3, N6, EPA, DHA                                float64
}

// scaled returns f times k.
func (f LabelFigures) scaled(k float64) LabelFigures {
	return LabelFigures{f.TotalFattyAcids * k, f.Saturated * k, f.Monounsaturated * k, f.Polyunsaturated * k,
		f.Trans * k, f.Trans181 * k, f.Trans182 * k, f.Trans183 * k, f.TransOther * k, f.OtherUnsaturated * k,
		f.N3 * k, f.N6 * k, f.EPA * k, f.DHA * k}
}

// Where a conversion factor came from.
const (
	FactorFromComposition = "composition"
	FactorFromFoodClass   = "food_class"
	FactorGiven           = "given"
)

// Nutrition are the label figures of a profile.
type Nutrition struct {
	// Factor is the conversion factor used and FactorSource where it came
	// from; FoodClass is set for FactorFromFoodClass.
	Factor       float64
	FactorSource string
	FoodClass    *FoodClassFactor
	// PerFat are grams per 100 g of fat; PerFood grams per 100 g of food,
	// nil without a fat content.
	PerFat  LabelFigures
	PerFood *LabelFigures
	// FatGPer100gFood echoes the fat content.
	FatGPer100gFood *float64
	// EPADHAPerGFat is EPA + DHA in mg per g of fat as free acids, and
	// EPADHAAsTAGPerGFat as their triacylglycerol equivalent.
	EPADHAPerGFat, EPADHAAsTAGPerGFat float64
	Warnings                          []Warning
}

// Warning codes of the label figures.
const (
	// WarnFactorFromComposition: the factor was computed on the assumption
	// that the fat is all triacylglycerol.
	WarnFactorFromComposition = "conversion_factor_from_composition"
)

// Identities of EPA and DHA in the catalogue.
const (
	idEPA = "20:5 c5,c8,c11,c14,c17"
	idDHA = "22:6 c4,c7,c10,c13,c16,c19"
)

// CompositionFactor is grams of fatty acids (as free acids) in one gram
// of the material: 3 M̄(acid)/M̄(TAG) for triacylglycerols, M̄(acid)/M̄(FAME)
// for methyl esters, 1 for free acids.
func CompositionFactor(p *Profile, m Material) float64 {
	acid := p.MeanAcidMolarMass()
	switch m {
	case MaterialFreeAcid:
		return 1
	case MaterialMethylEster:
		return acid / (acid + MolarMassCH2)
	}
	return 3 * acid / (3*acid + GlycerolBackboneIncrement)
}

// NutritionOf computes the label figures of p in material m. Errors are
// *Error values with paths relative to the nutrition request.
func NutritionOf(p *Profile, m Material, in NutritionInput) (Nutrition, error) {
	var bad FieldErrors
	out := Nutrition{Factor: CompositionFactor(p, m), FactorSource: FactorFromComposition}
	if in.FoodClass != "" && in.ConversionFactor != nil {
		bad.Invalid("give a food class or a conversion factor, not both", "conversion_factor")
	}
	if in.FoodClass != "" {
		found := false
		for i := range foodClassFactors {
			if foodClassFactors[i].ID == in.FoodClass {
				f := foodClassFactors[i]
				out.Factor, out.FactorSource, out.FoodClass, found = f.Factor, FactorFromFoodClass, &f, true
			}
		}
		if !found {
			bad.Invalid("unknown food class", "food_class")
		}
	}
	if f := in.ConversionFactor; f != nil {
		if math.IsNaN(*f) || *f <= 0 || *f > 1 {
			bad.Invalid("must be a number above 0 and at most 1 (g fatty acids per g fat)", "conversion_factor")
		} else {
			out.Factor, out.FactorSource = *f, FactorGiven
		}
	}
	if f := in.FatGPer100gFood; f != nil && (math.IsNaN(*f) || *f < 0 || *f > 100) {
		bad.Invalid("must be a number from 0 to 100 (g fat per 100 g food)", "fat_g_per_100g_food")
	}
	if err := bad.Err("the nutrition request is not valid"); err != nil {
		return Nutrition{}, err
	}
	if out.FactorSource == FactorFromComposition {
		out.Warnings = append(out.Warnings, Warning{WarnFactorFromComposition, fmt.Sprintf(
			"the conversion factor %.4f g fatty acids per g fat was calculated from the composition, taking the fat as pure %s; "+
				"for a food whose fat carries phospholipids or sterols (milk, eggs, meat, fish, cereals) give its food_class",
			out.Factor, m.String()), []any{"food_class"}})
	}

	w := p.InBasis(BasisAcidWeight)
	var f LabelFigures
	var epaDHATAG float64
	for i, c := range p.Components {
		a := c.Acid
		g := w[i] * out.Factor // g per 100 g fat
		f.TotalFattyAcids += g
		switch {
		case a.DoubleBondCount == 0:
			f.Saturated += g
		case nonConjugatedTrans(a):
			f.Trans += g
			switch {
			case a.Carbons == 18 && a.DoubleBondCount == 1:
				f.Trans181 += g
			case a.Carbons == 18 && a.DoubleBondCount == 2:
				f.Trans182 += g
			case a.Carbons == 18 && a.DoubleBondCount == 3:
				f.Trans183 += g
			default:
				f.TransOther += g
			}
		case a.DoubleBondCount == 1 && a.AllCis():
			f.Monounsaturated += g
		case a.AllCis() && !a.Conjugated():
			f.Polyunsaturated += g
		default:
			f.OtherUnsaturated += g
		}
		switch a.OmegaFamily() {
		case 3:
			f.N3 += g
		case 6:
			f.N6 += g
		}
		if a.ID == idEPA || a.ID == idDHA {
			if a.ID == idEPA {
				f.EPA += g
			} else {
				f.DHA += g
			}
			// The chain as a third of a triacylglycerol weighs the acid
			// plus a third of the backbone increment.
			epaDHATAG += g * (a.MolarMass() + GlycerolBackboneIncrement/3) / a.MolarMass()
		}
	}
	out.PerFat = f
	out.EPADHAPerGFat = (f.EPA + f.DHA) * 10 // g/100 g → mg/g
	out.EPADHAAsTAGPerGFat = epaDHATAG * 10
	if fat := in.FatGPer100gFood; fat != nil {
		v := *fat
		food := f.scaled(v / 100)
		out.PerFood, out.FatGPer100gFood = &food, &v
	}
	return out, nil
}
