package circulation

import (
	"fmt"
	"math"

	"github.com/wakekit/wakekit/piv"
)

// ExitConfig describes the nozzle of a starting or pulsed jet issuing along +x.
type ExitConfig struct {
	// X is the x coordinate of the exit plane [m].
	X float64
	// Diameter is the nozzle inner diameter D [m] (for a slot: the slot width).
	Diameter float64
	// LipOuter is the outer radius of the nozzle lip [m]; 0 means Diameter/2 (a knife edge).
	LipOuter float64
	// AxisY is the y coordinate of the jet axis [m] (for an axisymmetric field its own AxisY is used).
	AxisY float64
	// Rho is the fluid density [kg/m^3]; Nu the kinematic viscosity [m^2/s].
	Rho, Nu float64
}

// Validate checks the configuration.
func (c ExitConfig) Validate() error {
	switch {
	case !(c.Diameter > 0) || math.IsInf(c.Diameter, 0):
		return fmt.Errorf("nozzle diameter %g m must be positive", c.Diameter)
	case math.IsNaN(c.X) || math.IsInf(c.X, 0):
		return fmt.Errorf("exit plane x = %g must be finite", c.X)
	case math.IsNaN(c.LipOuter) || math.IsInf(c.LipOuter, 0):
		return fmt.Errorf("outer lip radius %g m must be finite", c.LipOuter)
	case c.LipOuter != 0 && c.LipOuter < c.Diameter/2:
		return fmt.Errorf("outer lip radius %g m is smaller than the inner radius %g m", c.LipOuter, c.Diameter/2)
	case !(c.Rho > 0) || math.IsInf(c.Rho, 0):
		return fmt.Errorf("density %g kg/m^3 must be positive and finite", c.Rho)
	case !(c.Nu > 0) || math.IsInf(c.Nu, 0):
		return fmt.Errorf("kinematic viscosity %g m^2/s must be positive and finite", c.Nu)
	}
	return nil
}

func (c ExitConfig) lipOuter() float64 {
	if c.LipOuter > 0 {
		return c.LipOuter
	}
	return c.Diameter / 2
}

// ExitArea returns the exit area: pi D^2/4 for a round nozzle, D (per unit depth) for a slot.
func ExitArea(d float64, axisymmetric bool) float64 {
	if axisymmetric {
		return math.Pi * d * d / 4
	}
	return d
}

// ExitSample is what one frame gives at the exit station, the first grid column at or
// downstream of the exit plane. Integrals are over the full annulus (axisymmetric) or per unit
// depth (slot). NaN marks a figure the frame cannot give (missing vectors at the station).
type ExitSample struct {
	Time    float64 // frame time [s]
	Station float64 // x of the exit station [m]
	// Centre is the centreline axial velocity [m/s].
	Centre float64
	// U0 is the area-averaged axial velocity over the nozzle exit r < D/2 [m/s].
	U0 float64
	// MomentumFlux is F_m = rho * int u^2 dA over the nozzle exit [N] (N/m for a slot).
	MomentumFlux float64
	// OuterMomentumFlux is rho * int u^2 dA over the part of the station outside the lip
	// (r > LipOuter) in view: the measurable momentum exchange through the exit plane outside the
	// nozzle [N].
	OuterMomentumFlux float64
	// OuterBernoulli is the quasi-steady Bernoulli estimate of the pressure force on the same
	// outer part, -(rho/2) int (u^2 + v^2) dA [N]: outside the jet the flow is irrotational and
	// p = -rho dphi/dt - rho |u|^2/2; the unsteady term is not measurable from a planar series and
	// is left out.
	OuterBernoulli float64
	// VorticityFlux is the flux of azimuthal vorticity through the station from the axis to the
	// top of the view, int u omega dr [m^2/s^2], evaluated as u_c^2/2 - u_top^2/2 + int u dv/dx dr.
	VorticityFlux float64
	// RadialFlux is the part int u dv/dx dr of VorticityFlux carried by the axial change of the
	// radial velocity [m^2/s^2].
	RadialFlux float64
}

// ExitStation returns the index of the grid column used as the exit station: the first column
// at or downstream of the exit plane with two more columns after it (for the x derivative).
func ExitStation(g piv.Grid, c ExitConfig) (int, error) {
	i := int(math.Ceil((c.X-g.X0)/g.DX - 1e-6))
	if i < 0 {
		i = 0
	}
	if i+2 >= g.NX {
		return 0, fmt.Errorf("the exit plane x = %g m is not inside the view (x %g..%g m) with two columns downstream",
			c.X, g.X0, g.XMax())
	}
	return i, nil
}

// radial returns the first row with r >= 0 and the radial coordinate of row j.
func radial(f *piv.Field, c ExitConfig) (j0 int, r func(j int) float64) {
	axis := c.AxisY
	if f.Geometry.Axisymmetric {
		axis = f.Geometry.AxisY
	}
	g := f.Grid
	r = func(j int) float64 { return g.Y(j) - axis }
	j0 = int(math.Ceil((axis-g.Y0)/g.DY - 1e-6))
	if j0 < 0 {
		j0 = 0
	}
	return j0, r
}

// centreValue returns the value of an even function of r at r = 0 from the column values at
// rows j0 and j0+1 (r >= 0): the node itself when it lies on the axis, otherwise the even
// quadratic a + b r^2 through the two nodes nearest the axis.
func centreValue(val func(j int) float64, j0 int, r func(int) float64, dy float64) float64 {
	r1, r2 := r(j0), r(j0+1)
	if r1 < 1e-6*dy {
		return val(j0)
	}
	u1, u2 := val(j0), val(j0+1)
	return (r2*r2*u1 - r1*r1*u2) / (r2*r2 - r1*r1)
}

// ExitMeasure computes the exit sample of one frame. Each node of the station column stands for
// the radial interval of half a spacing on each side (clipped at the axis and at the nozzle
// radius; the node nearest the axis reaches down to it when the view starts short of the axis),
// weighted by 2 pi r in the axisymmetric case. A view that does not reach the nozzle radius, or
// starts more than a spacing from the axis, is an error. The axial derivative of v uses the
// second-order central difference, or the second-order one-sided difference at the first
// column of the view.
func ExitMeasure(f *piv.Field, c ExitConfig) (ExitSample, error) {
	if err := c.Validate(); err != nil {
		return ExitSample{}, err
	}
	g := f.Grid
	i, err := ExitStation(g, c)
	if err != nil {
		return ExitSample{}, fmt.Errorf("%s: %w", f.Name(), err)
	}
	axi := f.Geometry.Axisymmetric
	j0, r := radial(f, c)
	if j0+1 >= g.NY {
		return ExitSample{}, fmt.Errorf("%s: the view has fewer than two rows above the axis", f.Name())
	}
	nan := math.NaN()
	s := ExitSample{Time: f.Time, Station: g.X(i), Centre: nan, U0: nan, MomentumFlux: nan,
		OuterMomentumFlux: nan, OuterBernoulli: nan, VorticityFlux: nan, RadialFlux: nan}
	R, Rout := c.Diameter/2, c.lipOuter()
	u := func(j int) float64 { return f.U[g.Index(i, j)] }
	s.Centre = centreValue(u, j0, r, g.DY)
	// A slot is averaged over both halves when the view holds them; with only the upper half in
	// view the flow is taken as symmetric and the half-slot integrals are doubled.
	lo, factor := 0.0, 1.0
	if !axi {
		if r(0) <= -R+g.DY/2 {
			lo = -R
		} else {
			factor = 2
		}
	}
	// The rows' cells must reach the nozzle radius, and start at most one spacing from the axis
	// (the row nearest the axis then stands for the gap); a view that covers the exit only in
	// part would give too small a flux without a word.
	tol := 1e-9 * g.DY
	if top := r(g.NY-1) + g.DY/2; top < R-tol {
		return ExitSample{}, fmt.Errorf("%s: the view ends at %g m from the axis, inside the nozzle radius %g m: the exit is not covered", f.Name(), top, R)
	}
	if lo == 0 && r(0)-g.DY/2 > g.DY+tol {
		return ExitSample{}, fmt.Errorf("%s: the view starts %g m from the axis, more than one spacing (%g m): the exit near the axis is not covered", f.Name(), r(0)-g.DY/2, g.DY)
	}
	inner := -1 // the row nearest the axis whose cell reaches above it
	for j := 0; j < g.NY && inner < 0; j++ {
		if r(j)+g.DY/2 > tol {
			inner = j
		}
	}
	// weight returns int over [a, b] of the area element (2 pi r dr or dy).
	weight := func(a, b float64) float64 {
		if b <= a {
			return 0
		}
		if axi {
			return math.Pi * (b*b - a*a)
		}
		return b - a
	}
	var q, m, mo, pb float64
	okInner := true
	for j := 0; j < g.NY; j++ {
		rj := r(j)
		a, b := rj-g.DY/2, rj+g.DY/2
		if axi && a < 0 {
			a = 0
		}
		if j == inner && lo == 0 && a > 0 {
			a = 0
		}
		k := g.Index(i, j)
		wIn := weight(math.Max(a, lo), math.Min(b, R))
		wOut := weight(math.Max(a, Rout), b)
		if !axi && rj < 0 {
			wOut = 0
		}
		if wIn > 0 {
			if !f.Valid(k) {
				okInner = false
				continue
			}
			q += wIn * f.U[k]
			m += wIn * f.U[k] * f.U[k]
		}
		if wOut > 0 && f.Valid(k) {
			mo += wOut * f.U[k] * f.U[k]
			pb -= 0.5 * wOut * (f.U[k]*f.U[k] + f.V[k]*f.V[k])
		}
	}
	if okInner {
		s.U0 = q / weight(lo, R)
		s.MomentumFlux = factor * c.Rho * m
	}
	// For a slot the outer flux is taken above the slot and doubled (symmetric flow).
	s.OuterMomentumFlux, s.OuterBernoulli = c.Rho*mo, c.Rho*pb
	if !axi {
		s.OuterMomentumFlux *= 2
		s.OuterBernoulli *= 2
	}
	// Vorticity flux from the axis to the top of the view.
	var rad float64
	okFlux := true
	for j := j0; j < g.NY; j++ {
		a, b := math.Max(r(j)-g.DY/2, 0), r(j)+g.DY/2
		dvdx := nan
		if f.ValidIJ(i-1, j) && f.ValidIJ(i+1, j) {
			dvdx = (f.V[g.Index(i+1, j)] - f.V[g.Index(i-1, j)]) / (2 * g.DX)
		} else if f.ValidIJ(i, j) && f.ValidIJ(i+1, j) && f.ValidIJ(i+2, j) {
			dvdx = (-3*f.V[g.Index(i, j)] + 4*f.V[g.Index(i+1, j)] - f.V[g.Index(i+2, j)]) / (2 * g.DX)
		}
		k := g.Index(i, j)
		if math.IsNaN(dvdx) || !f.Valid(k) {
			okFlux = false
			break
		}
		rad += (b - a) * f.U[k] * dvdx
	}
	if okFlux && !math.IsNaN(s.Centre) {
		top := f.U[g.Index(i, g.NY-1)]
		s.RadialFlux = rad
		s.VorticityFlux = 0.5*s.Centre*s.Centre - 0.5*top*top + rad
	}
	return s, nil
}
