package hardening

import "math"

// Defaults of the heat model. Each is a starting point for planning; a
// plant with its own figures overrides them.
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

// HeatModel holds the thermal parameters.
type HeatModel struct {
	// ReactionEnthalpyKJPerMol is the heat of hydrogenation per mole of C=C,
	// kJ/mol, negative (exothermic). Field path: "heat",
	// "reaction_enthalpy_kj_per_mol".
	ReactionEnthalpyKJPerMol float64
	// HeatCapacity is the liquid-oil cp model. Field paths: "heat",
	// "heat_capacity_intercept_kj_per_kg_k" / "heat_capacity_slope_kj_per_kg_k2",
	// or "heat" for a model that is not positive over the temperature range.
	HeatCapacity HeatCapacity
}
