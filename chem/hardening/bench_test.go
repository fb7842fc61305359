package hardening

import "testing"

// BenchmarkHydrogenDemand measures one full request: validation, both
// iodine-value conventions, gas volumes and the adiabatic rise.
func BenchmarkHydrogenDemand(b *testing.B) {
	req := NewHydrogenRequest(133, FinalIodineValue(70), 25000, 150)
	req.Basis = ProductBasis
	req.Gas.PurityPercent = 98.5
	req.Gas.LossPercent = 5
	for b.Loop() {
		if _, err := HydrogenDemandOf(req); err != nil {
			b.Fatal(err)
		}
	}
}
