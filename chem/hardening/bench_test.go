package hardening

import "testing"

// BenchmarkHydrogenDemand measures one full request: validation, both
// iodine-value conventions, gas volumes and the adiabatic rise.
func BenchmarkHydrogenDemand(b *testing.B) {
	req := NewHydrogenRequest(133, FinalIodineValue(70), 25000, 150)
	req.Basis = ProductBasis
	req.Gas.Purity = 0.985
	req.Gas.LossFraction = 0.05
	for b.Loop() {
		if _, err := HydrogenDemand(req); err != nil {
			b.Fatal(err)
		}
	}
}
