package identity

import (
	"fmt"
	"math"
	"regexp"

	"lipidsvc/chem"
)

// SpecificationInput is a specification in the shape requests and
// specification files give it. Paths in errors: "id", "acids", 3, "max", ….
type SpecificationInput struct {
	ID, Name                         string
	Standard, Edition, Table, Source string
	Recalled                         bool
	Notes                            string
	// Kind is "identity" (also "") or "limits"; see Specification.Limits.
	Kind string
	// Basis and Material by their contract names; "" for
	// fame_weight_percent and triacylglycerols.
	Basis, Material string
	Acids           []RowInput
	// IodineValue, SaponificationValue and SlipMeltingPointC are optional.
	IodineValue, SaponificationValue, SlipMeltingPointC *RangeInput
}

// RowInput is one acid row: a selector (see [ParseSelector]) with a range,
// or ND.
type RowInput struct {
	Acid     string
	Min, Max *float64
	// NotDetected is the standards' "ND": at most NotDetectedPercent.
	NotDetected bool
}

// RangeInput is a range with optional bounds (at least one).
type RangeInput struct {
	Min, Max *float64
}

// idRe is the form of a specification id.
var idRe = regexp.MustCompile(`^[a-z0-9][a-z0-9_.-]{0,63}$`)

// Build checks the input and returns the specification. Errors are
// KindInvalid *chem.Error values naming every problem, paths relative to
// the specification.
func (in *SpecificationInput) Build() (*Specification, error) {
	var bad chem.FieldErrors
	if !idRe.MatchString(in.ID) {
		bad.Invalid("must be 1 to 64 lower-case letters, digits, '_', '.' or '-', starting with a letter or digit", "id")
	}
	if in.Name == "" {
		bad.Invalid("a name is required", "name")
	}
	basis, ok := chem.ParseBasis(in.Basis)
	if !ok {
		bad.Invalid("must be fame_weight_percent, acid_weight_percent or mole_percent", "basis")
	}
	material, ok := chem.ParseMaterial(in.Material)
	if !ok {
		bad.Invalid("must be triacylglycerols, free_fatty_acids or methyl_esters", "material")
	}
	switch in.Kind {
	case "", "identity", "limits":
	default:
		bad.Invalid("must be identity or limits", "kind")
	}
	s := &Specification{Limits: in.Kind == "limits", ID: in.ID, Name: in.Name, Standard: in.Standard, Edition: in.Edition, Table: in.Table,
		Source: in.Source, Recalled: in.Recalled, Notes: in.Notes, Basis: basis, Material: material}
	if len(in.Acids) == 0 && in.IodineValue == nil && in.SaponificationValue == nil {
		bad.Invalid("a specification needs acid rows or an iodine or saponification value range", "acids")
	}
	seen := map[string]int{}
	for i, r := range in.Acids {
		terms, err := ParseSelector(r.Acid)
		if err != nil {
			bad.Invalid(err.Error(), "acids", i, "acid")
			continue
		}
		if j, dup := seen[r.Acid]; dup {
			bad.Invalid(fmt.Sprintf("the same selector as row %d", j), "acids", i, "acid")
		}
		seen[r.Acid] = i
		row := Row{Selector: r.Acid, Terms: terms, NotDetected: r.NotDetected}
		if r.NotDetected {
			if r.Min != nil || r.Max != nil {
				bad.Invalid("ND stands for its own range (at most 0.05 %); give no min or max beside it", "acids", i, "nd")
			}
			row.Range = Range{Min: math.NaN(), Max: NotDetectedPercent}
		} else {
			row.Range = buildRange(&bad, &RangeInput{Min: r.Min, Max: r.Max}, 0, 100, "acids", i)
		}
		s.Acids = append(s.Acids, row)
	}
	s.IodineValue = optionalRange(&bad, in.IodineValue, 0, 400, "iodine_value")
	s.SaponificationValue = optionalRange(&bad, in.SaponificationValue, 0, 500, "saponification_value")
	s.SlipMeltingPointC = optionalRange(&bad, in.SlipMeltingPointC, -60, 120, "slip_melting_point_c")
	if err := bad.Err("the specification is not valid"); err != nil {
		return nil, err
	}
	return s, nil
}

func optionalRange(bad *chem.FieldErrors, r *RangeInput, lo, hi float64, path ...any) Range {
	if r == nil {
		return unbounded
	}
	return buildRange(bad, r, lo, hi, path...)
}

// buildRange checks one range: at least one bound, each within [lo, hi],
// min ≤ max.
func buildRange(bad *chem.FieldErrors, r *RangeInput, lo, hi float64, path ...any) Range {
	out := unbounded
	at := func(field string) []any { return append(append([]any{}, path...), field) }
	if r.Min == nil && r.Max == nil {
		bad.Invalid("give min, max or both", path...)
		return out
	}
	for _, b := range []struct {
		v     *float64
		dst   *float64
		field string
	}{{r.Min, &out.Min, "min"}, {r.Max, &out.Max, "max"}} {
		if b.v == nil {
			continue
		}
		if math.IsNaN(*b.v) || *b.v < lo || *b.v > hi {
			bad.Invalid(fmt.Sprintf("must be a number from %g to %g", lo, hi), at(b.field)...)
			continue
		}
		*b.dst = *b.v
	}
	if !math.IsNaN(out.Min) && !math.IsNaN(out.Max) && out.Min > out.Max {
		bad.Invalid(fmt.Sprintf("min %g is above max %g", out.Min, out.Max), at("max")...)
	}
	return out
}
