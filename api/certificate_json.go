package api

import (
	"errors"
	"math"
	"strconv"
	"unicode/utf8"
)

// The answer of POST /v1/properties is the service's busiest: it is
// written by hand, field by field, into the response buffer rather than by
// reflection (a fifth of the request's cost went to encoding it).
// TestPropertiesJSONMatchesEncoder holds the output byte for byte to the
// JSON codec's for the same value, so a field added to the types below
// without being added here fails the tests.

// errNonFinite is the error for a NaN or ±Inf figure, which JSON cannot
// carry; the error handler answers it as an internal error.
var errNonFinite = errors.New("api: a non-finite number in a response")

// AppendJSON appends the JSON encoding of r to b.
func (r *PropertiesResponse) AppendJSON(b []byte) ([]byte, error) {
	w := jsonWriter{b: b}
	w.open('{')
	w.str("material", r.Material)
	w.str("basis", r.Basis)
	w.num("iodine_value", r.IodineValue)
	w.key("aocs_cd_1c_85")
	w.open('{')
	w.boolean("applies", r.AOCS.Applies)
	w.strPtr("factor_set", r.AOCS.FactorSet)
	w.numPtr("iodine_value", r.AOCS.IodineValue)
	w.str("note", r.AOCS.Note)
	w.close('}')
	w.num("saponification_value", r.SaponificationValue)
	w.key("mean_molar_mass")
	w.open('{')
	w.num("acid_g_per_mol", r.MeanMolarMass.AcidGPerMol)
	w.num("methyl_ester_g_per_mol", r.MeanMolarMass.MethylEsterGPerMol)
	w.num("triacylglycerol_g_per_mol", r.MeanMolarMass.TriacylglycerolGPerMol)
	w.close('}')
	w.num("mean_double_bonds_per_chain", r.MeanDoubleBondsPerChain)
	w.num("unidentified_percent", r.UnidentifiedPercent)
	s := &r.Sums
	w.key("sums")
	w.open('{')
	w.num("saturated_percent", s.SaturatedPercent)
	w.num("monounsaturated_percent", s.MonounsaturatedPercent)
	w.num("polyunsaturated_percent", s.PolyunsaturatedPercent)
	w.num("trans_percent", s.TransPercent)
	w.num("other_unsaturated_percent", s.OtherUnsaturatedPercent)
	w.num("n3_percent", s.N3Percent)
	w.num("n6_percent", s.N6Percent)
	w.num("n9_percent", s.N9Percent)
	w.numPtr("n6_to_n3_ratio", s.N6ToN3Ratio)
	w.numPtr("polyunsaturated_to_saturated_ratio", s.PolyunsaturatedToSaturatedRate)
	w.close('}')
	w.key("indices")
	w.open('{')
	w.num("calculated_oxidizability", r.Indices.CalculatedOxidizability)
	w.num("calculated_oxidizability_outside_percent", r.Indices.CoxOutsidePercent)
	w.num("allylic_position_equivalent", r.Indices.AllylicPositions)
	w.num("bis_allylic_position_equivalent", r.Indices.BisAllylicPositions)
	w.numPtr("atherogenic_index", r.Indices.AtherogenicIndex)
	w.numPtr("thrombogenic_index", r.Indices.ThrombogenicIndex)
	w.close('}')
	w.key("acids")
	if r.Acids == nil {
		w.raw("null")
	} else {
		w.open('[')
		for i := range r.Acids {
			a := &r.Acids[i]
			w.elem()
			w.open('{')
			w.str("acid", a.Acid)
			w.str("label", a.Label)
			w.num("percent", a.Percent)
			w.num("mole_percent", a.MolePercent)
			w.num("fame_weight_percent", a.FAMEWeightPercent)
			w.num("iodine_value_contribution", a.IodineValueContribution)
			w.numPtr("aocs_iodine_value_contribution", a.AOCSIodineValueContribution)
			w.close('}')
		}
		w.close(']')
	}
	if mc := r.MeasuredComparison; mc != nil {
		w.key("measured_comparison")
		w.open('{')
		w.check("iodine_value", mc.IodineValue)
		w.check("saponification_value", mc.SaponificationValue)
		w.close('}')
	}
	if n := r.Nutrition; n != nil {
		w.key("nutrition")
		w.nutrition(n)
	}
	if p := r.Provenance; p != nil {
		w.key("provenance")
		w.provenance(p)
	}
	w.key("warnings")
	w.warnings(r.Warnings)
	w.close('}')
	return w.b, w.err
}

// provenance writes a provenance record; its parameters are compact JSON
// already.
func (w *jsonWriter) provenance(p *Provenance) {
	w.open('{')
	w.str("service", p.Service)
	w.str("version", p.Version)
	w.str("request_id", p.RequestID)
	w.str("operation", p.Operation)
	w.key("methods")
	if p.Methods == nil {
		w.raw("null")
	} else {
		w.open('[')
		for _, m := range p.Methods {
			w.elem()
			w.b = appendJSONString(w.b, m)
		}
		w.close(']')
	}
	w.key("parameters")
	if p.Parameters == nil {
		w.raw("null")
	} else {
		w.b = append(w.b, p.Parameters...)
	}
	w.close('}')
}

// nutrition writes the label figures.
func (w *jsonWriter) nutrition(n *NutritionResult) {
	w.open('{')
	w.num("conversion_factor", n.ConversionFactor)
	w.str("conversion_factor_source", n.ConversionFactorSource)
	if f := n.FoodClass; f != nil {
		w.key("food_class")
		w.open('{')
		w.str("id", f.ID)
		w.str("name", f.Name)
		w.num("factor", f.Factor)
		w.close('}')
	}
	if n.FatGPer100gFood != nil {
		w.numPtr("fat_g_per_100g_food", n.FatGPer100gFood)
	}
	w.key("per_100g_fat")
	w.labelFigures(&n.Per100gFat)
	if n.Per100gFood != nil {
		w.key("per_100g_food")
		w.labelFigures(n.Per100gFood)
	}
	w.num("epa_dha_mg_per_g_fat", n.EPADHAMgPerGFat)
	w.num("epa_dha_as_triacylglycerols_mg_per_g_fat", n.EPADHAAsTAGMgPerGFat)
	w.close('}')
}

func (w *jsonWriter) labelFigures(f *LabelFiguresBody) {
	w.open('{')
	w.num("total_fatty_acids_g", f.TotalFattyAcidsG)
	w.num("saturated_g", f.SaturatedG)
	w.num("monounsaturated_g", f.MonounsaturatedG)
	w.num("polyunsaturated_g", f.PolyunsaturatedG)
	w.num("trans_g", f.TransG)
	w.num("trans_18_1_g", f.Trans181G)
	w.num("trans_18_2_g", f.Trans182G)
	w.num("trans_18_3_g", f.Trans183G)
	w.num("trans_other_chains_g", f.TransOtherG)
	w.num("other_unsaturated_g", f.OtherUnsaturatedG)
	w.num("n3_g", f.N3G)
	w.num("n6_g", f.N6G)
	w.num("epa_g", f.EPAG)
	w.num("dha_g", f.DHAG)
	w.close('}')
}

// MarshalJSON is AppendJSON for encoders (a forecast's product
// properties).
func (r PropertiesResponse) MarshalJSON() ([]byte, error) {
	return r.AppendJSON(make([]byte, 0, 4096))
}

// jsonWriter appends JSON with the codec's formatting: no spaces, floats
// as encoding/json writes them, strings escaped as it does without HTML
// escaping.
type jsonWriter struct {
	b     []byte
	first bool // the next member or element is the first of its container
	err   error
}

func (w *jsonWriter) open(c byte) {
	w.b = append(w.b, c)
	w.first = true
}

func (w *jsonWriter) close(c byte) {
	w.b = append(w.b, c)
	w.first = false
}

func (w *jsonWriter) elem() {
	if !w.first {
		w.b = append(w.b, ',')
	}
	w.first = false
}

func (w *jsonWriter) key(k string) {
	w.elem()
	w.b = append(w.b, '"')
	w.b = append(w.b, k...) // keys are plain ASCII
	w.b = append(w.b, '"', ':')
}

func (w *jsonWriter) raw(s string) { w.b = append(w.b, s...) }

func (w *jsonWriter) str(k, v string) {
	w.key(k)
	w.b = appendJSONString(w.b, v)
}

func (w *jsonWriter) strPtr(k string, v *string) {
	if v == nil {
		w.key(k)
		w.raw("null")
		return
	}
	w.str(k, *v)
}

func (w *jsonWriter) boolean(k string, v bool) {
	w.key(k)
	w.b = strconv.AppendBool(w.b, v)
}

func (w *jsonWriter) num(k string, v float64) {
	w.key(k)
	w.float(v)
}

func (w *jsonWriter) numPtr(k string, v *float64) {
	if v == nil {
		w.key(k)
		w.raw("null")
		return
	}
	w.num(k, *v)
}

// float writes v as encoding/json does: 'f' notation, or 'e' below 1e-6
// and from 1e21 on, with a one-digit exponent unpadded.
// check writes one measured-value check; nothing for nil (omitempty).
func (w *jsonWriter) check(k string, c *CheckBody) {
	if c == nil {
		return
	}
	w.key(k)
	w.open('{')
	w.num("measured", c.Measured)
	w.num("calculated", c.Calculated)
	w.num("difference", c.Difference)
	w.num("tolerance", c.Tolerance)
	w.boolean("agrees", c.Agrees)
	w.close('}')
}

func (w *jsonWriter) float(v float64) {
	if math.IsNaN(v) || math.IsInf(v, 0) {
		w.err = errNonFinite
		w.raw("0")
		return
	}
	f := byte('f')
	if abs := math.Abs(v); abs != 0 && (abs < 1e-6 || abs >= 1e21) {
		f = 'e'
	}
	w.b = strconv.AppendFloat(w.b, v, f, -1, 64)
	if f == 'e' {
		// clean up e-09 to e-9
		n := len(w.b)
		if n >= 4 && w.b[n-4] == 'e' && w.b[n-3] == '-' && w.b[n-2] == '0' {
			w.b[n-2] = w.b[n-1]
			w.b = w.b[:n-1]
		}
	}
}

func (w *jsonWriter) warnings(ws []WarningBody) {
	if ws == nil {
		w.raw("null")
		return
	}
	w.open('[')
	for i := range ws {
		wb := &ws[i]
		w.elem()
		w.open('{')
		w.str("code", wb.Code)
		w.str("message", wb.Message)
		if wb.Pointer != "" {
			w.str("pointer", wb.Pointer)
		}
		w.close('}')
	}
	w.close(']')
}

const hexDigits = "0123456789abcdef"

// appendJSONString appends s quoted and escaped: quote, backslash and
// control characters escaped, U+2028 and U+2029 escaped, invalid UTF-8
// replaced by U+FFFD — encoding/json's rules without its HTML escaping.
func appendJSONString(b []byte, s string) []byte {
	b = append(b, '"')
	start := 0
	for i := 0; i < len(s); {
		c := s[i]
		if c < utf8.RuneSelf {
			if c >= 0x20 && c != '"' && c != '\\' {
				i++
				continue
			}
			b = append(b, s[start:i]...)
			switch c {
			case '"', '\\':
				b = append(b, '\\', c)
			case '\n':
				b = append(b, '\\', 'n')
			case '\r':
				b = append(b, '\\', 'r')
			case '\t':
				b = append(b, '\\', 't')
			case '\b':
				b = append(b, '\\', 'b')
			case '\f':
				b = append(b, '\\', 'f')
			default:
				b = append(b, '\\', 'u', '0', '0', hexDigits[c>>4], hexDigits[c&0xf])
			}
			i++
			start = i
			continue
		}
		r, size := utf8.DecodeRuneInString(s[i:])
		if r == utf8.RuneError && size == 1 {
			b = append(b, s[start:i]...)
			b = append(b, `\ufffd`...)
			i += size
			start = i
			continue
		}
		if r == '\u2028' || r == '\u2029' {
			b = append(b, s[start:i]...)
			b = append(b, '\\', 'u', '2', '0', '2', hexDigits[r&0xf])
			i += size
			start = i
			continue
		}
		i += size
	}
	b = append(b, s[start:]...)
	return append(b, '"')
}
