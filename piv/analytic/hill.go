package analytic

import (
	"math"

	"github.com/wakekit/wakekit/piv"
)

// Hill is Hill's spherical vortex (Hill 1894; Lamb, Hydrodynamics, 6th ed., 1932, §165): a
// sphere of radius a = Radius whose azimuthal vorticity grows linearly with the distance from
// the axis, w_theta = 15 U r / (2 a^2), moving at Speed U along +x through fluid at rest, with
// potential flow around a sphere outside.
//
// The plane is the meridional plane: x is axial and r = y - AxisY radial. Points below the axis
// (y < AxisY) are the mirror image, so a field spanning the axis shows both halves of the
// section: there the y velocity and the vorticity change sign. Sampled fields carry the
// geometry "axisymmetric about y = AxisY".
//
// In the frame moving with the vortex (CoMoving), the Stokes stream function (u = psi_r / r,
// v = -psi_x / r) is psi = (3U/4) r^2 (1 - R^2/a^2) inside (R^2 = x^2 + r^2 relative to the
// centre) and psi = -(U/2) r^2 (1 - a^3/R^3) outside. In the laboratory frame (the default) U is
// added to the axial velocity and the centre moves from X0 at t = 0 with speed U. Its total
// circulation is 5 U a and its impulse 2 pi rho a^3 U (Lamb §165).
type Hill struct {
	Radius   float64 // sphere radius a [m]
	Speed    float64 // translation speed U [m/s] along +x
	X0       float64 // axial position of the centre at t = 0 [m]
	AxisY    float64 // y coordinate of the symmetry axis [m]
	CoMoving bool    // velocities in the frame moving with the vortex (centre fixed at X0)
	Rho      float64 // density [kg/m^3]; zero means Water
}

// Geometry returns the axisymmetric geometry about y = AxisY.
func (f Hill) Geometry() piv.Geometry { return piv.Geometry{Axisymmetric: true, AxisY: f.AxisY} }

// Centre returns the axial position of the centre at time t.
func (f Hill) Centre(t float64) float64 {
	if f.CoMoving {
		return f.X0
	}
	return f.X0 + f.Speed*t
}

// local returns the axial offset from the centre, the radial distance r >= 0 and the sign of
// y - AxisY (+1 on and above the axis, -1 below).
func (f Hill) local(x, y, t float64) (xr, r, sign float64) {
	xr, r, sign = x-f.Centre(t), y-f.AxisY, 1
	if r < 0 {
		r, sign = -r, -1
	}
	return xr, r, sign
}

// relVelocity returns the co-moving axial and radial velocity at (xr, r) from the centre.
func (f Hill) relVelocity(xr, r float64) (ux, ur float64) {
	a, U := f.Radius, f.Speed
	R2 := xr*xr + r*r
	a2 := a * a
	if R2 <= a2 {
		return 1.5 * U * (1 - (xr*xr+2*r*r)/a2), 1.5 * U * xr * r / a2
	}
	R := math.Sqrt(R2)
	a3R5 := a2 * a / (R2 * R2 * R)
	return -U*(1-a2*a/(R2*R)) - 1.5*U*a3R5*r*r, 1.5 * U * a3R5 * xr * r
}

// Velocity returns the velocity at (x, y) and time t in the chosen frame.
func (f Hill) Velocity(x, y, t float64) (float64, float64) {
	xr, r, sign := f.local(x, y, t)
	ux, ur := f.relVelocity(xr, r)
	if !f.CoMoving {
		ux += f.Speed
	}
	return ux, sign * ur
}

// StreamFunction returns the co-moving Stokes stream function psi [m^3/s] at (x, y), time t.
func (f Hill) StreamFunction(x, y, t float64) float64 {
	xr, r, _ := f.local(x, y, t)
	a, U := f.Radius, f.Speed
	R2 := xr*xr + r*r
	if R2 <= a*a {
		return 0.75 * U * r * r * (1 - R2/(a*a))
	}
	return -0.5 * U * r * r * (1 - a*a*a/(R2*math.Sqrt(R2)))
}

// Vorticity returns w_theta = 15 U r / (2 a^2) inside the sphere and zero outside (negated
// below the axis, where the plane shows the other half of the section).
func (f Hill) Vorticity(x, y, t float64) float64 {
	xr, r, sign := f.local(x, y, t)
	if xr*xr+r*r > f.Radius*f.Radius {
		return 0
	}
	return sign * 7.5 * f.Speed * r / (f.Radius * f.Radius)
}

// Pressure returns the gauge pressure, zero far away; it is the same in both frames. It is
// derived from the steady Euler equations in the co-moving frame, grad(p/rho + q^2/2) = u x w.
// Outside, the flow is irrotational and Bernoulli's theorem gives p = rho (U^2 - q^2) / 2
// (q the co-moving speed). Inside, w_theta = C r with C = 15 U / (2 a^2), and u x w = -C grad psi,
// so p/rho + q^2/2 = H0 - C psi: the Bernoulli constant differs across streamlines. Continuity
// of pressure on the sphere (psi = 0) fixes H0 = U^2/2, hence p = rho (U^2/2 - q^2/2 - C psi).
func (f Hill) Pressure(x, y, t float64) float64 {
	xr, r, _ := f.local(x, y, t)
	ux, ur := f.relVelocity(xr, r)
	U := f.Speed
	h := 0.5 * (U*U - ux*ux - ur*ur)
	if xr*xr+r*r <= f.Radius*f.Radius {
		h -= 7.5 * U / (f.Radius * f.Radius) * f.StreamFunction(x, y, t)
	}
	return density(f.Rho) * h
}

// TotalCirculation returns 5 U a, the circulation of the vortex (the integral of w_theta over
// its half of the meridional plane).
func (f Hill) TotalCirculation() float64 { return 5 * f.Speed * f.Radius }

// Impulse returns the hydrodynamic impulse 2 pi rho a^3 U [kg m/s] along +x.
func (f Hill) Impulse() float64 {
	return 2 * math.Pi * density(f.Rho) * f.Radius * f.Radius * f.Radius * f.Speed
}
