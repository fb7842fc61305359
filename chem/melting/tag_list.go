package melting

import (
	"fmt"
	"math"

	"lipidsvc/chem"
)

// TAGAmount is one species of a fat given as its TAG composition (for
// example from an HPLC or GC-TAG analysis). Outer1 and Outer2 are the sn-1
// and sn-3 acids in either order; Middle is the sn-2 acid.
type TAGAmount struct {
	Outer1, Middle, Outer2 *chem.FattyAcid
	// MolePercent is the species' share of all TAG molecules, mol %.
	MolePercent float64
}

// PrepareTAGs is [Prepare] for a fat given as TAG species instead of a
// fatty-acid profile: the species are taken as given (the same species
// listed twice, in either outer order, is summed), and the percentages,
// which must sum to 100 within tol percentage points, are scaled to 100 with
// a warning when they do not sum exactly. Options.Composition's distribution
// and sn-2 fields do not apply and must be left at zero. Errors are
// KindInvalid *chem.Error values with paths ("triacylglycerols", i, …).
func PrepareTAGs(list []TAGAmount, opt Options, tol float64) (*Fat, error) {
	if opt.Composition.Distribution != 0 || opt.Composition.SN2 != 0 || opt.Composition.SN2Profile != nil ||
		opt.Composition.EnrichmentFactors != nil {
		return nil, chem.Errorf(chem.KindInvalid, "a TAG composition takes no distribution or sn-2 options").
			WithField("not with an explicit TAG composition", "distribution")
	}
	opt = opt.withDefaults()
	if err := opt.validate(); err != nil {
		return nil, err
	}
	var bad chem.FieldErrors
	if len(list) == 0 {
		bad.Invalid("at least one species is required", "triacylglycerols")
	}
	var sum float64
	for i, t := range list {
		if t.Outer1 == nil || t.Middle == nil || t.Outer2 == nil {
			bad.Invalid("three acids are required", "triacylglycerols", i)
		}
		if math.IsNaN(t.MolePercent) || math.IsInf(t.MolePercent, 0) || t.MolePercent < 0 || t.MolePercent > 100 {
			bad.Invalid("must be a finite number from 0 to 100", "triacylglycerols", i, "mole_percent")
			continue
		}
		sum += t.MolePercent
	}
	if bad.Len() == 0 {
		switch {
		case !(sum > 0):
			bad.Invalid("no species with a positive share", "triacylglycerols")
		case math.Abs(sum-100) > tol+chem.SumNoise:
			bad.Invalid(fmt.Sprintf("the shares sum to %.4g, outside 100 ± %.4g", sum, tol), "triacylglycerols")
		}
	}
	if err := bad.Err(""); err != nil {
		return nil, err
	}

	// The acids in order of first appearance, and the species by index.
	// Acids are keyed by canonical ID, as everywhere else, so entries read
	// through different catalogue instances still meet.
	index := map[string]int{}
	var acids []*chem.FattyAcid
	idx := func(a *chem.FattyAcid) int {
		if k, ok := index[a.ID]; ok {
			return k
		}
		index[a.ID] = len(acids)
		acids = append(acids, a)
		return len(acids) - 1
	}
	type key struct{ o1, m, o2 int }
	order := []key{}
	z := map[key]float64{}
	var warnings []chem.Warning
	for i, t := range list {
		o1, m, o2 := idx(t.Outer1), idx(t.Middle), idx(t.Outer2)
		if o1 > o2 {
			o1, o2 = o2, o1
		}
		k := key{o1, m, o2}
		if _, seen := z[k]; seen {
			warnings = append(warnings, chem.Warning{Code: chem.WarnDuplicateAcid,
				Message: fmt.Sprintf("species %s/%s/%s appears more than once; the shares were summed",
					t.Outer1.ID, t.Middle.ID, t.Outer2.ID), Path: []any{"triacylglycerols", i}})
		} else {
			order = append(order, k)
		}
		z[k] += t.MolePercent / sum
	}
	if math.Abs(sum-100) > chem.SumNoise {
		warnings = append(warnings, chem.Warning{Code: chem.WarnNormalised,
			Message: fmt.Sprintf("the TAG shares summed to %.6g; they were scaled to 100", sum), Path: []any{"triacylglycerols"}})
	}

	// Positional pools of the composition, for reporting.
	n := len(acids)
	comp := &Composition{Acids: acids, Total: make([]float64, n), SN2: make([]float64, n), SN13: make([]float64, n),
		Distribution: ExplicitTAGs, Class: ClassTAGList}
	for _, k := range order {
		comp.SN2[k.m] += z[k]
		comp.SN13[k.o1] += z[k] / 2
		comp.SN13[k.o2] += z[k] / 2
	}
	for i := range comp.Total {
		comp.Total[i] = (2*comp.SN13[i] + comp.SN2[i]) / 3
	}
	opt.Composition.Distribution = ExplicitTAGs
	f := &Fat{opt: opt, composition: comp, full: &lazyComposition{}, warnings: warnings}
	pr, outside := prepareAcids(acids, nil, opt.Polymorph)
	bd := f.newBuilder(&pr)
	species := make([]tagSpecies, 0, len(order))
	for _, k := range order {
		bd.add(bd.outer(k.o1, k.o2), k.m, z[k])
		mass := chem.GlycerolBackboneIncrement + acids[k.o1].MolarMass() + acids[k.m].MolarMass() + acids[k.o2].MolarMass()
		species = append(species, tagSpecies{z: z[k], mass: mass, idx: [3]int32{int32(k.o1), int32(k.m), int32(k.o2)}})
	}
	outsideMass := bd.finish()
	f.finishWarnings(outside, outsideMass, "triacylglycerols")
	// The species list is the one given, not an enumeration of the pools.
	f.full.once.Do(func() {
		c := *comp
		c.Species = c.materialize(species)
		f.full.c = &c
	})
	return f, nil
}
