package melting

import (
	"fmt"
	"math"
	"slices"

	"lipidsvc/chem"
)

// DefaultSlipThresholdPercent is the solid fat content (mass %) at which the
// slip melting point is read. The trade places the slip melting point where
// the SFC falls to about 3–5 % [practice]; with the default model
// and polymorph 3 %, the low end of that range, gave the smallest mean error
// on the validation fats (testdata/melting/VALIDATION.md lists 3, 4 and 5 %
// for every model and polymorph). Calibrate a fat to fit its own threshold.
const DefaultSlipThresholdPercent = 3.0

// DefaultMainSpecies is how many TAG species a result lists by default.
const DefaultMainSpecies = 10

// Temperature limits of the package, °C: requested temperatures must lie in
// [MinTemperatureC, MaxTemperatureC]; the slip melting point is searched
// down to MinTemperatureC.
const (
	MinTemperatureC = -60.0
	MaxTemperatureC = 120.0
	// MaxTemperatures is the largest number of temperatures one request may
	// ask for.
	MaxTemperatures = 2000
)

// ReportingTemperaturesC are the temperatures at which SFC is customarily
// reported (AOCS Cd 16b-93 and trade specifications quote 10, 21.1, 26.7,
// 33.3 and 37.8 °C — 50, 70, 80, 92 and 100 °F — or 10, 20, 25, 30, 35,
// 40 °C); 37 °C is mouth temperature.
var reportingTemperaturesC = []float64{10, 20, 21.1, 25, 26.7, 30, 33.3, 35, 37, 40}

// ReportingTemperaturesC returns a copy of the customary reporting
// temperatures, °C: 10, 20, 21.1, 25, 26.7, 30, 33.3, 35, 37, 40.
func ReportingTemperaturesC() []float64 { return slices.Clone(reportingTemperaturesC) }

// DefaultTemperaturesC returns the default curve: 0–60 °C in 1 °C steps plus
// the customary reporting points, ascending.
func DefaultTemperaturesC() []float64 {
	t := make([]float64, 0, 64)
	for i := 0; i <= 60; i++ {
		t = append(t, float64(i))
	}
	t = append(t, reportingTemperaturesC...)
	slices.Sort(t)
	return slices.Compact(t)
}

// Calibration is a small correction fitted to one fat's measurements by
// [Calibrate] and accepted by [Melt]: every TAG melting point is raised by
// TemperatureShiftK (enthalpies unchanged), and the slip melting point is
// read at SlipThresholdPercent. The zero value is no correction.
type Calibration struct {
	// TemperatureShiftK, K, within ±MaxCalibrationShiftK. Field
	// "temperature_shift_k".
	TemperatureShiftK float64
	// SlipThresholdPercent, mass %; zero keeps Options.SlipThresholdPercent.
	// When set it wins over Options.SlipThresholdPercent. Field
	// "slip_threshold_percent".
	SlipThresholdPercent float64
}

// Options are the parameters of a melting calculation. The zero value of
// every field means its documented default, so Options{} is valid. Field
// names for error paths are given on each field (under "options" only where
// the caller nests them).
type Options struct {
	// Polymorph of all solids; zero means DefaultPolymorph (β′). Field
	// "polymorph".
	Polymorph Polymorph
	// SolidModel; zero means DefaultSolidModel. Field "solid_model".
	SolidModel SolidModel
	// Composition chooses the TAG distribution and pooling. Field
	// "composition".
	Composition CompositionOptions
	// TemperaturesC of the SFC curve; nil means DefaultTemperaturesC. At most
	// MaxTemperatures values in [MinTemperatureC, MaxTemperatureC]. The curve
	// is returned ascending without duplicates. Field "temperatures_c".
	TemperaturesC []float64
	// SlipThresholdPercent, mass % in (0, 50]; zero means
	// DefaultSlipThresholdPercent. Field "slip_threshold_percent".
	SlipThresholdPercent float64
	// Calibration from Calibrate; zero means none. Field "calibration".
	Calibration Calibration
	// MainSpecies is how many species the result lists; zero means
	// DefaultMainSpecies, at most 100. Field "main_species_count".
	MainSpecies int
	// MaxIterations caps iterative solvers; zero means
	// DefaultMaxIterations. Field "max_iterations".
	MaxIterations int
}

// MaxCalibrationShiftK bounds Calibration.TemperatureShiftK.
const MaxCalibrationShiftK = 15.0

// DefaultOptions returns the defaults written out.
func DefaultOptions() Options {
	return Options{}.withDefaults()
}

func (o Options) withDefaults() Options {
	if o.Polymorph == 0 {
		o.Polymorph = DefaultPolymorph
	}
	if o.SolidModel == 0 {
		o.SolidModel = DefaultSolidModel
	}
	if o.Composition.PoolFloorMoleFraction == 0 && o.SolidModel == SolidSolutionFamilies {
		o.Composition.PoolFloorMoleFraction = DefaultFamiliesPoolFloorMoleFraction
	}
	// In the eutectic model each species saturates on its own, so a pool
	// of many trace species crystallises where none of them would (one
	// seed oil's clear point moved from 14 to 20 °C with 0.5 % of its mass
	// pooled): that model keeps every species; its solver is a sort and
	// stays fast (about 7 ms for a 20-acid random curve).
	if o.SolidModel == MultiplePureSolids {
		o.Composition.NoPooling = true
	}
	o.Composition = o.Composition.withDefaults()
	if o.SlipThresholdPercent == 0 {
		o.SlipThresholdPercent = DefaultSlipThresholdPercent
	}
	if o.MainSpecies == 0 {
		o.MainSpecies = DefaultMainSpecies
	}
	if o.MaxIterations == 0 {
		o.MaxIterations = DefaultMaxIterations
	}
	return o
}

// validate checks options after defaults are filled.
func (o Options) validate() error {
	var bad chem.FieldErrors
	if !o.Polymorph.valid() {
		bad.Invalid("must be alpha, beta_prime or beta", "polymorph")
	}
	if o.SolidModel < MultiplePureSolids || o.SolidModel > SolidSolutionFamilies {
		bad.Invalid("must be multiple_pure_solids, ideal_solid_solution or solid_solution_families", "solid_model")
	}
	if o.Composition.Distribution != Positional && o.Composition.Distribution != FullRandom {
		bad.Invalid("must be sn13_random_sn2_random or full_random", "distribution")
	}
	if o.Composition.SN2 < SN2SeedOil || o.Composition.SN2 > SN2Automatic {
		bad.Invalid("must be automatic, seed_oil_rule, palm_rule, lauric_rule, lard_rule, tallow_rule, milk_fat_rule, hardened_rule, supplied or enrichment_factors", "sn2_estimate")
	}
	if f := o.Composition.PoolFloorMoleFraction; !(f > 0 && f <= 0.01) {
		bad.Invalid("must be > 0 and <= 0.01", "pool_floor_mole_fraction")
	}
	if len(o.TemperaturesC) > MaxTemperatures {
		bad.Invalid(fmt.Sprintf("at most %d temperatures", MaxTemperatures), "temperatures_c")
	}
	for i, t := range o.TemperaturesC {
		if !inTemperatureRange(t) {
			bad.Invalid(fmt.Sprintf("must be a number from %g to %g °C", MinTemperatureC, MaxTemperatureC), "temperatures_c", i)
		}
	}
	if t := o.SlipThresholdPercent; !(t > 0 && t <= 50) {
		bad.Invalid("must be > 0 and <= 50", "slip_threshold_percent")
	}
	if s := o.Calibration.TemperatureShiftK; !(math.Abs(s) <= MaxCalibrationShiftK) {
		bad.Invalid(fmt.Sprintf("must be within ±%g K", MaxCalibrationShiftK), "calibration", "temperature_shift_k")
	}
	if t := o.Calibration.SlipThresholdPercent; !(t >= 0 && t <= 50) {
		bad.Invalid("must be >= 0 and <= 50", "calibration", "slip_threshold_percent")
	}
	if o.MainSpecies < 0 || o.MainSpecies > 100 {
		bad.Invalid("must be from 0 to 100", "main_species_count")
	}
	if o.MaxIterations < 1 || o.MaxIterations > 100000 {
		bad.Invalid("must be from 1 to 100000", "max_iterations")
	}
	if err := bad.Err(""); err != nil {
		return err
	}
	return nil
}

// Validate checks the options, with their defaults filled, and returns a
// KindInvalid *chem.Error whose paths name the request fields ("polymorph",
// "distribution", "calibration", "temperature_shift_k", …), or nil.
func (o Options) Validate() error { return o.withDefaults().validate() }

// slipThreshold is the threshold in force: the calibration's if set.
func (o Options) slipThreshold() float64 {
	if o.Calibration.SlipThresholdPercent > 0 {
		return o.Calibration.SlipThresholdPercent
	}
	return o.SlipThresholdPercent
}
