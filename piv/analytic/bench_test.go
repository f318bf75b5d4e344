package analytic

import (
	"testing"

	"github.com/wakekit/wakekit/piv"
)

// BenchmarkSample measures sampling an exact flow onto a 512x512 grid, per node.
func BenchmarkSample(b *testing.B) {
	g := piv.Grid{NX: 512, NY: 512, X0: -0.05, Y0: -0.05, DX: 2e-4, DY: 2e-4}
	for _, c := range []struct {
		name string
		f    Flow
	}{
		{"lamb-oseen", LambOseen{Gamma: 0.01, CoreRadius: 5e-3, Nu: 1e-6}},
		{"hill", Hill{Radius: 0.02, Speed: 0.1}},
		{"taylor-green", TaylorGreen{U: 0.1, K: 100, Nu: 1e-6}},
	} {
		b.Run(c.name, func(b *testing.B) {
			for b.Loop() {
				Sample(c.f, g, 0.1)
			}
			b.ReportMetric(float64(b.Elapsed().Nanoseconds())/float64(b.N)/float64(g.N()), "ns/node")
		})
	}
}

// BenchmarkNoiseApply measures the full noise model (5x5 window, Gaussian error, 5 % spurious
// vectors) on a 512x512 field, per node.
func BenchmarkNoiseApply(b *testing.B) {
	g := piv.Grid{NX: 512, NY: 512, X0: -0.05, Y0: -0.05, DX: 2e-4, DY: 2e-4}
	base := Sample(LambOseen{Gamma: 0.01, CoreRadius: 5e-3}, g, 0)
	n := Noise{Sigma: 0.002, SpuriousFraction: 0.05, Window: 5, Seed: 1}
	f := base.Clone()
	for b.Loop() {
		copy(f.U, base.U)
		copy(f.V, base.V)
		if _, err := n.Apply(f); err != nil {
			b.Fatal(err)
		}
	}
	b.ReportMetric(float64(b.Elapsed().Nanoseconds())/float64(b.N)/float64(g.N()), "ns/node")
}
