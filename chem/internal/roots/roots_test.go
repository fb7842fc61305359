package roots

import (
	"errors"
	"math"
	"testing"

	"github.com/stretchr/testify/require"
)

func TestFindSmooth(t *testing.T) {
	// x³ − 2x − 5 = 0, Wallis's equation: root 2.0945514815423265 [classic
	// worked example, to 16 digits by any root finder].
	const root = 2.0945514815423265
	f := func(x float64) (float64, float64, error) { return x*x*x - 2*x - 5, math.NaN(), nil }
	df := func(x float64) (float64, float64, error) { return x*x*x - 2*x - 5, 3*x*x - 2, nil }
	for name, fn := range map[string]Func{"derivative-free": f, "with derivative": df} {
		r, err := Find(Problem{F: fn, Lo: 2, Hi: 3, FLo: -1, FHi: 16, Increasing: true, Start: math.NaN(), XTol: 1e-14, MaxIter: 100})
		require.NoError(t, err, name)
		require.True(t, r.Converged, name)
		require.InDelta(t, root, r.X, 1e-13, name)
		require.Less(t, r.Iterations, 12, name)
	}
}

func TestFindDecreasingUnbounded(t *testing.T) {
	// exp(−x) = 1e-6 at x = 6 ln 10 = 13.815510557964274, with no upper end.
	f := func(x float64) (float64, float64, error) { return math.Exp(-x) - 1e-6, -math.Exp(-x), nil }
	r, err := Find(Problem{F: f, Lo: 0, Hi: math.Inf(1), FLo: math.NaN(), FHi: math.NaN(), Start: math.NaN(), FTol: 1e-18, MaxIter: 200})
	require.NoError(t, err)
	require.True(t, r.Converged)
	require.InDelta(t, 6*math.Ln10, r.X, 1e-9)
}

func TestFindStep(t *testing.T) {
	// A function that jumps at 0.3: the search ends on the jump.
	f := func(x float64) (float64, float64, error) {
		if x < 0.3 {
			return -1, math.NaN(), nil
		}
		return 1, math.NaN(), nil
	}
	r, err := Find(Problem{F: f, Lo: 0, Hi: 1, FLo: -1, FHi: 1, Increasing: true, Start: math.NaN(), XTol: 1e-9, MaxIter: 200})
	require.NoError(t, err)
	require.True(t, r.Converged)
	require.InDelta(t, 0.3, r.X, 1e-9)
	require.Less(t, r.Iterations, 60, "no worse than bisection by much")
}

func TestFindErrors(t *testing.T) {
	_, err := Find(Problem{F: nil, Lo: 1, Hi: 0})
	require.ErrorIs(t, err, ErrNoBracket)
	stop := errors.New("stop")
	_, err = Find(Problem{F: func(float64) (float64, float64, error) { return 1, 0, nil }, Lo: 0, Hi: 1, Check: func() error { return stop }})
	require.ErrorIs(t, err, stop)
	r, err := Find(Problem{F: func(x float64) (float64, float64, error) { return x - 0.5, math.NaN(), nil }, Lo: 0, Hi: 1, FLo: -0.5, FHi: 0.5, Increasing: true, Start: math.NaN(), MaxIter: 1})
	require.NoError(t, err)
	require.True(t, r.Converged, "false position is exact on a line") // first point is the root
	r, err = Find(Problem{F: func(x float64) (float64, float64, error) { return x*x*x - 0.1, math.NaN(), nil }, Lo: 0, Hi: 1, FLo: math.NaN(), FHi: math.NaN(), Increasing: true, Start: math.NaN(), MaxIter: 3})
	require.NoError(t, err)
	require.False(t, r.Converged, "three bisections cannot meet a zero tolerance")
}
