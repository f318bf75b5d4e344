package circulation

import (
	"math"
	"testing"

	"github.com/wakekit/wakekit/piv"
)

// program is the smooth trapezoidal exit program U (1 - cos(pi t / tau)) / 2 on the ramps and
// U on the hold, of duration T, starting at t = 0.
func program(U, tau, T, t float64) float64 {
	switch {
	case t <= 0 || t >= T:
		return 0
	case t < tau:
		return U * (1 - math.Cos(math.Pi*t/tau)) / 2
	case t < T-tau:
		return U
	default:
		return U * (1 + math.Cos(math.Pi*(t-T+tau)/tau)) / 2
	}
}

// plugFrame is a plug jet u = U0(t) for r < R and at rest outside, the nozzle radius on a cell
// edge, so the area average at the station is exact.
func plugFrame(u0, R float64, t float64) *piv.Field {
	h := R / 4
	g := piv.Grid{NX: 6, NY: 12, X0: h / 2, Y0: h / 2, DX: h, DY: h}
	f := piv.NewField(g)
	f.Geometry = piv.Geometry{Axisymmetric: true}
	f.Time = t
	for j := 0; j < g.NY; j++ {
		u := 0.0
		if g.Y(j) < R {
			u = u0
		}
		for i := 0; i < g.NX; i++ {
			f.Set(g.Index(i, j), u, 0)
		}
	}
	return f
}

// The exit program of a known pulse, read through the exit station of plug-flow frames,
// gives the stroke L = U (T - tau) and the slug-model integral int U0^2 dt = U^2 (T - 5 tau/4)
// (closed forms of the program above), the slug circulation half of it and the slug impulse
// rho A times it (Krueger & Gharib 2003). The trapezoidal rule in time is second order:
// errors < 1e-4 at 50 frames per ramp. Detection puts the start where U0 first exceeds 5% of
// the peak, tau acos(0.9)/pi, within the linear-interpolation error of a frame step.
func TestSlugModelKnownProgram(t *testing.T) {
	const U, tau, T, R, rho = 0.04, 0.3, 2.5, 0.0125, 1000.0
	cfg := ExitConfig{Diameter: 2 * R, Rho: rho, Nu: 1e-6}
	dt := tau / 50
	var recs []BudgetRecord
	for k := 0; k <= int(4/dt); k++ {
		tm := float64(k) * dt
		ex, err := ExitMeasure(plugFrame(program(U, tau, T, tm), R, tm), cfg)
		if err != nil {
			t.Fatal(err)
		}
		recs = append(recs, BudgetRecord{Exit: ex, View: BudgetView{Gamma: 0, Impulse: 0}, PressureA: math.NaN()})
	}
	s := BudgetHistories(recs, cfg, 0)
	pulses := PulseDetect(s.T, s.U0, 0)
	if len(pulses) != 1 {
		t.Fatalf("found %d pulses, want 1", len(pulses))
	}
	p := BudgetPulses(s, pulses, cfg, true)[0]
	start := tau * math.Acos(0.9) / math.Pi
	if math.Abs(p.Start-start) > 0.05*dt || math.Abs(p.End-(T-start)) > 0.05*dt {
		t.Errorf("pulse %g..%g, want %g..%g", p.Start, p.End, start, T-start)
	}
	// Integrals over the detected pulse miss the program below the threshold; compare over the
	// whole record instead, which holds all of it.
	L := BudgetIntegral(s.T, s.U0, 0, 4)
	sq := U * U * (T - 1.25*tau)
	if math.Abs(L/(U*(T-tau))-1) > 1e-4 {
		t.Errorf("stroke %g, want %g", L, U*(T-tau))
	}
	if g := SlugCirculation(s.T, s.U0, 0, 4); math.Abs(g/(sq/2)-1) > 1e-4 {
		t.Errorf("slug circulation %g, want %g", g, sq/2)
	}
	if i := SlugImpulse(s.T, s.U0, 0, 4, rho, math.Pi*R*R); math.Abs(i/(rho*math.Pi*R*R*sq)-1) > 1e-4 {
		t.Errorf("slug impulse %g, want %g", i, rho*math.Pi*R*R*sq)
	}
	// Over the detected pulse the slug figures lose only the two sub-threshold tails, each
	// below int_0^start U0^2 dt < (0.05 U)^2 start.
	if d := sq/2 - p.SlugCirculation; d < 0 || d > 0.5*2*0.0025*U*U*start {
		t.Errorf("pulse slug circulation %g differs from the whole %g by %g", p.SlugCirculation, sq/2, d)
	}
	if math.Abs(p.Hold-U) > 1e-12 || math.Abs(p.Reynolds-U*2*R/1e-6) > 1e-6 {
		t.Errorf("hold %g, Re %g", p.Hold, p.Reynolds)
	}
	// The hold phase starts where U0 reaches 95% of the hold: tau acos(-0.9)/pi.
	if math.Abs(p.AccelEnd-tau*math.Acos(-0.9)/math.Pi) > 0.05*dt {
		t.Errorf("acceleration ends at %g, want %g", p.AccelEnd, tau*math.Acos(-0.9)/math.Pi)
	}
	// The plug jet's exit momentum flux is rho A U0^2, so the flux impulse equals the slug impulse.
	if math.Abs(p.MomentumImpulse/p.SlugImpulse-1) > 1e-12 {
		t.Errorf("momentum impulse %g, slug impulse %g", p.MomentumImpulse, p.SlugImpulse)
	}
}

// Two pulses in one record are split, each owning the time up to the next one.
func TestPulseDetectTwo(t *testing.T) {
	var ts, u []float64
	for k := 0; k <= 600; k++ {
		tm := float64(k) * 0.01
		ts = append(ts, tm)
		u = append(u, program(0.04, 0.2, 1.5, tm)+program(0.03, 0.2, 1.0, tm-3))
	}
	p := PulseDetect(ts, u, 0)
	if len(p) != 2 {
		t.Fatalf("found %d pulses, want 2", len(p))
	}
	if p[0].WindowEnd != p[1].Start || p[1].WindowEnd != 6 || math.Abs(p[1].Hold-0.03) > 1e-12 {
		t.Errorf("pulses %+v", p)
	}
	if _, err := PulseGiven(ts, u, 1, 0.5); err == nil {
		t.Error("pulse ending before its start accepted")
	}
	g, err := PulseGiven(ts, u, 0, 1.5)
	if err != nil || math.Abs(g.Hold-0.04) > 1e-12 {
		t.Errorf("given pulse %+v, %v", g, err)
	}
}

// The formation number is where the delivered circulation first reaches the ring's final
// value (Gharib, Rambod & Shariff 1998), by linear interpolation; a ring that takes all the
// circulation gives no formation number.
func TestFormationNumber(t *testing.T) {
	ts := []float64{0, 1, 2, 3, 4, 5, 6}
	g := []float64{0, 1, 2, 3, 4, 5, 6}
	f, ok := FormationNumber(ts, g, 3.6)
	if !ok || math.Abs(f-3.6) > 1e-12 {
		t.Errorf("formation number %g %v, want 3.6", f, ok)
	}
	if _, ok := FormationNumber(ts, g, 7); ok {
		t.Error("formation number found above the delivered circulation")
	}
}

// Saffman's speed for a thin ring: for R = 1, a = 0.01, Gamma = 4 pi the formula gives
// ln(800) - 0.558 = 6.1265 (evaluated by hand from Saffman 1970).
func TestSaffmanSpeed(t *testing.T) {
	if v := SaffmanSpeed(4*math.Pi, 1, 0.01); math.Abs(v-(math.Log(800)-0.558)) > 1e-12 {
		t.Errorf("speed %g", v)
	}
	if !math.IsNaN(SaffmanSpeed(1, 0, 1)) {
		t.Error("zero radius accepted")
	}
}
