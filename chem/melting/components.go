package melting

import (
	"math"
	"slices"
	"sync"

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

// builder accumulates species into the mixture: it gives each species its
// melting properties and family (for the SolidSolutionFamilies model; the
// other models put every species in one family), keeps those at or above the
// pooling floor and pools the rest into 2 K melting-point bins within their
// family.
type builder struct {
	f        *Fat
	pr       *prepared
	acidMass []float64
	famCode  []int
	grouped  bool
	floor    float64
	// ΔS parts of the mismatch terms per unit f_x and f_y.
	sn2MismatchS, outerMismatchS float64
	kept                         []keptSpecies
	binSlots                     [][]int32 // per dense family: bin → 1 + index into bins
	bins                         []poolBin
	pooledMass, outsideMass      float64
	sc                           *builderScratch
}

// builderScratch is a builder's working memory, recycled between fats: a
// melting request builds one mixture from thousands of species, and these
// lists were most of what it allocated.
type builderScratch struct {
	kept     []keptSpecies
	bins     []poolBin
	binSlots [][]int32
	free     [][]int32 // zeroed slot arrays ready for reuse
}

var builderScratches = sync.Pool{New: func() any { return new(builderScratch) }}

// slotArray returns a zeroed array of poolBins slots.
func (bd *builder) slotArray() []int32 {
	if n := len(bd.sc.free); n > 0 {
		s := bd.sc.free[n-1]
		bd.sc.free = bd.sc.free[:n-1]
		return s
	}
	return make([]int32, poolBins)
}

// release returns the builder's working memory; the builder is not used
// after it.
func (bd *builder) release() {
	sc := bd.sc
	for fam, slots := range bd.binSlots {
		if slots != nil {
			clear(slots)
			sc.free = append(sc.free, slots)
			bd.binSlots[fam] = nil
		}
	}
	sc.binSlots = bd.binSlots[:0]
	sc.bins = bd.bins[:0]
	sc.kept = nil
	if cap(bd.kept) <= maxRecycledComponents {
		sc.kept = bd.kept[:0]
	}
	bd.sc, bd.kept, bd.bins, bd.binSlots = nil, nil, nil, nil
	builderScratches.Put(sc)
}

func (f *Fat) newBuilder(pr *prepared) *builder {
	comp := f.composition
	n := len(comp.Acids)
	sc := builderScratches.Get().(*builderScratch)
	bd := &builder{f: f, pr: pr, acidMass: make([]float64, n), famCode: make([]int, n),
		floor: f.opt.Composition.PoolFloorMoleFraction, sc: sc, kept: sc.kept[:0], bins: sc.bins[:0]}
	if cap(bd.bins) == 0 {
		bd.bins = make([]poolBin, 0, 256)
	}
	if f.opt.Composition.NoPooling {
		bd.floor = 0
	}
	maxC := 0
	for i, ac := range comp.Acids {
		bd.acidMass[i] = ac.MolarMass()
		maxC = max(maxC, pr.chains[i].carbons)
	}
	// Dense family key (cis + 4·poly)·nb + band (see familyOf), a sum of
	// per-chain codes plus the band (at most 3 + 4·3 = 15 class values). Only the families model uses families;
	// the other models pool by melting point alone, as one family.
	nb := (3*maxC+familyBandCarbons/2)/familyBandCarbons + 1
	bd.grouped = f.opt.SolidModel == SolidSolutionFamilies
	if !bd.grouped {
		nb = 1
	}
	for i := range bd.famCode {
		if !bd.grouped {
			break
		}
		bd.famCode[i] = familyClass(pr.chains[i].kind) * nb
	}
	bd.sn2MismatchS = 1000 * pr.k.SN2MismatchKJ / pr.thetaK
	bd.outerMismatchS = 1000 * pr.k.OuterMismatchKJ / pr.thetaK
	if need := 16 * nb; cap(sc.binSlots) >= need {
		bd.binSlots = sc.binSlots[:need] // entries are nil (release)
	} else {
		bd.binSlots = make([][]int32, need)
	}
	f.main = make([]mainEntry, 0, f.opt.MainSpecies+1)
	return bd
}

// outerPart holds what a species' properties owe to its two outer chains,
// computed once per outer pair.
type outerPart struct {
	i, l       int
	short      int
	h, s, mass float64
	fam        int
	inFit      bool
	carbons    int
}

func (bd *builder) outer(i, l int) outerPart {
	pr, kc := bd.pr, &bd.pr.k
	ci, cl := pr.chains[i].carbons, pr.chains[l].carbons
	short, long := min(ci, cl), max(ci, cl)
	gy := pr.gy[long-short]
	return outerPart{
		i: i, l: l, short: short, carbons: ci + cl,
		h:     kc.EnthalpyInterceptKJ + pr.hcOuter[i] + pr.hcOuter[l] + kc.OuterMismatchKJ*gy,
		s:     kc.EntropyInterceptJ + pr.scOuter[i] + pr.scOuter[l] + bd.outerMismatchS*gy,
		mass:  chem.GlycerolBackboneIncrement + bd.acidMass[i] + bd.acidMass[l],
		fam:   bd.famCode[i] + bd.famCode[l],
		inFit: pr.chains[i].inFit && pr.chains[l].inFit,
	}
}

// add takes one species: the outer pair op, middle acid j, mole fraction z.
// A species whose mole fraction underflows to zero (trace acids, such as the
// last traces of linolenic acid in a hardened oil) is left out: it carries
// no mass and would make a pooled bin 0/0.
func (bd *builder) add(op outerPart, j int, z float64) {
	if !(z > 0) {
		return
	}
	f, pr, kc := bd.f, bd.pr, &bd.pr.k
	i, l := op.i, op.l
	cj := pr.chains[j].carbons
	x := cj - op.short
	if x < 0 {
		x = -x
	}
	gx := pr.gx[x]
	h := op.h + pr.hcSN2[j] + kc.SN2MismatchKJ*gx
	s := op.s + pr.scSN2[j] + bd.sn2MismatchS*gx
	mass := op.mass + bd.acidMass[j]
	var tm float64
	if h < floorEnthalpyKJ || s <= 0 {
		tm, h = floorMeltingPointK, floorEnthalpyKJ
	} else if tm = 1000 * h / s; tm < floorMeltingPointK {
		tm = floorMeltingPointK
	}
	measured := false
	if pr.overrides != nil {
		n := len(pr.chains)
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
	if !op.inFit || !pr.chains[j].inFit {
		bd.outsideMass += zm
	}
	fam := 0
	if bd.grouped {
		fam = op.fam + bd.famCode[j] + (op.carbons+cj+familyBandCarbons/2)/familyBandCarbons
	}
	nMain := f.opt.MainSpecies
	if len(f.main) < nMain || zm > f.main[len(f.main)-1].sp.z*f.main[len(f.main)-1].sp.mass {
		f.keepMain(mainEntry{tagSpecies{z, mass, [3]int32{int32(i), int32(j), int32(l)}}, tm, measured}, nMain)
	}
	if z >= bd.floor {
		bd.kept = append(bd.kept, keptSpecies{z, mass, tm, h, int32(fam)})
		return
	}
	// Bins from floorMeltingPointK up; melting points above
	// maxBinnedMeltingPointK share the last bin.
	bi := min(int((tm-floorMeltingPointK)/poolBinK), poolBins-1)
	slots := bd.binSlots[fam]
	if slots == nil {
		slots = bd.slotArray()
		bd.binSlots[fam] = slots
	}
	if slots[bi] == 0 {
		bd.bins = append(bd.bins, poolBin{})
		slots[bi] = int32(len(bd.bins))
	}
	bb := &bd.bins[slots[bi]-1]
	bb.z += z
	bb.zm += zm
	bb.ztm += z * tm
	bb.zdh += z * h
	bd.pooledMass += zm
	f.pooledSpecies++
}

// finish lays the mixture out family by family (families in key order cis,
// trans, band; in a family the kept species in the order added, then the
// pooled bins in ascending order) and returns the mass of species with acids
// outside the fit. The species themselves are not stored: only the largest
// ones for the result. It releases the builder's working memory.
func (bd *builder) finish() (outsideMass float64) {
	f := bd.f
	shift := f.opt.Calibration.TemperatureShiftK
	kept := bd.kept
	// A stable sort keeps the kept species in the order added within a family.
	slices.SortStableFunc(kept, func(p, q keptSpecies) int { return int(p.fam) - int(q.fam) })
	nc := len(kept) + len(bd.bins)
	m := &Mixture{z: make([]float64, 0, nc), mass: make([]float64, 0, nc), a: make([]float64, 0, nc),
		c: make([]float64, 0, nc), tm: make([]float64, 0, nc)}
	ki := 0
	for fam := range bd.binSlots {
		first := true
		for ; ki < len(kept) && int(kept[ki].fam) == fam; ki++ {
			sp := &kept[ki]
			m.add(sp.z, sp.mass, sp.tmK+shift, sp.dhKJ, first)
			first = false
		}
		for _, slot := range bd.binSlots[fam] {
			if slot > 0 {
				bb := &bd.bins[slot-1]
				m.add(bb.z, bb.zm/bb.z, bb.ztm/bb.z+shift, bb.zdh/bb.z, first)
				first = false
			}
		}
	}
	m.endFamilies()
	f.mixture = m
	f.pooledMassPercent = 100 * bd.pooledMass / f.totalMass
	outsideMass = bd.outsideMass
	bd.release()
	return outsideMass
}

// build enumerates the species of the fat's positional pools (outer pairs
// i ≤ l, middle j, in the order of enumerate) into the mixture.
func (f *Fat) build(pr prepared) (outsideMass float64) {
	comp := f.composition
	a, b := comp.SN13, comp.SN2
	n := len(comp.Acids)
	bd := f.newBuilder(&pr)
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
			op := bd.outer(i, l)
			for j := 0; j < n; j++ {
				if b[j] == 0 {
					continue
				}
				bd.add(op, j, outer*b[j])
			}
		}
	}
	return bd.finish()
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
