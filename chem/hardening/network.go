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

// evolve writes into x the mole fractions at path variable tau, starting
// from x0: x(τ) = exp(Aτ)·x0, block by block.
//
// Method: uniformisation (Jensen's method; Jensen, Skand. Aktuarietidskr.
// 36:87, 1953; Grassmann, Comput. Oper. Res. 4:47, 1977). The network is a
// linear system with constant coefficients whose rate matrix has
// non-negative off-diagonal entries and columns summing to zero, the
// generator of a continuous-time Markov chain on the acids. With s the
// largest outflow rate of a block and P = I + A/s, which is non-negative,
//
//	exp(Aτ) = e^{−sτ} Σ_k (sτ)^k/k! · P^k,
//
// a series of non-negative terms: no cancellation, non-negative results and
// an error bound known in advance (the Poisson tail), whatever the
// eigenstructure. That matters here because the network has repeated and
// nearly repeated rates (every cis monoene decays at 1 + ι; a diene's S_R
// can meet them), where the matrix is defective or nearly so and an
// eigen-decomposition loses all accuracy.
//
// The series is summed only over a unit step, sτ < 1, where twenty terms
// reach the rounding level. Longer paths are covered by the binary powers
// exp(A·2^k/s), obtained once per catalyst by squaring exp(A/s) (squaring
// non-negative matrices is also free of cancellation, "scaling and
// squaring", Moler & Van Loan, SIAM Rev. 45:3, 2003) and reused by every
// evaluation: τ = (m + r)/s with integer m and 0 ≤ r < 1 costs one
// matrix-vector product per set bit of m and at most twenty for the
// remainder (none when the start's series is already stored), where a
// general matrix exponential would cost several matrix products and a
// linear solve per evaluation. Where sτ exceeds 2^62 the block is at its end state to machine precision
// and τ is clamped there.
//
// Evaluations that share a start keep its series (see series); a one-off
// evaluation builds it for the occasion.
func (net *network) evolve(x0 []float64, tau float64, x []float64) {
	net.newSeries(x0).evolve(tau, x)
}

// series holds, for one starting vector y, the vectors P^k·y of every
// block, built as far as evaluations need them. Evaluations from the same
// start then sum the remainder's series from stored vectors, with no
// matrix-vector product: exp(A·r/s) and the binary powers commute, so
// x(τ) = E_m·(e^{−r} Σ_k r^k/k!·P^k·y) with τ = (m + r)/s.
type series struct {
	net        *network
	generation int
	start      []float64   // y in network coordinates
	terms      [][]float64 // per block: the P^k·y, concatenated (k·n … k·n+n)
}

// newSeries prepares the series of start (kept, not copied).
func (net *network) newSeries(start []float64) *series {
	sr := &series{net: net, terms: make([][]float64, len(net.blocks))}
	for i, b := range net.blocks {
		sr.terms[i] = make([]float64, 0, (unifTerms+1)*b.n)
	}
	sr.reset(start)
	return sr
}

// reset makes start (kept, not copied) the series' starting vector,
// keeping its storage.
func (sr *series) reset(start []float64) {
	sr.start, sr.generation = start, -1
}

// evolve writes into x the mole fractions at path variable tau from the
// series' start: the same result as network.evolve(start, tau, x).
func (sr *series) evolve(tau float64, x []float64) {
	net := sr.net
	copy(x, sr.start)
	if tau == 0 {
		return
	}
	if sr.generation != net.generation {
		// A new catalyst: the stored powers of P are of the old one.
		for i := range sr.terms {
			sr.terms[i] = sr.terms[i][:0]
		}
		sr.generation = net.generation
	}
	for bi, b := range net.blocks {
		if b.unif == 0 {
			continue
		}
		n := b.n
		t := sr.terms[bi]
		if len(t) == 0 {
			for _, i := range b.idx {
				t = append(t, sr.start[i])
			}
		}
		q := math.Min(tau*b.unif, math.Ldexp(1, maxPowerBits))
		whole := math.Floor(q)
		r := q - whole
		copy(b.y, t[:n])
		coef := 1.0
		for k := 1; k <= unifTerms && r > 0; k++ {
			coef *= r / float64(k)
			if len(t) < (k+1)*n {
				t = t[:(k+1)*n] // capacity for every term (newSeries)
				mulVec(t[k*n:], b.jump, t[(k-1)*n:k*n], n)
			}
			for i, v := range t[k*n : (k+1)*n] {
				b.y[i] += coef * v
			}
			if coef < 1e-18 {
				break
			}
		}
		sr.terms[bi] = t
		if r > 0 {
			e := math.Exp(-r)
			for i := range b.y {
				b.y[i] *= e
			}
		}
		for k, m := 0, uint64(whole); m != 0; k, m = k+1, m>>1 {
			if m&1 == 1 {
				b.apply(b.power(k))
			}
		}
		for r, i := range b.idx {
			x[i] = b.y[r]
		}
	}
}

// uniformise sets the block's uniformisation rate and jump matrix from its
// rate matrix and forgets the powers of the previous catalyst.
func (b *block) uniformise() {
	n := b.n
	b.unif = 0
	for i := 0; i < n; i++ {
		b.unif = math.Max(b.unif, -b.rates[i*n+i])
	}
	b.powers = b.powers[:0]
	if b.unif == 0 {
		return
	}
	for i, a := range b.rates {
		b.jump[i] = a / b.unif
	}
	for i := 0; i < n; i++ {
		// Exactly non-negative: rounding of 1 + A_ii/s must not dip below 0
		// for the fastest acid.
		b.jump[i*n+i] = math.Max(1+b.jump[i*n+i], 0)
	}
}

// unifTerms is the number of series terms beyond the first summed for a
// unit step: the Poisson tail beyond it, Σ_{k>20} 1/k!, is below 2e-20.
const unifTerms = 20

// maxPowerBits bounds the binary powers kept (sτ up to 2^62).
const maxPowerBits = 62

// apply replaces b.y by m·b.y.
func (b *block) apply(m []float64) {
	mulVec(b.next, m, b.y, b.n)
	copy(b.y, b.next)
}

// power returns exp(A·2^k/s), squaring the previous power as needed.
func (b *block) power(k int) []float64 {
	for len(b.powers) <= k {
		n := b.n
		next := make([]float64, n*n)
		if len(b.powers) == 0 {
			unitExp(next, b.jump, n)
		} else {
			prev := b.powers[len(b.powers)-1]
			mulMat(next, prev, prev, n)
		}
		normaliseColumns(next, n)
		b.powers = append(b.powers, next)
	}
	return b.powers[k]
}

// unitExp writes exp(P − I) = e^{−1}·Σ_k P^k/k! into dst, Horner's way:
// I + P(I + P/2(I + P/3(…))).
func unitExp(dst, p []float64, n int) {
	acc := identity(n)
	tmp := make([]float64, n*n)
	for k := unifTerms; k >= 1; k-- {
		mulMat(tmp, p, acc, n)
		for i := range tmp {
			tmp[i] /= float64(k)
		}
		for i := 0; i < n; i++ {
			tmp[i*n+i]++
		}
		acc, tmp = tmp, acc
	}
	e := math.Exp(-1)
	for i, v := range acc {
		dst[i] = v * e
	}
}

// normaliseColumns scales every column of m (row-major n×n, non-negative)
// to sum to one. The exact propagator conserves chains, so its columns sum
// to one; rounding in the series and in each squaring would otherwise let
// the sum drift by about one rounding error per unit of sτ, a loss of
// chains the mole balance would show.
func normaliseColumns(m []float64, n int) {
	for c := 0; c < n; c++ {
		var s float64
		for r := 0; r < n; r++ {
			s += m[r*n+c]
		}
		if s > 0 {
			for r := 0; r < n; r++ {
				m[r*n+c] /= s
			}
		}
	}
}

func identity(n int) []float64 {
	m := make([]float64, n*n)
	for i := 0; i < n; i++ {
		m[i*n+i] = 1
	}
	return m
}

// mulVec writes m·v into dst (m row-major n×n).
func mulVec(dst, m, v []float64, n int) {
	for r := 0; r < n; r++ {
		row := m[r*n : r*n+n]
		var s float64
		for c, a := range row {
			s += a * v[c]
		}
		dst[r] = s
	}
}

// mulMat writes a·b into dst (all row-major n×n; dst distinct from a and b).
func mulMat(dst, a, b []float64, n int) {
	clear(dst)
	for r := 0; r < n; r++ {
		for k := 0; k < n; k++ {
			f := a[r*n+k]
			if f == 0 {
				continue
			}
			brow := b[k*n : k*n+n]
			drow := dst[r*n : r*n+n]
			for c, v := range brow {
				drow[c] += f * v
			}
		}
	}
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
