package chem

import (
	"fmt"
	"math"
	"strconv"
	"strings"
)

// Basis is the quantity a profile's percentages are expressed in.
type Basis int

const (
	// BasisFAMEWeight: weight % of fatty-acid methyl esters. Gas
	// chromatography area % (AOCS Ce 1h-05, ISO 12966-4) is read as this by
	// long practice.
	BasisFAMEWeight Basis = iota
	// BasisAcidWeight: weight % of free fatty acids.
	BasisAcidWeight
	// BasisMole: mole % of fatty-acid chains.
	BasisMole
)

// String names the basis as the API does.
func (b Basis) String() string {
	switch b {
	case BasisAcidWeight:
		return "acid_weight_percent"
	case BasisMole:
		return "mole_percent"
	default:
		return "fame_weight_percent"
	}
}

// DefaultSumTolerance is how far, in percentage points, a profile's sum may
// stray from 100 and still be normalised rather than rejected.
const DefaultSumTolerance = 0.5

// SumNoise is the distance from 100 below which a sum of percentages counts
// as exactly 100 (floating-point noise in a laboratory's export).
const SumNoise = 1e-9

// maxSuggestedLabels is how many bad labels of one profile get suggestions.
const maxSuggestedLabels = 10

// Entry is one line of a laboratory profile as received: the label as the
// laboratory wrote it (field "acid") and its share (field "percent").
type Entry struct {
	Acid    string
	Percent float64
}

// ProfileInput is a fatty-acid profile in the shape a request carries it
// (the contract's Profile object). Field paths in errors and warnings are
// relative to it: "basis", "sum_tolerance_percent", "acids", i, "acid" or
// "percent".
type ProfileInput struct {
	// Basis names what the percentages are: "fame_weight_percent" (also
	// ""), "acid_weight_percent" or "mole_percent". See [Basis].
	Basis string
	// SumTolerancePercent is how far, in percentage points, the sum may
	// stray from 100 and still be scaled; nil means DefaultSumTolerance.
	SumTolerancePercent *float64
	// MaxUnidentifiedPercent is the largest unidentified share (percent of
	// the whole profile) that is accepted; nil means
	// DefaultMaxUnidentifiedPercent.
	MaxUnidentifiedPercent *float64
	// Acids are the profile's lines.
	Acids []Entry
}

// ParseBasis reads a basis by its contract name; "" is the default,
// BasisFAMEWeight.
func ParseBasis(s string) (Basis, bool) {
	switch s {
	case "", "fame_weight_percent":
		return BasisFAMEWeight, true
	case "acid_weight_percent":
		return BasisAcidWeight, true
	case "mole_percent":
		return BasisMole, true
	}
	return 0, false
}

// ReadProfile reads, checks and normalises a profile given in the request's
// shape; see [NewProfile] for the rules. A nil input is a KindMalformed
// error with an empty path (the caller's field for the profile). Paths are
// relative to the profile.
func (c *Catalogue) ReadProfile(in *ProfileInput) (*Profile, error) {
	if in == nil {
		return nil, Errorf(KindMalformed, "the profile is missing").WithField("required")
	}
	basis, ok := ParseBasis(in.Basis)
	if !ok {
		return nil, Errorf(KindMalformed, "unknown basis").
			WithField("must be fame_weight_percent, acid_weight_percent or mole_percent", "basis")
	}
	tol := DefaultSumTolerance
	if in.SumTolerancePercent != nil {
		tol = *in.SumTolerancePercent
	}
	limit := DefaultMaxUnidentifiedPercent
	if in.MaxUnidentifiedPercent != nil {
		limit = *in.MaxUnidentifiedPercent
		if math.IsNaN(limit) || limit < 0 || limit > 100 {
			return nil, Errorf(KindInvalid, "the unidentified limit must be from 0 to 100 %%").
				WithField("must be from 0 to 100", "max_unidentified_percent")
		}
	}
	p, err := NewProfile(c, basis, in.Acids, tol)
	if err != nil {
		return nil, err
	}
	switch u := p.UnidentifiedPercent; {
	case u > limit+SumNoise:
		// The chemistry of the identified rest would be answered as if it
		// were the fat: refuse.
		return nil, Errorf(KindInvalid, "%.3g %% of the profile is unidentified, above the limit of %.3g %%; the "+
			"identified acids cannot stand for the fat", u, limit).
			WithField(fmt.Sprintf("unidentified share %.3g %% exceeds max_unidentified_percent %.3g", u, limit), "acids")
	case u > UnidentifiedWarnPercent:
		p.Warnings = append(p.Warnings, Warning{WarnUnidentifiedHigh, fmt.Sprintf(
			"%.3g %% of the profile is unidentified, more than the %.3g %% a complete FAME analysis usually leaves; "+
				"the results describe the identified acids only — check the peak identification", u, UnidentifiedWarnPercent),
			[]any{"acids"}})
	}
	return p, nil
}

// Limits of the unidentified share of a profile, percent of the whole
// profile: above DefaultMaxUnidentifiedPercent (or the request's limit) a
// profile is refused; above UnidentifiedWarnPercent it is answered with
// WarnUnidentifiedHigh. Our choices, common practice, no source: a
// complete GC analysis of an edible oil identifies all but a few percent.
const (
	DefaultMaxUnidentifiedPercent = 10.0
	UnidentifiedWarnPercent       = 2.0
)

// ReadProfileAt is ReadProfile for a profile that sits at path in the
// caller's input: errors and warnings point there.
func (c *Catalogue) ReadProfileAt(in *ProfileInput, path ...any) (*Profile, error) {
	p, err := c.ReadProfile(in)
	if err != nil {
		return nil, PrefixError(err, path...)
	}
	p.Warnings = PrefixWarnings(p.Warnings, path...)
	return p, nil
}

// Warning records a normalisation or an assumption the calculation made, so
// that nothing is silently dropped or guessed. Path points at the input it
// concerns, in the same vocabulary as FieldError.
type Warning struct {
	Code    string
	Message string
	Path    []any
}

// Warning codes shared by every calculation that reads a profile.
const (
	WarnAssumedIsomer   = "assumed_isomer"
	WarnNormalised      = "profile_normalised"
	WarnDuplicateAcid   = "duplicate_acid_summed"
	WarnUnidentified    = "unidentified_excluded"
	WarnBasisConversion = "basis_converted"
	WarnUndefinedIndex  = "index_undefined"
	WarnMethodScope     = "method_scope"
	// WarnUnidentifiedHigh: more of the profile is unidentified than a
	// complete analysis leaves (UnidentifiedWarnPercent).
	WarnUnidentifiedHigh = "unidentified_share_high"
)

// Component is one identified acid of a profile.
type Component struct {
	Acid *FattyAcid
	// Percent is the acid's share of the identified acids in the profile's
	// basis, normalised so that the identified acids sum to 100.
	Percent float64
	// MoleFraction is the acid's mole fraction among the identified chains.
	MoleFraction float64
}

// Profile is a validated, normalised fatty-acid composition. Build it with
// NewProfile; the zero value is not usable.
type Profile struct {
	Basis Basis
	// Components are the identified acids in order of first appearance.
	Components []Component
	// InputSum is the sum of all percentages as received.
	InputSum float64
	// UnidentifiedPercent is the share of unidentified material after
	// normalising the whole profile to 100.
	UnidentifiedPercent float64
	// Warnings lists what normalisation and label reading assumed.
	Warnings []Warning
}

// NewProfile reads, checks and normalises a laboratory profile. Every label
// is resolved against the catalogue; the same acid twice is summed; a sum
// within tol percentage points of 100 is normalised; anything else is a
// KindInvalid *Error whose field paths start at "acids".
func NewProfile(cat *Catalogue, basis Basis, entries []Entry, tol float64) (*Profile, error) {
	if len(entries) == 0 {
		return nil, Errorf(KindInvalid, "the profile lists no acids").WithField("at least one acid is required", "acids")
	}
	if math.IsNaN(tol) || tol < 0 {
		return nil, Errorf(KindInvalid, "sum tolerance must be a non-negative number").WithField("must be >= 0", "sum_tolerance_percent")
	}
	p := &Profile{Basis: basis, Components: make([]Component, 0, len(entries))}
	var bad FieldErrors
	// Where each acid sits among the components: a linear search for the
	// usual few dozen lines (cheaper than a map), a map for long lists.
	var index map[*FattyAcid]int
	if len(entries) > 32 {
		index = make(map[*FattyAcid]int, len(entries))
	}
	find := func(a *FattyAcid) (int, bool) {
		if index != nil {
			j, ok := index[a]
			return j, ok
		}
		for j := range p.Components {
			if p.Components[j].Acid == a {
				return j, true
			}
		}
		return 0, false
	}
	var unidentified float64
	for i, e := range entries {
		// One entry may exceed 100 by the sum tolerance: a pure standard
		// read at 100.2 % is scaled like any profile that sums to 100.2.
		if math.IsNaN(e.Percent) || math.IsInf(e.Percent, 0) || e.Percent < 0 || e.Percent > 100+tol {
			bad.Invalid(fmt.Sprintf("percent must be a finite number from 0 to 100 (+ the sum tolerance, %g)", tol), "acids", i, "percent")
			continue
		}
		if e.Percent == 0 {
			e.Percent = 0 // −0 (valid JSON) must not come back as "-0"
		}
		p.InputSum += e.Percent
		// Suggestions cost an edit-distance search; a profile full of bad
		// labels gets them for the first few only.
		r, err := cat.resolve(e.Acid, bad.Len() < maxSuggestedLabels)
		if err != nil {
			ce, _ := AsError(err)
			bad.AddSuggested(KindInvalid, ce.Message, ce.Suggestions, "acids", i, "acid")
			continue
		}
		if r.Unidentified {
			unidentified += e.Percent
			continue
		}
		if r.Assumption != "" {
			p.Warnings = append(p.Warnings, Warning{WarnAssumedIsomer, r.Assumption, []any{"acids", i, "acid"}})
		}
		if j, seen := find(r.Acid); seen {
			p.Components[j].Percent += e.Percent
			p.Warnings = append(p.Warnings, Warning{WarnDuplicateAcid,
				fmt.Sprintf("%s appears more than once (label %q); the entries were summed", r.Acid.ID, e.Acid),
				[]any{"acids", i, "acid"}})
			continue
		}
		if index != nil {
			index[r.Acid] = len(p.Components)
		}
		p.Components = append(p.Components, Component{Acid: r.Acid, Percent: e.Percent})
	}
	if err := bad.Err(""); err != nil {
		return nil, err
	}
	if dev := math.Abs(p.InputSum - 100); dev > tol+SumNoise {
		return nil, Errorf(KindInvalid, "the percentages sum to %.4g, outside 100 ± %.4g", p.InputSum, tol).
			WithField(fmt.Sprintf("sum %.4g is outside 100 ± %.4g percentage points", p.InputSum, tol), "acids")
	}
	identified := p.InputSum - unidentified
	if identified <= 0 {
		return nil, Errorf(KindInvalid, "the profile has no identified acid with a positive share").
			WithField("no identified acid with a positive percent", "acids")
	}
	if math.Abs(p.InputSum-100) > SumNoise {
		p.Warnings = append(p.Warnings, Warning{WarnNormalised,
			fmt.Sprintf("the percentages summed to %.6g; they were scaled to 100", p.InputSum), []any{"acids"}})
	}
	p.UnidentifiedPercent = 100 * unidentified / p.InputSum
	if unidentified > 0 {
		// Built without fmt: most profiles carry an unidentified remainder,
		// and this message was a measurable share of reading one.
		p.Warnings = append(p.Warnings, Warning{WarnUnidentified,
			strconv.FormatFloat(p.UnidentifiedPercent, 'g', 4, 64) + " % of the profile is unidentified; it counts in the sum " +
				"but is left out of the chemistry, which is computed on the identified acids scaled to 100 %", []any{"acids"}})
	}
	for i := range p.Components {
		p.Components[i].Percent *= 100 / identified
	}
	p.fillMoleFractions()
	return p, nil
}

// molesPerPercent is the amount of chains one percent of the basis stands
// for, up to a common factor.
func (b Basis) molesPerPercent(a *FattyAcid) float64 {
	switch b {
	case BasisAcidWeight:
		return 1 / a.MolarMass()
	case BasisMole:
		return 1
	default:
		return 1 / a.MethylEsterMolarMass()
	}
}

func (p *Profile) fillMoleFractions() {
	var total float64
	for i := range p.Components {
		c := &p.Components[i]
		c.MoleFraction = c.Percent * p.Basis.molesPerPercent(c.Acid)
		total += c.MoleFraction
	}
	for i := range p.Components {
		p.Components[i].MoleFraction /= total
	}
}

// FromMoleFractions builds a profile directly from mole fractions of
// catalogue acids (used by models that produce compositions, such as the
// hardening forecast). Fractions are normalised; the basis of the returned
// percentages is the one asked for.
func FromMoleFractions(acids []*FattyAcid, x []float64, basis Basis) *Profile {
	p := &Profile{Basis: basis, InputSum: 100}
	var sx float64
	for _, v := range x {
		sx += v
	}
	var sw float64
	for i, a := range acids {
		w := x[i] / sx / basis.molesPerPercent(a)
		p.Components = append(p.Components, Component{Acid: a, MoleFraction: x[i] / sx, Percent: w})
		sw += w
	}
	for i := range p.Components {
		p.Components[i].Percent *= 100 / sw
	}
	return p
}

// InBasis returns the identified composition as percentages in another
// basis, in component order, summing to 100.
func (p *Profile) InBasis(b Basis) []float64 {
	out := make([]float64, len(p.Components))
	var s float64
	for i, c := range p.Components {
		out[i] = c.MoleFraction / b.molesPerPercent(c.Acid)
		s += out[i]
	}
	for i := range out {
		out[i] *= 100 / s
	}
	return out
}

// MeanAcidMolarMass is the mole-average (harmonic with respect to weight)
// molar mass of the free acids, g/mol.
func (p *Profile) MeanAcidMolarMass() float64 {
	var m float64
	for _, c := range p.Components {
		m += c.MoleFraction * c.Acid.MolarMass()
	}
	return m
}

// MeanDoubleBonds is the mole-average number of C=C per chain.
func (p *Profile) MeanDoubleBonds() float64 {
	var d float64
	for _, c := range p.Components {
		d += c.MoleFraction * float64(c.Acid.DoubleBondCount)
	}
	return d
}

// String summarises the profile for debugging.
func (p *Profile) String() string {
	parts := make([]string, len(p.Components))
	for i, c := range p.Components {
		parts[i] = fmt.Sprintf("%s %.4g", c.Acid.ID, c.Percent)
	}
	return p.Basis.String() + ": " + strings.Join(parts, ", ")
}
