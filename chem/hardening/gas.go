package hardening

import (
	"fmt"

	"lipidsvc/chem"
)

// DefaultGasReferenceKind: volumes are stated at 0 °C and 101.325 kPa.
const DefaultGasReferenceKind = GasRef0C1atm

// CubicFootM3 is one cubic foot in cubic metres, (0.3048 m)^3 exactly
// (international foot, 1959). A "standard cubic foot" is one cubic foot of
// gas at the [GasRef60F14696psia] state.
const CubicFootM3 = 0.3048 * 0.3048 * 0.3048

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

// gasReferenceNames are the contract's names of the reference states.
var gasReferenceNames = [...]string{
	GasRef0C1atm:       "0c_101.325kpa",
	GasRef0C100kPa:     "0c_100kpa",
	GasRef15C1atm:      "15c_101.325kpa",
	GasRef20C1atm:      "20c_101.325kpa",
	GasRef60F14696psia: "60f_14.696psia",
	GasRefCustom:       "custom",
}

// String returns the contract's name of the state ("0c_101.325kpa",
// "custom", …).
func (k GasReferenceKind) String() string {
	if k >= 0 && int(k) < len(gasReferenceNames) {
		return gasReferenceNames[k]
	}
	return fmt.Sprintf("GasReferenceKind(%d)", int(k))
}

// ParseGasReferenceKind reads a state by its contract name; "" is the
// default, [DefaultGasReferenceKind].
func ParseGasReferenceKind(s string) (GasReferenceKind, bool) {
	if s == "" {
		return DefaultGasReferenceKind, true
	}
	for k, n := range gasReferenceNames {
		if n == s {
			return GasReferenceKind(k), true
		}
	}
	return 0, false
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
	var errs chem.FieldErrors
	if !isFinite(temperatureK) || temperatureK <= 0 {
		errs.Invalid("must be a finite absolute temperature above 0 K", "temperature_k")
	}
	if !isFinite(pressurePa) || pressurePa <= 0 {
		errs.Invalid("must be a finite pressure above 0 Pa", "pressure_pa")
	}
	if err := errs.Err("the custom gas reference state has problems"); err != nil {
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
