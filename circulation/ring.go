package circulation

import (
	"fmt"
	"math"

	"github.com/wakekit/wakekit/piv"
)

// halfPlaneCell returns, for row j of grid g in axisymmetric geometry geom, the share of the
// row's cells above the axis and the cell means of r and r² over that part. Whole cells use the
// node's r (midpoint rule); a cell cut by the axis uses the exact means over [0, r + DY/2].
func halfPlaneCell(g piv.Grid, geom piv.Geometry, j int) (share, r1, r2 float64) {
	r := g.Y(j) - geom.AxisY
	lo, hi := r-g.DY/2, r+g.DY/2
	switch {
	case hi <= 0:
		return 0, 0, 0
	case lo >= 0:
		return 1, r, r * r
	}
	return hi / g.DY, hi / 2, hi * hi / 3
}

// moments are vorticity moments over a region: ∫ω, ∫ωx, ∫ωy (∫ωr in axisymmetric geometry,
// over the half-plane r > 0 only) and ∫ωr².
type moments struct {
	w, wx, wy, wr2 float64
	area, missing  float64 // region area [m²] and its share without vorticity
}

func vorticityMoments(omega []float64, r Region, geom piv.Geometry) (moments, error) {
	var m moments
	g := r.Grid
	if len(omega) != g.N() {
		return m, fmt.Errorf("vorticity has %d values for a grid of %d nodes", len(omega), g.N())
	}
	cell := g.DX * g.DY
	var wAll, wMiss float64
	for a, k := range r.K {
		i, j := k%g.NX, k/g.NX
		w := r.W[a]
		ry, ry2 := g.Y(j), 0.0
		if geom.Axisymmetric {
			var share float64
			share, ry, ry2 = halfPlaneCell(g, geom, j)
			w *= share
		} else {
			ry2 = ry * ry
		}
		if w == 0 {
			continue
		}
		wAll += w
		om := omega[k]
		if math.IsNaN(om) {
			wMiss += w
			continue
		}
		dA := w * cell
		m.w += om * dA
		m.wx += om * g.X(i) * dA
		m.wy += om * ry * dA
		m.wr2 += om * ry2 * dA
	}
	m.area = wAll * cell
	if wAll > 0 {
		m.missing = wMiss / wAll
	}
	return m, nil
}

// ImpulseResult is the hydrodynamic impulse of the vorticity in a region.
type ImpulseResult struct {
	// X and Y are the impulse components: in axisymmetric geometry X = ρπ∫∫ω_θ r² dx dr [N s]
	// over the half-plane r > 0 and Y = 0; in planar geometry the impulse per unit depth
	// (ρ∫yω dA, -ρ∫xω dA) [N s/m].
	X, Y float64
	// MissingShare is the share of the region without vorticity (left out).
	MissingShare float64
}

// Impulse returns the hydrodynamic impulse of the vorticity omega on grid g over region r
// (Saffman 1992, Vortex Dynamics §3.2: I = (ρ/2)∫ x × ω dV, which for an axisymmetric
// azimuthal vorticity becomes ρπ∫∫ω_θ r² dx dr and for planar flow per unit depth
// ρ∫(yω, -xω) dA). The integrals use the cell rule of Area; in axisymmetric geometry only the
// part of the region above the axis counts, with exact cell means of r² for cells cut by the
// axis. rho must be positive.
func Impulse(omega []float64, g piv.Grid, geom piv.Geometry, rho float64, r Region) (ImpulseResult, error) {
	if !(rho > 0) || math.IsInf(rho, 0) {
		return ImpulseResult{}, fmt.Errorf("density %g must be positive and finite", rho)
	}
	if !r.Grid.Same(g) {
		return ImpulseResult{}, fmt.Errorf("region grid (%v) is not the vorticity grid (%v)", r.Grid, g)
	}
	m, err := vorticityMoments(omega, r, geom)
	if err != nil {
		return ImpulseResult{}, err
	}
	if geom.Axisymmetric {
		return ImpulseResult{X: rho * math.Pi * m.wr2, MissingShare: m.missing}, nil
	}
	return ImpulseResult{X: rho * m.wy, Y: -rho * m.wx, MissingShare: m.missing}, nil
}

// Ring holds the integral properties of a vortex ring in the meridional plane (axisymmetric
// geometry), from the vorticity of a region above the axis.
type Ring struct {
	// Gamma is the ring's circulation ∫∫ω_θ dx dr [m²/s].
	Gamma float64
	// X is the axial vorticity centroid ∫ωx dA/∫ω dA [m]; R the ring radius ∫ωr dA/∫ω dA [m];
	// RI the impulse radius sqrt(∫ωr² dA/∫ω dA) [m] (Saffman 1992, §10.2).
	X, R, RI float64
	// Impulse is ρπ∫∫ω_θ r² dx dr [N s].
	Impulse float64
	// Energy is the kinetic energy [J] by Lamb's formula E = ρ∫u·(x × ω) dV (Lamb,
	// Hydrodynamics §154 ; Saffman 1992 §3.3), which for an axisymmetric ring is
	// 2πρ∫∫ω_θ (u r - v (x - X)) r dx dr. It needs the velocity in the frame where the fluid
	// far away is at rest and all the ring's vorticity inside the region; it uses only the
	// region's velocities, so it is insensitive to the window truncating the velocity field.
	Energy float64
	// MissingShare is the share of the region (above the axis) without vorticity or velocity.
	MissingShare float64
}

// RingOf computes the ring properties of the vorticity omega of field f over region r. f must be
// axisymmetric; rho is the density [kg/m³].
func RingOf(f *piv.Field, omega []float64, r Region, rho float64) (Ring, error) {
	ring := Ring{X: math.NaN(), R: math.NaN(), RI: math.NaN()}
	if !f.Geometry.Axisymmetric {
		return ring, fmt.Errorf("%s: ring properties need axisymmetric geometry (--axisymmetric)", f.Name())
	}
	if !(rho > 0) || math.IsInf(rho, 0) {
		return ring, fmt.Errorf("density %g must be positive and finite", rho)
	}
	if !r.Grid.Same(f.Grid) {
		return ring, fmt.Errorf("%s: region grid is not the field's grid", f.Name())
	}
	m, err := vorticityMoments(omega, r, f.Geometry)
	if err != nil {
		return ring, err
	}
	ring.Gamma = m.w
	ring.Impulse = rho * math.Pi * m.wr2
	ring.MissingShare = m.missing
	if m.w != 0 {
		ring.X = m.wx / m.w
		ring.R = m.wy / m.w
		if q := m.wr2 / m.w; q >= 0 {
			ring.RI = math.Sqrt(q)
		}
	}
	// Lamb's energy formula, over nodes with both vorticity and velocity.
	g := f.Grid
	cell := g.DX * g.DY
	var e float64
	for a, k := range r.K {
		i, j := k%g.NX, k/g.NX
		share, r1, r2 := halfPlaneCell(g, f.Geometry, j)
		w := r.W[a] * share
		om := omega[k]
		if w == 0 || math.IsNaN(om) || !f.Valid(k) {
			continue
		}
		e += om * (f.U[k]*r2 - f.V[k]*(g.X(i)-ring.X)*r1) * w * cell
	}
	ring.Energy = 2 * math.Pi * rho * e
	return ring, nil
}

// Pair holds the properties of the vorticity of a planar region read as a vortex pair: the
// positive and negative parts, their centroids and separation, the impulse per unit depth and
// the point-vortex predictions.
type Pair struct {
	// GammaPos and GammaNeg are the circulations of the positive and negative vorticity [m²/s].
	GammaPos, GammaNeg float64
	// XPos, YPos and XNeg, YNeg are the centroids of each sign [m]; Separation their distance.
	XPos, YPos, XNeg, YNeg, Separation float64
	// ImpulseX, ImpulseY are ρ∫(yω, -xω) dA per unit depth [N s/m].
	ImpulseX, ImpulseY float64
	// Speed is the self-induced speed of a counter-rotating pair, Γ/(2πb) with Γ the mean of
	// |GammaPos| and |GammaNeg| and b the separation (Lamb, Hydrodynamics §155) [m/s].
	Speed float64
}

// PairOf splits the vorticity of region r into its positive and negative parts and returns
// the pair properties (planar geometry; rho is the density).
func PairOf(omega []float64, r Region, rho float64) (Pair, error) {
	p := Pair{XPos: math.NaN(), YPos: math.NaN(), XNeg: math.NaN(), YNeg: math.NaN(), Separation: math.NaN(), Speed: math.NaN()}
	if !(rho > 0) || math.IsInf(rho, 0) {
		return p, fmt.Errorf("density %g must be positive and finite", rho)
	}
	g := r.Grid
	if len(omega) != g.N() {
		return p, fmt.Errorf("vorticity has %d values for a grid of %d nodes", len(omega), g.N())
	}
	cell := g.DX * g.DY
	var sp, spx, spy, sn, snx, sny, ix, iy float64
	for a, k := range r.K {
		om := omega[k]
		if math.IsNaN(om) {
			continue
		}
		x, y := g.X(k%g.NX), g.Y(k/g.NX)
		dA := r.W[a] * cell
		ix += y * om * dA
		iy -= x * om * dA
		if om > 0 {
			sp, spx, spy = sp+om*dA, spx+om*x*dA, spy+om*y*dA
		} else {
			sn, snx, sny = sn+om*dA, snx+om*x*dA, sny+om*y*dA
		}
	}
	p.GammaPos, p.GammaNeg = sp, sn
	p.ImpulseX, p.ImpulseY = rho*ix, rho*iy
	if sp != 0 {
		p.XPos, p.YPos = spx/sp, spy/sp
	}
	if sn != 0 {
		p.XNeg, p.YNeg = snx/sn, sny/sn
	}
	p.Separation = math.Hypot(p.XPos-p.XNeg, p.YPos-p.YNeg)
	if p.Separation > 0 {
		p.Speed = (sp - sn) / 2 / (2 * math.Pi * p.Separation)
	}
	return p, nil
}

// CoRotatingRate returns the angular velocity [rad/s] at which two point vortices of
// circulations g1 and g2 at distance b turn about their centre of vorticity,
// (g1 + g2)/(2πb²) (Lamb, Hydrodynamics §154).
func CoRotatingRate(g1, g2, b float64) float64 { return (g1 + g2) / (2 * math.Pi * b * b) }
