package pressure

import (
	"math"
	"testing"

	"github.com/wakekit/wakekit/piv"
	"github.com/wakekit/wakekit/piv/analytic"
	"github.com/wakekit/wakekit/vorticity"
)

// The Eulerian time derivative on uneven frame times: Acceleration minus its steady (convective)
// part is ∂u/∂t, compared with the time derivative of the decaying Taylor–Green velocity
// (Taylor & Green 1937), u ∝ e^{−2νk²t}, so ∂u/∂t = −2νk² u exactly. The frames are spaced
// unevenly (ratios 1 : 1.7 : 0.6 : 1.4); the interior frames take the three-point central
// difference on their uneven neighbours and the two end frames the one-sided three-point
// difference, all second order: the error must fall by 4 (order 2 ± 0.2, the band allowing for
// the next term of the expansion) when every interval halves. Viscous decay is made fast
// (2νk² = 39.5/s) so that the time error is large enough to measure. On the finer series the
// error must also match the leading truncation term of the three-point Lagrange derivative,
// |d³u/dt³| h₁h₂/6 at an interior frame (h₁, h₂ the intervals before and after it) and
// |d³u/dt³| h₁(h₁+h₂)/6 at an end (h₁ the interval next to it), within 10% (the next term is
// smaller by about 2νk² times an interval, 4% here).
func TestEulerianUnevenTimes(t *testing.T) {
	tg := analytic.TaylorGreen{U: 0.1, K: 2 * math.Pi / 0.1, Nu: 5e-3, Rho: 1000}
	rate := 2 * tg.Nu * tg.K * tg.K
	g := piv.Grid{NX: 12, NY: 10, X0: 0.011, Y0: -0.02, DX: 4e-3, DY: 4e-3}
	gaps := []float64{1, 1.7, 0.6, 1.4}
	var worst [2][5]float64 // [refinement][frame]
	for r, dt := range []float64{0.002, 0.001} {
		times := []float64{0.02}
		for _, d := range gaps {
			times = append(times, times[len(times)-1]+d*dt)
		}
		s := seriesOf(t, tg, g, times)
		for k := range times {
			_, ax, ay, err := Acceleration(s, k, AccelOptions{Method: Eulerian, Scheme: vorticity.Central})
			if err != nil {
				t.Fatal(err)
			}
			_, cx, cy, err := Acceleration(s, k, AccelOptions{Method: Steady, Scheme: vorticity.Central})
			if err != nil {
				t.Fatal(err)
			}
			f, _ := s.Frame(k)
			for q := range ax {
				if math.IsNaN(ax[q]) || math.IsNaN(cx[q]) {
					continue
				}
				eu := math.Abs(ax[q] - cx[q] + rate*f.U[q])
				ev := math.Abs(ay[q] - cy[q] + rate*f.V[q])
				// Relative to the amplitude of ∂u/∂t at the frame's time, which the error of
				// each stencil scales with (the frames of the two refinements differ in time).
				worst[r][k] = math.Max(worst[r][k], math.Max(eu, ev)/(rate*tg.U*math.Exp(-rate*times[k])))
			}
		}
	}
	for k := 0; k < 5; k++ {
		var lead float64
		fine := 0.001 * rate
		switch k {
		case 0:
			lead = gaps[0] * (gaps[0] + gaps[1])
		case 4:
			lead = gaps[3] * (gaps[3] + gaps[2])
		default:
			lead = gaps[k-1] * gaps[k]
		}
		lead *= fine * fine / 6
		if math.Abs(worst[1][k]/lead-1) > 0.1 {
			t.Errorf("frame %d: relative error %.4g, leading truncation term %.4g", k, worst[1][k], lead)
		}
		order := math.Log2(worst[0][k] / worst[1][k])
		t.Logf("frame %d: relative error of du/dt %.3g, %.3g (leading term %.3g); order %.2f", k, worst[0][k], worst[1][k], lead, order)
		if math.Abs(order-2) > 0.2 {
			t.Errorf("frame %d: order %.2f of the time derivative, want 2 ± 0.2", k, order)
		}
	}
}
