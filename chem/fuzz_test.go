package chem

import (
	"math"
	"testing"
)

// FuzzResolveLabel: the label reader never panics on any text, and a label
// it reads names a catalogue acid (or the unidentified remainder) whose own
// id reads back to the same acid. Seeds: testdata/fuzz/FuzzResolveLabel
// and the spellings below. Run long with
// go test ./chem -run '^$' -fuzz FuzzResolveLabel -fuzztime 5m.
func FuzzResolveLabel(f *testing.F) {
	for _, s := range []string{"C18:1n9c", "18:2 c9,t12", "EPA", "unknown 1", "RT 23.45", "C18:1 trans (total)", "cis-9,12",
		"FAME C20:5 n-3 (EPA)", "18:1(9Z)", "iso-15:0", "ω-3", "", "C99:9", "18:1 c9,c9", "\x00", "18:1 n-0"} {
		f.Add(s)
	}
	cat := NewCatalogue()
	f.Fuzz(func(t *testing.T, label string) {
		r, err := cat.Resolve(label)
		if err != nil {
			if _, ok := AsError(err); !ok {
				t.Fatalf("%q: error %v is not a *chem.Error", label, err)
			}
			return
		}
		if r.Unidentified {
			return
		}
		if r.Acid == nil {
			t.Fatalf("%q: read, but names no acid", label)
		}
		back, err := cat.Resolve(r.Acid.ID)
		if err != nil || back.Acid != r.Acid {
			t.Fatalf("%q → %s does not read back (%v)", label, r.Acid.ID, err)
		}
	})
}

// FuzzProperties: any three-entry profile either is refused with a
// *chem.Error or gives finite, non-negative certificate values whose
// classes add to 100 %. Run long with
// go test ./chem -run '^$' -fuzz FuzzProperties -fuzztime 5m.
func FuzzProperties(f *testing.F) {
	f.Add("16:0", 10.5, "18:1 c9", 30.0, "18:2 c9,c12", 59.5, uint8(0), uint8(0))
	f.Add("EPA", 50.0, "DHA", 50.0, "others", 0.0, uint8(1), uint8(2))
	f.Add("12:0", 48.0, "14:0", 18.0, "18:1", 34.0, uint8(2), uint8(1))
	f.Add("18:1 t9", 99.9, "unknown", 0.1, "18:0", 0.0, uint8(0), uint8(0))
	cat := NewCatalogue()
	bases := []string{"", "acid_weight_percent", "mole_percent"}
	materials := []string{"", "free_fatty_acids", "methyl_esters"}
	f.Fuzz(func(t *testing.T, a1 string, p1 float64, a2 string, p2 float64, a3 string, p3 float64, basis, material uint8) {
		in := PropertiesInput{Profile: &ProfileInput{Basis: bases[int(basis)%3],
			Acids: []Entry{{a1, p1}, {a2, p2}, {a3, p3}}}, Material: materials[int(material)%3], Nutrition: &NutritionInput{}}
		p, err := ComputeProperties(cat, in)
		if err != nil {
			if _, ok := AsError(err); !ok {
				t.Fatalf("error %v is not a *chem.Error", err)
			}
			return
		}
		for name, v := range map[string]float64{"iv": p.IodineValue, "sv": p.SaponificationValue, "cox": p.Indices.Cox,
			"bape": p.Indices.BisAllylicPositionEquivalent} {
			if math.IsNaN(v) || math.IsInf(v, 0) || v < 0 {
				t.Fatalf("%s = %v for %+v", name, v, in.Profile.Acids)
			}
		}
		s := p.Sums
		if total := s.Saturated + s.Monounsaturated + s.Polyunsaturated + s.Trans + s.OtherUnsaturated; math.Abs(total-100) > 1e-6 {
			t.Fatalf("classes add to %v for %+v", total, in.Profile.Acids)
		}
		if n := p.Nutrition; n == nil || n.Factor <= 0 || n.Factor > 1 {
			t.Fatalf("nutrition factor %+v", n)
		}
	})
}
