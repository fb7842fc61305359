package melting

import (
	"fmt"

	"lipidsvc/chem"
)

// FatClass is the kind of fat a composition looks like. It chooses the
// automatic sn-2 estimate ([SN2Automatic]) and the typical error a melting
// answer reports; it is read from the fatty-acid profile alone, so a
// fraction or a blend is classed by what its acids resemble.
type FatClass int

const (
	// ClassSeedOil is every fat no other class claims: liquid and seed
	// oils, their blends.
	ClassSeedOil FatClass = iota + 1
	// ClassPalm: palmitic acid at least PalmLikePalmiticMoleFraction of the
	// chains — palm oil and its fractions (Codex CXS 210 puts palm oil at
	// 39.3–47.5 % palmitic acid; the seed oils of the standard stay below
	// about 27 % [memory]).
	ClassPalm
	// ClassLauric: lauric and myristic acids together at least 40 % of the
	// chains — coconut and palm kernel oils (about 66 and 63 % by Belitz,
	// Grosch & Schieberle, Food Chemistry, 4th ed., Table 14.8); no other
	// common fat comes near.
	ClassLauric
	// ClassCocoaButterType: stearic and oleic acids each at least 25 % of
	// the chains and at most 6 % linoleic acid — cocoa butter and the
	// symmetrical StOSt-type fats (cocoa butter about 34 % stearic, 35 %
	// oleic, 3 % linoleic [memory]).
	ClassCocoaButterType
	// ClassLard: an animal depot fat (palmitoleic acid at least 1.5 %,
	// stearic at least 8 % and palmitic at least 18 % of the chains — the
	// 2–4 % of 16:1 in lard and tallow sets them apart from vegetable fats
	// of similar saturation, below 0.5 % [memory]) with at least 5 %
	// linoleic acid: pig fat, whose linoleic acid follows the feed (lard
	// 6–16 %, beef tallow 1–5 % [memory]).
	ClassLard
	// ClassTallow: an animal depot fat with less than 5 % linoleic acid —
	// beef and mutton tallow.
	ClassTallow
	// ClassMilkFat: butyric and caproic acids together at least 2 % of the
	// chains, which only milk fats carry.
	ClassMilkFat
	// ClassHardened: at least 10 % of the chains trans, or saturated chains
	// at least 80 % with stearic acid at least half of all chains — a
	// partially or a fully hardened oil.
	ClassHardened
	// ClassInteresterified: a fat the request distributes at random (a
	// chemically interesterified one); chosen by the distribution, not by
	// the acids.
	ClassInteresterified
	// ClassTAGList: a fat given as its TAG composition.
	ClassTAGList
)

var classNames = map[FatClass]string{
	ClassSeedOil: "seed_oil", ClassPalm: "palm", ClassLauric: "lauric", ClassCocoaButterType: "cocoa_butter_type",
	ClassLard: "lard", ClassTallow: "tallow", ClassMilkFat: "milk_fat", ClassHardened: "hardened", ClassInteresterified: "interesterified",
	ClassTAGList: "tag_list",
}

// String gives the API name ("palm", "lauric", …).
func (c FatClass) String() string {
	if n, ok := classNames[c]; ok {
		return n
	}
	return fmt.Sprintf("FatClass(%d)", int(c))
}

// ClassOf classes a profile by its acids (mole fractions of chains); the
// first class that claims it wins, in the order milk fat, lauric, hardened,
// palm, cocoa-butter type, lard, tallow, seed oil.
func ClassOf(p *chem.Profile) FatClass {
	var short, lauric, trans, sat, stearic, palmitic, palmitoleic, oleic, linoleic float64
	for _, c := range p.Components {
		a, x := c.Acid, c.MoleFraction
		switch {
		case a.DoubleBondCount == 0 && a.HydroxyPosition == 0:
			sat += x
			switch a.Carbons {
			case 4, 6:
				short += x
			case 12, 14:
				lauric += x
			case 16:
				palmitic += x
			case 18:
				stearic += x
			}
		case a.HasTrans():
			trans += x
		case a.Carbons == 16 && a.DoubleBondCount == 1:
			palmitoleic += x
		case a.Carbons == 18 && a.DoubleBondCount == 1:
			oleic += x
		case a.Carbons == 18 && a.DoubleBondCount == 2:
			linoleic += x
		}
	}
	switch {
	case short >= 0.02:
		return ClassMilkFat
	case lauric >= 0.40:
		return ClassLauric
	case trans >= 0.10 || (sat >= 0.80 && stearic >= 0.50):
		return ClassHardened
	case palmitic >= PalmLikePalmiticMoleFraction:
		return ClassPalm
	case stearic >= 0.25 && oleic >= 0.25 && linoleic <= 0.06:
		return ClassCocoaButterType
	case palmitoleic >= 0.015 && stearic >= 0.08 && palmitic >= 0.18 && linoleic >= 0.05:
		return ClassLard
	case palmitoleic >= 0.015 && stearic >= 0.08 && palmitic >= 0.18:
		return ClassTallow
	}
	return ClassSeedOil
}

// automaticSN2 is the sn-2 estimate the automatic choice makes for a class,
// with the reason the answer states.
func automaticSN2(c FatClass) (SN2Estimate, string) {
	switch c {
	case ClassPalm:
		return SN2Palm, "a palm-type fat (at least 35 mol % palmitic acid)"
	case ClassLauric:
		return SN2Lauric, "a lauric fat (lauric and myristic acids at least 40 mol %)"
	case ClassLard:
		return SN2Lard, "a pig fat (palmitoleic, stearic and palmitic acids of an animal fat, at least 5 mol % linoleic acid)"
	case ClassTallow:
		return SN2Tallow, "a ruminant fat (palmitoleic, stearic and palmitic acids of an animal fat, under 5 mol % linoleic acid)"
	case ClassMilkFat:
		return SN2MilkFat, "a milk fat (butyric and caproic acids present)"
	case ClassHardened:
		return SN2Hardened, "a hardened oil (trans or stearic acid as hardening leaves them)"
	case ClassCocoaButterType:
		return SN2SeedOil, "a cocoa-butter-type fat, whose sn-2 position holds the unsaturated acids"
	}
	return SN2SeedOil, "a seed oil (no other class claims the profile)"
}
