package analytic

import "math"

// TaylorGreen is the decaying Taylor–Green vortex array (Taylor & Green 1937, Proc. R. Soc. A
// 158:499), an exact solution of the two-dimensional Navier–Stokes equations:
//
//	u =  U sin(kx) cos(ky) F,   v = -U cos(kx) sin(ky) F,   F = exp(-2 Nu k^2 t),
//	p = (rho U^2 / 4) (cos 2kx + cos 2ky) F^2.
//
// The pressure is a gauge pressure with zero mean over a period cell.
type TaylorGreen struct {
	U   float64 // velocity amplitude [m/s]
	K   float64 // wavenumber k [rad/m]; the cells are pi/k wide
	Nu  float64 // kinematic viscosity [m^2/s]; zero for the steady inviscid array
	Rho float64 // density [kg/m^3]; zero means Water
}

func (f TaylorGreen) decay(t float64) float64 { return math.Exp(-2 * f.Nu * f.K * f.K * t) }

// Velocity returns the velocity at (x, y) and time t.
func (f TaylorGreen) Velocity(x, y, t float64) (float64, float64) {
	sx, cx := math.Sincos(f.K * x)
	sy, cy := math.Sincos(f.K * y)
	a := f.U * f.decay(t)
	return a * sx * cy, -a * cx * sy
}

// Vorticity returns 2 U k sin(kx) sin(ky) F.
func (f TaylorGreen) Vorticity(x, y, t float64) float64 {
	return 2 * f.U * f.K * math.Sin(f.K*x) * math.Sin(f.K*y) * f.decay(t)
}

// Pressure returns (rho U^2 / 4)(cos 2kx + cos 2ky) F^2.
func (f TaylorGreen) Pressure(x, y, t float64) float64 {
	d := f.decay(t)
	return density(f.Rho) * f.U * f.U / 4 * (math.Cos(2*f.K*x) + math.Cos(2*f.K*y)) * d * d
}

// CellCirculation returns the circulation around the square cell 0 <= x, y <= pi/k,
// 8 U / k F (the integral of the vorticity over the cell), counter-clockwise positive.
func (f TaylorGreen) CellCirculation(t float64) float64 { return 8 * f.U / f.K * f.decay(t) }
