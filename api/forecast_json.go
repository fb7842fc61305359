package api

import (
	"slices"

	segjson "github.com/segmentio/encoding/json"
)

// The forecast's answer carries the path table, rows repeating one set of
// acids, which dominated its encoding: a map per row sorted and reflected
// over, and the whole re-parsed when it went through a marshaller. So the
// answer writes itself: the path and the flat parts by hand, the product
// properties by their own writer, the other nested parts by the codec,
// appended in place. TestForecastJSONMatchesEncoder holds the output byte
// for byte to the codec's for the same value.

// AppendJSON appends the JSON encoding of r to b.
func (r *ForecastResponse) AppendJSON(b []byte) ([]byte, error) {
	w := jsonWriter{b: b}
	w.open('{')
	w.num("iodine_value", r.IodineValue)
	w.num("feed_iodine_value", r.FeedIodineValue)
	w.num("trans_percent", r.TransPercent)
	w.num("saturated_percent", r.SaturatedPercent)
	w.value("product_profile", &r.ProductProfile)
	w.key("product_properties")
	if w.err == nil {
		w.b, w.err = r.ProductProperties.AppendJSON(w.b)
	}
	if r.Sn2ProductProfile != nil {
		w.value("sn2_product_profile", r.Sn2ProductProfile)
	}
	if r.Sn13ProductProfile != nil {
		w.value("sn13_product_profile", r.Sn13ProductProfile)
	}
	h := &r.Hydrogen
	w.key("hydrogen")
	w.open('{')
	w.num("hydrogen_kg_per_tonne", h.HydrogenKgPerTonne)
	w.num("hydrogen_mol_per_tonne", h.HydrogenMolPerTonne)
	w.num("hydrogen_volume_m3_per_tonne", h.HydrogenVolumeM3PerTonne)
	w.num("iodine_value_drop_feed_basis", h.IodineValueDropFeedBasis)
	w.num("product_mass_gain_percent", h.ProductMassGainPercent)
	w.close('}')
	w.key("path")
	w.path(r.Path)
	if r.MeltingTarget != nil {
		w.value("melting_target", r.MeltingTarget)
	}
	f := &r.Flags
	w.key("flags")
	w.open('{')
	w.boolean("trans_above_limit", f.TransAboveLimit)
	w.num("trans_limit_percent", f.TransLimitPercent)
	w.boolean("partially_hydrogenated", f.PartiallyHydrogenated)
	w.num("fully_hydrogenated_max_iodine_value", f.FullyHydrogenatedMaxIodineValue)
	w.close('}')
	w.value("catalyst", &r.Catalyst)
	w.value("cautions", r.Cautions)
	if p := r.Provenance; p != nil {
		w.key("provenance")
		w.provenance(p)
	}
	w.key("warnings")
	w.warnings(r.Warnings)
	w.close('}')
	return w.b, w.err
}

// MarshalJSON is AppendJSON for encoders (a batch's results).
func (r ForecastResponse) MarshalJSON() ([]byte, error) {
	return r.AppendJSON(make([]byte, 0, 16384))
}

// value writes member k with the codec's encoding of v.
func (w *jsonWriter) value(k string, v any) {
	w.key(k)
	if w.err != nil {
		return
	}
	w.b, w.err = segjson.Append(w.b, v, segjson.SortMapKeys)
}

// path writes the path table. The acids' ids are sorted once for the
// table, not once per row, as the codec's SortMapKeys orders them.
func (w *jsonWriter) path(p []ForecastPoint) {
	if p == nil {
		w.raw("null")
		return
	}
	var ids []string
	w.open('[')
	for i := range p {
		pt := &p[i]
		w.elem()
		w.open('{')
		w.num("iodine_value", pt.IodineValue)
		w.num("trans_percent", pt.TransPercent)
		w.num("saturated_percent", pt.SaturatedPercent)
		w.num("hydrogen_kg_per_tonne", pt.HydrogenKgPerTonne)
		w.num("path_variable", pt.PathVariable)
		w.key("composition")
		if pt.Composition == nil {
			w.raw("null")
			w.close('}')
			continue
		}
		if !sameKeys(ids, pt.Composition) {
			ids = ids[:0]
			for id := range pt.Composition {
				ids = append(ids, id)
			}
			slices.Sort(ids)
		}
		w.open('{')
		for _, id := range ids {
			w.elem()
			w.b = appendJSONString(w.b, id)
			w.b = append(w.b, ':')
			w.float(pt.Composition[id])
		}
		w.close('}')
		w.close('}')
	}
	w.close(']')
}

// sameKeys reports whether m's keys are exactly ids.
func sameKeys(ids []string, m map[string]float64) bool {
	if len(ids) != len(m) {
		return false
	}
	for _, id := range ids {
		if _, ok := m[id]; !ok {
			return false
		}
	}
	return true
}
