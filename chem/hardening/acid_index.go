package hardening

import (
	"fmt"
	"strings"

	"lipidsvc/chem"
)

// acidIndex finds acids in the catalogue by structure.
type acidIndex struct {
	cat *chem.Catalogue
}

func newAcidIndex(cat *chem.Catalogue) *acidIndex { return &acidIndex{cat: cat} }

// saturated returns the saturated acid of the chain length.
func (ix *acidIndex) saturated(carbons int) *chem.FattyAcid {
	g := ix.cat.Chains(carbons, 0)
	if len(g) == 0 {
		return nil
	}
	return g[0]
}

// ladder returns the cis entry that stands for "C:D" as an intermediate:
// the catalogue's preferred (common) isomer when it is all-cis, otherwise
// the first all-cis entry. Saturated chains return the saturated acid.
func (ix *acidIndex) ladder(carbons, d int) *chem.FattyAcid {
	if d == 0 {
		return ix.saturated(carbons)
	}
	var first *chem.FattyAcid
	for _, a := range ix.cat.Chains(carbons, d) {
		if !a.AllCis() {
			continue
		}
		if a.Preferred {
			return a
		}
		if first == nil {
			first = a
		}
	}
	return first
}

// lumpedTrans returns the "C:D t" entry (trans isomers, positions not
// resolved), or nil when the catalogue has none for that chain.
func (ix *acidIndex) lumpedTrans(carbons, d int) *chem.FattyAcid {
	for _, a := range ix.cat.Chains(carbons, d) {
		if a.LumpedGeometry == chem.Trans {
			return a
		}
	}
	return nil
}

// lowerLevel returns the highest double-bond count below d for which the
// catalogue holds an entry of the chain length (0, the saturated acid, at
// the latest).
func (ix *acidIndex) lowerLevel(carbons, d int) int {
	for l := d - 1; l > 0; l-- {
		if ix.ladder(carbons, l) != nil {
			return l
		}
	}
	return 0
}

// removeOneBond returns the catalogue entry obtained by deleting one double
// bond from an all-cis acid, trying the bond nearest the carboxyl group
// first (EPA c5,8,11,14,17 → 20:4 c8,11,14,17), then the others in order of
// position, or nil when no such entry exists.
func (ix *acidIndex) removeOneBond(a *chem.FattyAcid) *chem.FattyAcid {
	for skip := range a.Bonds {
		var b strings.Builder
		fmt.Fprintf(&b, "%d:%d ", a.Carbons, a.DoubleBondCount-1)
		n := 0
		for i, db := range a.Bonds {
			if i == skip {
				continue
			}
			if n > 0 {
				b.WriteByte(',')
			}
			fmt.Fprintf(&b, "c%d", db.Position)
			n++
		}
		if e, ok := ix.cat.ByID(b.String()); ok {
			return e
		}
	}
	return nil
}

// cisPartner returns the cis monoene a trans monoene relaxes to: the cis
// isomer with the same bond position when the catalogue has it (elaidic →
// oleic), otherwise the chain's common cis monoene (lumped "18:1 t" →
// oleic).
func (ix *acidIndex) cisPartner(a *chem.FattyAcid) *chem.FattyAcid {
	if len(a.Bonds) == 1 {
		id := fmt.Sprintf("%d:1 c%d", a.Carbons, a.Bonds[0].Position)
		if e, ok := ix.cat.ByID(id); ok {
			return e
		}
	}
	return ix.ladder(a.Carbons, 1)
}

// transKept is the probability that hydrogenating one of an acid's d double
// bonds, picked at random, leaves one of its t trans bonds in the product:
// 0 for t = 0, 1 − 1/d for t = 1 (only removing that bond loses it), 1 for
// t ≥ 2 (first principles). A lumped trans entry is taken to carry one trans
// bond, which is what most of the isomers formed in hardening carry
// [memory]. For dienes this equals t/d, the form used before trienes with
// trans bonds were handled correctly.
func transKept(a *chem.FattyAcid) float64 {
	d := a.DoubleBondCount
	if d == 0 {
		return 0
	}
	t := 0
	if a.LumpedGeometry == chem.Trans {
		t = 1
	}
	for _, b := range a.Bonds {
		if b.Geometry == chem.Trans {
			t++
		}
	}
	switch t {
	case 0:
		return 0
	case 1:
		return 1 - 1/float64(d)
	default:
		return 1
	}
}
