package analytic

import (
	"math"
	"math/rand/v2"
	"testing"

	"github.com/wakekit/wakekit/piv"
	"gonum.org/v1/gonum/integrate/quad"
)

// Finite differences of the closed forms. The fourth-order central difference has truncation
// error h^4 f^(5) / 30 and rounding error about 1.5 eps |f| / h; with k h = 3e-3 (k the flow's
// wavenumber, 1/core radius) both are below 1e-10 relative to the terms being compared, so
// residuals are asserted below 1e-8 of the terms' scale (100x margin for the constants).
const fdStep = 3e-3

func d1(f func(float64) float64, x, h float64) float64 {
	return (-f(x+2*h) + 8*f(x+h) - 8*f(x-h) + f(x-2*h)) / (12 * h)
}

func d2(f func(float64) float64, x, h float64) float64 {
	return (-f(x+2*h) + 16*f(x+h) - 30*f(x) + 16*f(x-h) - f(x-2*h)) / (12 * h * h)
}

// grads holds velocity gradients of a flow at a point by finite differences.
type grads struct{ ux, uy, vx, vy, ut, vt float64 }

func velGrads(f Flow, x, y, t, h, ht float64) grads {
	u := func(x, y, t float64) float64 { u, _ := f.Velocity(x, y, t); return u }
	v := func(x, y, t float64) float64 { _, v := f.Velocity(x, y, t); return v }
	return grads{
		ux: d1(func(s float64) float64 { return u(s, y, t) }, x, h),
		uy: d1(func(s float64) float64 { return u(x, s, t) }, y, h),
		vx: d1(func(s float64) float64 { return v(s, y, t) }, x, h),
		vy: d1(func(s float64) float64 { return v(x, s, t) }, y, h),
		ut: d1(func(s float64) float64 { return u(x, y, s) }, t, ht),
		vt: d1(func(s float64) float64 { return v(x, y, s) }, t, ht),
	}
}

// lineCirculation integrates u . dl counter-clockwise around the circle of radius R about
// (cx, cy) with gonum's Gauss–Legendre rule. The integrand is smooth and periodic, so 128 points
// converge to round-off for the flows used here.
func lineCirculation(f Flow, cx, cy, R, t float64) float64 {
	return quad.Fixed(func(th float64) float64 {
		s, c := math.Sincos(th)
		u, v := f.Velocity(cx+R*c, cy+R*s, t)
		return (-u*s + v*c) * R
	}, 0, 2*math.Pi, 128, nil, 0)
}

// diskIntegral integrates g over the disk of radius R about (cx, cy) in polar coordinates with
// nested Gauss–Legendre rules.
func diskIntegral(g func(x, y float64) float64, cx, cy, R float64, n int) float64 {
	return quad.Fixed(func(rho float64) float64 {
		return rho * quad.Fixed(func(th float64) float64 {
			s, c := math.Sincos(th)
			return g(cx+rho*c, cy+rho*s)
		}, 0, 2*math.Pi, n, nil, 0)
	}, 0, R, n, nil, 0)
}

func relErr(got, want, scale float64) float64 { return math.Abs(got-want) / scale }

// Lamb–Oseen circulation at radius R equals Gamma (1 - exp(-R^2/r_c^2)) with
// r_c^2 = r_0^2 + 4 nu t (Saffman, Vortex Dynamics, 1992, §2.1), here by gonum's quadrature of
// the velocity on a circle about the moving centre of a decaying, translating vortex.
func TestLambOseenCirculation(t *testing.T) {
	f := LambOseen{Gamma: 0.012, CoreRadius: 4e-3, Nu: 1e-6, X: 0.01, Y: -0.02, Uc: 0.05, Vc: -0.02}
	for _, tm := range []float64{0, 0.5, 3} {
		c := math.Sqrt(16e-6 + 4e-6*tm)
		cx, cy := f.Centre(tm)
		for _, R := range []float64{1e-3, 4e-3, 9e-3, 0.03} {
			want := f.Gamma * (1 - math.Exp(-R*R/(c*c)))
			got := lineCirculation(f, cx, cy, R, tm)
			// Quadrature of a smooth periodic integrand: round-off level, 1e-12 of Gamma.
			if e := relErr(got, want, f.Gamma); e > 1e-12 {
				t.Errorf("t=%g R=%g: circulation %.15g, Saffman %.15g (rel %.2g)", tm, R, got, want, e)
			}
			if e := relErr(f.Circulation(R, tm), want, f.Gamma); e > 1e-14 {
				t.Errorf("t=%g R=%g: Circulation method %.15g, want %.15g", tm, R, f.Circulation(R, tm), want)
			}
		}
	}
}

// Stokes' theorem: the circulation around any circle equals the area integral of the
// vorticity, both by gonum's quadrature. This ties each Vorticity method to its Velocity on
// circles that do not sit on the centre.
func TestStokesOffCentre(t *testing.T) {
	lo := LambOseen{Gamma: -0.02, CoreRadius: 3e-3, Nu: 1e-6, X: 1e-3, Y: 2e-3, Uc: 0.1}
	tg := TaylorGreen{U: 0.2, K: 2 * math.Pi / 0.1, Nu: 1e-6}
	rot := Rotation{Omega: 3, X: 0.1, Y: -0.1}
	pair := Superposition{lo, LambOseen{Gamma: 0.02, CoreRadius: 3e-3, X: 1e-3, Y: 1e-2}}
	cases := []struct {
		name   string
		f      VorticityFlow
		cx, cy float64
		R      float64
		scale  float64
	}{
		{"lamb-oseen", lo, 4e-3, 1e-3, 5e-3, 0.02},
		{"taylor-green", tg, 0.013, 0.021, 0.017, 0.2 * 0.1},
		{"rotation", rot, 0.3, 0.2, 0.05, 3 * 0.05 * 0.05},
		{"pair", pair, 2e-3, 6e-3, 6e-3, 0.02},
	}
	for _, c := range cases {
		tm := 0.7
		line := lineCirculation(c.f, c.cx, c.cy, c.R, tm)
		area := diskIntegral(func(x, y float64) float64 { return c.f.Vorticity(x, y, tm) }, c.cx, c.cy, c.R, 96)
		// Both quadratures of smooth integrands converge to round-off; 1e-10 of the scale.
		if e := relErr(line, area, c.scale); e > 1e-10 {
			t.Errorf("%s: line integral %.15g, area integral %.15g (rel %.2g)", c.name, line, area, e)
		}
	}
	// The Taylor–Green cell circulation 8U/k F is the integral of the vorticity over a cell.
	cell := quad.Fixed(func(x float64) float64 {
		return quad.Fixed(func(y float64) float64 { return tg.Vorticity(x, y, 0.7) }, 0, math.Pi/tg.K, 40, nil, 0)
	}, 0, math.Pi/tg.K, 40, nil, 0)
	if e := relErr(cell, tg.CellCirculation(0.7), tg.CellCirculation(0.7)); e > 1e-12 {
		t.Errorf("Taylor–Green cell circulation %.15g, quadrature %.15g", tg.CellCirculation(0.7), cell)
	}
}

// E1 against gonum's quadrature of its definition int_x^inf e^{-q}/q dq, and at x = 1 against
// the tabulated 0.219383934395520 (Abramowitz & Stegun, Table 5.1; value from memory).
func TestE1(t *testing.T) {
	for _, x := range []float64{1e-8, 0.01, 0.3, 0.999, 1, 1.001, 2.5, 7, 30, 120} {
		// Below 1 the integrand's 1/q is taken out by q = e^s; beyond, gonum maps [lo, inf) to
		// [0, 1). Gauss–Legendre with 2000 points gives about 1e-12 relative on these smooth
		// integrands.
		lo, want := x, 0.0
		if x < 1 {
			want = quad.Fixed(func(s float64) float64 { return math.Exp(-math.Exp(s)) }, math.Log(x), 0, 2000, nil, 0)
			lo = 1
		}
		want += quad.Fixed(func(q float64) float64 { return math.Exp(-q) / q }, lo, math.Inf(1), 2000, nil, 0)
		if e := math.Abs(E1(x)-want) / want; e > 1e-10 {
			t.Errorf("E1(%g) = %.16g, quadrature %.16g (rel %.2g)", x, E1(x), want, e)
		}
	}
	if e := math.Abs(E1(1) - 0.219383934395520); e > 1e-14 {
		t.Errorf("E1(1) = %.16g, A&S 0.219383934395520", E1(1))
	}
	if !math.IsInf(E1(0), 1) || !math.IsNaN(E1(-1)) {
		t.Errorf("E1(0) = %g, E1(-1) = %g; want +Inf and NaN", E1(0), E1(-1))
	}
}

// The Lamb–Oseen pressure in closed form (with E1) equals gonum's quadrature of the radial
// balance dp/dr = rho u_theta^2 / r from infinity (Saffman 1992, §2.1).
func TestLambOseenPressure(t *testing.T) {
	f := LambOseen{Gamma: 0.015, CoreRadius: 5e-3, Nu: 1e-6, Rho: 1000, X: 0.02, Y: 0.01, Vc: 0.03}
	tm := 2.0
	c := f.Core(tm)
	cx, cy := f.Centre(tm)
	scale := f.Rho * f.Gamma * f.Gamma / (4 * math.Pi * math.Pi * c * c)
	for _, r := range []float64{0, 1e-4, 2e-3, 5e-3, 1.2e-2, 4e-2} {
		// int_r^inf rho u^2 / r' dr' split at 10 core radii (the rest by the same rule after
		// gonum's map to [0, 1)); 400 points each give about 1e-13 relative.
		ut := func(s float64) float64 {
			return f.Gamma / (2 * math.Pi * s) * (1 - math.Exp(-s*s/(c*c)))
		}
		g := func(s float64) float64 {
			if s == 0 {
				return 0
			}
			u := ut(s)
			return f.Rho * u * u / s
		}
		want := -quad.Fixed(g, r, 10*c, 400, nil, 0) - quad.Fixed(g, 10*c, math.Inf(1), 400, nil, 0)
		got := f.Pressure(cx+r*0.6, cy-r*0.8, tm)
		if e := relErr(got, want, scale); e > 1e-10 {
			t.Errorf("r=%g: pressure %.15g, quadrature %.15g (rel %.2g)", r, got, want, e)
		}
	}
	// Centre value -rho Gamma^2 ln 2 / (4 pi^2 r_c^2), the r -> 0 limit of the closed form.
	if e := relErr(f.Pressure(cx, cy, tm), -scale*math.Ln2, scale); e > 1e-14 {
		t.Errorf("centre pressure %.15g, want %.15g", f.Pressure(cx, cy, tm), -scale*math.Ln2)
	}
}

// nsResidual returns the x and y residuals of the incompressible Navier–Stokes momentum
// balance rho (du/dt + u . grad u) + grad p - rho nu lap u at (x, y, t), by fourth-order
// differences of the closed forms with space step h and time step ht.
func nsResidual(f PressureFlow, rho, nu, x, y, tm, h, ht float64) (rx, ry float64) {
	g := velGrads(f, x, y, tm, h, ht)
	u, v := f.Velocity(x, y, tm)
	px := d1(func(s float64) float64 { return f.Pressure(s, y, tm) }, x, h)
	py := d1(func(s float64) float64 { return f.Pressure(x, s, tm) }, y, h)
	uf := func(x, y float64) float64 { u, _ := f.Velocity(x, y, tm); return u }
	vf := func(x, y float64) float64 { _, v := f.Velocity(x, y, tm); return v }
	lapU := d2(func(s float64) float64 { return uf(s, y) }, x, h) + d2(func(s float64) float64 { return uf(x, s) }, y, h)
	lapV := d2(func(s float64) float64 { return vf(s, y) }, x, h) + d2(func(s float64) float64 { return vf(x, s) }, y, h)
	rx = rho*(g.ut+u*g.ux+v*g.uy) + px - rho*nu*lapU
	ry = rho*(g.vt+u*g.vx+v*g.vy) + py - rho*nu*lapV
	return rx, ry
}

// The exact Navier–Stokes solutions satisfy the momentum balance at random points and times:
// the decaying Taylor–Green vortex (Taylor & Green 1937), the decaying Lamb–Oseen vortex
// carried by a uniform stream (Saffman 1992, §2.1; Galilean invariance) and solid-body
// rotation. The viscosities make the viscous term as large as the others (Reynolds number of
// order 1), so a wrong decay rate would show.
func TestNavierStokesExactSolutions(t *testing.T) {
	tg := TaylorGreen{U: 0.3, K: 2 * math.Pi / 0.05, Nu: 1e-3, Rho: 1000}
	lo := LambOseen{Gamma: 0.01, CoreRadius: 4e-3, Nu: 1e-3, X: 0.01, Y: -0.01, Uc: 0.2, Vc: -0.1, Rho: 1000}
	rot := Rotation{Omega: 2.5, X: 0.01, Y: 0.02, Rho: 1000}
	cases := []struct {
		name     string
		f        PressureFlow
		nu       float64
		L, U, T  float64 // length, velocity and time scales
		x0, span float64
	}{
		{"taylor-green", tg, tg.Nu, 1 / tg.K, tg.U, 1 / (2 * tg.Nu * tg.K * tg.K), 0, 0.1},
		{"lamb-oseen", lo, lo.Nu, 4e-3, 0.01 / (2 * math.Pi * 4e-3), 4e-3 / 0.2, 0.01, 0.03},
		{"rotation", rot, 1e-3, 0.01, 0.025, 1, 0.01, 0.05},
	}
	rng := rand.New(rand.NewPCG(1, 2))
	for _, c := range cases {
		h, ht := fdStep*c.L, fdStep*c.T
		scale := 1000 * c.U * c.U / c.L // size of the inertial and pressure terms
		for n := 0; n < 200; n++ {
			x := c.x0 + (rng.Float64()-0.5)*c.span
			y := c.x0 + (rng.Float64()-0.5)*c.span
			tm := rng.Float64() * 3 * c.T
			rx, ry := nsResidual(c.f, 1000, c.nu, x, y, tm, h, ht)
			if math.Abs(rx) > 1e-8*scale || math.Abs(ry) > 1e-8*scale {
				t.Fatalf("%s at (%g, %g, %g): Navier–Stokes residual (%.3g, %.3g), scale %.3g", c.name, x, y, tm, rx, ry, scale)
			}
		}
	}
}

// planarDiv returns du/dx + dv/dy by finite differences.
func planarDiv(f Flow, x, y, t, h float64) float64 {
	g := velGrads(f, x, y, t, h, 1)
	return g.ux + g.vy
}

// Every planar flow is divergence-free and its Vorticity method equals the curl of its
// velocity, both by fourth-order differences of the closed forms.
func TestPlanarKinematics(t *testing.T) {
	lo := LambOseen{Gamma: 0.01, CoreRadius: 2e-3, Nu: 1e-6, X: 1e-3, Uc: 0.02, Vc: 0.01}
	rk := Rankine{Gamma: -0.01, A: 3e-3, Y: 1e-3, Uc: -0.01}
	flows := []struct {
		name  string
		f     VorticityFlow
		L     float64 // length scale: core radius or 1/k
		W     float64 // vorticity scale
		avoid func(x, y, t float64) bool
	}{
		{"lamb-oseen", lo, 2e-3, lo.PeakVorticity(0), nil},
		{"rankine", rk, 3e-3, 0.01 / (math.Pi * 9e-6), func(x, y, t float64) bool {
			cx, cy := rk.Centre(t)
			return math.Abs(math.Hypot(x-cx, y-cy)-rk.A) < 0.1*rk.A // velocity gradient jumps at r = A
		}},
		{"taylor-green", TaylorGreen{U: 0.1, K: 100, Nu: 1e-5}, 0.01, 20, nil},
		{"uniform", Uniform{U: 0.3, V: -0.1}, 0.01, 1, nil},
		{"rotation", Rotation{Omega: -2, X: 0.01}, 0.01, 4, nil},
		{"pair", Superposition{lo, LambOseen{Gamma: -0.01, CoreRadius: 2e-3, Y: 6e-3}, Uniform{U: 0.1}}, 2e-3, lo.PeakVorticity(0), nil},
	}
	rng := rand.New(rand.NewPCG(3, 4))
	for _, c := range flows {
		h := fdStep * c.L
		for n := 0; n < 100; n++ {
			x, y, tm := (rng.Float64()-0.5)*8*c.L, (rng.Float64()-0.5)*8*c.L, rng.Float64()
			if c.avoid != nil && c.avoid(x, y, tm) {
				continue
			}
			g := velGrads(c.f, x, y, tm, h, 1)
			if d := g.ux + g.vy; math.Abs(d) > 1e-8*c.W {
				t.Fatalf("%s at (%g, %g, %g): divergence %.3g, scale %.3g", c.name, x, y, tm, d, c.W)
			}
			if w := c.f.Vorticity(x, y, tm); math.Abs(g.vx-g.uy-w) > 1e-8*c.W {
				t.Fatalf("%s at (%g, %g, %g): curl %.10g, Vorticity %.10g", c.name, x, y, tm, g.vx-g.uy, w)
			}
		}
	}
}

// The Rankine and Lamb–Oseen pressures satisfy the radial balance dp/dr = rho u_theta^2 / r
// and the solid-body rotation pressure satisfies it as well.
func TestRadialBalance(t *testing.T) {
	flows := []struct {
		name string
		f    PressureFlow
		a    float64
		rho  float64
	}{
		{"rankine", Rankine{Gamma: 0.01, A: 3e-3, Rho: 1000}, 3e-3, 1000},
		{"lamb-oseen", LambOseen{Gamma: 0.01, CoreRadius: 3e-3}, 3e-3, Water}, // zero Rho means Water
		{"rotation", Rotation{Omega: 2, Rho: 1.2}, 3e-3, 1.2},
	}
	for _, c := range flows {
		for _, r := range []float64{0.3 * c.a, 0.8 * c.a, 1.3 * c.a, 4 * c.a} {
			dp := d1(func(s float64) float64 { return c.f.Pressure(s, 0, 0) }, r, fdStep*c.a)
			_, ut := c.f.Velocity(r, 0, 0)
			want := c.rho * ut * ut / r
			if math.Abs(dp-want) > 1e-8*math.Abs(want) {
				t.Errorf("%s r=%g: dp/dr %.10g, rho u^2/r %.10g", c.name, r, dp, want)
			}
		}
	}
}

func TestSample(t *testing.T) {
	g := piv.Grid{NX: 7, NY: 5, X0: -0.01, Y0: 0, DX: 2e-3, DY: 3e-3}
	h := Hill{Radius: 5e-3, Speed: 0.1, AxisY: 4e-3}
	fld := Sample(h, g, 0.02)
	if err := fld.Check(); err != nil {
		t.Fatal(err)
	}
	if !fld.Geometry.Axisymmetric || fld.Geometry.AxisY != 4e-3 || fld.Time != 0.02 {
		t.Errorf("geometry %v time %g", fld.Geometry, fld.Time)
	}
	for k := range fld.U {
		i, j := g.IJ(k)
		u, v := h.Velocity(g.X(i), g.Y(j), 0.02)
		if fld.U[k] != u || fld.V[k] != v || fld.Status[k] != piv.Measured {
			t.Fatalf("node %d: (%g, %g, %v), want (%g, %g, measured)", k, fld.U[k], fld.V[k], fld.Status[k], u, v)
		}
	}
	if _, err := SampleVorticity(Superposition{h, struct{ Flow }{Uniform{}}}, g, 0); err == nil {
		t.Error("vorticity of a superposition with an unknown component should fail")
	}
	if _, err := SamplePressure(Superposition{h}, g, 0); err == nil {
		t.Error("pressure of a superposition should fail")
	}
	w, err := SampleVorticity(h, g, 0.02)
	if err != nil || w[g.Index(3, 4)] != h.Vorticity(g.X(3), g.Y(4), 0.02) {
		t.Errorf("SampleVorticity: %v", err)
	}
	// A vortex sampled before it exists gives missing nodes, not numbers.
	early := Sample(LambOseen{Gamma: 1, CoreRadius: 1e-3, Nu: 1e-6}, g, -1)
	if early.ValidShare() != 0 {
		t.Errorf("vortex before its start: valid share %g, want 0", early.ValidShare())
	}
}

// The closed-form Circulation methods of the other circular flows equal the quadrature of
// their velocity around a circle about the centre: Gamma min(R^2/A^2, 1) for the Rankine vortex
// (Saffman 1992, §2.1), 2 pi Omega R^2 for solid-body rotation, zero for a uniform stream.
func TestCirculationMethods(t *testing.T) {
	rk := Rankine{Gamma: 0.02, A: 4e-3, X: 0.01, Y: 0.02, Uc: 0.3, Vc: 0.1}
	rot := Rotation{Omega: -1.5, X: -0.01, Y: 0.03}
	for _, R := range []float64{1e-3, 4e-3, 1e-2} {
		cx, cy := rk.Centre(0.2)
		if e := relErr(lineCirculation(rk, cx, cy, R, 0.2), rk.Circulation(R, 0.2), rk.Gamma); e > 1e-12 {
			t.Errorf("Rankine R=%g: line %.15g, Circulation %.15g", R, lineCirculation(rk, cx, cy, R, 0.2), rk.Circulation(R, 0.2))
		}
		want := 2 * math.Pi * rot.Omega * R * R
		if e := relErr(lineCirculation(rot, rot.X, rot.Y, R, 0), rot.Circulation(R, 0), math.Abs(want)); e > 1e-12 || rot.Circulation(R, 0) != want {
			t.Errorf("rotation R=%g: line %.15g, Circulation %.15g", R, lineCirculation(rot, rot.X, rot.Y, R, 0), rot.Circulation(R, 0))
		}
		if g := lineCirculation(Uniform{U: 1, V: 2}, 0, 0, R, 0); math.Abs(g) > 1e-14 {
			t.Errorf("uniform stream: circulation %g", g)
		}
	}
	if rk.Circulation(2e-3, 0) != 0.02*0.25 {
		t.Errorf("Rankine circulation at half the core radius %g, want Gamma/4", rk.Circulation(2e-3, 0))
	}
}
