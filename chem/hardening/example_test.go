package hardening_test

import (
	"context"
	"fmt"

	"lipidsvc/chem"
	"lipidsvc/chem/hardening"
)

func value(v float64) *float64 { return &v }

var soybean = &chem.ProfileInput{Acids: []chem.Entry{
	{Acid: "16:0", Percent: 10.5}, {Acid: "16:1 c9", Percent: 0.1}, {Acid: "18:0", Percent: 4.0},
	{Acid: "18:1 c9", Percent: 23.0}, {Acid: "18:2 c9,c12", Percent: 53.7}, {Acid: "18:3 c9,c12,c15", Percent: 7.6},
	{Acid: "20:0", Percent: 0.4}, {Acid: "20:1 c11", Percent: 0.3}, {Acid: "22:0", Percent: 0.4},
}}

// The worked case of the package documentation: a 25-tonne batch hardened
// from iodine value 133 to 70, the final value read on the feed basis.
func ExampleHydrogenDemand() {
	res, err := hardening.HydrogenDemand(chem.NewCatalogue(), hardening.HydrogenDemandInput{
		Feed:        &hardening.FeedInput{IodineValue: value(133)},
		Target:      &hardening.IodineValueTargetInput{IodineValue: value(70)},
		BatchMassKg: 25000,
	})
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Printf("%.1f mol, %.3f kg, %.2f m³ (0 °C, 101.325 kPa) of H2 per tonne\n",
		res.ChemicalPerTonne.Mol, res.ChemicalPerTonne.Kg, res.ChemicalPerTonne.VolumeM3)
	fmt.Printf("%.1f kg for the batch; read on the product basis %.3f kg per tonne\n",
		res.ChemicalPerBatch.Kg, res.ProductBasis.HydrogenKgPerTonne)
	// Output:
	// 2482.2 mol, 5.004 kg, 55.64 m³ (0 °C, 101.325 kPa) of H2 per tonne
	// 125.1 kg for the batch; read on the product basis 4.976 kg per tonne
}

// Soybean oil over the selective nickel preset to iodine value 70, where
// published data put the trans 18:1 peak (about 46 %).
func ExampleForecast() {
	res, err := hardening.Forecast(context.Background(), chem.NewCatalogue(), hardening.ForecastInput{
		Profile:  soybean,
		Target:   &hardening.ForecastTargetInput{IodineValue: value(70)},
		Catalyst: &hardening.CatalystInput{Preset: hardening.PresetNickelSelective},
	})
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Printf("feed IV %.2f, product IV %.2f, trans %.0f %%, saturated %.0f %%, %.2f kg H2 per tonne\n",
		res.FeedIodineValue, res.FinalIodineValue, res.TransPercent, res.SaturatedPercent, res.Hydrogen.HydrogenKgPerTonne)
	// Output:
	// feed IV 132.98, product IV 70.00, trans 46 %, saturated 20 %, 4.98 kg H2 per tonne
}
