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
// Selects reports whether the term counts acid a.
func (t Term) Selects(a *chem.FattyAcid) bool { return t.selects(a) }

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

// usualIsomer is the acid a C:D row of a standard stands for when a
// profile is built from its ranges: the usual isomer of that chain in
// vegetable oils.
var usualIsomer = map[string]string{
	"C16:1": "16:1 c9", "C17:1": "17:1 c10", "C18:1": "18:1 c9", "C18:2": "18:2 c9,c12", "C18:3": "18:3 c9,c12,c15",
	"C20:1": "20:1 c11", "C20:2": "20:2 c11,c14", "C22:1": "22:1 c13", "C22:2": "22:2 c13,c16", "C24:1": "24:1 c15",
}

// MidpointProfile is the profile at the middle of every single-chain acid
// range of s (ND rows as 0, a range without a minimum from 0), scaled to
// 100 on the FAME weight basis: the composition the standard's box is
// centred on, each C:D row read as its usual vegetable-oil isomer. It is a
// typical composition for planning, not an analysis of any lot.
func MidpointProfile(cat *chem.Catalogue, s *Specification) (*chem.Profile, error) {
	var entries []chem.Entry
	var sum float64
	for _, r := range s.Acids {
		if r.NotDetected || len(r.Terms) != 1 || r.Terms[0].Carbons == 0 || r.Terms[0].TransOnly || math.IsNaN(r.Range.Max) {
			continue
		}
		lo := r.Range.Min
		if math.IsNaN(lo) {
			lo = 0
		}
		mid := (lo + r.Range.Max) / 2
		if mid <= 0 {
			continue
		}
		label := strings.TrimPrefix(r.Selector, "C")
		if id, ok := usualIsomer[r.Selector]; ok {
			label = id
		}
		entries = append(entries, chem.Entry{Acid: label, Percent: mid})
		sum += mid
	}
	if sum <= 0 {
		return nil, chem.Errorf(chem.KindInvalid, "specification %q has no acid ranges to build a profile from", s.ID)
	}
	for i := range entries {
		entries[i].Percent *= 100 / sum
	}
	return chem.NewProfile(cat, chem.BasisFAMEWeight, entries, 0.01)
}
