package hardening

import (
	"context"
	"math"
	"math/rand/v2"
	"testing"

	"github.com/stretchr/testify/require"
	"gonum.org/v1/gonum/mat"

	"lipidsvc/chem"
)

// TestUniformisationMatchesPade compares the network's propagator
// (uniformisation with binary powers) with an independent method, gonum's
// matrix exponential (scaling and squaring with a degree-13 Padé
// approximant, Higham 2005), on the soy-like feed for random catalysts over
// the whole accepted parameter ranges and path variables over seven
// decades, and to 1e30 where both must give the fully hardened end state.
// The series kept for one start (what the path and the fit evaluate
// from) must give the propagator's result. Both are exact in exact arithmetic. They agree to 1e-12 for ordinary
// catalysts; for the stiffest (S_Ln·S_R near 3e4, sτ up to 3e6) the Padé
// result loses up to 2e-10 of the chains to rounding in its squarings,
// which uniformisation, renormalising its powers, does not. So the
// tolerance against Padé is 1e-12 plus twice Padé's own mole-balance error,
// and the uniformised mole balance must hold to 1e-14.
func TestUniformisationMatchesPade(t *testing.T) {
	cat := chem.NewCatalogue()
	net, x0, err := prepareFeed(cat, testFeed(t, cat, "soy-like"), nil, "profile")
	require.NoError(t, err)
	rng := rand.New(rand.NewPCG(20261203, 1))
	x, xs := make([]float64, len(x0)), make([]float64, len(x0))
	sr := net.newSeries(x0)
	for k := 0; k < 60; k++ {
		var c Catalyst
		for _, p := range AllParameters() {
			lo, hi := p.Range()
			v := lo + (hi-lo)*rng.Float64()
			if lo > 0 && k%2 == 0 {
				v = lo * math.Pow(hi/lo, rng.Float64()) // log-uniform: small rates too
			}
			c = c.With(p, v)
		}
		require.NoError(t, c.Validate())
		net.setCatalyst(c)
		for _, tau := range []float64{1e-5, 3e-4, 0.01, 0.07, 0.5, 2, 13, 100} {
			net.evolve(x0, tau, x)
			want := padeEvolve(net, x0, tau)
			var sum, padeSum float64
			for _, v := range want {
				padeSum += v
			}
			tol := 1e-12 + 2*math.Abs(1-padeSum)
			for i := range x {
				require.InDelta(t, want[i], x[i], tol, "%s at τ=%g, %+v", net.acids[i].ID, tau, c)
				require.GreaterOrEqual(t, x[i], 0.0)
				sum += x[i]
			}
			require.InDelta(t, 1, sum, 1e-14, "mole balance at τ=%g, %+v", tau, c)
			// The stored series of x0 (rebuilt after each new catalyst)
			// gives the same state to rounding.
			sr.evolve(tau, xs)
			for i := range x {
				require.InDelta(t, x[i], xs[i], 1e-14, "series, %s at τ=%g", net.acids[i].ID, tau)
			}
		}
		net.evolve(x0, 1e30, x)
		var sat float64
		for i, a := range net.acids {
			if a.DoubleBondCount == 0 {
				sat += x[i]
			}
		}
		require.InDelta(t, 1, sat, 1e-9, "fully hardened at τ = 1e30, %+v", c)
	}
}

// padeEvolve is exp(Aτ)·x0 by gonum's mat.Exp, block by block.
func padeEvolve(net *network, x0 []float64, tau float64) []float64 {
	x := append([]float64(nil), x0...)
	for _, b := range net.blocks {
		a := mat.NewDense(b.n, b.n, append([]float64(nil), b.rates...))
		a.Scale(tau, a)
		var e mat.Dense
		e.Exp(a)
		for r, i := range b.idx {
			var s float64
			for c, j := range b.idx {
				s += e.At(r, c) * x0[j]
			}
			x[i] = math.Max(s, 0)
		}
	}
	return x
}

// TestDefectiveChain: a chain A → B → C → D with one rate k for every step
// has a rate matrix with a single Jordan block (no eigenvector basis), where
// eigen-decomposition methods fail. Its exact solution is the Poisson
// distribution over the chain: x_A = e^{−kτ}, x_B = kτ·e^{−kτ},
// x_C = (kτ)²/2·e^{−kτ}, x_D the rest, from x(0) = (1, 0, 0, 0) (first
// principles: the Erlang distribution of the waiting times).
func TestDefectiveChain(t *testing.T) {
	for _, k := range []float64{1, 37, 1e4} {
		b := testBlock(4)
		b.rates = []float64{
			-k, 0, 0, 0,
			k, -k, 0, 0,
			0, k, -k, 0,
			0, 0, k, 0,
		}
		net := oneBlock(b)
		x := make([]float64, 4)
		for _, tau := range []float64{1e-6, 0.01, 0.3, 1, 2.5, 7, 40} {
			net.evolve([]float64{1, 0, 0, 0}, tau, x)
			m := k * tau
			e := math.Exp(-m)
			want := []float64{e, m * e, m * m / 2 * e, 1 - e - m*e - m*m/2*e}
			for i := range want {
				require.InDelta(t, want[i], x[i], 1e-13, "k=%g τ=%g species %d", k, tau, i)
			}
		}
	}
	// Nothing reacts: the identity.
	net := oneBlock(testBlock(2))
	x := make([]float64, 2)
	net.evolve([]float64{0.3, 0.7}, 5, x)
	require.Equal(t, []float64{0.3, 0.7}, x)
}

func testBlock(n int) *block {
	b := &block{n: n, rates: make([]float64, n*n), jump: make([]float64, n*n),
		y: make([]float64, n), next: make([]float64, n)}
	for i := range n {
		b.idx = append(b.idx, i)
	}
	return b
}

// oneBlock is a network of the one block b (rates set), uniformised.
func oneBlock(b *block) *network {
	b.uniformise()
	return &network{blocks: []*block{b}}
}

// TestPathEvaluations: the path's roots start from the Hermite
// extrapolation of the last two points and reuse the known ends, so a
// 50-point path costs at most three network evaluations per interior point
// on top of the target's own solve (it took four to five before). A count,
// not a timing.
func TestPathEvaluations(t *testing.T) {
	cat := chem.NewCatalogue()
	for _, p := range Presets() {
		req := NewForecastRequest(testFeed(t, cat, "soy-like"), FinalIodineValue(70), p.Catalyst)
		req.PathPoints = 50
		res, err := ForecastOf(context.Background(), cat, req)
		require.NoError(t, err)
		require.LessOrEqual(t, res.evaluations, 20+3*48, p.Name)
	}
}
