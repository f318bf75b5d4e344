package vorticity

import (
	"testing"

	"github.com/wakekit/wakekit/piv"
	"github.com/wakekit/wakekit/piv/analytic"
)

// benchField is a 2048 x 2048 Lamb–Oseen field with 1% missing nodes, so the fallback path is
// exercised as in measured data.
func benchField(b *testing.B) *piv.Field {
	b.Helper()
	g := squareGrid(2048, 0.0001)
	f := analytic.Sample(lambOseen, g, 0)
	maskRandom(f, 0.01, 5)
	return f
}

func perNode(b *testing.B, n int) {
	b.ReportMetric(float64(b.Elapsed().Nanoseconds())/float64(b.N)/float64(n), "ns/node")
}

// BenchmarkVorticity measures VorticityTo per scheme (no allocation).
func BenchmarkVorticity(b *testing.B) {
	f := benchField(b)
	dst := make([]float64, f.Grid.N())
	for _, sc := range Schemes {
		b.Run(sc.String(), func(b *testing.B) {
			b.ReportAllocs()
			for b.Loop() {
				VorticityTo(dst, f, sc)
			}
			perNode(b, f.Grid.N())
		})
	}
}

// BenchmarkDeriv measures Deriv of one scalar per scheme (both directions, stencils recorded).
func BenchmarkDeriv(b *testing.B) {
	f := benchField(b)
	n := f.Grid.N()
	dx, dy, st := make([]float64, n), make([]float64, n), make([]Stencil, n)
	for _, sc := range Schemes {
		b.Run(sc.String(), func(b *testing.B) {
			b.ReportAllocs()
			for b.Loop() {
				Deriv(f.Grid, f.U, sc, dx, dy, st)
			}
			perNode(b, n)
		})
	}
}

// BenchmarkDeriveSet measures the full derive set per scheme: the gradient tensor, vorticity,
// Q, lambda2 and signed swirl, output slices included.
func BenchmarkDeriveSet(b *testing.B) {
	f := benchField(b)
	for _, sc := range Schemes {
		b.Run(sc.String(), func(b *testing.B) {
			for b.Loop() {
				gr := NewGradient(f, sc)
				_ = gr.Vorticity()
				_ = gr.Q()
				_ = gr.Lambda2()
				_ = gr.Swirl(true)
			}
			perNode(b, f.Grid.N())
		})
	}
}

// TestNoAllocation checks that Deriv and VorticityTo allocate nothing on a normalized field, so
// the per-node loops are allocation-free.
func TestNoAllocation(t *testing.T) {
	g := squareGrid(64, 0.001)
	f := analytic.Sample(lambOseen, g, 0)
	maskRandom(f, 0.05, 3)
	n := g.N()
	dx, dy, st, w := make([]float64, n), make([]float64, n), make([]Stencil, n), make([]float64, n)
	for _, sc := range Schemes {
		if a := testing.AllocsPerRun(5, func() { Deriv(g, f.U, sc, dx, dy, st) }); a != 0 {
			t.Errorf("%s: Deriv allocates %.0f times", sc, a)
		}
		if a := testing.AllocsPerRun(5, func() { VorticityTo(w, f, sc) }); a != 0 {
			t.Errorf("%s: VorticityTo allocates %.0f times", sc, a)
		}
	}
}
