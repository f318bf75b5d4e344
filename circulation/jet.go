package circulation

import (
	"fmt"
	"math"
	"sort"
)

// Pulse is one pulse of a jet's exit program: the times where the area-averaged exit velocity
// crosses the detection threshold, and the phases of the pulse.
type Pulse struct {
	// Start and End are the threshold crossings [s] (linearly interpolated between frames).
	Start, End float64
	// AccelEnd is when the exit velocity first reaches PulsePlateau of the hold level, and
	// DecelStart when it last leaves it [s]: acceleration Start..AccelEnd, hold
	// AccelEnd..DecelStart, deceleration DecelStart..End.
	AccelEnd, DecelStart float64
	// Hold is the hold (plateau) exit velocity: the median of U0 over the samples above half the
	// pulse's peak [m/s].
	Hold float64
	// WindowEnd is the end of the time this pulse owns for after-pulse figures: the next pulse's
	// start, or the end of the record [s].
	WindowEnd float64
}

// PulseThreshold is the default detection threshold as a share of the peak exit velocity
// (common practice for trigger-like detection; a few per cent sits above measurement noise).
const PulseThreshold = 0.05

// PulsePlateau is the share of the hold velocity that separates acceleration and deceleration
// from the hold phase.
const PulsePlateau = 0.95

// PulseDetect splits an exit program U0(t) into pulses: maximal runs of samples above
// threshold * max(U0) (threshold <= 0 means PulseThreshold). Runs of fewer than three samples
// are taken as noise. NaN samples count as below the threshold.
func PulseDetect(t, u0 []float64, threshold float64) []Pulse {
	if threshold <= 0 {
		threshold = PulseThreshold
	}
	peak := 0.0
	for _, u := range u0 {
		if u > peak {
			peak = u
		}
	}
	if !(peak > 0) {
		return nil
	}
	level := threshold * peak
	above := func(k int) bool { return u0[k] > level }
	var out []Pulse
	for k := 0; k < len(u0); {
		if !above(k) {
			k++
			continue
		}
		a := k
		for k < len(u0) && above(k) {
			k++
		}
		b := k - 1
		if b-a+1 < 3 {
			continue
		}
		p := Pulse{Start: crossing(t, u0, a-1, a, level), End: crossing(t, u0, b, b+1, level)}
		out = append(out, pulsePhases(t, u0, a, b, p))
	}
	for n := range out {
		if n+1 < len(out) {
			out[n].WindowEnd = out[n+1].Start
		} else if len(t) > 0 {
			out[n].WindowEnd = t[len(t)-1]
		}
	}
	return out
}

// PulseGiven returns the pulse between the given start and end times with its phases found
// from the exit program, for pulses named by the user.
func PulseGiven(t, u0 []float64, start, end float64) (Pulse, error) {
	if !(end > start) {
		return Pulse{}, fmt.Errorf("pulse end %g s is not after its start %g s", end, start)
	}
	a := sort.SearchFloat64s(t, start)
	b := sort.SearchFloat64s(t, end) - 1
	if a >= len(t) || b < a+2 {
		return Pulse{}, fmt.Errorf("pulse %g..%g s holds fewer than three frames", start, end)
	}
	p := pulsePhases(t, u0, a, b, Pulse{Start: start, End: end})
	p.WindowEnd = t[len(t)-1]
	return p, nil
}

// crossing returns where u crosses level between samples a (below) and b (above or below);
// at the ends of the record it returns the end time.
func crossing(t, u []float64, a, b int, level float64) float64 {
	if a < 0 {
		return t[0]
	}
	if b >= len(t) {
		return t[len(t)-1]
	}
	ua, ub := u[a], u[b]
	if math.IsNaN(ua) || math.IsNaN(ub) || ua == ub {
		return 0.5 * (t[a] + t[b])
	}
	f := (level - ua) / (ub - ua)
	return t[a] + f*(t[b]-t[a])
}

func pulsePhases(t, u0 []float64, a, b int, p Pulse) Pulse {
	peak := 0.0
	for k := a; k <= b; k++ {
		peak = math.Max(peak, u0[k])
	}
	var top []float64
	for k := a; k <= b; k++ {
		if u0[k] > peak/2 {
			top = append(top, u0[k])
		}
	}
	p.Hold = median(top)
	level := PulsePlateau * p.Hold
	first, last := -1, -1
	for k := a; k <= b; k++ {
		if u0[k] >= level {
			if first < 0 {
				first = k
			}
			last = k
		}
	}
	p.AccelEnd = crossing(t, u0, first-1, first, level)
	if first == a {
		p.AccelEnd = t[a]
	}
	p.DecelStart = crossing(t, u0, last, last+1, level)
	if last == b {
		p.DecelStart = t[b]
	}
	return p
}

// FormationNumber returns the formation number of Gharib, Rambod & Shariff (1998): the
// formation time t* = L/D at which the circulation delivered by the jet, delivered(t*),
// first reaches the final circulation of the leading ring. The curve is interpolated linearly.
// It returns NaN and false when the delivered circulation never reaches the ring's, i.e. the
// stroke was too short for the ring to pinch off.
func FormationNumber(tstar, delivered []float64, ringFinal float64) (float64, bool) {
	for k := 1; k < len(tstar); k++ {
		a, b := delivered[k-1], delivered[k]
		if math.IsNaN(a) || math.IsNaN(b) {
			continue
		}
		if a < ringFinal && b >= ringFinal {
			f := (ringFinal - a) / (b - a)
			return tstar[k-1] + f*(tstar[k]-tstar[k-1]), true
		}
	}
	return math.NaN(), false
}

// SlugCirculation returns the slug-model circulation (1/2) int U0^2 dt over [a, b]
// (Krueger & Gharib 2003, from Didden 1979) [m^2/s].
func SlugCirculation(t, u0 []float64, a, b float64) float64 {
	sq := make([]float64, len(u0))
	for k, u := range u0 {
		sq[k] = u * u
	}
	return 0.5 * BudgetIntegral(t, sq, a, b)
}

// SlugImpulse returns the slug-model impulse rho A int U0^2 dt over [a, b], which is
// rho A U0^2 T for a square pulse (Krueger & Gharib 2003) [N s]; A is the exit area.
func SlugImpulse(t, u0 []float64, a, b, rho, area float64) float64 {
	return 2 * rho * area * SlugCirculation(t, u0, a, b)
}

// SaffmanSpeed returns the translation speed of a thin vortex ring with a Gaussian core,
// Gamma/(4 pi R) (ln(8R/a) - 0.558) (Saffman 1970; the constant 0.558 for the Gaussian core of
// radius a, from memory) [m/s].
func SaffmanSpeed(gamma, ringRadius, coreRadius float64) float64 {
	if !(ringRadius > 0) || !(coreRadius > 0) {
		return math.NaN()
	}
	return gamma / (4 * math.Pi * ringRadius) * (math.Log(8*ringRadius/coreRadius) - 0.558)
}
