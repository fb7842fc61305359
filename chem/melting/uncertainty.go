package melting

import (
	"fmt"

	"lipidsvc/chem"
)

// WarnEstimateUncertain: the fat is of a kind the model is known to miss by
// more than the published comparison's typical error, or of one it cannot
// judge from its acids (a fraction); the warning says by how much and what
// would do better.
const WarnEstimateUncertain = "estimate_uncertain"

// typicalError is the default model's mean absolute error on the fats of a
// class in the plausibility fixture.
type typicalError struct {
	fats             int
	slipK, sfcPoints float64
}

// Uncertainty states how good a melting estimate is for a fat of its kind:
// the default model's mean absolute errors on the fats of the same class in
// the plausibility fixture (testdata/melting/PLAUSIBILITY.md), or over the
// whole fixture when it holds no fat of the class (Fats 0). They are typical
// errors of the uncalibrated model; a calibration on the plant's own
// measurements replaces them by its own (see [Calibrate]).
type Uncertainty struct {
	Class FatClass
	// SlipMeltingPointK and SFCPoints are the typical absolute errors of
	// the slip melting point (K) and of an SFC value (points).
	SlipMeltingPointK, SFCPoints float64
	// Fats is the number of fixture fats of the class behind the figures.
	Fats int
	// Calibrated reports that the answer was computed with a calibration,
	// to which the figures do not apply.
	Calibrated bool
}

// Thresholds above which a class's typical error earns a warning: the
// published comparison of models of this kind (Teles dos Santos, OCL
// 25:D107, 2018) reports about 4.5 K and 3.8 points; a class well beyond
// the fixture's overall goal (3 K, 5 points) is flagged.
const (
	uncertainSlipK     = 3.0
	uncertainSFCPoints = 5.0
	palmFractionIVLow  = 48.0
	palmFractionIVHigh = 56.0
	palmHardenedTrans  = 0.02
)

// Uncertainty is how good an estimate for this fat typically is, with the
// estimate_uncertain warnings its kind earns (also part of every [Result]).
func (f *Fat) Uncertainty() (Uncertainty, []chem.Warning) {
	c := f.composition.Class
	u := Uncertainty{Class: c, Calibrated: f.opt.Calibration != (Calibration{})}
	te, ok := typicalErrors[c]
	if !ok {
		te = overallError
	} else {
		u.Fats = te.fats
	}
	u.SlipMeltingPointK, u.SFCPoints = te.slipK, te.sfcPoints
	var warnings []chem.Warning
	if !u.Calibrated && ok && (te.slipK > uncertainSlipK || te.sfcPoints > uncertainSFCPoints) {
		fats := "fats"
		if te.fats == 1 {
			fats = "fat"
		}
		warnings = append(warnings, chem.Warning{Code: WarnEstimateUncertain, Message: fmt.Sprintf(
			"for %s the model typically misses the slip melting point by %.1f K and the SFC by %.1f points "+
				"(%d %s of the plausibility fixture); calibrate it on the plant's own measurements",
			classNouns[c], te.slipK, te.sfcPoints, te.fats, fats)})
	}
	if c == ClassPalm && f.composition.Distribution != ExplicitTAGs {
		p := chem.FromMoleFractions(f.composition.Acids, f.composition.Total, chem.BasisMole)
		var trans float64
		for i, a := range f.composition.Acids {
			if a.HasTrans() {
				trans += f.composition.Total[i]
			}
		}
		// A palm fat with trans acids has been hardened, not fractionated
		// (palm oil itself carries well under 1 % [memory]).
		if iv := chem.IodineValue(p, chem.MaterialTAG); trans < palmHardenedTrans && (iv < palmFractionIVLow || iv > palmFractionIVHigh) {
			warnings = append(warnings, chem.Warning{Code: WarnEstimateUncertain, Message: fmt.Sprintf(
				"a palm-type fat of iodine value %.1f, outside palm oil's 50–55, is likely a fraction, whose TAGs are not "+
					"distributed at random over its acids; the estimate from the acids can miss by several kelvin — send its "+
					"TAG composition (triacylglycerols) or calibrate", iv)})
		}
	}
	return u, warnings
}

// classNouns name the classes in warnings.
var classNouns = map[FatClass]string{
	ClassSeedOil: "seed oils", ClassPalm: "palm fats", ClassLauric: "lauric fats",
	ClassCocoaButterType: "cocoa-butter-type fats", ClassLard: "lard", ClassTallow: "tallow",
	ClassMilkFat: "milk fat", ClassHardened: "hardened fats", ClassInteresterified: "interesterified fats",
	ClassTAGList: "fats given as TAGs",
}
