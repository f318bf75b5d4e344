package analytic

import "math"

// LambOseen is the Lamb–Oseen vortex (Saffman, Vortex Dynamics, 1992, §2.1): a Gaussian
// vortex of circulation Gamma whose core radius grows by viscous diffusion,
//
//	r_c^2(t) = CoreRadius^2 + 4 Nu t,
//	u_theta = Gamma / (2 pi r) (1 - exp(-r^2 / r_c^2)),
//	w = Gamma / (pi r_c^2) exp(-r^2 / r_c^2).
//
// With Nu = 0 it is steady (an exact steady solution of the Euler equations); with Nu > 0 it is
// an exact solution of the Navier–Stokes equations. The centre starts at (X, Y) and moves with
// the constant velocity (Uc, Vc), which is added to the whole field (a Galilean change of frame,
// under which the pressure is unchanged). Before the time -CoreRadius^2/(4 Nu) the vortex does
// not exist and the velocity is NaN.
type LambOseen struct {
	Gamma      float64 // circulation [m^2/s], counter-clockwise positive
	CoreRadius float64 // core radius r_0 at t = 0 [m]
	Nu         float64 // kinematic viscosity [m^2/s]; zero for a steady vortex
	X, Y       float64 // centre at t = 0 [m]
	Uc, Vc     float64 // translation velocity of the centre [m/s]
	Rho        float64 // density [kg/m^3]; zero means Water
}

// Core returns the core radius r_c at time t (NaN when r_c^2 would not be positive).
func (f LambOseen) Core(t float64) float64 {
	c2 := f.CoreRadius*f.CoreRadius + 4*f.Nu*t
	if !(c2 > 0) {
		return math.NaN()
	}
	return math.Sqrt(c2)
}

// Centre returns the position of the vortex centre at time t.
func (f LambOseen) Centre(t float64) (x, y float64) { return f.X + f.Uc*t, f.Y + f.Vc*t }

// Velocity returns the velocity at (x, y) and time t.
func (f LambOseen) Velocity(x, y, t float64) (float64, float64) {
	cx, cy := f.Centre(t)
	dx, dy := x-cx, y-cy
	c := f.Core(t)
	r2 := dx*dx + dy*dy
	// u_theta / r = Gamma (1 - e^{-s}) / (2 pi r^2) with s = r^2/c^2; near the axis use
	// -expm1(-s)/r^2 = (1/c^2)(1 - s/2 + ...), finite at r = 0.
	var g float64
	if r2 == 0 {
		g = f.Gamma / (2 * math.Pi * c * c)
	} else {
		g = -f.Gamma * math.Expm1(-r2/(c*c)) / (2 * math.Pi * r2)
	}
	return f.Uc - g*dy, f.Vc + g*dx
}

// Vorticity returns Gamma / (pi r_c^2) exp(-r^2 / r_c^2).
func (f LambOseen) Vorticity(x, y, t float64) float64 {
	cx, cy := f.Centre(t)
	dx, dy := x-cx, y-cy
	c := f.Core(t)
	return f.Gamma / (math.Pi * c * c) * math.Exp(-(dx*dx+dy*dy)/(c*c))
}

// PeakVorticity returns the vorticity at the centre, Gamma / (pi r_c^2).
func (f LambOseen) PeakVorticity(t float64) float64 {
	c := f.Core(t)
	return f.Gamma / (math.Pi * c * c)
}

// Circulation returns Gamma (1 - exp(-R^2 / r_c^2)), the circulation of the circle of radius R
// about the centre.
func (f LambOseen) Circulation(R, t float64) float64 {
	c := f.Core(t)
	return -f.Gamma * math.Expm1(-R*R/(c*c))
}

// Pressure returns the gauge pressure (zero at infinity). The flow is circular, so the radial
// momentum balance dp/dr = rho u_theta^2 / r holds at every instant (viscous and unsteady terms
// are azimuthal). Integrating from infinity with s = r^2/r_c^2 gives, in closed form,
//
//	p(r) = -rho Gamma^2 / (8 pi^2 r_c^2) [ (1 - e^{-s})^2 / s + 2 (E1(s) - E1(2 s)) ],
//
// where E1 is the exponential integral (Abramowitz & Stegun 5.1.1); derived by integration by
// parts of int_s^inf e^{-a q} / q^2 dq = e^{-a s}/s - a E1(a s). At the centre it is
// -rho Gamma^2 ln 2 / (4 pi^2 r_c^2). The tests check it against gonum's quadrature of the
// balance.
func (f LambOseen) Pressure(x, y, t float64) float64 {
	cx, cy := f.Centre(t)
	dx, dy := x-cx, y-cy
	c := f.Core(t)
	s := (dx*dx + dy*dy) / (c * c)
	var bracket float64
	if s == 0 {
		bracket = 2 * math.Ln2
	} else {
		e := math.Expm1(-s)
		bracket = e*e/s + 2*(E1(s)-E1(2*s))
	}
	return -density(f.Rho) * f.Gamma * f.Gamma / (8 * math.Pi * math.Pi * c * c) * bracket
}

// Rankine is the Rankine vortex: solid-body rotation inside the core radius A and a potential
// vortex outside, u_theta = Gamma r / (2 pi A^2) for r <= A and Gamma / (2 pi r) beyond
// (Saffman, Vortex Dynamics, 1992, §2.1; Batchelor, An Introduction to Fluid Dynamics, 1967,
// §7.3). It is a steady solution of the Euler equations. Its velocity gradient jumps at r = A.
// The centre starts at (X, Y) and moves with (Uc, Vc), added to the whole field.
type Rankine struct {
	Gamma  float64 // circulation [m^2/s], counter-clockwise positive
	A      float64 // core radius [m]
	X, Y   float64 // centre at t = 0 [m]
	Uc, Vc float64 // translation velocity [m/s]
	Rho    float64 // density [kg/m^3]; zero means Water
}

// Centre returns the position of the vortex centre at time t.
func (f Rankine) Centre(t float64) (x, y float64) { return f.X + f.Uc*t, f.Y + f.Vc*t }

// Velocity returns the velocity at (x, y) and time t.
func (f Rankine) Velocity(x, y, t float64) (float64, float64) {
	cx, cy := f.Centre(t)
	dx, dy := x-cx, y-cy
	r2 := dx*dx + dy*dy
	a2 := f.A * f.A
	g := f.Gamma / (2 * math.Pi * a2) // u_theta / r inside
	if r2 > a2 {
		g = f.Gamma / (2 * math.Pi * r2)
	}
	return f.Uc - g*dy, f.Vc + g*dx
}

// Vorticity returns Gamma / (pi A^2) inside the core and zero outside.
func (f Rankine) Vorticity(x, y, t float64) float64 {
	cx, cy := f.Centre(t)
	dx, dy := x-cx, y-cy
	if dx*dx+dy*dy > f.A*f.A {
		return 0
	}
	return f.Gamma / (math.Pi * f.A * f.A)
}

// Circulation returns Gamma min(R^2/A^2, 1).
func (f Rankine) Circulation(R, t float64) float64 {
	if R >= f.A {
		return f.Gamma
	}
	return f.Gamma * R * R / (f.A * f.A)
}

// Pressure returns the gauge pressure (zero at infinity) from dp/dr = rho u_theta^2 / r:
// -rho Gamma^2 / (8 pi^2 r^2) outside the core and rho Gamma^2 (r^2 - 2 A^2) / (8 pi^2 A^4)
// inside.
func (f Rankine) Pressure(x, y, t float64) float64 {
	cx, cy := f.Centre(t)
	dx, dy := x-cx, y-cy
	r2 := dx*dx + dy*dy
	a2 := f.A * f.A
	k := density(f.Rho) * f.Gamma * f.Gamma / (8 * math.Pi * math.Pi)
	if r2 > a2 {
		return -k / r2
	}
	return k * (r2 - 2*a2) / (a2 * a2)
}

// E1 returns the exponential integral E1(x) = int_x^inf e^{-q}/q dq for x > 0 (+Inf at 0, NaN
// below). gonum has no exponential integral, so it is written here: the power series
// E1(x) = -gamma - ln x - sum_{k>=1} (-x)^k / (k k!) (Abramowitz & Stegun 5.1.11) for x <= 1,
// and the continued fraction (A&S 5.1.22) evaluated by the modified Lentz method (Press et al.,
// Numerical Recipes, 3rd ed., §6.3) beyond.
func E1(x float64) float64 {
	const euler = 0.57721566490153286061
	switch {
	case math.IsNaN(x) || x < 0:
		return math.NaN()
	case x == 0:
		return math.Inf(1)
	case x > 700:
		return 0
	case x <= 1:
		sum, term := 0.0, 1.0
		for k := 1; k < 60; k++ {
			term *= -x / float64(k)
			d := term / float64(k)
			sum += d
			if math.Abs(d) < 1e-17*math.Abs(sum) {
				break
			}
		}
		return -euler - math.Log(x) - sum
	}
	// Continued fraction e^{-x} / (x + 1 - 1^2/(x + 3 - 2^2/(x + 5 - ...))).
	const tiny = 1e-300
	b := x + 1
	c := 1 / tiny
	d := 1 / b
	h := d
	for i := 1; i < 200; i++ {
		an := -float64(i * i)
		b += 2
		d = 1 / (an*d + b)
		c = b + an/c
		del := c * d
		h *= del
		if math.Abs(del-1) < 1e-16 {
			break
		}
	}
	return h * math.Exp(-x)
}
