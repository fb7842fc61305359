package identity

import (
	"fmt"
	"math"
	"regexp"
	"strconv"
	"strings"

	"lipidsvc/chem"
)

// NotDetectedPercent is the bound of "ND" in the Codex standards: not
// detected, defined as at most 0.05 %.
const NotDetectedPercent = 0.05

// Range is a closed interval; a bound that is NaN is open (no minimum, no
// maximum).
type Range struct {
	Min, Max float64
}

// Open reports whether the range has no bounds at all.
func (r Range) Open() bool { return math.IsNaN(r.Min) && math.IsNaN(r.Max) }

// contains reports whether v lies in r, and the signed margin: the distance
// to the nearer bound, positive inside, negative outside (how far outside).
func (r Range) contains(v float64) (Verdict, float64) {
	switch {
	case !math.IsNaN(r.Min) && v < r.Min:
		return Below, v - r.Min
	case !math.IsNaN(r.Max) && v > r.Max:
		return Above, r.Max - v
	}
	margin := math.Inf(1)
	if !math.IsNaN(r.Min) {
		margin = v - r.Min
	}
	if !math.IsNaN(r.Max) {
		margin = math.Min(margin, r.Max-v)
	}
	return Within, margin
}

// Term is one part of a row's selector: the acids it sums.
type Term struct {
	// Carbons and DoubleBonds select one C:D (all its straight-chain
	// isomers) when Carbons > 0.
	Carbons, DoubleBonds int
	// TransOnly keeps only the trans isomers: of the C:D, or of every acid
	// when Carbons is 0 ("trans").
	TransOnly bool
	// MinDoubleBonds, when > 0 and Carbons is 0, selects every acid with at
	// least that many double bonds.
	MinDoubleBonds int
}

// selects reports whether the term counts acid a.
func (t Term) selects(a *chem.FattyAcid) bool {
	if a.Branch != chem.Unbranched || a.HydroxyPosition > 0 {
		return false
	}
	switch {
	case t.Carbons > 0:
		return a.Carbons == t.Carbons && a.DoubleBondCount == t.DoubleBonds && (!t.TransOnly || a.HasTrans())
	case t.TransOnly:
		return a.HasTrans()
	default:
		return a.DoubleBondCount >= t.MinDoubleBonds
	}
}

// Row is one line of a specification: the sum of the acids its terms
// select, in percent of the identified acids on the specification's basis,
// and the range it must fall in.
type Row struct {
	// Selector is the row as written ("C18:1", "C18:2 trans + C18:3 trans",
	// "double bonds >= 4").
	Selector string
	Terms    []Term
	Range    Range
	// NotDetected marks a row given as "ND" (at most NotDetectedPercent).
	NotDetected bool
}

// Specification is one set of identity ranges: a standard's row for one
// oil, or a plant's own specification.
type Specification struct {
	ID, Name string
	// Standard, Edition and Table say where the ranges come from (for a
	// plant specification, whatever the plant recorded); Source is the
	// reference or URL they were read from.
	Standard, Edition, Table, Source string
	// Recalled marks ranges recalled rather than read from the standard.
	Recalled bool
	// Notes are remarks on the row.
	Notes string
	// Basis is what the acid ranges are percentages of (the standards'
	// GLC area %, read as FAME weight %); Material is the form the iodine
	// and saponification values refer to.
	Basis    chem.Basis
	Material chem.Material
	Acids    []Row
	// IodineValue (Wijs, g I2/100 g), SaponificationValue (mg KOH/g) and
	// SlipMeltingPointC (°C) are open ranges when the standard gives none.
	IodineValue, SaponificationValue, SlipMeltingPointC Range
	// Limits marks a specification of composition limits (a fuel or
	// product standard) rather than of an oil's identity ranges: it is
	// checked on request but never offered as a closest reference.
	Limits bool
	// Plant marks a specification from the plant's file.
	Plant bool
}

// unbounded is a range with neither bound.
var unbounded = Range{math.NaN(), math.NaN()}

var (
	termCDRe   = regexp.MustCompile(`^c?(\d{1,2}):(\d{1,2})(?:\s*(t|trans))?$`)
	termPolyRe = regexp.MustCompile(`^(?:double bonds|db)\s*(?:>=|≥)\s*(\d)$`)
)

// ParseSelector reads a row's selector: terms joined by "+", each "C18:1"
// (every straight-chain isomer), "C18:1 trans" or "C18:1 T" (its trans
// isomers), "trans" (every trans acid) or "double bonds >= 4".
func ParseSelector(s string) ([]Term, error) {
	var out []Term
	for _, part := range strings.Split(s, "+") {
		p := strings.ToLower(strings.Join(strings.Fields(part), " "))
		switch {
		case p == "trans":
			out = append(out, Term{TransOnly: true})
		case termCDRe.MatchString(p):
			m := termCDRe.FindStringSubmatch(p)
			c, _ := strconv.Atoi(m[1])
			d, _ := strconv.Atoi(m[2])
			if c < 4 || c > 24 || d > 6 {
				return nil, fmt.Errorf("%q is not a fatty-acid chain of 4 to 24 carbons with up to 6 double bonds", part)
			}
			out = append(out, Term{Carbons: c, DoubleBonds: d, TransOnly: m[3] != ""})
		case termPolyRe.MatchString(p):
			n, _ := strconv.Atoi(termPolyRe.FindStringSubmatch(p)[1])
			if n < 1 {
				return nil, fmt.Errorf("%q: at least one double bond", part)
			}
			out = append(out, Term{MinDoubleBonds: n})
		default:
			return nil, fmt.Errorf("%q is not a selector (C18:1, C18:1 trans, trans, double bonds >= 4)", strings.TrimSpace(part))
		}
	}
	return out, nil
}

// sum is the share of p's acids (percent, on basis values) the row counts.
func (r *Row) sum(p *chem.Profile, values []float64) float64 {
	var s float64
	for i, c := range p.Components {
		for _, t := range r.Terms {
			if t.selects(c.Acid) {
				s += values[i]
				break
			}
		}
	}
	return s
}
