package chem_test

import (
	"fmt"

	"lipidsvc/chem"
)

// The certificate values of the soy-like check vector, labelled as a GC
// export might label it.
func ExampleComputeProperties() {
	cat := chem.NewCatalogue()
	p, err := chem.ComputeProperties(cat, chem.PropertiesInput{Profile: &chem.ProfileInput{Acids: []chem.Entry{
		{Acid: "C16:0", Percent: 10.5}, {Acid: "C16:1n7", Percent: 0.1}, {Acid: "C18:0", Percent: 4.0},
		{Acid: "C18:1n9c", Percent: 23.0}, {Acid: "C18:2n6c", Percent: 53.7}, {Acid: "C18:3n3", Percent: 7.6},
		{Acid: "C20:0", Percent: 0.4}, {Acid: "C20:1n9", Percent: 0.3}, {Acid: "C22:0", Percent: 0.4},
	}}})
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Printf("iodine value %.2f (AOCS Cd 1c-85: %.2f)\n", p.IodineValue, p.IodineValueAOCS)
	fmt.Printf("saponification value %.2f mg KOH/g\n", p.SaponificationValue)
	fmt.Printf("mean TAG molar mass %.3f g/mol\n", p.MeanTAGMolarMass)
	fmt.Printf("saturated %.2f %%, polyunsaturated %.2f %%\n", p.Sums.Saturated, p.Sums.Polyunsaturated)
	// Output:
	// iodine value 132.98 (AOCS Cd 1c-85: 133.00)
	// saponification value 192.65 mg KOH/g
	// mean TAG molar mass 873.705 g/mol
	// saturated 15.30 %, polyunsaturated 61.30 %
}

// A request that breaks a rule is answered with an error that names the
// offending input.
func ExampleComputeProperties_badLabel() {
	cat := chem.NewCatalogue()
	_, err := chem.ComputeProperties(cat, chem.PropertiesInput{Profile: &chem.ProfileInput{Acids: []chem.Entry{
		{Acid: "16:0", Percent: 50}, {Acid: "18:1 c10", Percent: 50},
	}}})
	ce, _ := chem.AsError(err)
	fmt.Println(ce.Kind, ce.Fields[0].Path, ce.Fields[0].Suggestions[:2])
	// Output:
	// invalid [profile acids 1 acid] [18:1 c6 18:1 c9]
}
