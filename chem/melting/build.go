package melting

import (
	"math"
	"slices"

	"lipidsvc/chem"
)

// prepared holds the per-acid parts of the pure-TAG correlation for one
// polymorph: ΔH and ΔS of a species are sums over its chains plus the
// intercepts and the mismatch term.
type prepared struct {
	chains []chain
	// Per-chain ΔH (kJ/mol) and ΔS (J/(mol·K)) parts at sn-1/3 and at sn-2.
	hcOuter, scOuter []float64
	hcSN2, scSN2     []float64
	gx, gy           []float64 // mismatch terms f_x, f_y = 1 − exp(−(d/w)²) by carbon difference
	k                PolymorphCoefficients
	thetaK           float64 // compensation temperature
	overrides        []int16 // see resolveOverrides; nil when none apply
}

// mainEntry is one of the largest species of a fat.
type mainEntry struct {
	sp       tagSpecies
	tmK      float64 // melting point without calibration shift
	measured bool
}

// keptSpecies is a species kept as its own component.
type keptSpecies struct {
	z, mass, tmK, dhKJ float64
	fam                int32 // dense family key
}

// poolBins is the number of 2 K melting-point bins pooled species use,
// from floorMeltingPointK to maxBinnedMeltingPointK (far above any TAG).
const (
	maxBinnedMeltingPointK = 450.0
	poolBins               = int((maxBinnedMeltingPointK - floorMeltingPointK) / poolBinK)
)

// poolBin accumulates the species pooled into one (family, 2 K bin).
type poolBin struct{ z, zm, ztm, zdh float64 }

// build enumerates the species (in the order of enumerate), gives each its
// melting properties and family (for the SolidSolutionFamilies model; the
// other models put every species in one family), keeps those at or above
// the pooling floor and pools the rest into 2 K melting-point bins within
// their family, and
// lays the mixture out family by family (families in key order cis, trans,
// band; in a family the kept species in enumeration order, then the pooled
// bins in ascending order). The species themselves are not stored: only the
// largest ones for the result (Composition rebuilds the full list on
// request). It returns the mass of species with acids outside the fit.
func (f *Fat) build(pr prepared) (outsideMass float64) {
	comp := f.composition
	a, b := comp.SN13, comp.SN2
	n := len(comp.Acids)
	floor := f.opt.Composition.PoolFloorMoleFraction
	if f.opt.Composition.NoPooling {
		floor = 0
	}
	shift := f.opt.Calibration.TemperatureShiftK
	acidMass := make([]float64, n)
	maxC := 0
	for i, ac := range comp.Acids {
		acidMass[i] = ac.MolarMass()
		maxC = max(maxC, pr.chains[i].carbons)
	}
	// Dense family key (cis·4 + trans)·nb + band (see familyOf), a sum of
	// per-chain codes plus the band.
	nb := (3*maxC+familyBandCarbons/2)/familyBandCarbons + 1
	famCode := make([]int, n)
	// Only the families model uses families; the other models pool by
	// melting point alone, as one family.
	grouped := f.opt.SolidModel == SolidSolutionFamilies
	if !grouped {
		nb = 1
	}
	for i := range famCode {
		if !grouped {
			break
		}
		switch pr.chains[i].kind {
		case kindSaturated:
		case kindTransMonoene:
			famCode[i] = nb
		default:
			famCode[i] = 4 * nb
		}
	}
	kc := &pr.k
	// ΔS parts of the mismatch terms per unit f_x and f_y.
	sn2MismatchS := 1000 * kc.SN2MismatchKJ / pr.thetaK
	outerMismatchS := 1000 * kc.OuterMismatchKJ / pr.thetaK
	nMain := f.opt.MainSpecies
	f.main = make([]mainEntry, 0, nMain+1)
	var kept []keptSpecies
	binSlots := make([][]int32, 16*nb) // per dense family: bin → 1 + index into bins
	bins := make([]poolBin, 0, 256)
	var pooledMass float64
	for i := 0; i < n; i++ {
		if a[i] == 0 {
			continue
		}
		for l := i; l < n; l++ {
			if a[l] == 0 {
				continue
			}
			outer := a[i] * a[l]
			if i != l {
				outer *= 2
			}
			ci, cl := pr.chains[i].carbons, pr.chains[l].carbons
			short, long := min(ci, cl), max(ci, cl)
			// The parts that do not depend on the middle chain.
			gy := pr.gy[long-short]
			hOuter := kc.EnthalpyInterceptKJ + pr.hcOuter[i] + pr.hcOuter[l] + kc.OuterMismatchKJ*gy
			sOuter := kc.EntropyInterceptJ + pr.scOuter[i] + pr.scOuter[l] + outerMismatchS*gy
			massOuter := chem.GlycerolBackboneIncrement + acidMass[i] + acidMass[l]
			famOuter := famCode[i] + famCode[l]
			inFitOuter := pr.chains[i].inFit && pr.chains[l].inFit
			for j := 0; j < n; j++ {
				if b[j] == 0 {
					continue
				}
				z := outer * b[j]
				mass := massOuter + acidMass[j]
				cj := pr.chains[j].carbons
				x := cj - short
				if x < 0 {
					x = -x
				}
				gx := pr.gx[x]
				h := hOuter + pr.hcSN2[j] + kc.SN2MismatchKJ*gx
				s := sOuter + pr.scSN2[j] + sn2MismatchS*gx
				var tm float64
				if h < floorEnthalpyKJ || s <= 0 {
					tm, h = floorMeltingPointK, floorEnthalpyKJ
				} else if tm = 1000 * h / s; tm < floorMeltingPointK {
					tm = floorMeltingPointK
				}
				measured := false
				if pr.overrides != nil {
					if oi := pr.overrides[(i*n+j)*n+l]; oi > 0 {
						m := measuredOverrides[oi-1]
						if !math.IsNaN(m.meltingPointK) {
							tm = m.meltingPointK
						}
						if !math.IsNaN(m.enthalpyKJ) {
							h = m.enthalpyKJ
						}
						measured = true
						f.overrides++
					}
				}
				f.speciesCount++
				zm := z * mass
				f.totalMass += zm
				if !inFitOuter || !pr.chains[j].inFit {
					outsideMass += zm
				}
				fam := 0
				if grouped {
					fam = famOuter + famCode[j] + (ci+cj+cl+familyBandCarbons/2)/familyBandCarbons
				}
				if len(f.main) < nMain || zm > f.main[len(f.main)-1].sp.z*f.main[len(f.main)-1].sp.mass {
					f.keepMain(mainEntry{tagSpecies{z, mass, [3]int32{int32(i), int32(j), int32(l)}}, tm, measured}, nMain)
				}
				if z >= floor {
					kept = append(kept, keptSpecies{z, mass, tm, h, int32(fam)})
					continue
				}
				// Bins from floorMeltingPointK up; melting points above
				// maxBinnedMeltingPointK share the last bin.
				bi := min(int((tm-floorMeltingPointK)/poolBinK), poolBins-1)
				slots := binSlots[fam]
				if slots == nil {
					slots = make([]int32, poolBins)
					binSlots[fam] = slots
				}
				if slots[bi] == 0 {
					bins = append(bins, poolBin{})
					slots[bi] = int32(len(bins))
				}
				bb := &bins[slots[bi]-1]
				bb.z += z
				bb.zm += zm
				bb.ztm += z * tm
				bb.zdh += z * h
				pooledMass += zm
				f.pooledSpecies++
			}
		}
	}
	// Lay out the mixture family by family (a stable sort keeps the kept
	// species in enumeration order within a family).
	slices.SortStableFunc(kept, func(p, q keptSpecies) int { return int(p.fam) - int(q.fam) })
	nc := len(kept) + len(bins)
	m := &Mixture{z: make([]float64, 0, nc), mass: make([]float64, 0, nc), a: make([]float64, 0, nc),
		c: make([]float64, 0, nc), tm: make([]float64, 0, nc)}
	ki := 0
	for fam := range binSlots {
		first := true
		for ; ki < len(kept) && int(kept[ki].fam) == fam; ki++ {
			sp := &kept[ki]
			m.add(sp.z, sp.mass, sp.tmK+shift, sp.dhKJ, first)
			first = false
		}
		for _, slot := range binSlots[fam] {
			if slot > 0 {
				bb := &bins[slot-1]
				m.add(bb.z, bb.zm/bb.z, bb.ztm/bb.z+shift, bb.zdh/bb.z, first)
				first = false
			}
		}
	}
	m.endFamilies()
	f.mixture = m
	f.pooledMassPercent = 100 * pooledMass / f.totalMass
	return outsideMass
}

// keepMain inserts e into the fat's list of largest species (by mass,
// largest first; ties keep the earlier species), keeping at most n.
func (f *Fat) keepMain(e mainEntry, n int) {
	if n == 0 {
		return
	}
	m := e.sp.z * e.sp.mass
	pos := len(f.main)
	for pos > 0 && f.main[pos-1].sp.z*f.main[pos-1].sp.mass < m {
		pos--
	}
	f.main = slices.Insert(f.main, pos, e)
	if len(f.main) > n {
		f.main = f.main[:n]
	}
}
