package circulation

import (
	"math"
	"testing"

	"github.com/wakekit/wakekit/piv"
	"github.com/wakekit/wakekit/piv/analytic"
	"gonum.org/v1/gonum/floats"
	"gonum.org/v1/gonum/stat"
)

// Hill's spherical vortex has circulation 5 U a and impulse 2 pi rho a^3 U (Lamb,
// Hydrodynamics, 1932, §165). The view encloses the whole vortex, so the line integrals see all
// of it; the errors come from the trapezoidal rule across the kink of u at the sphere and fall
// at least like h^1.5 (second order away from the kink).
func TestBudgetHill(t *testing.T) {
	const a, U, rho = 0.02, 0.05, 1000.0
	hill := analytic.Hill{Radius: a, Speed: U, X0: 0.05, Rho: rho}
	cfg := ExitConfig{X: 0, Diameter: 0.02, Rho: rho, Nu: 1e-6}
	var prevG, prevI float64
	for _, n := range []int{10, 20, 40} {
		h := a / float64(n)
		g := piv.Grid{NX: int(0.1/h) + 1, NY: int(0.05/h) + 1, X0: 0, Y0: 0, DX: h, DY: h}
		f := analytic.Sample(hill, g, 0)
		v, err := BudgetMeasure(f, cfg)
		if err != nil {
			t.Fatal(err)
		}
		eG := math.Abs(v.Gamma/(5*U*a) - 1)
		eI := math.Abs(v.Impulse/(2*math.Pi*rho*a*a*a*U) - 1)
		t.Logf("a/h=%d: Gamma error %.2e, impulse error %.2e, ring x %.4f", n, eG, eI, v.RingX)
		if prevG > 0 && (prevG/eG < 2.8 || prevI/eI < 2.8) {
			t.Errorf("a/h=%d: error ratios %.2f, %.2f on halving h, want >= 2.8", n, prevG/eG, prevI/eI)
		}
		prevG, prevI = eG, eI
		// One vortex: the ring region holds all of it.
		if math.Abs(v.RingGamma-v.Gamma) > 0.02*v.Gamma {
			t.Errorf("ring circulation %g of total %g", v.RingGamma, v.Gamma)
		}
	}
	if prevG > 2e-3 || prevI > 2e-3 {
		t.Errorf("errors %g, %g at a/h = 40, want < 2e-3", prevG, prevI)
	}
}

// A vortex carried through the exit station at a known speed: the time integral of the
// vorticity flux through the station equals the circulation that has entered the view, which
// is the whole 5 U a once Hill's vortex is past (Lamb 1932 §165; Helmholtz: inviscid vorticity
// is carried with the fluid). The error is that of the grid (h = a/20) and of the trapezoidal
// rule in time across the vorticity jump at the sphere, about 1%.
func TestBudgetFluxHill(t *testing.T) {
	const a, U, rho = 0.02, 0.05, 1000.0
	hill := analytic.Hill{Radius: a, Speed: U, X0: -1.2 * a, Rho: rho}
	cfg := ExitConfig{X: 0, Diameter: 0.02, Rho: rho, Nu: 1e-6}
	h := a / 20
	g := piv.Grid{NX: int(0.12/h) + 1, NY: int(0.05/h) + 1, X0: 0, Y0: 0, DX: h, DY: h}
	var ts, flux, gam []float64
	for k := 0; k <= 120; k++ {
		tm := float64(k) * 0.01
		f := analytic.Sample(hill, g, tm)
		ex, err := ExitMeasure(f, cfg)
		if err != nil {
			t.Fatal(err)
		}
		v, err := BudgetMeasure(f, cfg)
		if err != nil {
			t.Fatal(err)
		}
		ts = append(ts, tm)
		flux = append(flux, ex.VorticityFlux)
		gam = append(gam, v.Gamma)
	}
	delivered := BudgetCumulative(ts, flux)
	want := 5 * U * a
	last := len(ts) - 1
	if e := math.Abs((delivered[last]+gam[0])/want - 1); e > 0.015 {
		t.Errorf("delivered %g + initial %g, want %g (error %.3f)", delivered[last], gam[0], want, e)
	}
	if e := math.Abs(gam[last]/want - 1); e > 0.005 {
		t.Errorf("circulation in view at the end %g, want %g", gam[last], want)
	}
}

// The smoothing differentiator is exact for quadratics (least-squares fit of degree 2), also
// at the ends and on uneven times, and bridges NaN samples.
func TestBudgetDerivative(t *testing.T) {
	ts := []float64{0, 0.1, 0.25, 0.3, 0.45, 0.5, 0.62, 0.8, 0.9, 1.0}
	y := make([]float64, len(ts))
	for k, x := range ts {
		y[k] = 3 - 2*x + 5*x*x
	}
	y[4] = math.NaN()
	d := BudgetDerivative(ts, y, 2)
	for k, x := range ts {
		if math.Abs(d[k]-(-2+10*x)) > 1e-9 {
			t.Errorf("t=%g: derivative %g, want %g", x, d[k], -2+10*x)
		}
	}
}

// Trapezoidal integrals against gonum's floats and closed forms.
func TestBudgetIntegral(t *testing.T) {
	ts := []float64{0, 1, 2, 3, 4}
	y := []float64{0, 1, 4, 9, 16}
	// Trapezoid of x^2 on unit steps over [0, 4]: 22 (by hand: 0.5+2.5+6.5+12.5).
	if v := BudgetIntegral(ts, y, 0, 4); math.Abs(v-22) > 1e-12 {
		t.Errorf("integral %g, want 22", v)
	}
	// Sub-interval with interpolated ends: [0.5, 1.5] of the piecewise-linear interpolant.
	if v := BudgetIntegral(ts, y, 0.5, 1.5); math.Abs(v-(0.5*0.5*(0.5+1)+0.5*0.5*(1+2.5))) > 1e-12 {
		t.Errorf("sub-interval integral %g", v)
	}
	c := BudgetCumulative(ts, y)
	want := []float64{0, 0.5, 3, 9.5, 22}
	if !floats.EqualApprox(c, want, 1e-12) {
		t.Errorf("cumulative %v, want %v", c, want)
	}
}

// The noise estimate recovers the standard deviation of the noise model added to a smooth
// exact flow. 10% allows for the sampling spread of the median over ~10^4 residuals (~1%) and
// the smooth-flow curvature term.
func TestBudgetNoiseEstimate(t *testing.T) {
	hill := analytic.Hill{Radius: 0.02, Speed: 0.05, X0: 0.05, Rho: 1000}
	g := piv.Grid{NX: 100, NY: 50, X0: 0, Y0: 0, DX: 0.001, DY: 0.001}
	for _, sigma := range []float64{5e-4, 2e-3} {
		f := analytic.Sample(hill, g, 0)
		if _, err := (analytic.Noise{Sigma: sigma, Seed: 3, Stream: 1}).Apply(f); err != nil {
			t.Fatal(err)
		}
		est := BudgetNoiseEstimate(f)
		if math.Abs(est/sigma-1) > 0.1 {
			t.Errorf("sigma %g: estimated %g", sigma, est)
		}
	}
}

// The Monte-Carlo spread is the sample standard deviation, checked against gonum's
// stat.StdDev; NaN replica values are left out, and fewer than two values give NaN.
func TestBudgetSpread(t *testing.T) {
	vals := []float64{1.2, 0.7, 1.9, 1.1, math.NaN(), 0.95}
	base := []BudgetFigure{{Key: "a", Value: 1}, {Key: "b", Value: 2}}
	var reps [][]BudgetFigure
	var finite []float64
	for k, v := range vals {
		reps = append(reps, []BudgetFigure{{Key: "a", Value: v}, {Key: "b", Value: math.NaN()}})
		if k == 0 {
			reps[0][1].Value = 3
		}
		if !math.IsNaN(v) {
			finite = append(finite, v)
		}
	}
	s := BudgetSpread(base, reps)
	if want := stat.StdDev(finite, nil); math.Abs(s[0]-want) > 1e-12 {
		t.Errorf("spread %g, gonum %g", s[0], want)
	}
	if !math.IsNaN(s[1]) {
		t.Errorf("spread from one value %g, want NaN", s[1])
	}
}

// The per-sample spread of replica histories is the sample standard deviation at each sample,
// checked against gonum's stat.StdDev; NaN values are left out and short replicas count only
// where they have samples.
func TestBudgetSampleSpread(t *testing.T) {
	reps := [][]float64{{1, 2.5, 3}, {1.4, math.NaN(), 2}, {0.9, 2.1}, {1.3, 2.2, math.Inf(1)}}
	s := BudgetSampleSpread(reps)
	if len(s) != 3 {
		t.Fatalf("%d samples, want 3", len(s))
	}
	for k, want := range []float64{stat.StdDev([]float64{1, 1.4, 0.9, 1.3}, nil), stat.StdDev([]float64{2.5, 2.1, 2.2}, nil),
		stat.StdDev([]float64{3, 2}, nil)} {
		if math.Abs(s[k]-want) > 1e-12 {
			t.Errorf("sample %d: %g, gonum %g", k, s[k], want)
		}
	}
	if s := BudgetSampleSpread([][]float64{{1}}); !math.IsNaN(s[0]) {
		t.Errorf("one replica: %g, want NaN", s[0])
	}
}

// A counter-rotating Lamb–Oseen pair, the planar analogue of a ring's section, seen above its
// symmetry line: the circulation in view is Gamma and the impulse per unit depth of the pair
// rho Gamma d (Saffman, Vortex Dynamics, 1992, ch. 3; section from memory). The Gaussian tails cut
// by the view are below 1e-6 of Gamma here; the trapezoidal rule on smooth integrands with
// h = r_c/8 is good to 1e-3.
func TestBudgetPairSlot(t *testing.T) {
	const G, rc, d, rho = 0.01, 0.004, 0.03, 1000.0
	pair := analytic.Superposition{
		analytic.LambOseen{Gamma: G, CoreRadius: rc, X: 0.05, Y: d / 2},
		analytic.LambOseen{Gamma: -G, CoreRadius: rc, X: 0.05, Y: -d / 2},
	}
	h := rc / 8
	g := piv.Grid{NX: int(0.1/h) + 1, NY: int(0.045/h) + 1, X0: 0, Y0: 0, DX: h, DY: h}
	f := analytic.Sample(pair, g, 0)
	v, err := BudgetMeasure(f, ExitConfig{X: 0, Diameter: 0.01, Rho: rho, Nu: 1e-6})
	if err != nil {
		t.Fatal(err)
	}
	if math.Abs(v.Gamma/G-1) > 1e-3 || math.Abs(v.Impulse/(rho*G*d)-1) > 1e-3 {
		t.Errorf("Gamma %g (want %g), impulse %g (want %g)", v.Gamma, G, v.Impulse, rho*G*d)
	}
	// Core at (0.05, d/2): within a tenth of a spacing by the parabolic peak fits; impulse
	// radius I/(2 rho Gamma) = d/2.
	if math.Abs(v.RingX-0.05) > 0.1*h || math.Abs(v.CoreR-d/2) > 0.1*h || math.Abs(v.RingR/(d/2)-1) > 2e-3 {
		t.Errorf("core at (%g, %g), impulse radius %g; want (0.05, %g)", v.RingX, v.CoreR, v.RingR, d/2)
	}
}
