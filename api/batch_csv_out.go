package api

import (
	"bufio"
	"encoding/csv"
	"sort"
	"strconv"
	"strings"

	"lipidsvc/chem/melting"
)

// The CSV answer of a batch: one row per sample, the columns of each
// evaluation flattened.

// csvWriter writes one row per sample: the id, ok or problem, the
// problem's type, detail and pointers, and the main figures of each
// evaluation (numbers with a decimal point; empty where a figure is not
// defined).
type csvWriter struct {
	w    *csv.Writer
	cols []csvOut
}

// csvOut is one output column.
type csvOut struct {
	name string
	get  func(r *BatchResult) string
}

func newCSVWriter(w *bufio.Writer, plan *batchPlan) *csvWriter {
	cw := &csvWriter{w: csv.NewWriter(w)}
	cw.cols = []csvOut{
		{"sample_id", func(r *BatchResult) string {
			if r.SampleID == nil {
				return ""
			}
			return *r.SampleID
		}},
		{"status", func(r *BatchResult) string {
			if r.Problem != nil {
				return "problem"
			}
			return "ok"
		}},
		{"problem_type", func(r *BatchResult) string {
			if r.Problem == nil {
				return ""
			}
			return strings.TrimPrefix(r.Problem.Type, ProblemTypeBase)
		}},
		{"problem_detail", func(r *BatchResult) string {
			if r.Problem == nil {
				return ""
			}
			var parts []string
			for _, e := range r.Problem.Errors {
				parts = append(parts, e.Pointer+": "+e.Reason)
			}
			if len(parts) == 0 {
				return r.Problem.Detail
			}
			return r.Problem.Detail + " (" + strings.Join(parts, "; ") + ")"
		}},
	}
	for _, n := range plan.names {
		cw.cols = append(cw.cols, csvColumnsOf(n, plan)...)
	}
	return cw
}

func num(v float64) string { return strconv.FormatFloat(v, 'f', -1, 64) }

func numPtr(v *float64) string {
	if v == nil {
		return ""
	}
	return num(*v)
}

// csvColumnsOf are an evaluation's output columns.
func csvColumnsOf(eval string, plan *batchPlan) []csvOut {
	prop := func(name string, f func(p *PropertiesResponse) string) csvOut {
		return csvOut{name, func(r *BatchResult) string {
			if r.Properties == nil {
				return ""
			}
			return f(r.Properties)
		}}
	}
	warnings := func(ws []WarningBody) string {
		var codes []string
		seen := map[string]bool{}
		for _, w := range ws {
			if !seen[w.Code] {
				seen[w.Code] = true
				codes = append(codes, w.Code)
			}
		}
		return strings.Join(codes, " ")
	}
	switch eval {
	case evalProperties:
		return []csvOut{
			prop("iodine_value", func(p *PropertiesResponse) string { return num(p.IodineValue) }),
			prop("aocs_cd_1c_85_iodine_value", func(p *PropertiesResponse) string { return numPtr(p.AOCS.IodineValue) }),
			prop("saponification_value", func(p *PropertiesResponse) string { return num(p.SaponificationValue) }),
			prop("triacylglycerol_g_per_mol", func(p *PropertiesResponse) string { return num(p.MeanMolarMass.TriacylglycerolGPerMol) }),
			prop("saturated_percent", func(p *PropertiesResponse) string { return num(p.Sums.SaturatedPercent) }),
			prop("monounsaturated_percent", func(p *PropertiesResponse) string { return num(p.Sums.MonounsaturatedPercent) }),
			prop("polyunsaturated_percent", func(p *PropertiesResponse) string { return num(p.Sums.PolyunsaturatedPercent) }),
			prop("trans_percent", func(p *PropertiesResponse) string { return num(p.Sums.TransPercent) }),
			prop("n3_percent", func(p *PropertiesResponse) string { return num(p.Sums.N3Percent) }),
			prop("n6_percent", func(p *PropertiesResponse) string { return num(p.Sums.N6Percent) }),
			prop("calculated_oxidizability", func(p *PropertiesResponse) string { return num(p.Indices.CalculatedOxidizability) }),
			prop("unidentified_percent", func(p *PropertiesResponse) string { return num(p.UnidentifiedPercent) }),
			prop("measured_iodine_value_difference", func(p *PropertiesResponse) string {
				if p.MeasuredComparison == nil || p.MeasuredComparison.IodineValue == nil {
					return ""
				}
				return num(p.MeasuredComparison.IodineValue.Difference)
			}),
			prop("measured_values_agree", func(p *PropertiesResponse) string {
				mc := p.MeasuredComparison
				if mc == nil {
					return ""
				}
				agree := true
				for _, c := range []*CheckBody{mc.IodineValue, mc.SaponificationValue} {
					if c != nil && !c.Agrees {
						agree = false
					}
				}
				return strconv.FormatBool(agree)
			}),
			prop("properties_warnings", func(p *PropertiesResponse) string { return warnings(p.Warnings) }),
		}
	case evalConformity:
		conf := func(name string, f func(c *ConformityResponse) string) csvOut {
			return csvOut{name, func(r *BatchResult) string {
				if r.Conformity == nil {
					return ""
				}
				return f(r.Conformity)
			}}
		}
		return []csvOut{
			conf("conformity_specification", func(c *ConformityResponse) string { return c.Specification.ID }),
			conf("conformity_verdict", func(c *ConformityResponse) string { return c.Verdict }),
			conf("conformity_outside", func(c *ConformityResponse) string {
				var out []string
				for _, a := range c.Acids {
					if a.Verdict != "within" {
						out = append(out, a.Acid+" "+a.Verdict)
					}
				}
				for name, v := range map[string]*ValueVerdictBody{"iodine_value": c.IodineValue, "saponification_value": c.SaponificationValue, "slip_melting_point_c": c.SlipMeltingPointC} {
					if v != nil && v.Verdict != "within" {
						out = append(out, name+" "+v.Verdict)
					}
				}
				sort.Strings(out)
				return strings.Join(out, "; ")
			}),
			conf("conformity_distance", func(c *ConformityResponse) string { return num(c.Distance) }),
			conf("closest_reference", func(c *ConformityResponse) string {
				if len(c.ClosestReferences) == 0 {
					return ""
				}
				return c.ClosestReferences[0].ID
			}),
		}
	case evalMelting:
		melt := func(name string, f func(m *MeltingResponse) string) csvOut {
			return csvOut{name, func(r *BatchResult) string {
				if r.Melting == nil {
					return ""
				}
				return f(r.Melting)
			}}
		}
		cols := []csvOut{
			melt("slip_melting_point_c", func(m *MeltingResponse) string { return numPtr(m.SlipMeltingPointC) }),
			melt("clear_point_c", func(m *MeltingResponse) string { return numPtr(m.ClearPointC) }),
		}
		for _, t := range melting.ReportingTemperaturesC() {
			t := t
			cols = append(cols, melt("sfc_"+strings.ReplaceAll(num(t), ".", "_")+"c_percent", func(m *MeltingResponse) string {
				for _, p := range m.ReportingPoints {
					if p.TemperatureC == t {
						return num(p.SolidFatPercent)
					}
				}
				return ""
			}))
		}
		return cols
	case evalForecast:
		fc := func(name string, f func(m *ForecastResponse) string) csvOut {
			return csvOut{name, func(r *BatchResult) string {
				if r.Forecast == nil {
					return ""
				}
				return f(r.Forecast)
			}}
		}
		return []csvOut{
			fc("forecast_iodine_value", func(f *ForecastResponse) string { return num(f.IodineValue) }),
			fc("forecast_trans_percent", func(f *ForecastResponse) string { return num(f.TransPercent) }),
			fc("forecast_saturated_percent", func(f *ForecastResponse) string { return num(f.SaturatedPercent) }),
			fc("forecast_hydrogen_kg_per_tonne", func(f *ForecastResponse) string { return num(f.Hydrogen.HydrogenKgPerTonne) }),
		}
	}
	return nil
}

func (cw *csvWriter) begin(*batchPlan) error {
	names := make([]string, len(cw.cols))
	for i, c := range cw.cols {
		names[i] = c.name
	}
	return cw.w.Write(names)
}

func (cw *csvWriter) result(r *BatchResult) error {
	rec := make([]string, len(cw.cols))
	for i, c := range cw.cols {
		rec[i] = c.get(r)
	}
	if err := cw.w.Write(rec); err != nil {
		return err
	}
	cw.w.Flush()
	return cw.w.Error()
}

func (cw *csvWriter) end(BatchSummary) error {
	cw.w.Flush()
	return cw.w.Error()
}
