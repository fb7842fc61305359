package melting

import (
	"fmt"

	"lipidsvc/chem"
)

// calibrationSolvesPerFit bounds the SFC evaluations one fit makes per
// measurement: the 0.25 K scan over ±MaxCalibrationShiftK (121 shifts),
// the golden-section refinement to 1e-6 K (about 30) and the error
// summaries before and after (a few).
const calibrationSolvesPerFit = 160

// MaxCalibrationWork caps the work of one calibration, in component-solves
// (one equilibrium solution of one fat times its number of components).
// A component-solve takes about 8 to 40 ns on a server core depending on
// the solid model, so the cap is 2 to 8 seconds, inside the request time
// limit.
const MaxCalibrationWork = 2e8

// CalibrationWork is the most work CalibrateFats may do for the library,
// in component-solves: calibrationSolvesPerFit × F × Σ_i n_i·(P_i + s_i)
// for F fats with n_i components, P_i SFC points and s_i = 1 for a
// measured slip melting point (the fit on all fats and, for F ≥ 2, the F
// leave-one-out fits, each on all fats but one, together see every
// measurement F times). The scan and the refinement are fixed, so the bound
// holds for SFC data; a library with only slip melting points usually takes
// well under it (the slip search takes 10 to 20 steps), and any calibration
// also stops when its context ends.
func CalibrationWork(fats []LibraryFat) float64 {
	var w float64
	for _, lf := range fats {
		m := lf.Measurements
		per := float64(len(m.SFC))
		if m.HasSlipMeltingPoint {
			per++
		}
		w += float64(lf.Fat.mixture.Len()) * per
	}
	return calibrationSolvesPerFit * float64(max(1, len(fats))) * w
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
