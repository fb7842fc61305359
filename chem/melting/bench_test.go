package melting

import (
	"context"
	"math"
	"testing"
	"time"

	"github.com/stretchr/testify/require"
)

// twentyAcids is a made-up 20-acid profile (a blend-like spread of major and
// minor acids) whose full random distribution has 4200 lumped species.
func twentyAcids(b testing.TB) []acidPct {
	b.Helper()
	return []acidPct{{"8:0", 0.7}, {"10:0", 0.8}, {"12:0", 1.5}, {"14:0", 4}, {"15:0", 0.6}, {"16:0", 20}, {"16:1", 3},
		{"17:0", 0.8}, {"18:0", 8}, {"18:1", 28.2}, {"18:1 t", 0.2}, {"18:2", 20}, {"18:3", 4}, {"20:0", 1}, {"20:1", 2},
		{"20:5", 0.6}, {"22:0", 1}, {"22:1", 0.8}, {"22:6", 0.6}, {"24:0", 2.2}}
}

// BenchmarkMeltTwentyAcidRandom measures one full default curve (0–60 °C
// plus the reporting points, slip and clear points, main species) for a
// 20-acid full random distribution, with the default model and pooling
// (SolidSolutionFamilies, pooled within families at
// DefaultFamiliesPoolFloorMoleFraction). Target: under 1 ms.
func BenchmarkMeltTwentyAcidRandom(b *testing.B) {
	p := profileOf(b, twentyAcids(b)...)
	opt := Options{Composition: CompositionOptions{Distribution: FullRandom}}
	r, err := MeltProfile(p, opt)
	if err != nil {
		b.Fatal(err)
	}
	b.ReportMetric(float64(r.SpeciesCount), "species")
	b.ReportMetric(float64(r.ComponentCount), "components")
	b.ReportAllocs()
	for b.Loop() {
		if _, err := MeltProfile(p, opt); err != nil {
			b.Fatal(err)
		}
	}
}

// BenchmarkSlipMeltingPointPalm measures the cheap slip-point function a
// hardening root finder calls.
func BenchmarkSlipMeltingPointPalm(b *testing.B) {
	p := palmLike(b)
	opt := Options{Composition: CompositionOptions{SN2: SN2Palm}}
	b.ReportAllocs()
	for b.Loop() {
		if _, _, err := SlipMeltingPointC(p, opt); err != nil {
			b.Fatal(err)
		}
	}
}

// BenchmarkMeltTwentyAcidIdealSolidSolution is the same curve with the
// Rachford–Rice solver.
func BenchmarkMeltTwentyAcidIdealSolidSolution(b *testing.B) {
	p := profileOf(b, twentyAcids(b)...)
	opt := Options{SolidModel: IdealSolidSolution, Composition: CompositionOptions{Distribution: FullRandom}}
	b.ReportAllocs()
	for b.Loop() {
		if _, err := MeltProfile(p, opt); err != nil {
			b.Fatal(err)
		}
	}
}

// BenchmarkMeltTwentyAcidPureSolids is the same curve with the eutectic
// model (the previous default) at its pooling floor.
func BenchmarkMeltTwentyAcidPureSolids(b *testing.B) {
	p := profileOf(b, twentyAcids(b)...)
	opt := Options{SolidModel: MultiplePureSolids, Composition: CompositionOptions{Distribution: FullRandom}}
	b.ReportAllocs()
	for b.Loop() {
		if _, err := MeltProfile(p, opt); err != nil {
			b.Fatal(err)
		}
	}
}

// An abandoned calculation stops soon after its context ends: the curve
// of a 20-acid random fat on 2,000 temperatures (several seconds of work)
// is cancelled 20 ms in and must return the context's error within
// 100 ms of the cancellation — a bound on responsiveness to a client that
// left, not a speed measurement.
func TestMeltStopsWhenAbandoned(t *testing.T) {
	p := profileOf(t, twentyAcids(t)...)
	temps := make([]float64, 2000)
	for i := range temps {
		temps[i] = -20 + float64(i)*0.04
	}
	f, err := Prepare(p, Options{SolidModel: MultiplePureSolids, Composition: CompositionOptions{Distribution: FullRandom}, TemperaturesC: temps})
	require.NoError(t, err)
	ctx, cancel := context.WithCancel(context.Background())
	done := make(chan error, 1)
	go func() {
		_, err := f.MeltContext(ctx)
		done <- err
	}()
	time.Sleep(20 * time.Millisecond)
	cancel()
	start := time.Now()
	select {
	case err := <-done:
		require.ErrorIs(t, err, context.Canceled)
		t.Logf("stopped %v after the cancellation", time.Since(start))
	case <-time.After(100 * time.Millisecond):
		t.Fatal("the calculation ran on more than 100 ms after its context ended")
	}
}

var expSink float64

// BenchmarkExp sets fastExp against math.Exp on the arguments of a
// melting curve (−40 to 5).
func BenchmarkExp(b *testing.B) {
	xs := make([]float64, 1024)
	for i := range xs {
		xs[i] = -40 + 45*float64(i)/1024
	}
	for _, c := range []struct {
		name string
		f    func(float64) float64
	}{{"math.Exp", math.Exp}, {"fastExp", fastExp}} {
		b.Run(c.name, func(b *testing.B) {
			var s float64
			for b.Loop() {
				for _, x := range xs {
					s += c.f(x)
				}
			}
			expSink = s
		})
	}
}
