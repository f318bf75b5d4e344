package analytic

import (
	"math"
	"math/rand/v2"
	"testing"

	"gonum.org/v1/gonum/integrate/quad"
)

var testHill = Hill{Radius: 0.02, Speed: 0.15, X0: 0.01, AxisY: -0.005, Rho: 1000}

// halfDiskIntegral integrates g over the half disk of radius R above the axis, centred on the
// vortex at time t, in polar coordinates (rho, theta in [0, pi]) with Gauss–Legendre rules.
func halfDiskIntegral(h Hill, g func(x, y float64) float64, R0, R1, t float64) float64 {
	xc := h.Centre(t)
	return quad.Fixed(func(rho float64) float64 {
		return rho * quad.Fixed(func(th float64) float64 {
			s, c := math.Sincos(th)
			return g(xc+rho*c, h.AxisY+rho*s)
		}, 0, math.Pi, 32, nil, 0)
	}, R0, R1, 32, nil, 0)
}

// Hill's vortex circulation 5 U a and impulse 2 pi rho a^3 U (Lamb, Hydrodynamics, §165) by
// quadrature of its vorticity over the meridional half plane. The impulse of an axisymmetric
// vortex is pi rho int w_theta r^2 dx dr (the axial part of (rho/2) int x cross w dV; Saffman,
// Vortex Dynamics, 1992, §3.2).
func TestHillCirculationImpulse(t *testing.T) {
	h := testHill
	tm := 0.3
	w := func(x, y float64) float64 { return h.Vorticity(x, y, tm) }
	// The vorticity is a polynomial inside and zero outside, so a rule split at R = a is exact
	// to round-off: 1e-12 relative.
	gam := halfDiskIntegral(h, w, 0, h.Radius, tm) + halfDiskIntegral(h, w, h.Radius, 2*h.Radius, tm)
	if e := relErr(gam, 5*h.Speed*h.Radius, 5*h.Speed*h.Radius); e > 1e-12 {
		t.Errorf("circulation %.15g, Lamb 5Ua = %.15g", gam, 5*h.Speed*h.Radius)
	}
	imp := math.Pi * h.Rho * halfDiskIntegral(h, func(x, y float64) float64 {
		r := y - h.AxisY
		return w(x, y) * r * r
	}, 0, h.Radius, tm)
	want := 2 * math.Pi * h.Rho * math.Pow(h.Radius, 3) * h.Speed
	if e := relErr(imp, want, want); e > 1e-12 {
		t.Errorf("impulse %.15g, Lamb 2 pi rho a^3 U = %.15g", imp, want)
	}
	if relErr(h.TotalCirculation(), 5*h.Speed*h.Radius, 1) > 1e-15 || relErr(h.Impulse(), want, want) > 1e-15 {
		t.Errorf("TotalCirculation %g, Impulse %g", h.TotalCirculation(), h.Impulse())
	}
	// Stokes' theorem ties Velocity to Vorticity: the velocity's circulation around the upper
	// half of the circle of radius 1.5a, closed along the axis, is 5 U a as well (co-moving and
	// laboratory frames alike). The axis integrand has kinks at |x| = a: split there.
	for _, co := range []bool{false, true} {
		h.CoMoving = co
		xc := h.Centre(tm)
		Rc := 1.5 * h.Radius
		arc := quad.Fixed(func(th float64) float64 {
			s, c := math.Sincos(th)
			u, v := h.Velocity(xc+Rc*c, h.AxisY+Rc*s, tm)
			return (-u*s + v*c) * Rc
		}, 0, math.Pi, 64, nil, 0)
		axis := 0.0
		for _, seg := range [][2]float64{{-Rc, -h.Radius}, {-h.Radius, h.Radius}, {h.Radius, Rc}} {
			axis += quad.Fixed(func(x float64) float64 {
				u, _ := h.Velocity(xc+x, h.AxisY, tm)
				return u
			}, seg[0], seg[1], 32, nil, 0)
		}
		if e := relErr(arc+axis, 5*h.Speed*h.Radius, 5*h.Speed*h.Radius); e > 1e-12 {
			t.Errorf("co-moving %v: velocity circulation %.15g, want 5Ua = %.15g", co, arc+axis, 5*h.Speed*h.Radius)
		}
	}
}

// Hill's vortex is divergence-free in the axisymmetric sense (du/dx + dv/dr + v/r = 0), its
// Vorticity is the curl of its velocity, and its velocity and pressure satisfy the Euler
// momentum balance rho (du/dt + u . grad u) = -grad p in the laboratory frame (unsteady) and in
// the co-moving frame (steady), on both sides of the axis. Fourth-order differences of the
// closed forms; points within 5% of a from the sphere, where the velocity gradient jumps, and
// within 5% of a from the axis, where v/r loses digits, are skipped.
func TestHillEquations(t *testing.T) {
	rng := rand.New(rand.NewPCG(5, 6))
	for _, co := range []bool{false, true} {
		h := testHill
		h.CoMoving = co
		a, U := h.Radius, h.Speed
		// Outside the sphere the field decays like R^-3, whose fifth derivative carries the
		// constant 3*4*5*6*7 = 2520; a step of a/1000 keeps the truncation error,
		// 2520/30 (h/a)^4 = 1e-10 relative, and the rounding error below 1e-8 of the scale.
		hs := 1e-3 * a
		ht := 1e-3 * a / U
		scaleW := 7.5 * U / a
		scaleP := h.Rho * U * U / a
		checked := 0
		for n := 0; n < 400; n++ {
			tm := rng.Float64() * 0.2
			x := h.Centre(tm) + (rng.Float64()-0.5)*4*a
			y := h.AxisY + (rng.Float64()-0.5)*4*a
			R := math.Hypot(x-h.Centre(tm), y-h.AxisY)
			if math.Abs(R-a) < 0.05*a || math.Abs(y-h.AxisY) < 0.05*a {
				continue
			}
			checked++
			g := velGrads(h, x, y, tm, hs, ht)
			u, v := h.Velocity(x, y, tm)
			if d := g.ux + g.vy + v/(y-h.AxisY); math.Abs(d) > 1e-8*scaleW {
				t.Fatalf("co-moving %v at (%g, %g, %g): axisymmetric divergence %.3g", co, x, y, tm, d)
			}
			if w := h.Vorticity(x, y, tm); math.Abs(g.vx-g.uy-w) > 1e-8*scaleW {
				t.Fatalf("co-moving %v at (%g, %g, %g): curl %.10g, Vorticity %.10g", co, x, y, tm, g.vx-g.uy, w)
			}
			px := d1(func(s float64) float64 { return h.Pressure(s, y, tm) }, x, hs)
			py := d1(func(s float64) float64 { return h.Pressure(x, s, tm) }, y, hs)
			rx := h.Rho*(g.ut+u*g.ux+v*g.uy) + px
			ry := h.Rho*(g.vt+u*g.vx+v*g.vy) + py
			if math.Abs(rx) > 1e-8*scaleP || math.Abs(ry) > 1e-8*scaleP {
				t.Fatalf("co-moving %v at (%g, %g, %g): Euler residual (%.3g, %.3g), scale %.3g", co, x, y, tm, rx, ry, scaleP)
			}
		}
		if checked < 200 {
			t.Fatalf("only %d points checked", checked)
		}
	}
}

// Boundary and far-field facts of Hill's vortex: velocity and pressure are continuous across
// the sphere; the front and rear of the sphere are stagnation points in the co-moving frame,
// where the pressure is rho U^2 / 2 (Bernoulli); far away the laboratory velocity and the
// pressure vanish; the laboratory frame is the co-moving frame plus U.
func TestHillBoundary(t *testing.T) {
	h := testHill
	a, U := h.Radius, h.Speed
	xc := h.Centre(0.1)
	for _, th := range []float64{0.1, 0.7, 1.5, 2.2, 3.0} {
		s, c := math.Sincos(th)
		in, out := 1-1e-12, 1+1e-12
		ui, vi := h.Velocity(xc+in*a*c, h.AxisY+in*a*s, 0.1)
		uo, vo := h.Velocity(xc+out*a*c, h.AxisY+out*a*s, 0.1)
		pi, po := h.Pressure(xc+in*a*c, h.AxisY+in*a*s, 0.1), h.Pressure(xc+out*a*c, h.AxisY+out*a*s, 0.1)
		if math.Abs(ui-uo) > 1e-9*U || math.Abs(vi-vo) > 1e-9*U || math.Abs(pi-po) > 1e-9*h.Rho*U*U {
			t.Errorf("theta=%g: jump across the sphere: u %g/%g v %g/%g p %g/%g", th, ui, uo, vi, vo, pi, po)
		}
	}
	co := h
	co.CoMoving = true
	for _, x := range []float64{-a, a} {
		u, v := co.Velocity(co.X0+x, co.AxisY, 0)
		p := co.Pressure(co.X0+x, co.AxisY, 0)
		if math.Abs(u) > 1e-15 || math.Abs(v) > 1e-15 || math.Abs(p-0.5*h.Rho*U*U) > 1e-12*h.Rho*U*U {
			t.Errorf("stagnation point x=%g: velocity (%g, %g), pressure %g, want 0 and %g", x, u, v, p, 0.5*h.Rho*U*U)
		}
	}
	u, v := h.Velocity(xc+200*a, h.AxisY+100*a, 0.1)
	if p := h.Pressure(xc+200*a, h.AxisY+100*a, 0.1); math.Hypot(u, v) > 1e-6*U || math.Abs(p) > 1e-6*h.Rho*U*U {
		t.Errorf("far field: velocity (%g, %g), pressure %g; want about zero", u, v, p)
	}
	co.X0 = h.Centre(0.1)
	uc, vc := co.Velocity(0.013, 0.004, 7)
	ul, vl := h.Velocity(0.013, 0.004, 0.1)
	if math.Abs(ul-uc-U) > 1e-15 || vl != vc {
		t.Errorf("laboratory (%g, %g) is not co-moving (%g, %g) plus U", ul, vl, uc, vc)
	}
}
