package pressure

import (
	"fmt"
	"math"

	"github.com/wakekit/wakekit/piv"
	"github.com/wakekit/wakekit/vorticity"
)

// Fluid holds the density and kinematic viscosity of the working fluid.
type Fluid struct {
	Rho float64 // density [kg/m^3]
	Nu  float64 // kinematic viscosity [m^2/s]
}

// Water20 is water at 20 °C: density 998.2 kg/m^3 and kinematic viscosity 1.004e-6 m^2/s
// (CRC Handbook of Chemistry and Physics, tables "Density of water" and "Viscosity of
// water": dynamic viscosity 1.002 mPa s).
var Water20 = Fluid{Rho: 998.2, Nu: 1.004e-6}

// Validate checks that the density is positive and the viscosity not negative.
func (fl Fluid) Validate() error {
	if !(fl.Rho > 0) || math.IsInf(fl.Rho, 0) {
		return fmt.Errorf("density %g kg/m^3 must be positive and finite", fl.Rho)
	}
	if !(fl.Nu >= 0) || math.IsInf(fl.Nu, 0) {
		return fmt.Errorf("kinematic viscosity %g m^2/s must be non-negative and finite", fl.Nu)
	}
	return nil
}

// Gradient returns the pressure gradient [Pa/m] from the incompressible momentum balance
// ∇p = −ρ Du/Dt + μ ∇²u, with (ax, ay) the material acceleration of field f. In axisymmetric
// geometry the viscous term is the cylindrical vector Laplacian of a swirl-free flow:
//
//	x: ∂²u/∂x² + ∂²u/∂r² + (1/r) ∂u/∂r
//	r: ∂²v/∂x² + ∂²v/∂r² + (1/r) ∂v/∂r − v/r²
//
// (on the axis itself the limits 2 ∂²u/∂r² and 0 are used). Second derivatives are the scheme's
// first derivative applied twice. NaN where the acceleration or a derivative is missing.
func Gradient(f *piv.Field, ax, ay []float64, fl Fluid, scheme vorticity.Scheme) (gx, gy []float64) {
	g := f.Grid
	n := g.N()
	gx = make([]float64, n)
	gy = make([]float64, n)
	for q := 0; q < n; q++ {
		gx[q] = -fl.Rho * ax[q]
		gy[q] = -fl.Rho * ay[q]
	}
	if fl.Nu == 0 {
		return gx, gy
	}
	mu := fl.Rho * fl.Nu
	lu, lv := laplacian(f, scheme)
	for q := 0; q < n; q++ {
		gx[q] += mu * lu[q]
		gy[q] += mu * lv[q]
	}
	return gx, gy
}

// laplacian returns the (cylindrical, for axisymmetric fields) vector Laplacian of the velocity.
func laplacian(f *piv.Field, scheme vorticity.Scheme) (lu, lv []float64) {
	g := f.Grid
	n := g.N()
	ux, uy := make([]float64, n), make([]float64, n)
	vx, vy := make([]float64, n), make([]float64, n)
	vorticity.Deriv(g, f.U, scheme, ux, uy, nil)
	vorticity.Deriv(g, f.V, scheme, vx, vy, nil)
	uxx, tmp := make([]float64, n), make([]float64, n)
	uyy := make([]float64, n)
	vxx, vyy := make([]float64, n), make([]float64, n)
	vorticity.Deriv(g, ux, scheme, uxx, tmp, nil)
	vorticity.Deriv(g, uy, scheme, tmp, uyy, nil)
	vorticity.Deriv(g, vx, scheme, vxx, tmp, nil)
	vorticity.Deriv(g, vy, scheme, tmp, vyy, nil)
	lu = make([]float64, n)
	lv = make([]float64, n)
	axi := f.Geometry.Axisymmetric
	for q := 0; q < n; q++ {
		lu[q] = uxx[q] + uyy[q]
		lv[q] = vxx[q] + vyy[q]
		if !axi {
			continue
		}
		r := f.Geometry.R(g.Y(q / g.NX))
		if math.Abs(r) < 1e-6*g.DY {
			lu[q] += uyy[q]
			continue
		}
		lu[q] += uy[q] / r
		lv[q] += vy[q]/r - f.V[q]/(r*r)
	}
	return lu, lv
}
