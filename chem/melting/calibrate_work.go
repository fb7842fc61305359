package melting

import (
	"fmt"

	"lipidsvc/chem"
)

// Per-measurement solve counts behind CalibrationWork. An SFC point is
// solved once at each of the scan's scanShifts shifts (cached per fat and
// shared by all fits) and about refineSolvesPerFit times in each fit's
// golden-section refinement to 1e-6 K and error summaries. A slip melting
// point costs a slip-point search (tens of solves) in each error summary
// and, without SFC data, in each step of the slip fit's root search.
const (
	refineSolvesPerFit = 40
	slipSolvesFixed    = 160
	slipSolvesPerFit   = 80
)

// MaxCalibrationWork caps the work of one calibration, in component-solves
// (one equilibrium solution of one fat times its number of components).
// A component-solve takes about 8 to 40 ns on a server core depending on
// the solid model, so the cap is 2 to 8 seconds, inside the request time
// limit.
const MaxCalibrationWork = 2e8

// CalibrationWork is the most work CalibrateFats may do for the library,
// in component-solves: Σ_i n_i·(P_i·(scanShifts + refineSolvesPerFit·F) +
// s_i·(slipSolvesFixed + slipSolvesPerFit·F)) for F fats with n_i
// components, P_i SFC points and s_i = 1 for a measured slip melting
// point. F counts the fits: the fit on all fats and, for F ≥ 2, the F
// leave-one-out fits, each on all fats but one, together see every
// measurement F times. TestCalibrationWorkBound holds the counted work
// within it (and above half of it with SFC data) for every solid model;
// any calibration also stops when its context ends.
func CalibrationWork(fats []LibraryFat) float64 {
	f := float64(max(1, len(fats)))
	var w float64
	for _, lf := range fats {
		m := lf.Measurements
		per := float64(len(m.SFC)) * (float64(scanShifts) + refineSolvesPerFit*f)
		if m.HasSlipMeltingPoint {
			per += slipSolvesFixed + slipSolvesPerFit*f
		}
		w += float64(lf.Fat.mixture.Len()) * per
	}
	return w
}

// calibrationWorkCap refuses a calibration that could run past its share
// of the service before any work is done (KindWorkCap).
func calibrationWorkCap(fats []LibraryFat) error {
	w := CalibrationWork(fats)
	if w <= MaxCalibrationWork {
		return nil
	}
	var comps int
	for _, lf := range fats {
		comps += lf.Fat.mixture.Len()
	}
	err := chem.Errorf(chem.KindWorkCap,
		"the calibration may take %.3g component-solves (%d fats, %d mixture components in all, every measurement seen once per fit), more than the %.3g one request may do",
		w, len(fats), comps, float64(MaxCalibrationWork))
	if len(fats) > 1 {
		return err.WithField(fmt.Sprintf("calibrate on fewer fats or fewer SFC points per fat at a time (about %.0f %% of this work is allowed)",
			100*MaxCalibrationWork/w), "fats")
	}
	return err.WithField(fmt.Sprintf("give fewer SFC points (about %.0f %% of this work is allowed), or a solid model that pools species",
		100*MaxCalibrationWork/w), "measured", "sfc_points")
}
