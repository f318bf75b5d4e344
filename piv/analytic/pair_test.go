package analytic

import (
	"math"
	"testing"
)

// The pair translates at the velocity each vortex induces on the other: for cores small
// against the separation the Lamb–Oseen induced velocity Gamma/(2 pi d)(1 - exp(-d^2/r_c^2))
// equals the point-vortex speed Gamma/(2 pi d) (Lamb §155) to within exp(-d^2/r_c^2).
func TestVortexPair(t *testing.T) {
	gamma, rc, d := 0.01, 2e-3, 0.03
	p := VortexPair(gamma, rc, d, 0, 0.01, 0.02)
	upper := p[0].(LambOseen)
	lower := p[1].(LambOseen)
	if upper.Gamma <= 0 || lower.Gamma >= 0 || upper.Y <= lower.Y {
		t.Fatalf("upper vortex must be counter-clockwise: %+v %+v", upper, lower)
	}
	// Velocity induced at the upper centre by the lower vortex alone (its own translation
	// removed): the speed the pair must move with.
	u, v := lower.Velocity(upper.X, upper.Y, 0)
	induced := u - lower.Uc
	if math.Abs(induced-upper.Uc) > 1e-12*upper.Uc || math.Abs(v) > 1e-12*upper.Uc {
		t.Errorf("induced velocity (%g, %g), pair speed %g", induced, v, upper.Uc)
	}
	if want := gamma / (2 * math.Pi * d); math.Abs(PairSpeed(gamma, d)-want) > 1e-15 {
		t.Errorf("PairSpeed %g, want %g", PairSpeed(gamma, d), want)
	}
	// Moving to +x, and the centres advance by Uc t.
	x1, _ := upper.Centre(2)
	if !(upper.Uc > 0) || math.Abs(x1-(0.01+2*upper.Uc)) > 1e-15 {
		t.Errorf("pair speed %g, centre at t=2 %g", upper.Uc, x1)
	}
	if !p.HasVorticity() || p.Vorticity(0.01, 0.02+d/2, 0) <= 0 || p.Vorticity(0.01, 0.02-d/2, 0) >= 0 {
		t.Error("vorticity must be positive in the upper vortex and negative in the lower")
	}
}
