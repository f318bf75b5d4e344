package pressure

import (
	"math"
	"testing"

	"github.com/wakekit/wakekit/piv"
	"gonum.org/v1/gonum/integrate/quad"
)

// TestExitProfile checks the exit integrals against gonum's quadrature of known profiles, and
// the carrying of the pressure from the first column to an exit plane half a spacing outside
// the field.
func TestExitProfile(t *testing.T) {
	R := 0.0125
	for _, axi := range []bool{true, false} {
		var errs []float64
		for _, m := range []int{8, 16, 32} {
			h := R / float64(m)
			g := piv.Grid{NX: 6, NY: 3 * m, X0: h / 2, Y0: h / 2, DX: h, DY: h}
			f := piv.NewField(g)
			f.Geometry = piv.Geometry{Axisymmetric: axi}
			p := make([]float64, g.N())
			gx := make([]float64, g.N())
			// p = (1 + 2x/R)(1 - r²/R²) + 0.1 is linear in x, so carrying it half a spacing with
			// its gradient is exact; u = U(1 - (r/R)²) is taken from the nearest column. The
			// radial error is second order.
			pr := func(x, r float64) float64 { return (1+2*x/R)*(1-r*r/(R*R)) + 0.1 }
			ur := func(x, r float64) float64 { return 0.04 * (1 - r*r/(R*R)) }
			for j := 0; j < g.NY; j++ {
				for i := 0; i < g.NX; i++ {
					k := g.Index(i, j)
					x, r := g.X(i), g.Y(j)
					f.Set(k, ur(x, r), 0)
					p[k] = pr(x, r)
					gx[k] = 2 / R * (1 - r*r/(R*R))
				}
			}
			ex, err := ExitProfile(f, p, gx, Exit{X: 0, Radius: R}, 1000, 0.1)
			if err != nil {
				t.Fatal(err)
			}
			w := func(r float64) float64 {
				if axi {
					return 2 * math.Pi * r
				}
				return 2
			}
			wantP := quad.Fixed(func(r float64) float64 { return w(r) * (pr(0, r) - 0.1) }, 0, R, 20, nil, 0)
			wantM := quad.Fixed(func(r float64) float64 { u := ur(0, r); return w(r) * 1000 * u * u }, 0, R, 20, nil, 0)
			e := math.Max(math.Abs(ex.P-wantP)/wantP, math.Abs(ex.M-wantM)/wantM)
			errs = append(errs, e)
			if ex.Carried != -h/2 || ex.Column != 0 {
				t.Errorf("carried %g from column %d, want %g from 0", ex.Carried, ex.Column, -h/2)
			}
		}
		order := math.Log2(errs[1] / errs[2])
		t.Logf("exit integrals (axisymmetric %v): relative errors %.2g %.2g %.2g at 8, 16, 32 rows per radius, order %.2f", axi, errs[0], errs[1], errs[2], order)
		// The cell rule is second order; 1% at 8 rows per radius.
		if errs[0] > 0.01 || order < 1.8 {
			t.Errorf("axisymmetric %v: errors %v, order %.2f", axi, errs, order)
		}
	}
}

// pointSource is the irrotational flow of a point volume source of strength Q(t) =
// Q0 (1 − cos ωt)/2 at (xs, 0) in three dimensions, seen in a meridional plane:
// u = Q/(4π d²) along the radius vector, and by the unsteady Bernoulli equation (p = 0 at
// infinity, fluid at rest there) p = ρ Q̇/(4π d) − ρ|u|²/2 (Batchelor 1967, §6.2).
type pointSource struct {
	Q0, omega, xs, rho float64
}

func (s pointSource) q(t float64) float64    { return s.Q0 * (1 - math.Cos(s.omega*t)) / 2 }
func (s pointSource) qdot(t float64) float64 { return s.Q0 * s.omega * math.Sin(s.omega*t) / 2 }

func (s pointSource) Velocity(x, y, t float64) (float64, float64) {
	dx := x - s.xs
	d2 := dx*dx + y*y
	c := s.q(t) / (4 * math.Pi * d2 * math.Sqrt(d2))
	return c * dx, c * y
}

func (s pointSource) pressure(x, y, t float64) float64 {
	d := math.Hypot(x-s.xs, y)
	u := s.q(t) / (4 * math.Pi * d * d)
	return s.rho*s.qdot(t)/(4*math.Pi*d) - s.rho*u*u/2
}

// TestSourceReference reconstructs the absolute pressure of the unsteady point source with the
// far-field model on the outer edges: the level is right only if the model is.
func TestSourceReference(t *testing.T) {
	src := pointSource{Q0: 2e-5, omega: 2 * math.Pi, xs: -0.01, rho: 1000}
	h := 0.002
	g := piv.Grid{NX: 60, NY: 40, X0: h / 2, Y0: h / 2, DX: h, DY: h}
	dt := 0.01
	times := []float64{0.2 - dt, 0.2, 0.2 + dt}
	frames := make([]*piv.Field, len(times))
	for k, tk := range times {
		f := piv.NewField(g)
		f.Geometry = piv.Geometry{Axisymmetric: true}
		f.Time = tk
		for q := range f.U {
			i, j := g.IJ(q)
			u, v := src.Velocity(g.X(i), g.Y(j), tk)
			f.Set(q, u, v)
		}
		frames[k] = f
	}
	s, _ := piv.MemorySeries(frames)
	f, ax, ay, err := Acceleration(s, 1, AccelOptions{})
	if err != nil {
		t.Fatal(err)
	}
	gx, gy := Gradient(f, ax, ay, Fluid{Rho: src.rho}, 0)
	// Q̇ from the exact Q at the frame times by the same central difference the model uses.
	qdot := (src.q(times[2]) - src.q(times[0])) / (2 * dt)
	exit := Exit{X: src.xs, Radius: h, Axis: 0}
	for _, level := range []bool{false, true} {
		res, err := Integrate(g, f.Geometry, gx, gy, Options{Dirichlet: Right | Top, LevelOnly: level,
			Boundary: SourceBoundary(f, exit, qdot, src.rho, 0)})
		if err != nil {
			t.Fatal(err)
		}
		worst, scale := 0.0, 0.0
		for q := range res.P {
			i, j := g.IJ(q)
			pe := src.pressure(g.X(i), g.Y(j), 0.2)
			worst = math.Max(worst, math.Abs(res.P[q]-pe))
			scale = math.Max(scale, math.Abs(pe))
		}
		t.Logf("unsteady point source, level only %v: max absolute error %.3g%% of max |p| %.3g Pa", level, 100*worst/scale, scale)
		// Second-order discretisation near a 1/d² singularity half a cell outside the window:
		// 2% of the peak.
		if worst > 0.02*scale {
			t.Errorf("level only %v: error %.3g%% of the peak", level, 100*worst/scale)
		}
	}
	// The constant reference p = 0 on the same edges misses the unsteady far field: the test
	// above can tell the difference.
	res, err := Integrate(g, f.Geometry, gx, gy, Options{Dirichlet: Right | Top})
	if err != nil {
		t.Fatal(err)
	}
	q := g.Index(0, 0)
	pe := src.pressure(g.X(0), g.Y(0), 0.2)
	t.Logf("with p = 0 on the edges instead: error %.3g Pa at the node nearest the source (%.3g Pa)", res.P[q]-pe, pe)
	if math.Abs(res.P[q]-pe) < 0.02*math.Abs(pe) {
		t.Errorf("the constant reference is as good as the source model; the test does not discriminate")
	}
}

// TestPulseImpulses integrates a trapezoidal exit program with known phase integrals.
func TestPulseImpulses(t *testing.T) {
	var ts, m, p, q []float64
	for k := 0; k <= 400; k++ {
		tt := float64(k) * 0.01
		u := 0.0
		switch {
		case tt < 0.5:
		case tt < 1:
			u = (tt - 0.5) / 0.5
		case tt < 2:
			u = 1
		case tt < 2.5:
			u = (2.5 - tt) / 0.5
		}
		ts, q, m, p = append(ts, tt), append(q, u), append(m, u*u), append(p, 0.1)
	}
	ph := PulseImpulses(ts, m, p, q)
	byName := map[string]PhaseImpulse{}
	for _, x := range ph {
		byName[x.Name] = x
	}
	// ∫u² dt over the ramps is 0.5/3 each and 1 over the hold (exact; the trapezoidal rule on
	// a 0.01 s step errs by about 1e-4 on the ramps' u²).
	for _, c := range []struct {
		name string
		want float64
	}{{"record", 1 + 1.0/3}, {"pulse 1", 1 + 1.0/3}} {
		if got := byName[c.name].M; math.Abs(got-c.want) > 1e-3 {
			t.Errorf("%s: ∫M dt = %g, want %g", c.name, got, c.want)
		}
	}
	if got := byName["record"].P; math.Abs(got-0.4) > 1e-9 {
		t.Errorf("record ∫P dt = %g, want 0.4", got)
	}
	acc, hold := byName["pulse 1 acceleration"], byName["pulse 1 hold"]
	t.Logf("phases: %+v", ph)
	if acc.To < 0.95 || acc.To > 1 || hold.To < 2 || hold.To > 2.05 {
		t.Errorf("phase limits: acceleration ends at %g, hold at %g", acc.To, hold.To)
	}
	// The falling flux crosses 5% of its peak at t = 2.5 - 0.05*0.5 = 2.475 s (linear ramp).
	pulse, after := byName["pulse 1"], byName["pulse 1 after"]
	if math.Abs(pulse.To-2.475) > 1e-9 || after.From != pulse.To || after.To != 4 {
		t.Errorf("pulse ends at %g s, after phase %g..%g s; want 2.475 and 2.475..4", pulse.To, after.From, after.To)
	}
	// The phases split the integrals without gap or overlap.
	sum := byName["pulse 1 acceleration"].P + byName["pulse 1 hold"].P + byName["pulse 1 deceleration"].P
	if math.Abs(sum-pulse.P) > 1e-12 || math.Abs(pulse.P+after.P-0.35) > 1e-12 {
		t.Errorf("phases add to %g (pulse %g); pulse + after %g, want 0.1*(4-0.5) = 0.35", sum, pulse.P, pulse.P+after.P)
	}
}

// After the nozzle stops, the flux measured next to the exit trails off slowly (the departing
// vortex induces flow across the exit plane) and may even turn negative. That tail belongs to
// the "after" phase: the pulse ends where the flux falls through the threshold, not where it
// stops falling. Two pulses: the first one's after phase ends where the second starts to rise.
func TestPulseImpulsesTrailingFlux(t *testing.T) {
	var ts, m, p, q []float64
	flux := func(tt float64) float64 {
		switch {
		case tt < 0.2:
			return tt / 0.2
		case tt < 1:
			return 1
		case tt < 1.2:
			return (1.2 - tt) / 0.2
		case tt < 3:
			// The trailing flux: 4% of the hold at the stop, decaying monotonically past zero.
			return 0.04*math.Exp(-(tt-1.2)/0.3) - 0.005*(tt-1.2)
		case tt < 3.2:
			return (tt - 3) / 0.2
		case tt < 4:
			return 1
		case tt < 4.2:
			return (4.2 - tt) / 0.2
		}
		return 0
	}
	for k := 0; k <= 500; k++ {
		tt := float64(k) * 0.01
		u := flux(tt)
		ts, q, m, p = append(ts, tt), append(q, u), append(m, u*math.Abs(u)), append(p, 0.1)
	}
	byName := map[string]PhaseImpulse{}
	for _, x := range PulseImpulses(ts, m, p, q) {
		byName[x.Name] = x
	}
	// Pulse 1 falls through 0.05 at 1.2 - 0.05*0.2 = 1.19 s; pulse 2 rises from the sample at
	// 2.99 s, where the trailing flux has its minimum.
	p1, a1, p2 := byName["pulse 1"], byName["pulse 1 after"], byName["pulse 2"]
	if math.Abs(p1.To-1.19) > 1e-9 || a1.From != p1.To || math.Abs(a1.To-2.99) > 1e-9 || a1.To != p2.From {
		t.Errorf("pulse 1 %g..%g s, after %g..%g s, pulse 2 from %g s; want 0..1.19, 1.19..2.99, 2.99", p1.From, p1.To, a1.From, a1.To, p2.From)
	}
	if d := byName["pulse 1 deceleration"]; d.To != p1.To {
		t.Errorf("deceleration ends at %g s, the pulse at %g s", d.To, p1.To)
	}
}
