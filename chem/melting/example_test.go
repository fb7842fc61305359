package melting_test

import (
	"context"
	"fmt"
	"math"

	"lipidsvc/chem"
	"lipidsvc/chem/melting"
)

var palm = &chem.ProfileInput{Acids: []chem.Entry{
	{Acid: "12:0", Percent: 0.2}, {Acid: "14:0", Percent: 1.0}, {Acid: "16:0", Percent: 44.0},
	{Acid: "16:1 c9", Percent: 0.2}, {Acid: "18:0", Percent: 4.5}, {Acid: "18:1 c9", Percent: 39.2},
	{Acid: "18:2 c9,c12", Percent: 10.1}, {Acid: "18:3 c9,c12,c15", Percent: 0.3}, {Acid: "20:0", Percent: 0.4},
	{Acid: "20:1 c11", Percent: 0.1},
}}

// The melting behaviour of a palm oil with the palm sn-2 rule.
func ExampleMelt() {
	ans, err := melting.Melt(chem.NewCatalogue(), melting.MeltingInput{
		Profile:    palm,
		ModelInput: melting.ModelInput{Sn2Estimate: "palm_rule"},
	})
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Printf("slip melting point %.1f °C, clear point %.1f °C, SFC at 37 °C %.1f %%\n",
		ans.SlipMeltingPointC, ans.ClearPointC, ans.SFCAt37CPercent)
	fmt.Printf("largest species %s (%.1f mol %%)\n", ans.MainSpecies[0].ShortName, ans.MainSpecies[0].MolePercent)
	// Output:
	// slip melting point 35.1 °C, clear point 39.1 °C, SFC at 37 °C 1.8 %
	// largest species POP (27.3 mol %)
}

// A plant's measured slip melting point calibrates the model for its fat.
func ExampleCalibrate() {
	slip := 36.0
	rep, err := melting.Calibrate(context.Background(), chem.NewCatalogue(), melting.CalibrationInput{
		CalibrationFat: melting.CalibrationFat{
			Profile:     palm,
			Sn2Estimate: "palm_rule",
			Measured:    &melting.MeasuredInput{SlipMeltingPointC: &slip},
		},
	})
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Printf("shift %+.2f K; slip error %.2f K before, %.2f K after\n",
		rep.Calibration.TemperatureShiftK, hundredths(rep.Before.SlipErrorK), hundredths(rep.After.SlipErrorK))
	// Output:
	// shift +1.06 K; slip error -0.93 K before, 0.00 K after
}

// hundredths rounds to 0.01 without a negative zero.
func hundredths(x float64) float64 { return math.Round(x*100)/100 + 0 }
