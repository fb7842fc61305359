package melting

import (
	"math"
	"testing"

	"lipidsvc/chem"
)

// FuzzMelt: for any five-acid fat and two curve temperatures the melting
// model is refused with a *chem.Error or gives solid fat contents from 0
// to 100 that do not rise with temperature, and a slip melting point no
// higher than the clear point. Run long with
// go test ./chem/melting -run '^$' -fuzz FuzzMelt -fuzztime 5m.
func FuzzMelt(f *testing.F) {
	f.Add(44.0, 4.5, 39.5, 10.5, 1.0, 10.0, 30.0, uint8(0))
	f.Add(10.0, 88.0, 1.0, 1.0, 0.0, -20.0, 70.0, uint8(1))
	f.Add(0.0, 0.0, 100.0, 0.0, 0.0, 0.0, 5.0, uint8(2))
	f.Add(25.0, 35.0, 35.0, 3.0, 2.0, 20.0, 37.0, uint8(3))
	models := []ModelInput{{}, {SolidModel: "multiple_pure_solids"}, {SolidModel: "ideal_solid_solution"}, {Distribution: "full_random", Polymorph: "beta"}}
	cat := chem.NewCatalogue()
	f.Fuzz(func(t *testing.T, p16, p18, p181, p182, p14, t1, t2 float64, model uint8) {
		in := MeltingInput{Profile: &chem.ProfileInput{SumTolerancePercent: fptr(100), Acids: []chem.Entry{{Acid: "16:0", Percent: p16},
			{Acid: "18:0", Percent: p18}, {Acid: "18:1 c9", Percent: p181}, {Acid: "18:2 c9,c12", Percent: p182}, {Acid: "14:0", Percent: p14}}},
			ModelInput: models[int(model)%len(models)], TemperaturesC: []float64{t1, t2}}
		a, err := Melt(cat, in)
		if err != nil {
			if _, ok := chem.AsError(err); !ok {
				t.Fatalf("error %v is not a *chem.Error", err)
			}
			return
		}
		prev := math.Inf(1)
		for _, p := range a.Result.Curve {
			if p.SolidFatPercent < -1e-9 || p.SolidFatPercent > 100+1e-9 || math.IsNaN(p.SolidFatPercent) {
				t.Fatalf("SFC %v at %v °C", p.SolidFatPercent, p.TemperatureC)
			}
			if p.SolidFatPercent > prev+1e-6 {
				t.Fatalf("SFC rises with temperature: %v at %v °C", p.SolidFatPercent, p.TemperatureC)
			}
			prev = p.SolidFatPercent
		}
		r := a.Result
		if r.SlipMeltingPointDefined && r.ClearPointDefined && r.SlipMeltingPointC > r.ClearPointC+1e-6 {
			t.Fatalf("slip %v above clear %v", r.SlipMeltingPointC, r.ClearPointC)
		}
	})
}
