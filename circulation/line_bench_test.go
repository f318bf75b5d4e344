package circulation

import (
	"testing"

	"github.com/wakekit/wakekit/piv"
	"github.com/wakekit/wakekit/piv/analytic"
)

// BenchmarkLineCircle1000CPU is one line integral on a 1000-point circle of two core radii
// about a Lamb–Oseen vortex at ten nodes per core radius (the set-up of BenchmarkCircle1000,
// whose issue asks for at most 50 µs), reporting the process CPU time per integral beside the
// wall time, which other work on a shared machine inflates. Each timed step runs the integral
// 100 times, so the CPU clock's resolution does not matter.
func BenchmarkLineCircle1000CPU(b *testing.B) {
	rc := 0.01
	h := rc / 10
	f := analytic.Sample(analytic.LambOseen{Gamma: 1e-3, CoreRadius: rc}, squareGrid(h, 4*rc, 0, 0), 0)
	c, err := CircleContour(piv.Circle{R: 2 * rc}, 1000)
	if err != nil {
		b.Fatal(err)
	}
	const reps = 100
	for _, m := range []piv.Interp{piv.Bilinear, piv.Bicubic} {
		b.Run(m.String(), func(b *testing.B) {
			cpu0 := cpuSeconds()
			for b.Loop() {
				for range reps {
					if _, err := Line(f, c, LineOptions{Interp: m}); err != nil {
						b.Fatal(err)
					}
				}
			}
			per := float64(b.N) * reps
			b.ReportMetric(float64(b.Elapsed().Nanoseconds())/per/1000, "µs/integral")
			if c1 := cpuSeconds(); c1 > 0 {
				b.ReportMetric((c1-cpu0)*1e6/per, "cpu-µs/integral")
			}
		})
	}
}
