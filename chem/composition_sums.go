package chem

import (
	"fmt"
	"strings"
)

// The composition sums (saturated, mono-, polyunsaturated, trans, n-3/n-6/n-9)
// and the derived indices (oxidizability, allylic positions, atherogenic
// and thrombogenic indices) of a profile.

// nonConjugatedTrans reports whether the acid has a trans double bond that is
// methylene-interrupted from every other double bond (or is a lumped trans
// entry, whose isomers are by far mostly so).
func nonConjugatedTrans(a *FattyAcid) bool {
	if a.LumpedGeometry == Trans {
		return true
	}
	for i, b := range a.Bonds {
		if b.Geometry != Trans {
			continue
		}
		conj := (i > 0 && b.Position-a.Bonds[i-1].Position == 2) ||
			(i+1 < len(a.Bonds) && a.Bonds[i+1].Position-b.Position == 2)
		if !conj {
			return true
		}
	}
	return false
}

// SumsOf returns the profile's composition sums, the Sums of PropertiesOf
// without the rest of the certificate.
func SumsOf(p *Profile) Sums {
	var s Sums
	for _, c := range p.Components {
		a := c.Acid
		switch {
		case a.DoubleBondCount == 0:
			s.Saturated += c.Percent
		case nonConjugatedTrans(a):
			s.Trans += c.Percent
		case a.DoubleBondCount == 1 && a.AllCis():
			s.Monounsaturated += c.Percent
		case a.AllCis() && !a.Conjugated():
			s.Polyunsaturated += c.Percent
		default:
			s.OtherUnsaturated += c.Percent
		}
		switch a.OmegaFamily() {
		case 3:
			s.N3 += c.Percent
		case 6:
			s.N6 += c.Percent
		case 9:
			s.N9 += c.Percent
		}
	}
	s.N6ToN3 = ratio(s.N6, s.N3)
	s.PToS = ratio(s.Polyunsaturated, s.Saturated)
	return s
}

// ratioFloorPercent is the smallest denominator a ratio of shares is
// taken over: below it the acids are absent in every practical sense (a
// model's trace of 1e-160 % is not an n-3 content), and the ratio is not
// defined.
const ratioFloorPercent = 1e-6

func ratio(num, den float64) *float64 {
	if den <= ratioFloorPercent {
		return nil
	}
	r := num / den
	return &r
}

func computeIndices(p *Profile, s Sums, warn []Warning) (Indices, []Warning) {
	var c18m, c18d, c18t, c12, c14, c16, c18, outside, ape, bape float64
	var outsideIDs []string
	for _, c := range p.Components {
		a := c.Acid
		if a.DoubleBondCount >= 2 && !(a.Carbons == 18 && a.AllCis() && !a.Conjugated() && a.HydroxyPosition == 0 && a.DoubleBondCount <= 3) {
			outside += c.Percent
			if c.Percent > 0 {
				outsideIDs = append(outsideIDs, a.ID)
			}
		}
		allylic, bisAllylic := allylicPositions(a)
		ape += c.Percent * float64(allylic)
		bape += c.Percent * float64(bisAllylic)
		switch {
		case a.DoubleBondCount == 0:
			switch a.Carbons {
			case 12:
				c12 += c.Percent
			case 14:
				c14 += c.Percent
			case 16:
				c16 += c.Percent
			case 18:
				c18 += c.Percent
			}
		case a.Carbons == 18 && a.AllCis() && !a.Conjugated() && a.HydroxyPosition == 0:
			switch a.DoubleBondCount {
			case 1:
				c18m += c.Percent
			case 2:
				c18d += c.Percent
			case 3:
				c18t += c.Percent
			}
		}
	}
	var ix Indices
	ix.Cox = (c18m + 10.3*c18d + 21.6*c18t) / 100
	ix.CoxOutsidePercent = outside
	ix.AllylicPositionEquivalent, ix.BisAllylicPositionEquivalent = ape, bape
	if outside > CoxScopePercent {
		if len(outsideIDs) > 6 {
			outsideIDs = append(outsideIDs[:6], "…")
		}
		warn = append(warn, Warning{WarnMethodScope, fmt.Sprintf(
			"the calculated oxidizability (Cox) counts cis 18:1, 18:2 and 18:3 only; %.3g %% of the acids are polyunsaturated "+
				"outside that definition (%s), so it understates how readily this fat oxidises; the bis-allylic position equivalent counts them", outside, strings.Join(outsideIDs, ", ")), nil})
	}
	ix.Atherogenic = ratio(c12+4*c14+c16, s.Monounsaturated+s.N6+s.N3)
	den := 0.5*s.Monounsaturated + 0.5*s.N6 + 3*s.N3
	switch {
	case s.N6 > 0:
		den += s.N3 / s.N6
	case s.N3 > 0:
		// n-3 without n-6: the ratio is infinite, so the term is dropped.
		warn = append(warn, Warning{WarnUndefinedIndex,
			"the profile has n-3 but no n-6 acid, so the n-3/n-6 term of the thrombogenic index was left out", nil})
	}
	ix.Thrombogenic = ratio(c14+c16+c18, den)
	if ix.Atherogenic == nil || ix.Thrombogenic == nil {
		warn = append(warn, Warning{WarnUndefinedIndex,
			"the profile has no monounsaturated, n-6 or n-3 acid in the denominator of the atherogenic or thrombogenic index; the index is not given", nil})
	}
	if p.Basis != BasisFAMEWeight {
		warn = append(warn, Warning{WarnBasisConversion,
			fmt.Sprintf("composition sums and indices are on the profile's basis (%s); the indices were published on GC area %% (FAME weight %%)", p.Basis), nil})
	}
	return ix, warn
}

// allylicPositions counts the CH2 groups of a chain next to one double bond
// (allylic) and between two (bis-allylic, in a methylene-interrupted run).
// Each run of methylene-interrupted or conjugated bonds has an allylic CH2
// at either end, unless the end is the carboxyl carbon or the terminal
// methyl. An acid whose bond positions are not resolved is taken as
// methylene-interrupted.
func allylicPositions(a *FattyAcid) (allylic, bisAllylic int) {
	n := a.DoubleBondCount
	if n == 0 {
		return 0, 0
	}
	if len(a.Bonds) != n {
		return 2, n - 1
	}
	if a.Bonds[0].Position-1 >= 2 {
		allylic++
	}
	if a.Bonds[n-1].Position+2 <= a.Carbons-1 {
		allylic++
	}
	for i := 1; i < n; i++ {
		switch gap := a.Bonds[i].Position - a.Bonds[i-1].Position; {
		case gap == 3:
			bisAllylic++
		case gap > 3:
			allylic += 2
		}
	}
	return allylic, bisAllylic
}
