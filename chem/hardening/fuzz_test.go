package hardening

import (
	"context"
	"math"
	"testing"

	"lipidsvc/chem"
)

// FuzzForecast: for any C18 feed, target and preset the forecast is
// refused with a *chem.Error or reaches its target, keeps the composition
// a composition (shares from 0 to 100 adding to 100) and never makes the
// iodine value rise along its path. Run long with
// go test ./chem/hardening -run '^$' -fuzz FuzzForecast -fuzztime 5m.
func FuzzForecast(f *testing.F) {
	f.Add(10.5, 4.0, 23.4, 54.5, 7.6, 70.0, uint8(0))
	f.Add(44.0, 4.5, 39.5, 10.5, 0.2, 40.0, uint8(1))
	f.Add(0.0, 0.0, 0.0, 0.0, 100.0, 1.0, uint8(2))
	f.Add(5.0, 2.0, 80.0, 10.0, 3.0, 85.0, uint8(3))
	presets := []string{PresetNickelSelective, "nickel_non_selective", PresetCopper, "palladium", "platinum"}
	cat := chem.NewCatalogue()
	f.Fuzz(func(t *testing.T, p16, p18, p181, p182, p183, target float64, preset uint8) {
		in := ForecastInput{Profile: &chem.ProfileInput{SumTolerancePercent: ptrF(100), Acids: []chem.Entry{{Acid: "16:0", Percent: p16},
			{Acid: "18:0", Percent: p18}, {Acid: "18:1 c9", Percent: p181}, {Acid: "18:2 c9,c12", Percent: p182}, {Acid: "18:3 c9,c12,c15", Percent: p183}}},
			Target: &ForecastTargetInput{IodineValue: &target}, Catalyst: &CatalystInput{Preset: presets[int(preset)%len(presets)]}}
		a, err := Forecast(context.Background(), cat, in)
		if err != nil {
			if _, ok := chem.AsError(err); !ok {
				t.Fatalf("error %v is not a *chem.Error", err)
			}
			return
		}
		if math.Abs(a.FinalIodineValue-target) > 0.05 {
			t.Fatalf("reached IV %v, target %v", a.FinalIodineValue, target)
		}
		var sum float64
		for _, c := range a.Product.Components {
			if c.Percent < -1e-9 || c.Percent > 100+1e-9 || math.IsNaN(c.Percent) {
				t.Fatalf("share %v of %s", c.Percent, c.Acid.ID)
			}
			sum += c.Percent
		}
		if math.Abs(sum-100) > 1e-6 {
			t.Fatalf("product adds to %v", sum)
		}
		for i := 1; i < len(a.Path); i++ {
			if a.Path[i].IodineValue > a.Path[i-1].IodineValue+1e-6 {
				t.Fatalf("the iodine value rises along the path: %v after %v", a.Path[i].IodineValue, a.Path[i-1].IodineValue)
			}
		}
	})
}

func ptrF(v float64) *float64 { return &v }
