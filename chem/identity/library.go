package identity

import (
	"fmt"
	"sort"
	"strings"
	"sync"

	"lipidsvc/chem"
)

var (
	referencesOnce sync.Once
	references     []*Specification
)

// References returns the embedded reference specifications (see
// references.go), built once. It panics if one of them is invalid, which
// the tests rule out.
func References() []*Specification {
	referencesOnce.Do(func() {
		for i := range referenceInputs {
			s, err := referenceInputs[i].Build()
			if err != nil {
				panic(fmt.Sprintf("identity: reference %q is invalid: %v", referenceInputs[i].ID, err))
			}
			references = append(references, s)
		}
	})
	return references
}

// Library is the specifications a service offers: the embedded references
// with a plant's own added or replacing them by id. It is immutable.
type Library struct {
	specs []*Specification
	byID  map[string]*Specification
}

// NewLibrary builds the library from the embedded references and the
// plant's specifications (nil for none); a plant specification with a
// reference's id replaces it.
func NewLibrary(plant []*Specification) *Library {
	l := &Library{byID: map[string]*Specification{}}
	for _, s := range References() {
		l.byID[s.ID] = s
	}
	for _, s := range plant {
		c := *s
		c.Plant = true
		l.byID[c.ID] = &c
	}
	for _, s := range l.byID {
		l.specs = append(l.specs, s)
	}
	sort.Slice(l.specs, func(i, j int) bool { return l.specs[i].ID < l.specs[j].ID })
	return l
}

// All returns the specifications ordered by id (shared; do not modify).
func (l *Library) All() []*Specification { return l.specs }

// ByID returns one specification.
func (l *Library) ByID(id string) (*Specification, bool) {
	s, ok := l.byID[id]
	return s, ok
}

// identities are the specifications that may be offered as closest
// references (identity ranges, not limits).
func (l *Library) identities() []*Specification {
	var out []*Specification
	for _, s := range l.specs {
		if !s.Limits {
			out = append(out, s)
		}
	}
	return out
}

// ConformityInput is a conformity request in its own shape. Paths in
// errors: "profile", …; "specification" (an id or an inline
// specification, exactly one of SpecificationID and Specification);
// "measured", ….
type ConformityInput struct {
	Profile         *chem.ProfileInput
	SpecificationID string
	Specification   *SpecificationInput
	Measured        Measured
	// ClosestCount is how many closest references to return; 0 means
	// DefaultClosestCount.
	ClosestCount int
}

// DefaultClosestCount is how many closest references an answer lists.
const DefaultClosestCount = 5

// ConformityAnswer is the answer of [Conform].
type ConformityAnswer struct {
	Result
	// Closest are the library's identity references nearest the profile,
	// best first.
	Closest  []Match
	Warnings []chem.Warning
}

// Conform checks a profile against a specification of the library or an
// inline one and ranks the library's identity references by distance.
// Errors are *chem.Error values with paths into in: KindInvalid for an
// unknown id (with suggestions) or an invalid inline specification, the
// profile's errors, KindInvalid for a measured value that is not finite.
func Conform(cat *chem.Catalogue, lib *Library, in ConformityInput) (*ConformityAnswer, error) {
	var spec *Specification
	switch {
	case in.Specification != nil && in.SpecificationID != "":
		return nil, chem.Errorf(chem.KindMalformed, "give the specification as an id or inline, not both").
			WithField("an id or an object", "specification")
	case in.Specification != nil:
		s, err := in.Specification.Build()
		if err != nil {
			return nil, chem.PrefixError(err, "specification")
		}
		spec = s
	case in.SpecificationID != "":
		s, ok := lib.ByID(in.SpecificationID)
		if !ok {
			e := chem.Errorf(chem.KindInvalid, "unknown specification %q", in.SpecificationID)
			e.Fields = []chem.FieldError{{Path: []any{"specification"}, Suggestions: nearestIDs(lib, in.SpecificationID),
				Reason: fmt.Sprintf("no specification %q; GET /v1/reference-oils lists them", in.SpecificationID)}}
			return nil, e
		}
		spec = s
	default:
		return nil, chem.Errorf(chem.KindMalformed, "the specification is missing").WithField("required", "specification")
	}
	p, err := cat.ReadProfileAt(in.Profile, "profile")
	if err != nil {
		return nil, err
	}
	ans := &ConformityAnswer{Result: Check(p, spec, in.Measured)}
	n := in.ClosestCount
	if n <= 0 {
		n = DefaultClosestCount
	}
	ans.Closest = Closest(p, lib.identities(), in.Measured, n)
	ans.Warnings = append(append([]chem.Warning{}, p.Warnings...), ans.Result.Warnings...)
	if spec.Recalled {
		ans.Warnings = append(ans.Warnings, chem.Warning{Code: WarnRecalledRanges, Message: fmt.Sprintf(
			"the ranges of %s are recalled, not read from %s; confirm them against the standard before relying on the verdict",
			spec.ID, spec.Standard), Path: []any{"specification"}})
	}
	return ans, nil
}

// WarnRecalledRanges: the specification's ranges were recalled rather
// than read from the standard.
const WarnRecalledRanges = "ranges_recalled"

// nearestIDs suggests up to three ids close to id by edit distance (to
// the id or the lower-case name), nearest first.
func nearestIDs(lib *Library, id string) []string {
	type scored struct {
		id   string
		dist int
	}
	id = strings.ToLower(id)
	var all []scored
	for _, s := range lib.specs {
		d := min(chem.EditDistance(id, s.ID), chem.EditDistance(id, strings.ToLower(s.Name)))
		all = append(all, scored{s.ID, d})
	}
	sort.SliceStable(all, func(i, j int) bool { return all[i].dist < all[j].dist })
	var out []string
	for i := 0; i < len(all) && i < 3 && all[i].dist <= len(id)/2+1; i++ {
		out = append(out, all[i].id)
	}
	return out
}
