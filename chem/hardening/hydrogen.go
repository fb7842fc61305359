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

// CubicFootM3 is one cubic foot in cubic metres, (0.3048 m)^3 exactly
// (international foot, 1959). A "standard cubic foot" is one cubic foot of
// gas at the [GasRef60F14696psia] state.
const CubicFootM3 = 0.3048 * 0.3048 * 0.3048

// Defaults used by [NewHydrogenRequest]. Each is a starting point for
// planning; a plant with its own figures overrides them.
const (
	// DefaultReactionEnthalpyKJPerMol is the heat of hydrogenation per mole of
	// C=C saturated, kJ/mol (negative: the reaction releases heat). It is the
	// middle of the range −105 to −125 kJ/mol [memory, not re-verified];
	// calorimetry of unsaturated triacylglycerols (Rogers and co-workers,
	// J. Chem. Soc. Faraday Trans. 1 74:2868, 1978) shows the heat nearly
	// constant per double bond, which is what lets one figure per mole of
	// H2 serve for any oil. The ±10 kJ/mol spread carries into the heat and
	// the temperature rise as about ±9 %.
	DefaultReactionEnthalpyKJPerMol = -115.0

	// DefaultHeatCapacityInterceptJPerGK and DefaultHeatCapacitySlopeJPerGK2
	// give the liquid-oil heat capacity cp(T) = 1.327 + 0.002529·T[K] J/(g·K),
	// the linear fit for liquid trielaidin over 320–360 K [pub: "Investigation
	// of the thermal behavior of trielaidin between 10 K and 360 K", adiabatic
	// calorimetry]. Why this model: liquid triacylglycerols of similar chain
	// length differ little in cp per gram, and cp of a liquid oil rises almost
	// linearly with temperature. The fit is extrapolated to hardening
	// temperatures, but the extrapolation matches the general trend for
	// liquid oils of about 2.0 kJ/(kg·K) near 25 °C and 2.5 at 180–200 °C
	// [memory]: it gives 2.08 at 25 °C and 2.47–2.52 at 180–200 °C. A line
	// through those two trend points instead would change a typical
	// adiabatic rise by well under 1 % (0.4 % for IV 133 → 70 from 150 °C).
	// Adiabatic end temperatures can pass 250 °C, further still from the
	// fitted range; the answer there is an estimate of what would happen
	// with no cooling, not an operating temperature.
	DefaultHeatCapacityInterceptJPerGK = 1.327
	// DefaultHeatCapacitySlopeJPerGK2: see DefaultHeatCapacityInterceptJPerGK.
	DefaultHeatCapacitySlopeJPerGK2 = 0.002529

	// DefaultPurity is the hydrogen mole fraction of the supplied gas: 1, so
	// gross supply equals chemical demand unless the caller says otherwise.
	DefaultPurity = 1.0

	// DefaultLossFraction is the allowance for purge and dissolution losses:
	// 0, for the same reason. Plants set their own figure.
	DefaultLossFraction = 0.0

	// DefaultIodineValueBasis: a final iodine value is read on the feed basis
	// unless the caller says it was (or will be) measured on the product.
	DefaultIodineValueBasis = FeedBasis

	// DefaultGasReferenceKind: volumes are stated at 0 °C and 101.325 kPa.
	DefaultGasReferenceKind = GasRef0C1atm
)

// MinHeatCapacityJPerGK is the smallest heat capacity, J/(g·K), the heat
// model accepts at the start temperature. Liquid oils lie near 2; a model
// giving less than a quarter of that is a mistake in the inputs, and near
// zero it would turn any heat into an absurd temperature.
const MinHeatCapacityJPerGK = 0.5

// The trade's rule of thumb of 1.6–1.7 °C of temperature rise per iodine-value
// unit (common practice, no source) corresponds, with the default enthalpy, to
// cp ≈ 2.7 kJ/(kg·K), or with cp ≈ 2.5 to |ΔH| ≈ 105 kJ/mol. It is not used by
// this package and is not a test oracle.

// ---------------------------------------------------------------------------
// Gas reference states

// GasReferenceKind names a temperature and pressure at which a gas volume is
// stated. The zero value is [GasRef0C1atm].
type GasReferenceKind int

const (
	// GasRef0C1atm is 0 °C and 101.325 kPa (one standard atmosphere), the
	// "normal" state of the normal cubic metre (DIN 1343 [memory]).
	GasRef0C1atm GasReferenceKind = iota
	// GasRef0C100kPa is 0 °C and 100 kPa, IUPAC standard temperature and
	// pressure since 1982 [memory].
	GasRef0C100kPa
	// GasRef15C1atm is 15 °C and 101.325 kPa, the standard reference
	// conditions of ISO 13443 for natural gas [memory].
	GasRef15C1atm
	// GasRef20C1atm is 20 °C and 101.325 kPa.
	GasRef20C1atm
	// GasRef60F14696psia is 60 °F and 14.696 psia, the state of the US
	// standard cubic foot; see [CubicFootM3].
	GasRef60F14696psia
	// GasRefCustom is a caller-chosen temperature and pressure; build it with
	// [CustomGasReference].
	GasRefCustom
)

// String returns a stable token for logs and tests.
func (k GasReferenceKind) String() string {
	switch k {
	case GasRef0C1atm:
		return "0C_101.325kPa"
	case GasRef0C100kPa:
		return "0C_100kPa"
	case GasRef15C1atm:
		return "15C_101.325kPa"
	case GasRef20C1atm:
		return "20C_101.325kPa"
	case GasRef60F14696psia:
		return "60F_14.696psia"
	case GasRefCustom:
		return "custom"
	default:
		return fmt.Sprintf("GasReferenceKind(%d)", int(k))
	}
}

// Unit conversions for the named states, exact by definition.
const (
	standardAtmospherePa = 101325.0
	// psiPa is one pound-force per square inch: 0.45359237 kg × 9.80665 m/s²
	// over (0.0254 m)^2 (international pound and inch, standard gravity).
	psiPa = 0.45359237 * 9.80665 / (0.0254 * 0.0254)
	// sixtyFahrenheitK is 60 °F = (60 − 32) × 5/9 °C.
	sixtyFahrenheitK = (60.0-32.0)*5.0/9.0 + zeroCelsiusK
)

// GasReference is a temperature and pressure at which gas volumes are
// stated. The zero value is the 0 °C, 101.325 kPa state. Build other states
// with [StandardGasReference] or [CustomGasReference]; a GasReference obtained
// from either is always valid.
type GasReference struct {
	kind         GasReferenceKind
	temperatureK float64 // used only by GasRefCustom
	pressurePa   float64 // used only by GasRefCustom
}

// StandardGasReference returns the named reference state kind. It rejects
// [GasRefCustom] (which needs a temperature and pressure) and unknown kinds;
// the error's field path is ["kind"], relative to the reference.
func StandardGasReference(kind GasReferenceKind) (GasReference, error) {
	if kind < GasRef0C1atm || kind >= GasRefCustom {
		return GasReference{}, chem.Errorf(chem.KindInvalid, "unknown gas reference state %d", int(kind)).
			WithField("must be one of the named reference states; a custom state needs its temperature and pressure", "kind")
	}
	return GasReference{kind: kind}, nil
}

// CustomGasReference returns a reference state at temperatureK (kelvin) and
// pressurePa (pascal). Both must be finite and above zero. Field paths in the
// error are ["temperature_k"] and ["pressure_pa"], relative to the reference;
// a caller that embeds the reference under a field prefixes them
// (chem.Error.Prefix).
func CustomGasReference(temperatureK, pressurePa float64) (GasReference, error) {
	var errs fieldErrors
	if !isFinite(temperatureK) || temperatureK <= 0 {
		errs.invalid("must be a finite absolute temperature above 0 K", "temperature_k")
	}
	if !isFinite(pressurePa) || pressurePa <= 0 {
		errs.invalid("must be a finite pressure above 0 Pa", "pressure_pa")
	}
	if err := errs.err("custom gas reference state"); err != nil {
		return GasReference{}, err
	}
	return GasReference{kind: GasRefCustom, temperatureK: temperatureK, pressurePa: pressurePa}, nil
}

// Kind reports which reference state r is.
func (r GasReference) Kind() GasReferenceKind { return r.kind }

// TemperatureK returns the reference temperature in kelvin.
func (r GasReference) TemperatureK() float64 {
	switch r.kind {
	case GasRef0C1atm, GasRef0C100kPa:
		return zeroCelsiusK
	case GasRef15C1atm:
		return zeroCelsiusK + 15
	case GasRef20C1atm:
		return zeroCelsiusK + 20
	case GasRef60F14696psia:
		return sixtyFahrenheitK
	default:
		return r.temperatureK
	}
}

// PressurePa returns the reference pressure in pascal.
func (r GasReference) PressurePa() float64 {
	switch r.kind {
	case GasRef0C1atm, GasRef15C1atm, GasRef20C1atm:
		return standardAtmospherePa
	case GasRef0C100kPa:
		return 100e3
	case GasRef60F14696psia:
		return 14.696 * psiPa
	default:
		return r.pressurePa
	}
}

// MolarVolumeM3PerMol returns the ideal-gas molar volume RT/p at r, m³/mol.
// For hydrogen near room temperature and atmospheric pressure the real-gas
// correction (compressibility factor ≈ 1.0006 [memory]) is below the
// precision of the inputs.
func (r GasReference) MolarVolumeM3PerMol() float64 {
	return chem.GasConstant * r.TemperatureK() / r.PressurePa()
}

func (r GasReference) valid() bool {
	if r.kind == GasRefCustom {
		return isFinite(r.temperatureK) && r.temperatureK > 0 && isFinite(r.pressurePa) && r.pressurePa > 0
	}
	return r.kind >= GasRef0C1atm && r.kind < GasRefCustom
}

// ---------------------------------------------------------------------------
// Iodine-value conventions and targets

// IodineValueBasis says per what mass a final iodine value is stated. The
// zero value is [FeedBasis].
type IodineValueBasis int

const (
	// FeedBasis states the final iodine value per 100 g of the original feed:
	// the hydrogen demand is then exactly (IV_feed − IV_final) ×
	// HydrogenMolPerTonnePerIodineValue.
	FeedBasis IodineValueBasis = iota
	// ProductBasis states the final iodine value per 100 g of the hardened
	// product, which is heavier than the feed by the hydrogen it took up; it
	// is what a laboratory measures on a sample of the product. With n mol H2
	// taken up per gram of feed,
	//   IV_final = 100·M(I2)·(IV_feed/(100·M(I2)) − n) / (1 + M(H2)·n),
	// so n = (IV_feed − IV_final) / (100·M(I2) + M(H2)·IV_final), slightly
	// less than on the feed basis.
	ProductBasis
)

// String returns "feed" or "product".
func (b IodineValueBasis) String() string {
	switch b {
	case FeedBasis:
		return "feed"
	case ProductBasis:
		return "product"
	default:
		return fmt.Sprintf("IodineValueBasis(%d)", int(b))
	}
}

// TargetKind says how a hardening target is given.
type TargetKind int

const (
	// TargetFinalIodineValue: Target.Value is the final iodine value.
	TargetFinalIodineValue TargetKind = iota + 1
	// TargetIodineValueDrop: Target.Value is the drop in iodine value; the
	// final iodine value is the feed's minus the drop, read on the request's
	// basis like any final iodine value.
	TargetIodineValueDrop
)

// Target is where hardening should stop. Build one with [FinalIodineValue] or
// [IodineValueDrop]; the zero value has no kind and is rejected.
type Target struct {
	Kind TargetKind
	// Value is the final iodine value or the drop, g I2 per 100 g.
	Value float64
}

// FinalIodineValue returns a target of a final iodine value iv.
func FinalIodineValue(iv float64) Target {
	return Target{Kind: TargetFinalIodineValue, Value: iv}
}

// IodineValueDrop returns a target of lowering the iodine value by drop.
func IodineValueDrop(drop float64) Target {
	return Target{Kind: TargetIodineValueDrop, Value: drop}
}

// ---------------------------------------------------------------------------
// Heat capacity

// HeatCapacity is a linear model of the specific heat capacity of the liquid
// oil, cp(T) = InterceptJPerGK + SlopeJPerGK2·T with T in kelvin and cp in
// J/(g·K), which is the same number as kJ/(kg·K). A zero slope gives a
// constant heat capacity. See [DefaultHeatCapacity] for the default and why.
type HeatCapacity struct {
	InterceptJPerGK float64
	SlopeJPerGK2    float64
}

// DefaultHeatCapacity returns the default liquid-oil heat capacity model,
// built from DefaultHeatCapacityInterceptJPerGK and
// DefaultHeatCapacitySlopeJPerGK2.
func DefaultHeatCapacity() HeatCapacity {
	return HeatCapacity{
		InterceptJPerGK: DefaultHeatCapacityInterceptJPerGK,
		SlopeJPerGK2:    DefaultHeatCapacitySlopeJPerGK2,
	}
}

// At returns cp at temperatureK, J/(g·K).
func (c HeatCapacity) At(temperatureK float64) float64 {
	return c.InterceptJPerGK + c.SlopeJPerGK2*temperatureK
}

// FinalTemperatureK returns the temperature T at which the oil, starting at
// startK and heated by heatJPerG (J per g of oil, i.e. kJ/kg), ends up:
// the exact root of ∫ cp dT from startK to T = heatJPerG. For the linear model
// that integral is quadratic in T, with the closed form
//
//	T − startK = 2q / (cp(startK) + √(cp(startK)² + 2·b·q)),
//
// written this way so that it stays accurate as the slope b goes to zero
// (where it becomes q / cp). ok is false when cp is not positive at startK or
// would fall to zero before the heat is absorbed (only possible with a
// negative slope, or a negative heat).
func (c HeatCapacity) FinalTemperatureK(startK, heatJPerG float64) (temperatureK float64, ok bool) {
	cpStart := c.At(startK)
	if !(cpStart > 0) {
		return math.NaN(), false
	}
	disc := cpStart*cpStart + 2*c.SlopeJPerGK2*heatJPerG
	if !(disc > 0) {
		return math.NaN(), false
	}
	return startK + 2*heatJPerG/(cpStart+math.Sqrt(disc)), true
}

// ---------------------------------------------------------------------------
// Request

// GasSupply describes the hydrogen gas a plant feeds.
type GasSupply struct {
	// Reference is the state at which volumes are stated.
	// Field path: "gas", "reference".
	Reference GasReference
	// Purity is the mole fraction of H2 in the supplied gas, in (0, 1]
	// (for an ideal gas it equals the volume fraction; an adapter that takes
	// percent divides by 100). Field path: "gas", "purity".
	Purity float64
	// LossFraction is the hydrogen lost to purge and dissolution, as a
	// fraction of the chemical demand added on top of it, in [0, 1].
	// Field path: "gas", "loss_fraction".
	LossFraction float64
}

// HeatModel holds the thermal parameters.
type HeatModel struct {
	// ReactionEnthalpyKJPerMol is the heat of hydrogenation per mole of C=C,
	// kJ/mol, negative (exothermic). Field path: "heat",
	// "reaction_enthalpy_kj_per_mol".
	ReactionEnthalpyKJPerMol float64
	// HeatCapacity is the liquid-oil cp model. Field paths: "heat",
	// "heat_capacity", "intercept_j_per_g_k" / "slope_j_per_g_k2", or
	// "heat", "heat_capacity" for a model that is not positive over the
	// temperature range.
	HeatCapacity HeatCapacity
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
			Reference:    GasReference{kind: DefaultGasReferenceKind},
			Purity:       DefaultPurity,
			LossFraction: DefaultLossFraction,
		},
		Heat: HeatModel{
			ReactionEnthalpyKJPerMol: DefaultReactionEnthalpyKJPerMol,
			HeatCapacity:             DefaultHeatCapacity(),
		},
		StartTemperatureC: startTemperatureC,
	}
}

// ---------------------------------------------------------------------------
// Result

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
	// IV/253.81 × 2.016 g per 100 g, first principles, DOMAIN §7), the heat needed to warm the incoming hydrogen and the heat
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

// ---------------------------------------------------------------------------
// Calculation

// HydrogenDemand computes the hydrogen a hardening batch needs and the heat it
// releases. The demand is pure stoichiometry (one H2 per C=C, counted by the
// iodine value); volumes use the ideal-gas law with chem.GasConstant. It
// returns a *chem.Error of kind chem.KindInvalid for malformed numbers
// (NaN, ±Inf, negative iodine values, non-positive mass, purity outside
// (0, 1], …) and of kind chem.KindOutOfDomain for a request that is well
// formed but impossible (a target above the feed, a drop larger than the
// feed iodine value, nothing to harden, a heat-capacity model that is not
// positive); all problems found are reported together.
func HydrogenDemand(req HydrogenRequest) (HydrogenResult, error) {
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
	grossMol := head.HydrogenMolPerTonne * (1 + req.Gas.LossFraction)
	gross := supply(grossMol, req.Gas.Purity, molarVolume)

	heatKJPerTonne := head.HydrogenMolPerTonne * -req.Heat.ReactionEnthalpyKJPerMol
	startK := req.StartTemperatureC + zeroCelsiusK
	cp := req.Heat.HeatCapacity
	// kJ per tonne / 1000 = kJ per kg = J per g, the unit of cp.
	finalK, ok := cp.FinalTemperatureK(startK, heatKJPerTonne/1000)
	if !ok {
		return HydrogenResult{}, chem.Errorf(chem.KindOutOfDomain,
			"the heat-capacity model falls to zero before the heat of reaction is absorbed").
			WithField("heat capacity must stay positive from the start temperature to the adiabatic final temperature",
				"heat", "heat_capacity")
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
	var errs fieldErrors

	feedOK := isFinite(req.FeedIodineValue) && req.FeedIodineValue >= 0
	if !feedOK {
		errs.invalid("must be a finite iodine value of at least 0", "feed", "iodine_value")
	}

	finalIV := math.NaN()
	switch req.Target.Kind {
	case TargetFinalIodineValue:
		v := req.Target.Value
		switch {
		case !isFinite(v) || v < 0:
			errs.invalid("must be a finite iodine value of at least 0", "target", "iodine_value")
		case !feedOK:
		case v > req.FeedIodineValue:
			errs.outOfDomain(fmt.Sprintf("target iodine value %g is above the feed iodine value %g; hardening only lowers it",
				v, req.FeedIodineValue), "target", "iodine_value")
		case v == req.FeedIodineValue:
			errs.outOfDomain("target iodine value equals the feed iodine value: nothing to harden", "target", "iodine_value")
		default:
			finalIV = v
		}
	case TargetIodineValueDrop:
		v := req.Target.Value
		switch {
		case !isFinite(v) || v < 0:
			errs.invalid("must be a finite iodine-value drop of at least 0", "target", "iodine_value_drop")
		case v == 0:
			errs.outOfDomain("an iodine-value drop of 0 leaves nothing to harden", "target", "iodine_value_drop")
		case !feedOK:
		case v > req.FeedIodineValue:
			errs.outOfDomain(fmt.Sprintf("iodine-value drop %g is larger than the feed iodine value %g",
				v, req.FeedIodineValue), "target", "iodine_value_drop")
		default:
			finalIV = req.FeedIodineValue - v
		}
	default:
		errs.invalid("must be a final iodine value or an iodine-value drop", "target", "kind")
	}

	if req.Basis != FeedBasis && req.Basis != ProductBasis {
		errs.invalid("must be the feed or the product basis", "iodine_value_basis")
	}
	if !isFinite(req.BatchMassKg) || req.BatchMassKg <= 0 {
		errs.invalid("must be a finite mass above 0 kg", "batch_mass_kg")
	}

	if !req.Gas.Reference.valid() {
		errs.invalid("must be a named reference state or a custom one with positive temperature and pressure",
			"gas", "reference")
	}
	if !isFinite(req.Gas.Purity) || req.Gas.Purity <= 0 || req.Gas.Purity > 1 {
		errs.invalid("must be a mole fraction above 0 and at most 1", "gas", "purity")
	}
	if !isFinite(req.Gas.LossFraction) || req.Gas.LossFraction < 0 || req.Gas.LossFraction > 1 {
		errs.invalid("must be a fraction of the chemical demand from 0 to 1", "gas", "loss_fraction")
	}

	if !isFinite(req.Heat.ReactionEnthalpyKJPerMol) || req.Heat.ReactionEnthalpyKJPerMol >= 0 {
		errs.invalid("must be a finite negative enthalpy in kJ per mol C=C (hydrogenation releases heat)",
			"heat", "reaction_enthalpy_kj_per_mol")
	}
	cp := req.Heat.HeatCapacity
	cpOK := true
	if !isFinite(cp.InterceptJPerGK) {
		errs.invalid("must be a finite number", "heat", "heat_capacity", "intercept_j_per_g_k")
		cpOK = false
	}
	if !isFinite(cp.SlopeJPerGK2) {
		errs.invalid("must be a finite number", "heat", "heat_capacity", "slope_j_per_g_k2")
		cpOK = false
	}

	startK := req.StartTemperatureC + zeroCelsiusK
	if !isFinite(req.StartTemperatureC) || !(startK > 0) {
		errs.invalid("must be a finite temperature above absolute zero (−273.15 °C)", "start_temperature_c")
	} else if cpOK && !(cp.At(startK) >= MinHeatCapacityJPerGK) {
		errs.outOfDomain(fmt.Sprintf("heat capacity must be at least %g kJ/(kg·K) at the start temperature", MinHeatCapacityJPerGK),
			"heat", "heat_capacity")
	}

	if err := errs.err("hydrogen demand request"); err != nil {
		return 0, err
	}
	return finalIV, nil
}

// fieldErrors gathers field problems so that one answer lists them all.
type fieldErrors struct {
	fields     []chem.FieldError
	anyInvalid bool
}

func (e *fieldErrors) invalid(reason string, path ...any) {
	e.anyInvalid = true
	e.fields = append(e.fields, chem.FieldError{Path: path, Reason: reason})
}

func (e *fieldErrors) outOfDomain(reason string, path ...any) {
	e.fields = append(e.fields, chem.FieldError{Path: path, Reason: reason})
}

// err returns nil when nothing was found, else one *chem.Error: KindInvalid
// if any field is malformed, otherwise KindOutOfDomain.
func (e *fieldErrors) err(what string) error {
	if len(e.fields) == 0 {
		return nil
	}
	kind, state := chem.KindOutOfDomain, "asks for something outside the model"
	if e.anyInvalid {
		kind, state = chem.KindInvalid, "is invalid"
	}
	msg := fmt.Sprintf("%s %s", what, state)
	if len(e.fields) > 1 {
		msg = fmt.Sprintf("%s (%d problems)", msg, len(e.fields))
	}
	out := chem.Errorf(kind, "%s", msg)
	for _, f := range e.fields {
		out = out.WithField(f.Reason, f.Path...)
	}
	return out
}

func isFinite(v float64) bool { return !math.IsNaN(v) && !math.IsInf(v, 0) }
