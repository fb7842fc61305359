package hardening

import "math"

// The propagator of the reaction network: x(τ) = exp(Aτ)·x(0) block by
// block, by uniformisation with binary powers and stored series.

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
