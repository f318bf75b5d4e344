package vorticity

import (
	"runtime"
	"testing"

	"github.com/wakekit/wakekit/piv"
	"github.com/wakekit/wakekit/piv/analytic"
)

// benchFields are 2048 x 2048 Lamb–Oseen fields: complete ("clean", as after gap filling) and
// with 1% of the nodes missing at random ("holes", as raw measured data), which sends about 5%
// of the nodes through the fallback path.
func benchFields(b *testing.B) []struct {
	name string
	f    *piv.Field
} {
	b.Helper()
	g := squareGrid(2048, 0.0001)
	clean := analytic.Sample(lambOseen, g, 0)
	holes := clean.Clone()
	maskRandom(holes, 0.01, 5)
	return []struct {
		name string
		f    *piv.Field
	}{{"clean", clean}, {"holes", holes}}
}

// perNode reports the wall-clock time per node, and the process CPU time per node since cpu0
// (from cpuSeconds, taken just before the loop), which other processes on a shared machine
// inflate much less.
func perNode(b *testing.B, n int, cpu0 float64) {
	b.ReportMetric(float64(b.Elapsed().Nanoseconds())/float64(b.N)/float64(n), "ns/node")
	if c := cpuSeconds(); c > 0 {
		b.ReportMetric((c-cpu0)*1e9/float64(b.N)/float64(n), "cpu-ns/node")
	}
}

// startCPU runs the benchmarked call once (so output pages are touched and caches hold the
// frame as on every later call), collects the garbage the set-up left, and returns the process
// CPU time to pass to perNode; without it the first of several -count runs carries the set-up's
// garbage collection and the page faults of a fresh output buffer.
func startCPU(warm func()) float64 {
	if warm != nil {
		warm()
	}
	runtime.GC()
	return cpuSeconds()
}

// BenchmarkVorticity measures VorticityTo per scheme (no allocation).
func BenchmarkVorticity(b *testing.B) {
	for _, bf := range benchFields(b) {
		f := bf.f
		dst := make([]float64, f.Grid.N())
		for _, sc := range Schemes {
			b.Run(bf.name+"/"+sc.String(), func(b *testing.B) {
				b.ReportAllocs()
				cpu0 := startCPU(func() { VorticityTo(dst, f, sc) })
				for b.Loop() {
					VorticityTo(dst, f, sc)
				}
				perNode(b, f.Grid.N(), cpu0)
			})
		}
	}
}

// BenchmarkDeriv measures Deriv of one scalar per scheme (both directions, stencils recorded).
func BenchmarkDeriv(b *testing.B) {
	for _, bf := range benchFields(b) {
		f := bf.f
		n := f.Grid.N()
		dx, dy, st := make([]float64, n), make([]float64, n), make([]Stencil, n)
		for _, sc := range Schemes {
			b.Run(bf.name+"/"+sc.String(), func(b *testing.B) {
				b.ReportAllocs()
				cpu0 := startCPU(func() { Deriv(f.Grid, f.U, sc, dx, dy, st) })
				for b.Loop() {
					Deriv(f.Grid, f.U, sc, dx, dy, st)
				}
				perNode(b, n, cpu0)
			})
		}
	}
}

// BenchmarkDeriveSet measures the full derive set per scheme: the gradient tensor, vorticity,
// Q, lambda2 and signed swirl. "fresh" allocates every output as NewGradient and the methods
// do; "reuse" keeps one Gradient and the output slices, as a worker processing many frames of
// one size does (Compute and IntoAll).
func BenchmarkDeriveSet(b *testing.B) {
	qs := []Quantity{QVorticity, QCriterion, QLambda2, QSignedSwirl}
	for _, bf := range benchFields(b) {
		f := bf.f
		n := f.Grid.N()
		for _, sc := range Schemes {
			b.Run(bf.name+"/fresh/"+sc.String(), func(b *testing.B) {
				cpu0 := startCPU(nil)
				for b.Loop() {
					gr := NewGradient(f, sc)
					_ = gr.Vorticity()
					_ = gr.Q()
					_ = gr.Lambda2()
					_ = gr.Swirl(true)
				}
				perNode(b, n, cpu0)
			})
			b.Run(bf.name+"/reuse/"+sc.String(), func(b *testing.B) {
				b.ReportAllocs()
				var gr Gradient
				dst := [][]float64{make([]float64, n), make([]float64, n), make([]float64, n), make([]float64, n)}
				cpu0 := startCPU(func() {
					gr.Compute(f, sc)
					gr.IntoAll(qs, dst)
				})
				for b.Loop() {
					gr.Compute(f, sc)
					gr.IntoAll(qs, dst)
				}
				perNode(b, n, cpu0)
			})
		}
	}
}

// TestNoAllocation checks that Deriv, VorticityTo, Gradient.Compute (reusing its slices) and
// IntoAll allocate nothing on a normalized field, so the per-node loops are allocation-free.
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
		var gr Gradient
		gr.Compute(f, sc)
		all := [][]float64{w, dx}
		if a := testing.AllocsPerRun(5, func() {
			gr.Compute(f, sc)
			gr.IntoAll([]Quantity{QCriterion, QLambda2}, all)
		}); a != 0 {
			t.Errorf("%s: Gradient.Compute and IntoAll allocate %.0f times", sc, a)
		}
	}
}
