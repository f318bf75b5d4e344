// Package analytic provides exact reference flows for tests, for "wakekit synth" and for
// "wakekit verify": the Lamb–Oseen and Rankine vortices, the decaying Taylor–Green vortex,
// Hill's spherical vortex, a uniform stream, solid-body rotation and superpositions of these,
// together with their vorticity, pressure and circulation where these are known in closed
// form, a sampler that fills a piv.Field, and a seeded measurement-noise model.
//
// All quantities are SI: positions in m, times in s, velocities in m/s, circulation in m^2/s,
// pressure in Pa (gauge, zero at infinity or at a stated reference point), density in kg/m^3.
// Vorticity is dV/dx - dU/dy (counter-clockwise positive); in the meridional plane of an
// axisymmetric flow it is w_theta = dV/dx - dU/dr, with x axial and r = y - AxisY radial.
package analytic

import (
	"fmt"
	"math"

	"github.com/wakekit/wakekit/piv"
)

// Water is the density of water at 20 °C, 998.2 kg/m^3 (CRC Handbook of Chemistry and
// Physics, table "Density of water"). Flows with a zero Rho use it for their pressure.
const Water = 998.2

// Flow is a velocity field known at every point and time.
type Flow interface {
	// Velocity returns the x and y velocity components [m/s] at (x, y) [m] and time t [s].
	Velocity(x, y, t float64) (u, v float64)
}

// VorticityFlow is a Flow whose vorticity is known in closed form.
type VorticityFlow interface {
	Flow
	// Vorticity returns dV/dx - dU/dy [1/s] (w_theta in the meridional plane of an
	// axisymmetric flow) at (x, y) and time t.
	Vorticity(x, y, t float64) float64
}

// PressureFlow is a Flow whose pressure is known.
type PressureFlow interface {
	Flow
	// Pressure returns the gauge pressure [Pa] at (x, y) and time t; each flow documents its
	// reference point.
	Pressure(x, y, t float64) float64
}

// CirculationFlow is a Flow whose circulation around a circle about its centre is known in
// closed form.
type CirculationFlow interface {
	Flow
	// Circulation returns the circulation [m^2/s] around the circle of radius R about the
	// flow's centre at time t, counter-clockwise positive.
	Circulation(R, t float64) float64
}

// GeometryFlow is a Flow that says how its plane is to be read. Flows that do not implement it
// are planar.
type GeometryFlow interface {
	Flow
	// Geometry returns the plane's geometry (planar or axisymmetric about y = AxisY).
	Geometry() piv.Geometry
}

// GeometryOf returns the geometry of f: its own when it implements GeometryFlow, planar
// otherwise.
func GeometryOf(f Flow) piv.Geometry {
	if g, ok := f.(GeometryFlow); ok {
		return g.Geometry()
	}
	return piv.Geometry{}
}

// Sample evaluates f at every node of g at time t and returns the field, all nodes Measured,
// with the flow's geometry. Points where the flow is undefined (a non-finite velocity) become
// Missing nodes.
func Sample(f Flow, g piv.Grid, t float64) *piv.Field {
	n := g.N()
	fld := &piv.Field{
		Grid: g, U: make([]float64, n), V: make([]float64, n), Status: make([]piv.Status, n),
		Time: t, Geometry: GeometryOf(f),
	}
	for j := 0; j < g.NY; j++ {
		y := g.Y(j)
		for i := 0; i < g.NX; i++ {
			k := g.Index(i, j)
			fld.U[k], fld.V[k] = f.Velocity(g.X(i), y, t)
		}
	}
	fld.Normalize()
	return fld
}

// SampleScalar evaluates s(x, y) at every node of g.
func SampleScalar(g piv.Grid, s func(x, y float64) float64) []float64 {
	out := make([]float64, g.N())
	for j := 0; j < g.NY; j++ {
		y := g.Y(j)
		for i := 0; i < g.NX; i++ {
			out[g.Index(i, j)] = s(g.X(i), y)
		}
	}
	return out
}

// SampleVorticity returns the exact vorticity of f at the nodes of g at time t. It fails when
// the flow's vorticity is not known.
func SampleVorticity(f Flow, g piv.Grid, t float64) ([]float64, error) {
	vf, ok := f.(VorticityFlow)
	if h, partial := f.(interface{ HasVorticity() bool }); partial && !h.HasVorticity() {
		ok = false
	}
	if !ok {
		return nil, fmt.Errorf("the vorticity of %T is not known in closed form", f)
	}
	return SampleScalar(g, func(x, y float64) float64 { return vf.Vorticity(x, y, t) }), nil
}

// SamplePressure returns the exact pressure of f at the nodes of g at time t. It fails when
// the flow's pressure is not known (superpositions, for instance).
func SamplePressure(f Flow, g piv.Grid, t float64) ([]float64, error) {
	pf, ok := f.(PressureFlow)
	if !ok {
		return nil, fmt.Errorf("the pressure of %T is not known", f)
	}
	return SampleScalar(g, func(x, y float64) float64 { return pf.Pressure(x, y, t) }), nil
}

func density(rho float64) float64 {
	if rho == 0 {
		return Water
	}
	return rho
}

// Uniform is a uniform stream (U, V). Its vorticity is zero and its pressure is zero everywhere.
type Uniform struct {
	U, V float64 // velocity [m/s]
}

// Velocity returns (U, V) everywhere.
func (f Uniform) Velocity(x, y, t float64) (float64, float64) { return f.U, f.V }

// Vorticity returns zero.
func (f Uniform) Vorticity(x, y, t float64) float64 { return 0 }

// Pressure returns zero: a uniform stream has uniform pressure, taken as the reference.
func (f Uniform) Pressure(x, y, t float64) float64 { return 0 }

// Circulation returns zero.
func (f Uniform) Circulation(R, t float64) float64 { return 0 }

// Rotation is solid-body rotation at angular velocity Omega [rad/s, counter-clockwise positive]
// about (X, Y): u = -Omega (y - Y), v = Omega (x - X). It is an exact steady solution of the
// Navier–Stokes equations with vorticity 2 Omega and pressure rho Omega^2 r^2 / 2 (gauge zero at
// the centre).
type Rotation struct {
	Omega float64 // angular velocity [rad/s]
	X, Y  float64 // centre [m]
	Rho   float64 // density [kg/m^3]; zero means Water
}

// Velocity returns the rotation velocity at (x, y).
func (f Rotation) Velocity(x, y, t float64) (float64, float64) {
	return -f.Omega * (y - f.Y), f.Omega * (x - f.X)
}

// Vorticity returns 2 Omega.
func (f Rotation) Vorticity(x, y, t float64) float64 { return 2 * f.Omega }

// Pressure returns rho Omega^2 r^2 / 2, zero at the centre.
func (f Rotation) Pressure(x, y, t float64) float64 {
	dx, dy := x-f.X, y-f.Y
	return 0.5 * density(f.Rho) * f.Omega * f.Omega * (dx*dx + dy*dy)
}

// Circulation returns 2 pi Omega R^2.
func (f Rotation) Circulation(R, t float64) float64 { return 2 * math.Pi * f.Omega * R * R }

// Superposition is the sum of several flows. Velocities and vorticities add (the kinematics
// are linear); the pressure does not, because the momentum balance is quadratic in velocity,
// so a Superposition has no Pressure method. Its vorticity is available only when every
// component's is: use SampleVorticity or HasVorticity to ask.
type Superposition []Flow

// Velocity returns the sum of the components' velocities.
func (s Superposition) Velocity(x, y, t float64) (float64, float64) {
	var u, v float64
	for _, f := range s {
		fu, fv := f.Velocity(x, y, t)
		u += fu
		v += fv
	}
	return u, v
}

// HasVorticity reports whether every component knows its vorticity.
func (s Superposition) HasVorticity() bool {
	for _, f := range s {
		if _, ok := f.(VorticityFlow); !ok {
			return false
		}
	}
	return true
}

// Vorticity returns the sum of the components' vorticities, or NaN when a component's
// vorticity is not known.
func (s Superposition) Vorticity(x, y, t float64) float64 {
	var w float64
	for _, f := range s {
		vf, ok := f.(VorticityFlow)
		if !ok {
			return math.NaN()
		}
		w += vf.Vorticity(x, y, t)
	}
	return w
}

// Geometry returns the geometry of the first axisymmetric component, or planar.
func (s Superposition) Geometry() piv.Geometry {
	for _, f := range s {
		if g := GeometryOf(f); g.Axisymmetric {
			return g
		}
	}
	return piv.Geometry{}
}
