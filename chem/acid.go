package chem

import (
	"fmt"
	"strconv"
	"strings"
)

// Geometry is the configuration of one carbon–carbon double bond.
type Geometry int

const (
	// GeometryUnknown means the laboratory did not resolve the configuration.
	GeometryUnknown Geometry = iota
	// Cis is the Z configuration of an unbranched fatty-acid double bond.
	Cis
	// Trans is the E configuration of an unbranched fatty-acid double bond.
	Trans
)

// String gives the one-letter code used in acid identifiers ("c", "t").
func (g Geometry) String() string {
	switch g {
	case Cis:
		return "c"
	case Trans:
		return "t"
	default:
		return "?"
	}
}

// DoubleBond is one double bond, located by the lower-numbered carbon counted
// from the carboxyl end (Δ numbering).
type DoubleBond struct {
	Position int
	Geometry Geometry
}

// Class is the saturation class of an acid.
type Class int

const (
	// Saturated acids carry no double bond.
	Saturated Class = iota
	// Monounsaturated acids carry one.
	Monounsaturated
	// Polyunsaturated acids carry two or more.
	Polyunsaturated
)

// String names the class.
func (c Class) String() string {
	switch c {
	case Saturated:
		return "saturated"
	case Monounsaturated:
		return "monounsaturated"
	default:
		return "polyunsaturated"
	}
}

// Branch is the methyl branching of a saturated chain.
type Branch int

const (
	// Unbranched is the straight chain of almost every food fatty acid.
	Unbranched Branch = iota
	// Iso carries a methyl group on the second carbon from the methyl end
	// (ω-1), as in 13-methyltetradecanoic acid (iso-15:0).
	Iso
	// Anteiso carries it on the third (ω-2), as in 12-methyltetradecanoic
	// acid (anteiso-15:0).
	Anteiso
)

// String gives the word used in identifiers ("iso", "anteiso"; "" for a
// straight chain).
func (b Branch) String() string {
	switch b {
	case Iso:
		return "iso"
	case Anteiso:
		return "anteiso"
	}
	return ""
}

// FattyAcid is one catalogue entry: a carboxylic acid with its structure
// (straight-chain, or with the iso or anteiso methyl branch of ruminant and
// fish fats). Molar masses are derived from the formula, never stored.
type FattyAcid struct {
	// ID is the canonical label, e.g. "16:0", "18:1 c9", "18:2 c9,c12",
	// "18:1 t" (trans isomers, positions not resolved), "18:1 c9 12-OH".
	ID string
	// Carbons is the chain length including the carboxyl carbon.
	Carbons int
	// DoubleBondCount is the number of C=C double bonds.
	DoubleBondCount int
	// Bonds lists the double bonds when their positions are known; it is nil
	// for a lumped entry that stands for several positional isomers.
	Bonds []DoubleBond
	// LumpedGeometry is the geometry a lumped entry stands for (Trans for
	// "18:1 t"); GeometryUnknown for entries with resolved bonds.
	LumpedGeometry Geometry
	// HydroxyPosition is the carbon carrying a hydroxy group, 0 for none.
	HydroxyPosition int
	// Branch is the methyl branch of a branched-chain acid; Carbons counts
	// every carbon, the branch included, so the formula is that of the
	// straight-chain isomer.
	Branch Branch
	// CommonName is the trivial name, e.g. "oleic"; empty when none is usual.
	CommonName string
	// SystematicName is the IUPAC name of the acid.
	SystematicName string
	// Names are further spellings accepted by the label parser (lower case).
	Names []string
	// Preferred marks the common isomer a bare "C:D" label is read as.
	Preferred bool
}

// Class returns the saturation class.
func (a *FattyAcid) Class() Class {
	switch {
	case a.DoubleBondCount == 0:
		return Saturated
	case a.DoubleBondCount == 1:
		return Monounsaturated
	default:
		return Polyunsaturated
	}
}

// Formula returns the element counts C, H, O of the free acid:
// CnH(2n−2d)O2, plus one O for a hydroxy acid.
func (a *FattyAcid) Formula() (c, h, o int) {
	c = a.Carbons
	h = 2*a.Carbons - 2*a.DoubleBondCount
	o = 2
	if a.HydroxyPosition > 0 {
		o++
	}
	return c, h, o
}

// MolarMass is the free acid's molar mass in g/mol, from its formula and the
// standard atomic weights.
func (a *FattyAcid) MolarMass() float64 {
	c, h, o := a.Formula()
	return float64(c)*AtomicMassC + float64(h)*AtomicMassH + float64(o)*AtomicMassO
}

// MethylEsterMolarMass is the molar mass of the fatty-acid methyl ester (FAME),
// the acid plus one CH2, g/mol.
func (a *FattyAcid) MethylEsterMolarMass() float64 {
	return a.MolarMass() + MolarMassCH2
}

// SimpleTAGMolarMass is the molar mass of the triacylglycerol carrying this
// acid in all three positions, g/mol.
func (a *FattyAcid) SimpleTAGMolarMass() float64 {
	return 3*a.MolarMass() + GlycerolBackboneIncrement
}

// AcylMolarMass is what one chain of this acid weighs inside a
// triacylglycerol: the acid plus a third of the glycerol backbone increment.
func (a *FattyAcid) AcylMolarMass() float64 {
	return a.MolarMass() + GlycerolBackboneIncrement/3
}

// HasTrans reports whether the acid carries at least one trans double bond
// (or stands for trans isomers in a lumped entry).
func (a *FattyAcid) HasTrans() bool {
	if a.LumpedGeometry == Trans {
		return true
	}
	for _, b := range a.Bonds {
		if b.Geometry == Trans {
			return true
		}
	}
	return false
}

// allGeometry reports whether every resolved double bond has geometry g.
func (a *FattyAcid) allGeometry(g Geometry) bool {
	if a.DoubleBondCount == 0 || len(a.Bonds) != a.DoubleBondCount {
		return false
	}
	for _, b := range a.Bonds {
		if b.Geometry != g {
			return false
		}
	}
	return true
}

// AllCis reports whether the acid is unsaturated with every double bond cis.
func (a *FattyAcid) AllCis() bool { return a.allGeometry(Cis) }

// Conjugated reports whether two double bonds are adjacent in the chain
// (separated by one single bond, as in rumenic acid), rather than
// methylene-interrupted.
func (a *FattyAcid) Conjugated() bool {
	for i := 1; i < len(a.Bonds); i++ {
		if a.Bonds[i].Position-a.Bonds[i-1].Position == 2 {
			return true
		}
	}
	return false
}

// OmegaPosition is the n-x position: the first double bond counted from the
// methyl end (carbons minus the highest Δ position). It is 0 when the acid is
// saturated or its positions are not resolved.
func (a *FattyAcid) OmegaPosition() int {
	if len(a.Bonds) == 0 {
		return 0
	}
	return a.Carbons - a.Bonds[len(a.Bonds)-1].Position
}

// OmegaFamily is the nutritional n-x family (3, 6, 7, 9, …) of an all-cis,
// methylene-interrupted acid, or 0 when the acid belongs to none (saturated,
// trans-containing, conjugated, hydroxy or unresolved). Nutritional n-3/n-6/n-9 sums
// count cis acids only.
func (a *FattyAcid) OmegaFamily() int {
	// Hydroxy acids (ricinoleic) are not counted in nutritional families.
	if !a.AllCis() || a.Conjugated() || a.HydroxyPosition > 0 {
		return 0
	}
	return a.OmegaPosition()
}

// Shorthand returns "C:D", e.g. "18:1".
func (a *FattyAcid) Shorthand() string {
	return strconv.Itoa(a.Carbons) + ":" + strconv.Itoa(a.DoubleBondCount)
}

// canonicalID builds the identifier from the structure so that IDs and
// structures cannot drift apart.
func canonicalID(carbons, d int, bonds []DoubleBond, lumped Geometry, hydroxy int, branch Branch) string {
	var b strings.Builder
	fmt.Fprintf(&b, "%d:%d", carbons, d)
	if branch != Unbranched {
		b.WriteString(" " + branch.String())
	}
	if len(bonds) > 0 {
		b.WriteByte(' ')
		for i, db := range bonds {
			if i > 0 {
				b.WriteByte(',')
			}
			fmt.Fprintf(&b, "%s%d", db.Geometry, db.Position)
		}
	} else if lumped != GeometryUnknown {
		b.WriteString(" " + lumped.String())
	}
	if hydroxy > 0 {
		fmt.Fprintf(&b, " %d-OH", hydroxy)
	}
	return b.String()
}
