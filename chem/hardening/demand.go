package hardening

import (
	"fmt"
	"math"

	"lipidsvc/chem"
)

// Stoichiometry of the iodine value.
const (
	// iodineValuePerMolPerGram converts mol C=C per gram of sample into an
	// iodine value (g I2 per 100 g): each C=C binds one I2.
	iodineValuePerMolPerGram = 100 * chem.MolarMassI2

	// gramsPerTonne is the mass of one tonne, g.
	gramsPerTonne = 1e6

	// kJPerKWh converts energy: 1 kWh = 3600 kJ (exact).
	kJPerKWh = 3600.0

	// zeroCelsiusK is 0 °C in kelvin.
	zeroCelsiusK = chem.ZeroCelsiusK
)

// HydrogenMolPerTonnePerIodineValue is the amount of C=C double bonds, and so
// of H2 needed to saturate them, that one iodine-value unit stands for in one
// tonne of oil: 10^6 g / (100 g × M(I2)) ≈ 39.3997 mol. It is exact on the
// feed basis; on the product basis see [ProductBasis].
const HydrogenMolPerTonnePerIodineValue = gramsPerTonne / iodineValuePerMolPerGram

// Defaults of the gas supply used by [NewHydrogenRequest].
const (
	// DefaultPurityPercent is the hydrogen content of the supplied gas, mol %:
	// 100, so gross supply equals chemical demand unless the caller says
	// otherwise.
	DefaultPurityPercent = 100.0

	// DefaultLossPercent is the allowance for purge and dissolution losses,
	// % of the chemical demand: 0, for the same reason. Plants set their own
	// figure.
	DefaultLossPercent = 0.0
)

// GasSupply describes the hydrogen gas a plant feeds.
type GasSupply struct {
	// Reference is the state at which volumes are stated.
	// Field path: "gas", "reference".
	Reference GasReference
	// PurityPercent is the H2 content of the supplied gas, mol % in
	// (0, 100] (for an ideal gas it equals the volume %). Field path: "gas",
	// "purity_percent".
	PurityPercent float64
	// LossPercent is the hydrogen lost to purge and dissolution, as % of
	// the chemical demand added on top of it, in [0, 100]. Field path:
	// "gas", "loss_percent".
	LossPercent float64
}

// HydrogenRequest is the input of [HydrogenDemand]. Build it with
// [NewHydrogenRequest], which fills the defaults, then set what the caller
// knows. Every field is checked; an error names the offending fields with the
// paths given below, in the API's vocabulary.
type HydrogenRequest struct {
	// FeedIodineValue is the iodine value of the feed oil, g I2/100 g, ≥ 0.
	// A caller holding a fatty-acid profile computes it first.
	// Field path: "feed", "iodine_value".
	FeedIodineValue float64
	// Target is where hardening stops. Field paths: "target", "iodine_value"
	// (final iodine value), "target", "iodine_value_drop" (drop), "target",
	// "kind" (unknown kind).
	Target Target
	// Basis is the convention of the final iodine value, which the headline
	// figures use; the result carries both. Field path: "iodine_value_basis".
	Basis IodineValueBasis
	// BatchMassKg is the mass of feed oil in one batch, kg, > 0.
	// Field path: "batch_mass_kg".
	BatchMassKg float64
	// Gas is the hydrogen supply. Field paths under "gas".
	Gas GasSupply
	// Heat is the thermal model. Field paths under "heat".
	Heat HeatModel
	// StartTemperatureC is the oil temperature when hydrogen is admitted,
	// °C, above absolute zero. Field path: "start_temperature_c".
	StartTemperatureC float64
}

// NewHydrogenRequest returns a request for hardening a batch of batchMassKg
// of feed of iodine value feedIodineValue to target, starting at
// startTemperatureC, with every other field at its documented default:
// feed-basis iodine values, volumes at 0 °C and 101.325 kPa, pure hydrogen,
// no loss allowance, DefaultReactionEnthalpyKJPerMol and
// DefaultHeatCapacity. It does not validate; [HydrogenDemand] does.
func NewHydrogenRequest(feedIodineValue float64, target Target, batchMassKg, startTemperatureC float64) HydrogenRequest {
	return HydrogenRequest{
		FeedIodineValue: feedIodineValue,
		Target:          target,
		Basis:           DefaultIodineValueBasis,
		BatchMassKg:     batchMassKg,
		Gas: GasSupply{
			Reference:     GasReference{kind: DefaultGasReferenceKind},
			PurityPercent: DefaultPurityPercent,
			LossPercent:   DefaultLossPercent,
		},
		Heat: HeatModel{
			ReactionEnthalpyKJPerMol: DefaultReactionEnthalpyKJPerMol,
			HeatCapacity:             DefaultHeatCapacity(),
		},
		StartTemperatureC: startTemperatureC,
	}
}

// Saturation is what the target means under one iodine-value convention.
// Both final iodine values describe the same hardened product: one per
// 100 g of feed, one per 100 g of product.
type Saturation struct {
	// Basis is the convention the target's final iodine value was read in.
	Basis IodineValueBasis
	// FinalIodineValueFeedBasis is the final iodine value per 100 g of feed.
	FinalIodineValueFeedBasis float64
	// FinalIodineValueProductBasis is the final iodine value per 100 g of
	// product, as a laboratory would measure it.
	FinalIodineValueProductBasis float64
	// IodineValueDropFeedBasis is the feed iodine value minus
	// FinalIodineValueFeedBasis; it is proportional to the hydrogen taken up.
	IodineValueDropFeedBasis float64
	// HydrogenMolPerTonne is the chemical demand, mol H2 per tonne of feed.
	HydrogenMolPerTonne float64
	// HydrogenKgPerTonne is the chemical demand, kg H2 per tonne of feed.
	HydrogenKgPerTonne float64
	// ProductMassGainFraction is product mass / feed mass − 1.
	ProductMassGainFraction float64
}

// HydrogenAmount is an amount of pure H2.
type HydrogenAmount struct {
	Mol float64
	Kg  float64
	// VolumeM3 is the volume at the result's gas reference state.
	VolumeM3 float64
}

// HydrogenSupply is what the plant must feed: the chemical demand plus the
// loss allowance, as hydrogen, and that hydrogen as impure gas. The mass of
// the impure gas is not given, because it depends on what the impurities
// are.
type HydrogenSupply struct {
	// HydrogenMol and HydrogenKg count H2 only: chemical demand × (1 + loss).
	HydrogenMol float64
	HydrogenKg  float64
	// GasMol and GasVolumeM3 count the whole gas: HydrogenMol / purity, the
	// volume at the result's gas reference state.
	GasMol      float64
	GasVolumeM3 float64
}

// HeatRelease is the heat given off by the chemical demand (not by the gas
// lost) and the temperature rise it would cause with no cooling.
type HeatRelease struct {
	KJPerTonne  float64
	KJPerBatch  float64
	KWhPerTonne float64
	KWhPerBatch float64
	// AdiabaticRiseK is the temperature rise of the oil if no heat were
	// removed, from the cp model integrated from the start temperature. It
	// takes the heat capacity of the feed mass and neglects the mass gain
	// (on full saturation 1.06 % for an oil of IV 133, 1.5 % at IV 190:
	// IV/253.81 × 2.016 g per 100 g, first principles, the hardening package documentation), the heat needed to warm the incoming hydrogen and the heat
	// capacity of catalyst and vessel, all of which make a real rise smaller.
	AdiabaticRiseK float64
	// AdiabaticFinalTemperatureC is the start temperature plus AdiabaticRiseK.
	AdiabaticFinalTemperatureC float64
	// MeanRisePerIodineValueK is AdiabaticRiseK per feed-basis iodine-value
	// unit removed.
	MeanRisePerIodineValueK float64
	// HeatCapacityStartJPerGK and HeatCapacityEndJPerGK are cp at the start
	// and at the adiabatic final temperature, J/(g·K).
	HeatCapacityStartJPerGK float64
	HeatCapacityEndJPerGK   float64
}

// HydrogenResult is the answer of [HydrogenDemand]. All per-tonne figures are
// per tonne of feed. The chemical, gross and heat figures follow the
// headline convention.
type HydrogenResult struct {
	// HeadlineBasis names the convention of the headline figures (the
	// request's Basis).
	HeadlineBasis IodineValueBasis
	// FeedBasis and ProductBasis read the same target in each convention;
	// one of them is the headline, the other is there for comparison.
	FeedBasis    Saturation
	ProductBasis Saturation
	// Gas is the reference state of every volume.
	Gas GasReference
	// ChemicalPerTonne and ChemicalPerBatch are the hydrogen that reacts.
	ChemicalPerTonne HydrogenAmount
	ChemicalPerBatch HydrogenAmount
	// GrossPerTonne and GrossPerBatch are what must be supplied, after the
	// loss allowance and purity.
	GrossPerTonne HydrogenSupply
	GrossPerBatch HydrogenSupply
	// Heat is the heat of reaction of the chemical demand.
	Heat HeatRelease
}

// Headline returns the Saturation of the headline convention.
func (r HydrogenResult) Headline() Saturation {
	if r.HeadlineBasis == ProductBasis {
		return r.ProductBasis
	}
	return r.FeedBasis
}

// HydrogenDemand computes the hydrogen a hardening batch needs and the heat it
// releases. The demand is pure stoichiometry (one H2 per C=C, counted by the
// iodine value); volumes use the ideal-gas law with chem.GasConstant. It
// returns a *chem.Error of kind chem.KindInvalid for malformed numbers
// (NaN, ±Inf, negative iodine values, non-positive mass, purity outside
// (0, 1], …) and of kind chem.KindOutOfDomain for a request that is well
// formed but impossible (a target above the feed, a drop larger than the
// feed iodine value, nothing to harden, a heat-capacity model that is not
// positive); all problems found are reported together.
func HydrogenDemandOf(req HydrogenRequest) (HydrogenResult, error) {
	finalIV, err := req.validate()
	if err != nil {
		return HydrogenResult{}, err
	}

	feed := saturationFeedBasis(req.FeedIodineValue, finalIV)
	product := saturationProductBasis(req.FeedIodineValue, finalIV)
	head := feed
	if req.Basis == ProductBasis {
		head = product
	}

	molarVolume := req.Gas.Reference.MolarVolumeM3PerMol()
	tonnes := req.BatchMassKg / 1000

	chemical := amount(head.HydrogenMolPerTonne, molarVolume)
	grossMol := head.HydrogenMolPerTonne * (1 + req.Gas.LossPercent/100)
	gross := supply(grossMol, req.Gas.PurityPercent/100, molarVolume)

	heatKJPerTonne := head.HydrogenMolPerTonne * -req.Heat.ReactionEnthalpyKJPerMol
	startK := req.StartTemperatureC + zeroCelsiusK
	cp := req.Heat.HeatCapacity
	// kJ per tonne / 1000 = kJ per kg = J per g, the unit of cp.
	finalK, ok := cp.FinalTemperatureK(startK, heatKJPerTonne/1000)
	if !ok {
		return HydrogenResult{}, chem.Errorf(chem.KindOutOfDomain,
			"the heat-capacity model falls to zero before the heat of reaction is absorbed").
			WithField("heat capacity must stay positive from the start temperature to the adiabatic final temperature",
				"heat")
	}
	rise := finalK - startK

	res := HydrogenResult{
		HeadlineBasis:    req.Basis,
		FeedBasis:        feed,
		ProductBasis:     product,
		Gas:              req.Gas.Reference,
		ChemicalPerTonne: chemical,
		ChemicalPerBatch: chemical.scale(tonnes),
		GrossPerTonne:    gross,
		GrossPerBatch:    gross.scale(tonnes),
		Heat: HeatRelease{
			KJPerTonne:                 heatKJPerTonne,
			KJPerBatch:                 heatKJPerTonne * tonnes,
			KWhPerTonne:                heatKJPerTonne / kJPerKWh,
			KWhPerBatch:                heatKJPerTonne * tonnes / kJPerKWh,
			AdiabaticRiseK:             rise,
			AdiabaticFinalTemperatureC: finalK - zeroCelsiusK,
			MeanRisePerIodineValueK:    rise / head.IodineValueDropFeedBasis,
			HeatCapacityStartJPerGK:    cp.At(startK),
			HeatCapacityEndJPerGK:      cp.At(finalK),
		},
	}
	if !res.finite() {
		return HydrogenResult{}, chem.Errorf(chem.KindOutOfDomain,
			"the request leads to numbers too large to represent")
	}
	return res, nil
}

// saturationFeedBasis reads finalIV per 100 g of feed: n = ΔIV / (100·M(I2))
// mol H2 per g of feed.
func saturationFeedBasis(feedIV, finalIV float64) Saturation {
	n := (feedIV - finalIV) / iodineValuePerMolPerGram
	gain := chem.MolarMassH2 * n
	return Saturation{
		Basis:                        FeedBasis,
		FinalIodineValueFeedBasis:    finalIV,
		FinalIodineValueProductBasis: finalIV / (1 + gain),
		IodineValueDropFeedBasis:     feedIV - finalIV,
		HydrogenMolPerTonne:          n * gramsPerTonne,
		HydrogenKgPerTonne:           n * gramsPerTonne * chem.MolarMassH2 / 1000,
		ProductMassGainFraction:      gain,
	}
}

// saturationProductBasis reads finalIV per 100 g of product; see
// [ProductBasis] for the derivation of n.
func saturationProductBasis(feedIV, finalIV float64) Saturation {
	n := (feedIV - finalIV) / (iodineValuePerMolPerGram + chem.MolarMassH2*finalIV)
	gain := chem.MolarMassH2 * n
	drop := n * iodineValuePerMolPerGram
	return Saturation{
		Basis:                        ProductBasis,
		FinalIodineValueFeedBasis:    feedIV - drop,
		FinalIodineValueProductBasis: finalIV,
		IodineValueDropFeedBasis:     drop,
		HydrogenMolPerTonne:          n * gramsPerTonne,
		HydrogenKgPerTonne:           n * gramsPerTonne * chem.MolarMassH2 / 1000,
		ProductMassGainFraction:      gain,
	}
}

func amount(mol, molarVolume float64) HydrogenAmount {
	return HydrogenAmount{Mol: mol, Kg: mol * chem.MolarMassH2 / 1000, VolumeM3: mol * molarVolume}
}

func (a HydrogenAmount) scale(f float64) HydrogenAmount {
	return HydrogenAmount{Mol: a.Mol * f, Kg: a.Kg * f, VolumeM3: a.VolumeM3 * f}
}

func supply(hydrogenMol, purity, molarVolume float64) HydrogenSupply {
	gasMol := hydrogenMol / purity
	return HydrogenSupply{
		HydrogenMol: hydrogenMol,
		HydrogenKg:  hydrogenMol * chem.MolarMassH2 / 1000,
		GasMol:      gasMol,
		GasVolumeM3: gasMol * molarVolume,
	}
}

func (s HydrogenSupply) scale(f float64) HydrogenSupply {
	return HydrogenSupply{
		HydrogenMol: s.HydrogenMol * f,
		HydrogenKg:  s.HydrogenKg * f,
		GasMol:      s.GasMol * f,
		GasVolumeM3: s.GasVolumeM3 * f,
	}
}

func (r HydrogenResult) finite() bool {
	for _, v := range []float64{
		r.ChemicalPerBatch.VolumeM3, r.GrossPerBatch.GasVolumeM3, r.GrossPerBatch.HydrogenKg,
		r.Heat.KJPerBatch, r.Heat.AdiabaticFinalTemperatureC, r.Heat.MeanRisePerIodineValueK,
		r.FeedBasis.FinalIodineValueProductBasis, r.ProductBasis.FinalIodineValueFeedBasis,
	} {
		if !isFinite(v) {
			return false
		}
	}
	return true
}

// validate checks every field, gathers all problems into one *chem.Error and
// returns the final iodine value the target stands for (on the request's
// basis).
func (req HydrogenRequest) validate() (float64, error) {
	var errs chem.FieldErrors

	feedOK := isFinite(req.FeedIodineValue) && req.FeedIodineValue >= 0
	if !feedOK {
		errs.Invalid("must be a finite iodine value of at least 0", "feed", "iodine_value")
	}

	finalIV := math.NaN()
	switch req.Target.Kind {
	case TargetFinalIodineValue:
		v := req.Target.Value
		switch {
		case !isFinite(v) || v < 0:
			errs.Invalid("must be a finite iodine value of at least 0", "target", "iodine_value")
		case !feedOK:
		case v > req.FeedIodineValue:
			errs.OutOfDomain(fmt.Sprintf("target iodine value %g is above the feed iodine value %g; hardening only lowers it",
				v, req.FeedIodineValue), "target", "iodine_value")
		case v == req.FeedIodineValue:
			errs.OutOfDomain("target iodine value equals the feed iodine value: nothing to harden", "target", "iodine_value")
		default:
			finalIV = v
		}
	case TargetIodineValueDrop:
		v := req.Target.Value
		switch {
		case !isFinite(v) || v < 0:
			errs.Invalid("must be a finite iodine-value drop of at least 0", "target", "iodine_value_drop")
		case v == 0:
			errs.OutOfDomain("an iodine-value drop of 0 leaves nothing to harden", "target", "iodine_value_drop")
		case !feedOK:
		case v > req.FeedIodineValue:
			errs.OutOfDomain(fmt.Sprintf("iodine-value drop %g is larger than the feed iodine value %g",
				v, req.FeedIodineValue), "target", "iodine_value_drop")
		default:
			finalIV = req.FeedIodineValue - v
		}
	default:
		errs.Invalid("must be a final iodine value or an iodine-value drop", "target", "kind")
	}

	if req.Basis != FeedBasis && req.Basis != ProductBasis {
		errs.Invalid("must be the feed or the product basis", "iodine_value_basis")
	}
	if !isFinite(req.BatchMassKg) || req.BatchMassKg <= 0 {
		errs.Invalid("must be a finite mass above 0 kg", "batch_mass_kg")
	}

	if !req.Gas.Reference.valid() {
		errs.Invalid("must be a named reference state or a custom one with positive temperature and pressure",
			"gas", "reference")
	}
	if p := req.Gas.PurityPercent; !isFinite(p) || p <= 0 || p > 100 {
		errs.Invalid("must be a hydrogen content above 0 and at most 100 mol %", "gas", "purity_percent")
	}
	if l := req.Gas.LossPercent; !isFinite(l) || l < 0 || l > 100 {
		errs.Invalid("must be from 0 to 100 % of the chemical demand", "gas", "loss_percent")
	}

	if !isFinite(req.Heat.ReactionEnthalpyKJPerMol) || req.Heat.ReactionEnthalpyKJPerMol >= 0 {
		errs.Invalid("must be a finite negative enthalpy in kJ per mol C=C (hydrogenation releases heat)",
			"heat", "reaction_enthalpy_kj_per_mol")
	}
	cp := req.Heat.HeatCapacity
	cpOK := true
	if !isFinite(cp.InterceptJPerGK) {
		errs.Invalid("must be a finite number", "heat", "heat_capacity_intercept_kj_per_kg_k")
		cpOK = false
	}
	if !isFinite(cp.SlopeJPerGK2) {
		errs.Invalid("must be a finite number", "heat", "heat_capacity_slope_kj_per_kg_k2")
		cpOK = false
	}

	startK := req.StartTemperatureC + zeroCelsiusK
	if !isFinite(req.StartTemperatureC) || !(startK > 0) {
		errs.Invalid("must be a finite temperature above absolute zero (−273.15 °C)", "start_temperature_c")
	} else if cpOK && !(cp.At(startK) >= MinHeatCapacityJPerGK) {
		errs.OutOfDomain(fmt.Sprintf("heat capacity must be at least %g kJ/(kg·K) at the start temperature", MinHeatCapacityJPerGK),
			"heat")
	}

	if err := errs.Err("the hydrogen demand request has problems"); err != nil {
		return 0, err
	}
	return finalIV, nil
}

func isFinite(v float64) bool { return !math.IsNaN(v) && !math.IsInf(v, 0) }
