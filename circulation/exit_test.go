package circulation

import (
	"math"
	"testing"

	"github.com/wakekit/wakekit/piv"
)

// poiseuille is a fully developed pipe-flow exit profile u = 2 Ubar (1 - r^2/R^2) for r < R,
// no flow outside, on a cell-centred grid (rows at r = (j + 1/2) h) as the reference frames use.
func poiseuille(ubar, R float64, n int) *piv.Field {
	h := R / float64(n)
	g := piv.Grid{NX: 8, NY: 3 * n, X0: h / 2, Y0: h / 2, DX: h, DY: h}
	f := piv.NewField(g)
	f.Geometry = piv.Geometry{Axisymmetric: true}
	for j := 0; j < g.NY; j++ {
		r := g.Y(j)
		u := 0.0
		if r < R {
			u = 2 * ubar * (1 - r*r/(R*R))
		}
		for i := 0; i < g.NX; i++ {
			f.Set(g.Index(i, j), u, 0)
		}
	}
	return f
}

// Pipe (Hagen-Poiseuille) flow: mean velocity Ubar, centreline 2 Ubar, and momentum flux
// rho int u^2 dA = (4/3) rho A Ubar^2 (handbook values, e.g. White, Fluid Mechanics, ch. 6).
// The cell (midpoint) rule is second order: halving the spacing quarters the error.
func TestExitPoiseuille(t *testing.T) {
	const ubar, R, rho = 0.04, 0.0125, 1000.0
	cfg := ExitConfig{X: 0, Diameter: 2 * R, Rho: rho, Nu: 1e-6}
	var prevU, prevM float64
	for _, n := range []int{4, 8, 16} {
		s, err := ExitMeasure(poiseuille(ubar, R, n), cfg)
		if err != nil {
			t.Fatal(err)
		}
		// The even quadratic through the two rows nearest the axis is exact for this profile.
		if math.Abs(s.Centre-2*ubar) > 1e-12 {
			t.Errorf("n=%d: centreline %g, want %g", n, s.Centre, 2*ubar)
		}
		eU := math.Abs(s.U0/ubar - 1)
		eM := math.Abs(s.MomentumFlux/(4.0/3*rho*math.Pi*R*R*ubar*ubar) - 1)
		t.Logf("n=%d: U0 error %.2e, momentum-flux error %.2e", n, eU, eM)
		if prevU > 0 && (prevU/eU < 3.5 || prevM/eM < 3.5) {
			t.Errorf("n=%d: error ratios %.2f, %.2f on halving the spacing, want about 4 (second order)", n, prevU/eU, prevM/eM)
		}
		prevU, prevM = eU, eM
		// With v = 0 the vorticity flux is exactly u_c^2/2 (the profile is zero at the top).
		if math.Abs(s.VorticityFlux-2*ubar*ubar) > 1e-15 || s.RadialFlux != 0 {
			t.Errorf("n=%d: vorticity flux %g, radial part %g; want %g and 0", n, s.VorticityFlux, s.RadialFlux, 2*ubar*ubar)
		}
	}
	if prevU > 2e-3 {
		t.Errorf("U0 error %g at 16 cells per radius, want < 2e-3", prevU)
	}
}

// A slot with only its upper half in view gives the same mean velocity as the full slot, and
// the plane Poiseuille momentum flux rho int u^2 dy = (6/5) rho D Ubar^2 per unit depth (handbook).
func TestExitSlot(t *testing.T) {
	const ubar, b, rho = 0.02, 0.005, 1000.0
	n := 64
	h := b / float64(n)
	g := piv.Grid{NX: 5, NY: 2 * n, X0: 0, Y0: h / 2, DX: h, DY: h}
	f := piv.NewField(g)
	for j := 0; j < g.NY; j++ {
		y := g.Y(j)
		u := 0.0
		if y < b {
			u = 1.5 * ubar * (1 - y*y/(b*b))
		}
		for i := 0; i < g.NX; i++ {
			f.Set(g.Index(i, j), u, 0)
		}
	}
	s, err := ExitMeasure(f, ExitConfig{Diameter: 2 * b, Rho: rho, Nu: 1e-6})
	if err != nil {
		t.Fatal(err)
	}
	// Midpoint rule, second order: error about h^2/(4 b^2) = 6e-5 at 64 rows.
	if math.Abs(s.U0/ubar-1) > 2e-4 || math.Abs(s.MomentumFlux/(1.2*rho*2*b*ubar*ubar)-1) > 2e-4 {
		t.Errorf("slot U0 %g (want %g), momentum flux %g (want %g)", s.U0, ubar, s.MomentumFlux, 1.2*rho*2*b*ubar*ubar)
	}
}

// Missing vectors at the station give NaN, never an invented value; bad settings are errors.
func TestExitMissingAndErrors(t *testing.T) {
	f := poiseuille(0.04, 0.0125, 8)
	f.Status[f.Grid.Index(0, 2)] = piv.Missing
	f.Normalize()
	s, err := ExitMeasure(f, ExitConfig{Diameter: 0.025, Rho: 1000, Nu: 1e-6})
	if err != nil {
		t.Fatal(err)
	}
	if !math.IsNaN(s.U0) || !math.IsNaN(s.MomentumFlux) || !math.IsNaN(s.VorticityFlux) {
		t.Errorf("missing station vector gave U0 %g, F_m %g, flux %g; want NaN", s.U0, s.MomentumFlux, s.VorticityFlux)
	}
	for _, c := range []ExitConfig{{Diameter: 0, Rho: 1, Nu: 1}, {Diameter: 1, Rho: 0, Nu: 1}, {Diameter: 1, Rho: 1, Nu: 1, X: 5}} {
		if _, err := ExitMeasure(f, c); err == nil {
			t.Errorf("config %+v accepted", c)
		}
	}
}

// A plug exit velocity U gives U0 = U and F_m = rho A U^2 exactly wherever the rows sit: on the
// axis, cell-centred, or starting short of the axis (the row nearest the axis then stands for
// the gap); a view that does not reach the nozzle radius or starts more than a spacing from the
// axis is refused rather than integrated in part.
func TestExitRowLayouts(t *testing.T) {
	const U, R, rho = 0.03, 0.0125, 1000.0
	h := R / 8
	cfg := ExitConfig{X: 0, Diameter: 2 * R, Rho: rho, Nu: 1e-6}
	plug := func(y0 float64, ny int, axi bool) *piv.Field {
		g := piv.Grid{NX: 5, NY: ny, X0: 0, Y0: y0, DX: h, DY: h}
		f := piv.NewField(g)
		f.Geometry = piv.Geometry{Axisymmetric: axi}
		for k := range f.U {
			f.Set(k, U, 0)
		}
		return f
	}
	for _, axi := range []bool{true, false} {
		for _, y0 := range []float64{0, h / 2, 0.8 * h, -0.3 * h, -3 * R} {
			ny := int(math.Round((2*R-y0)/h)) + 1
			s, err := ExitMeasure(plug(y0, ny, axi), cfg)
			if err != nil {
				t.Errorf("axisymmetric %v, rows from %g: %v", axi, y0, err)
				continue
			}
			if math.Abs(s.U0/U-1) > 1e-12 || math.Abs(s.MomentumFlux/(rho*ExitArea(2*R, axi)*U*U)-1) > 1e-12 {
				t.Errorf("axisymmetric %v, rows from %g: U0 %.15g, F_m %.15g; want %g, %g", axi, y0, s.U0, s.MomentumFlux, U, rho*ExitArea(2*R, axi)*U*U)
			}
		}
		for _, c := range []struct{ y0, ny float64 }{{h / 2, 6}, {2 * h, 30}} {
			if _, err := ExitMeasure(plug(c.y0, int(c.ny), axi), cfg); err == nil {
				t.Errorf("axisymmetric %v: a view of %g rows from %g accepted", axi, c.ny, c.y0)
			}
		}
	}
}
