package circulation

import (
	"math"
)

// BudgetFigure is one named figure of a pulse, for summaries and reports.
type BudgetFigure struct {
	Key   string // stable machine name, e.g. "stroke_ratio"
	Group string // heading it belongs to
	Name  string // human name
	Unit  string // SI unit, "1" for a pure number
	Value float64
}

// Figures lists the pulse's figures in report order. NaN values are figures that could not be
// computed; callers show them as such.
func (b BudgetPulse) Figures() []BudgetFigure {
	const (
		gExit  = "Exit program"
		gCirc  = "Circulation budget"
		gThr   = "Impulse and thrust"
		gPhase = "Over-pressure by phase"
		gRing  = "Leading ring"
	)
	return []BudgetFigure{
		{"start", gExit, "pulse start", "s", b.Start},
		{"end", gExit, "pulse end", "s", b.End},
		{"duration", gExit, "pulse duration T", "s", b.Duration},
		{"accel_end", gExit, "end of acceleration", "s", b.AccelEnd},
		{"decel_start", gExit, "start of deceleration", "s", b.DecelStart},
		{"hold_velocity", gExit, "hold exit velocity U0", "m/s", b.Hold},
		{"peak_velocity", gExit, "peak exit velocity", "m/s", b.PeakU0},
		{"stroke", gExit, "stroke length L", "m", b.Stroke},
		{"stroke_ratio", gExit, "stroke ratio L/D", "1", b.StrokeRatio},
		{"reynolds", gExit, "jet Reynolds number U0 D / nu", "1", b.Reynolds},
		{"slug_circulation", gCirc, "slug-model circulation", "m^2/s", b.SlugCirculation},
		{"flux_circulation", gCirc, "circulation delivered (vorticity flux)", "m^2/s", b.FluxCirculation},
		{"flux_radial", gCirc, "radial-velocity part of the flux", "m^2/s", b.FluxRadial},
		{"gamma_end", gCirc, "circulation in view at pulse end", "m^2/s", b.GammaEnd},
		{"gamma_final", gCirc, "circulation in view at window end", "m^2/s", b.GammaFinal},
		{"ring_circulation", gCirc, "leading-ring circulation", "m^2/s", b.RingGamma},
		{"trail_circulation", gCirc, "trailing-jet circulation", "m^2/s", b.TrailGamma},
		{"residual_circulation", gCirc, "delivered minus found (lost or out of view)", "m^2/s", b.Residual},
		{"formation_number", gCirc, "formation number", "1", b.FormationNumber},
		{"pinch_off", gCirc, "pinch-off time", "s", b.PinchOff},
		{"slug_impulse", gThr, "slug-model impulse", "N s", b.SlugImpulse},
		{"impulse_end", gThr, "wake impulse at pulse end", "N s", b.ImpulseEnd},
		{"impulse_final", gThr, "wake impulse at window end", "N s", b.ImpulseFinal},
		{"momentum_impulse", gThr, "momentum-flux impulse over the pulse", "N s", b.MomentumImpulse},
		{"momentum_window", gThr, "momentum-flux impulse over the window", "N s", b.MomentumWindow},
		{"outer_momentum", gThr, "momentum exchange outside the lip (measured)", "N s", b.OuterMomentum},
		{"outer_pressure", gThr, "pressure outside the lip (Bernoulli estimate)", "N s", b.OuterPressure},
		{"pressure_impulse_a", gThr, "over-pressure impulse, route (a), pulse", "N s", b.PressureImpulseA},
		{"pressure_window_a", gThr, "over-pressure impulse, route (a), window", "N s", b.PressureWindowA},
		{"pressure_impulse_b", gThr, "over-pressure impulse, route (b), pulse", "N s", b.PressureImpulseB},
		{"pressure_window_b", gThr, "over-pressure impulse, route (b), window", "N s", b.PressureWindowB},
		{"route_gap", gThr, "route (b) minus route (a), share of exit impulse", "1", b.RouteGap},
		{"overpressure_share", gThr, "over-pressure share of the exit impulse", "1", b.OverPressureShare},
		{"peak_force", gThr, "peak thrust dI/dt", "N", b.PeakForce},
		{"peak_momentum_flux", gThr, "peak momentum flux", "N", b.PeakMomentumFlux},
		{"phase_accel_a", gPhase, "acceleration, route (a)", "N s", b.PhaseImpulseA[0]},
		{"phase_hold_a", gPhase, "hold, route (a)", "N s", b.PhaseImpulseA[1]},
		{"phase_decel_a", gPhase, "deceleration, route (a)", "N s", b.PhaseImpulseA[2]},
		{"phase_accel_b", gPhase, "acceleration, route (b)", "N s", b.PhaseImpulseB[0]},
		{"phase_hold_b", gPhase, "hold, route (b)", "N s", b.PhaseImpulseB[1]},
		{"phase_decel_b", gPhase, "deceleration, route (b)", "N s", b.PhaseImpulseB[2]},
		{"peak_pressure_a", gPhase, "peak over-pressure force in acceleration, route (a)", "N", b.PeakPressureA},
		{"peak_ratio_a", gPhase, "peak over-pressure / peak momentum flux, route (a)", "1", b.PeakRatioA},
		{"peak_pressure_b", gPhase, "peak over-pressure force in acceleration, route (b)", "N", b.PeakPressureB},
		{"peak_ratio_b", gPhase, "peak over-pressure / peak momentum flux, route (b)", "1", b.PeakRatioB},
		{"ring_x", gRing, "ring core axial position", "m", b.RingX},
		{"ring_core_r", gRing, "ring core radial position", "m", b.CoreR},
		{"ring_impulse_radius", gRing, "ring impulse radius", "m", b.RingR},
		{"ring_core_size", gRing, "Gaussian core radius", "m", b.CoreSize},
		{"ring_speed", gRing, "translation speed after the pulse", "m/s", b.RingSpeed},
		{"saffman_speed", gRing, "Saffman viscous-core speed", "m/s", b.Saffman},
		{"saffman_ratio", gRing, "measured / Saffman speed", "1", b.SaffmanRatio},
	}
}

// BudgetSpread returns, for each figure of base, the sample standard deviation of the same
// figure over the Monte-Carlo replicas (NaN with fewer than two finite replica values).
// Replicas must list their figures in the same order as base.
func BudgetSpread(base []BudgetFigure, reps [][]BudgetFigure) []float64 {
	out := make([]float64, len(base))
	for q := range base {
		var sum, sq, n float64
		for _, r := range reps {
			if q >= len(r) {
				continue
			}
			v := r[q].Value
			if math.IsNaN(v) || math.IsInf(v, 0) {
				continue
			}
			sum += v
			sq += v * v
			n++
		}
		if n < 2 {
			out[q] = math.NaN()
			continue
		}
		mean := sum / n
		out[q] = math.Sqrt(math.Max(sq/n-mean*mean, 0) * n / (n - 1))
	}
	return out
}

// BudgetSampleSpread returns, for each sample k of a history, the sample standard deviation of
// reps[r][k] over the Monte-Carlo replicas r (NaN with fewer than two finite values), for
// uncertainty bands on per-frame curves.
func BudgetSampleSpread(reps [][]float64) []float64 {
	n := 0
	for _, r := range reps {
		n = max(n, len(r))
	}
	out := make([]float64, n)
	for k := range out {
		var sum, sq, m float64
		for _, r := range reps {
			if k >= len(r) || math.IsNaN(r[k]) || math.IsInf(r[k], 0) {
				continue
			}
			sum += r[k]
			sq += r[k] * r[k]
			m++
		}
		if m < 2 {
			out[k] = math.NaN()
			continue
		}
		mean := sum / m
		out[k] = math.Sqrt(math.Max(sq/m-mean*mean, 0) * m / (m - 1))
	}
	return out
}
