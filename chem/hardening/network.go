package hardening

import (
	"fmt"
	"math"

	"lipidsvc/chem"
)

// rateKind is the catalyst rate constant an edge runs at, relative to k3.
type rateKind int

const (
	rateTriene     rateKind = iota // k1 = S_Ln·S_R, scaled by (d−1)/2
	rateDiene                      // k2 = S_R
	rateCisMono                    // k3 = 1
	rateTransMono                  // ρ
	rateCisToTrans                 // ι
	rateTransToCis                 // ι/K
)

// split is the share of an edge's source rate that goes to its product.
type split int

const (
	splitWhole split = iota // the whole rate
	splitTrans              // k + (1 − k)·φ, k = transKept(source)
	splitCis                // (1 − k)·(1 − φ)
)

// edge is one first-order reaction from one acid to another.
type edge struct {
	from, to int
	rate     rateKind
	// mult scales the base rate: (d−1)/2 for polyenes of d ≥ 3 double bonds,
	// 1 otherwise.
	mult  float64
	split split
	// keepTrans is the probability that the product keeps one of the
	// source's trans bonds when one of its d bonds, picked at random, is
	// hydrogenated (see transKept).
	keepTrans float64
}

// value returns the edge's rate constant relative to k3 for catalyst c.
func (e edge) value(c Catalyst) float64 {
	var base float64
	switch e.rate {
	case rateTriene:
		base = c.LinolenicSelectivity * c.LinoleicSelectivity
	case rateDiene:
		base = c.LinoleicSelectivity
	case rateCisMono:
		base = 1
	case rateTransMono:
		base = c.TransSaturationRate
	case rateCisToTrans:
		base = c.IsomerisationRate
	case rateTransToCis:
		base = c.IsomerisationRate / c.TransCisEquilibrium
	}
	switch e.split {
	case splitTrans:
		base *= e.keepTrans + (1-e.keepTrans)*c.TransShare
	case splitCis:
		base *= (1 - e.keepTrans) * (1 - c.TransShare)
	}
	return base * e.mult
}

// block is the part of the network on one chain length: hardening never
// changes the number of carbons, so each chain length evolves on its own and
// the propagators are those of small blocks.
type block struct {
	idx []int // network indices of the block's acids
	n   int   // len(idx)
	// rates is the rate matrix A in block coordinates, row-major n×n.
	rates []float64
	// unif is the uniformisation rate s = max_i −A_ii, the fastest rate at
	// which any acid of the block reacts (0 when nothing reacts).
	unif float64
	// jump is the uniformised matrix P = I + A/s, row-major: non-negative,
	// every column summing to one.
	jump []float64
	// powers[k] is exp(A·2^k/s), row-major, built on demand by squaring.
	powers [][]float64
	// scratch vectors of length n
	y, next []float64
}

// network is the reaction scheme built for one feed: which acids take part
// and how they react. Its topology depends on the feed only; the rate
// constants are filled per catalyst by setCatalyst.
type network struct {
	acids  []*chem.FattyAcid
	d      []float64 // double bonds per acid
	mass   []float64 // free-acid molar mass, g/mol
	edges  []edge
	blocks []*block
	// conjugated lists feed acids with conjugated double bonds, which the
	// model hardens at the rate of their methylene-interrupted isomers.
	conjugated []string
	// untracked lists feed acids whose trans isomers the model cannot
	// express (no trans entry in the catalogue), for a warning.
	untracked []string
	// generation counts setCatalyst calls; a series basis is valid for
	// the generation it was built in.
	generation int
}

// newNetwork builds the reaction scheme for the acids of a feed (and of an
// sn-2 composition, if any): every unsaturated acid, every acid it can turn
// into, and the saturated end of each chain. A hydroxy acid is rejected:
// its hardened form (12-hydroxystearic acid from ricinoleic) is not in the
// catalogue, so the product could not be expressed.
func newNetwork(cat *chem.Catalogue, feed []*chem.FattyAcid) (*network, error) {
	ix := newAcidIndex(cat)
	net := &network{}
	index := map[string]int{}
	add := func(a *chem.FattyAcid) int {
		if i, ok := index[a.ID]; ok {
			return i
		}
		index[a.ID] = len(net.acids)
		net.acids = append(net.acids, a)
		return len(net.acids) - 1
	}
	for _, a := range feed {
		if a.HydroxyPosition > 0 && a.DoubleBondCount > 0 {
			return nil, chem.Errorf(chem.KindOutOfDomain,
				"the feed holds %s, a hydroxy acid whose hardened form is not in the catalogue", a.ID).
				WithField(fmt.Sprintf("hydroxy acid %s cannot be hardened by this model", a.ID), "acids")
		}
		add(a)
		if a.Conjugated() {
			net.conjugated = append(net.conjugated, a.ID)
		}
	}
	untracked := map[string]bool{}
	connect := func(from int, to *chem.FattyAcid, rk rateKind, mult float64, sp split, tf float64) {
		net.edges = append(net.edges, edge{from: from, to: add(to), rate: rk, mult: mult, split: sp, keepTrans: tf})
	}
	// Walk the acids breadth first; products are appended as they appear.
	for i := 0; i < len(net.acids); i++ {
		a := net.acids[i]
		c, d := a.Carbons, a.DoubleBondCount
		if d == 0 {
			continue
		}
		if d == 1 {
			sat := ix.saturated(c)
			if sat == nil {
				return nil, chem.Errorf(chem.KindOutOfDomain, "the catalogue holds no saturated %d-carbon acid to harden %s to", c, a.ID).
					WithField("no saturated product in the catalogue", "acids")
			}
			if a.HasTrans() {
				connect(i, sat, rateTransMono, 1, splitWhole, 0)
				if cis := ix.cisPartner(a); cis != nil {
					connect(i, cis, rateTransToCis, 1, splitWhole, 0)
				}
				continue
			}
			connect(i, sat, rateCisMono, 1, splitWhole, 0)
			if tr := ix.lumpedTrans(c, 1); tr != nil {
				connect(i, tr, rateCisToTrans, 1, splitWhole, 0)
			} else {
				untracked[a.ID] = true
			}
			continue
		}
		rk, mult := rateDiene, 1.0
		if d >= 3 {
			// Polyenes: rate ∝ number of bis-allylic methylene groups
			// (d − 1), anchored so that a C18 triene runs at exactly k1.
			rk, mult = rateTriene, float64(d-1)/2
		}
		level := ix.lowerLevel(c, d)
		var cis *chem.FattyAcid
		if level == d-1 && a.AllCis() {
			cis = ix.removeOneBond(a)
		}
		if cis == nil {
			cis = ix.ladder(c, level)
		}
		if cis == nil {
			return nil, chem.Errorf(chem.KindOutOfDomain, "the catalogue holds no product to harden %s to", a.ID).
				WithField("no product in the catalogue", "acids")
		}
		tf := transKept(a)
		if tr := ix.lumpedTrans(c, level); tr != nil && level > 0 {
			connect(i, cis, rk, mult, splitCis, tf)
			connect(i, tr, rk, mult, splitTrans, tf)
		} else {
			connect(i, cis, rk, mult, splitWhole, tf)
			if level > 0 {
				untracked[a.ID] = true
			}
		}
	}
	for _, a := range net.acids {
		if untracked[a.ID] {
			net.untracked = append(net.untracked, a.ID)
		}
	}
	net.d = make([]float64, len(net.acids))
	net.mass = make([]float64, len(net.acids))
	for i, a := range net.acids {
		net.d[i] = float64(a.DoubleBondCount)
		net.mass[i] = a.MolarMass()
	}
	net.buildBlocks()
	return net, nil
}

// buildBlocks groups the acids that take part in a reaction by chain length.
func (net *network) buildBlocks() {
	inEdge := make([]bool, len(net.acids))
	for _, e := range net.edges {
		inEdge[e.from], inEdge[e.to] = true, true
	}
	byCarbons := map[int]*block{}
	var order []int
	for i, a := range net.acids {
		if !inEdge[i] {
			continue
		}
		b, ok := byCarbons[a.Carbons]
		if !ok {
			b = &block{}
			byCarbons[a.Carbons] = b
			order = append(order, a.Carbons)
		}
		b.idx = append(b.idx, i)
	}
	for _, c := range order {
		b := byCarbons[c]
		n := len(b.idx)
		b.n = n
		b.rates = make([]float64, n*n)
		b.jump = make([]float64, n*n)
		b.y, b.next = make([]float64, n), make([]float64, n)
		net.blocks = append(net.blocks, b)
	}
}

// setCatalyst fills the rate matrices for catalyst c: for an edge i → j of
// rate k, dx_j/dτ gains k·x_i and dx_i/dτ loses it. Every column sums to
// zero, so the number of chains is conserved.
func (net *network) setCatalyst(c Catalyst) {
	local := make(map[int]int, len(net.acids))
	owner := make(map[int]*block, len(net.acids))
	for _, b := range net.blocks {
		clear(b.rates)
		b.powers = b.powers[:0]
		for k, i := range b.idx {
			local[i] = k
			owner[i] = b
		}
	}
	for _, e := range net.edges {
		k := e.value(c)
		b := owner[e.from]
		f, t := local[e.from], local[e.to]
		b.rates[t*b.n+f] += k
		b.rates[f*b.n+f] -= k
	}
	for _, b := range net.blocks {
		b.uniformise()
	}
	net.generation++
}

// iodineValue is the exact iodine value of the triacylglycerol oil whose
// chains have mole fractions x (any positive scale): 100·M(I2)·Σx·d /
// (Σx·M_acid + (M_glycerol − 3 M_H2O)/3), the same formula as
// chem.IodineValue with chem.MaterialTAG [the chem package documentation, exact stoichiometric
// iodine value].
func (net *network) iodineValue(x []float64) float64 {
	var sx, sd, sm float64
	for i, v := range x {
		sx += v
		sd += v * net.d[i]
		sm += v * net.mass[i]
	}
	return iodineValuePerMolPerGram * sd / (sm + sx*chem.GlycerolBackboneIncrement/3)
}

// iodineValueSlope returns the iodine value of x and its derivative along
// the path, dIV/dτ = Σ_i (∂IV/∂x_i)·(A·x)_i, exact because dx/dτ = A·x.
// With S_d = Σ x·d and S_m = Σ x·(M_acid + backbone/3),
// ∂IV/∂x_i = 100·M(I2)·(d_i·S_m − S_d·(M_i + backbone/3))/S_m².
func (net *network) iodineValueSlope(x []float64) (iv, slope float64) {
	third := chem.GlycerolBackboneIncrement / 3
	var sd, sm float64
	for i, v := range x {
		sd += v * net.d[i]
		sm += v * (net.mass[i] + third)
	}
	for _, b := range net.blocks {
		for r, i := range b.idx {
			var dx float64
			for c, j := range b.idx {
				dx += b.rates[r*b.n+c] * x[j]
			}
			slope += dx * (net.d[i]*sm - sd*(net.mass[i]+third))
		}
	}
	return iodineValuePerMolPerGram * sd / sm, iodineValuePerMolPerGram * slope / (sm * sm)
}

// bateman is the closed-form solution of the consecutive first-order chain
// x[0] → x[1] → … → x[n−1] with rate constants k[0], …, k[n−2] (the last
// member is the sink, k[n−1] = 0), after Bateman (Proc. Cambridge Philos.
// Soc. 15:423, 1910):
//
//	x_n(τ) = Σ_{i≤n} x_i(0)·(Π_{j=i}^{n−1} k_j)·Σ_{j=i}^{n} e^{−k_j τ} / Π_{p=i..n, p≠j}(k_p − k_j).
//
// It needs pairwise distinct rates. For the trans-free C18 scheme
// 18:3 → 18:2 → 18:1 → 18:0 the rates are k1 = S_Ln·S_R, k2 = S_R, k3 = 1,
// 0 (Bailey 1949; Albright 1965). The package uses it to check the general
// solver.
func bateman(x0, k []float64, tau float64) []float64 {
	n := len(x0)
	rates := make([]float64, n)
	copy(rates, k)
	rates[n-1] = 0
	out := make([]float64, n)
	for m := 0; m < n; m++ {
		for i := 0; i <= m; i++ {
			if x0[i] == 0 {
				continue
			}
			prod := 1.0
			for j := i; j < m; j++ {
				prod *= rates[j]
			}
			var sum float64
			for j := i; j <= m; j++ {
				den := 1.0
				for p := i; p <= m; p++ {
					if p != j {
						den *= rates[p] - rates[j]
					}
				}
				sum += math.Exp(-rates[j]*tau) / den
			}
			out[m] += x0[i] * prod * sum
		}
	}
	return out
}
