package identity

import (
	"fmt"
	"math"
	"sort"
	"strings"

	"lipidsvc/chem"
)

// Verdict is where a value lies against its range.
type Verdict int

const (
	// Within the range, bounds included.
	Within Verdict = iota + 1
	// Below the minimum.
	Below
	// Above the maximum.
	Above
)

// String gives the API name.
func (v Verdict) String() string {
	switch v {
	case Within:
		return "within"
	case Below:
		return "below"
	case Above:
		return "above"
	}
	return "unknown"
}

// Measured are laboratory values sent with the profile; nil when not
// measured.
type Measured struct {
	IodineValue, SaponificationValue, SlipMeltingPointC *float64
}

// RowResult is one row of a specification against the profile.
type RowResult struct {
	Row *Row
	// Percent is the sum the row counts, percent of the identified acids
	// on the specification's basis.
	Percent float64
	Verdict Verdict
	// Margin is the distance to the nearer bound: positive inside, negative
	// by how far outside (percentage points).
	Margin float64
}

// ValueResult is the iodine value, saponification value or slip melting
// point against its range.
type ValueResult struct {
	Range Range
	// Value is the measured value when one was sent (Measured), else the
	// value calculated from the composition; the slip melting point is
	// only ever measured.
	Value    float64
	Measured bool
	// Calculated is the value calculated from the composition; NaN for
	// the slip melting point.
	Calculated float64
	Verdict    Verdict
	Margin     float64
}

// Result is a profile checked against one specification.
type Result struct {
	Spec *Specification
	Rows []RowResult
	// IodineValue, SaponificationValue and SlipMeltingPoint are nil when
	// the specification gives no range for them (or, for the slip melting
	// point, when none was measured).
	IodineValue, SaponificationValue, SlipMeltingPoint *ValueResult
	// Conforms reports that every row and value lies within its range.
	Conforms bool
	// Distance is how far the composition lies outside the
	// specification's box: the root sum of squares, over the rows, of how
	// far each sum lies outside its range, in percentage points (0 inside).
	Distance float64
	// Unlisted are identified acids no row selects (branched chains, say),
	// and UnlistedPercent their share; the verdict does not count them.
	Unlisted        []string
	UnlistedPercent float64
	Warnings        []chem.Warning
}

// Check checks a profile (and any measured values) against s.
func Check(p *chem.Profile, s *Specification, m Measured) Result {
	values := p.InBasis(s.Basis)
	res := Result{Spec: s, Conforms: true}
	var sq float64
	for i := range s.Acids {
		row := &s.Acids[i]
		v := row.sum(p, values)
		verdict, margin := row.Range.contains(v)
		res.Rows = append(res.Rows, RowResult{Row: row, Percent: v, Verdict: verdict, Margin: margin})
		if verdict != Within {
			res.Conforms = false
			sq += margin * margin
		}
	}
	res.Distance = math.Sqrt(sq)
	for i, c := range p.Components {
		listed := false
		for j := range s.Acids {
			for _, t := range s.Acids[j].Terms {
				listed = listed || t.selects(c.Acid)
			}
		}
		if !listed && values[i] > 0 {
			res.Unlisted = append(res.Unlisted, c.Acid.ID)
			res.UnlistedPercent += values[i]
		}
	}
	if res.UnlistedPercent > NotDetectedPercent {
		res.Warnings = append(res.Warnings, chem.Warning{Code: WarnUnlisted, Message: fmt.Sprintf(
			"%.3g %% of the acids (%s) fall under no row of %s; the verdict does not count them", res.UnlistedPercent,
			strings.Join(res.Unlisted, ", "), s.ID), Path: []any{"profile", "acids"}})
	}
	value := func(r Range, calculated float64, measured *float64) *ValueResult {
		if r.Open() {
			return nil
		}
		vr := &ValueResult{Range: r, Value: calculated, Calculated: calculated}
		if measured != nil {
			vr.Value, vr.Measured = *measured, true
		}
		vr.Verdict, vr.Margin = r.contains(vr.Value)
		if vr.Verdict != Within {
			res.Conforms = false
		}
		return vr
	}
	res.IodineValue = value(s.IodineValue, chem.IodineValue(p, s.Material), m.IodineValue)
	res.SaponificationValue = value(s.SaponificationValue, chem.SaponificationValue(p, s.Material), m.SaponificationValue)
	if m.SlipMeltingPointC != nil {
		res.SlipMeltingPoint = value(s.SlipMeltingPointC, *m.SlipMeltingPointC, m.SlipMeltingPointC)
		if res.SlipMeltingPoint != nil {
			res.SlipMeltingPoint.Calculated = math.NaN()
		}
	}
	// A measured value far from the composition's points at the sample
	// or the peak identification, whatever the verdict; the tolerances are
	// the certificate check's defaults.
	if m.IodineValue != nil {
		c := chem.CompareMeasured(*m.IodineValue, chem.IodineValue(p, s.Material), chem.DefaultIodineValueTolerance)
		res.Warnings = c.AppendWarning(res.Warnings, "iodine value", "g I2/100 g", "measured", "iodine_value")
	}
	if m.SaponificationValue != nil {
		c := chem.CompareMeasured(*m.SaponificationValue, chem.SaponificationValue(p, s.Material), chem.DefaultSaponificationValueTolerance)
		res.Warnings = c.AppendWarning(res.Warnings, "saponification value", "mg KOH/g", "measured", "saponification_value")
	}
	if res.IodineValue != nil && !res.IodineValue.Measured {
		res.Warnings = append(res.Warnings, chem.Warning{Code: WarnIodineValueComputed, Message: fmt.Sprintf(
			"no measured iodine value was sent, so the one calculated from the composition (%.2f) is checked against "+
				"the range, which the standard gives for the Wijs method", res.IodineValue.Value), Path: []any{"measured", "iodine_value"}})
	}
	return res
}

// Warning codes of a conformity check.
const (
	// WarnUnlisted: acids the specification's rows do not select.
	WarnUnlisted = "acids_not_in_specification"
	// WarnIodineValueComputed: the calculated iodine value stood in for a
	// measured one.
	WarnIodineValueComputed = "iodine_value_computed"
)

// Match is one reference specification ranked against a profile.
type Match struct {
	Spec     *Specification
	Distance float64
	Conforms bool
}

// Closest ranks specs by Distance from the profile, nearest first (ties by
// id), and returns the first n (all when n <= 0). Conforms is the full
// verdict, values included.
func Closest(p *chem.Profile, specs []*Specification, m Measured, n int) []Match {
	out := make([]Match, 0, len(specs))
	for _, s := range specs {
		r := Check(p, s, m)
		out = append(out, Match{Spec: s, Distance: r.Distance, Conforms: r.Conforms})
	}
	sort.SliceStable(out, func(i, j int) bool {
		if out[i].Distance != out[j].Distance {
			return out[i].Distance < out[j].Distance
		}
		return out[i].Spec.ID < out[j].Spec.ID
	})
	if n > 0 && len(out) > n {
		out = out[:n]
	}
	return out
}
