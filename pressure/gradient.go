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
// (on the axis itself the limits 2 ∂²u/∂r² and 0 are used). Second derivatives are the compact
// three-point difference, second-order one-sided at edges (see secondAxis). NaN where the acceleration or a derivative is missing.
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
	lu = make([]float64, n)
	lv = make([]float64, n)
	second(g, f.U, lu)
	second(g, f.V, lv)
	axi := f.Geometry.Axisymmetric
	if !axi {
		return lu, lv
	}
	uyy := make([]float64, n)
	secondY(g, f.U, uyy)
	for q := 0; q < n; q++ {
		r := f.Geometry.R(g.Y(q / g.NX))
		if math.Abs(r) < 1e-6*g.DY {
			// (1/r) ∂u/∂r → ∂²u/∂r² on the axis, and the radial component vanishes there.
			lu[q] += uyy[q]
			continue
		}
		lu[q] += uy[q] / r
		lv[q] += vy[q]/r - f.V[q]/(r*r)
	}
	return lu, lv
}

// second writes ∂²s/∂x² + ∂²s/∂y² into out.
func second(g piv.Grid, s, out []float64) {
	tmp := make([]float64, len(s))
	secondAxis(g, s, out, false)
	secondAxis(g, s, tmp, true)
	for q := range out {
		out[q] += tmp[q]
	}
}

// secondY writes ∂²s/∂y² into out.
func secondY(g piv.Grid, s, out []float64) { secondAxis(g, s, out, true) }

// secondAxis writes the second derivative of s along x, or along y when alongY, into out: the central three-point difference where both neighbours have
// data, else the second-order one-sided four-point difference (2f0 − 5f1 + 4f2 − f3)/h², else
// the first-order one-sided three-point difference, else NaN. No stencil reads a node without
// data. (The vorticity package offers first derivatives only.)
func secondAxis(g piv.Grid, s, out []float64, alongY bool) {
	stride, n, h := 1, g.NX, g.DX
	if alongY {
		stride, n, h = g.NX, g.NY, g.DY
	}
	h2 := h * h
	for q := range s {
		pos := q % g.NX
		if alongY {
			pos = q / g.NX
		}
		out[q] = math.NaN()
		if math.IsNaN(s[q]) {
			continue
		}
		ok := func(d int) bool {
			p := pos + d
			return p >= 0 && p < n && !math.IsNaN(s[q+d*stride])
		}
		at := func(d int) float64 { return s[q+d*stride] }
		switch {
		case ok(-1) && ok(1):
			out[q] = (at(-1) - 2*at(0) + at(1)) / h2
		case ok(1) && ok(2) && ok(3):
			out[q] = (2*at(0) - 5*at(1) + 4*at(2) - at(3)) / h2
		case ok(-1) && ok(-2) && ok(-3):
			out[q] = (2*at(0) - 5*at(-1) + 4*at(-2) - at(-3)) / h2
		case ok(1) && ok(2):
			out[q] = (at(0) - 2*at(1) + at(2)) / h2
		case ok(-1) && ok(-2):
			out[q] = (at(0) - 2*at(-1) + at(-2)) / h2
		}
	}
}
