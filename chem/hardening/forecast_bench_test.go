package hardening

import (
	"context"
	"testing"

	"lipidsvc/chem"
)

// BenchmarkForecast measures one full forecast of the soy-like feed with the
// selective-nickel preset to iodine value 70, with a 50-point path table:
// validation, network set-up, the target and 48 interior roots, and the
// properties of every path point.
func BenchmarkForecast(b *testing.B) {
	cat := chem.NewCatalogue()
	req := NewForecastRequest(testFeed(b, cat, "soy-like"), FinalIodineValue(70), mustPreset(b, PresetNickelSelective))
	req.PathPoints = 50
	ctx := context.Background()
	b.ReportAllocs()
	for b.Loop() {
		if _, err := ForecastOf(ctx, cat, req); err != nil {
			b.Fatal(err)
		}
	}
}

// BenchmarkFit measures a calibration of the default five parameters on one
// batch of 13 synthetic soybean samples with ±0.3 pp noise, from the
// selective-nickel preset.
func BenchmarkFit(b *testing.B) {
	cat := chem.NewCatalogue()
	feed := testFeed(b, cat, "soy-like")
	req := NewFitRequest(feed, syntheticObservations(b, cat, feed, 1, 0.3, 1))
	ctx := context.Background()
	b.ReportAllocs()
	for b.Loop() {
		if _, err := FitOf(ctx, cat, req); err != nil {
			b.Fatal(err)
		}
	}
}
