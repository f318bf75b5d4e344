package vorticity

import (
	"math"

	"github.com/wakekit/wakekit/piv"
)

// Gradient is the in-plane velocity-gradient tensor of a field, with what is needed to form the
// kinematic fields from it. Every slice has one entry per grid node; NaN where the field has no
// usable vector or no stencil fits.
type Gradient struct {
	Grid     piv.Grid
	Geometry piv.Geometry
	Scheme   Scheme
	// V is the y (radial) velocity the tensor was computed from, for the hoop strain v/r of
	// axisymmetric geometry. It may share memory with the field's V.
	V                      []float64
	DUDX, DUDY, DVDX, DVDY []float64
	// Stencil records the stencils used at each node (the same for u and v).
	Stencil []Stencil
}

// NewGradient computes the velocity-gradient tensor of f with the given scheme. A node is
// usable when its status is Measured or Replaced and both components are numbers.
func NewGradient(f *piv.Field, scheme Scheme) *Gradient {
	g := new(Gradient)
	g.Compute(f, scheme)
	return g
}

// Compute recomputes g for the field f with the given scheme, reusing g's slices when they
// have the right length (so a worker can keep one Gradient per frame size). It allocates
// nothing then for a field whose values agree with its status (piv.Field.Normalize); for
// other fields it works on masked copies.
func (g *Gradient) Compute(f *piv.Field, scheme Scheme) {
	n := f.Grid.N()
	if len(g.DUDX) != n || len(g.Stencil) != n {
		buf := make([]float64, 4*n)
		g.DUDX, g.DUDY, g.DVDX, g.DVDY = buf[:n:n], buf[n:2*n:2*n], buf[2*n:3*n:3*n], buf[3*n:]
		g.Stencil = make([]Stencil, n)
	}
	g.Grid, g.Geometry, g.Scheme, g.V = f.Grid, f.Geometry, scheme, f.V
	if !g.pass(f.U, f.V, f.Status) {
		u, v, st := masked(f)
		g.V = v
		g.pass(u, v, st)
	}
}

// pass fills the tensor from u, v and their status; it returns false, leaving the tensor
// incomplete, when it meets a node whose values disagree with its status.
func (g *Gradient) pass(u, v []float64, stat []piv.Status) bool {
	nx, ny := g.Grid.NX, g.Grid.NY
	hx, hy := 1/g.Grid.DX, 1/g.Grid.DY
	scheme := g.Scheme
	h := scheme.Halo()
	dudx, dudy, dvdx, dvdy, sten := g.DUDX, g.DUDY, g.DVDX, g.DVDY, g.Stencil
	slow := func(k, i, j int) bool {
		if !consistentAround(stat, u, v, k, i, j, nx, ny, true, true, true, true) {
			return false
		}
		if !stat[k].Valid() {
			nan := math.NaN()
			dudx[k], dudy[k], dvdx[k], dvdy[k], sten[k] = nan, nan, nan, nan, 0
			return true
		}
		var kx, ky StencilKind
		dudx[k], kx = along(u, k, i, nx, 1, hx, scheme, j, ny, nx)
		dudy[k], ky = along(u, k, j, ny, nx, hy, scheme, i, nx, 1)
		dvdx[k], _ = along(v, k, i, nx, 1, hx, scheme, j, ny, nx)
		dvdy[k], _ = along(v, k, j, ny, nx, hy, scheme, i, nx, 1)
		sten[k] = MakeStencil(kx, ky)
		return true
	}
	return sweepRows(nx, ny, h, slow, func(lo, hi, row, j int) bool {
		// A NaN anywhere in the stencils, or an unusable status at the centre, sends the node to
		// the fallback path (which also checks the centre's values; see consistentAround).
		switch scheme {
		case Richardson:
			cx, cy := hx/12, hy/12
			for k := lo; k < hi; k++ {
				a := (u[k-2] - 8*u[k-1] + 8*u[k+1] - u[k+2]) * cx
				b := (u[k-2*nx] - 8*u[k-nx] + 8*u[k+nx] - u[k+2*nx]) * cy
				c := (v[k-2] - 8*v[k-1] + 8*v[k+1] - v[k+2]) * cx
				d := (v[k-2*nx] - 8*v[k-nx] + 8*v[k+nx] - v[k+2*nx]) * cy
				if t := a + b + c + d; t != t || !stat[k].Valid() {
					if !slow(k, k-row, j) {
						return false
					}
					continue
				}
				dudx[k], dudy[k], dvdx[k], dvdy[k], sten[k] = a, b, c, d, fullStencil
			}
		case LeastSquares:
			cx, cy := hx/10, hy/10
			for k := lo; k < hi; k++ {
				a := (2*(u[k+2]-u[k-2]) + u[k+1] - u[k-1]) * cx
				b := (2*(u[k+2*nx]-u[k-2*nx]) + u[k+nx] - u[k-nx]) * cy
				c := (2*(v[k+2]-v[k-2]) + v[k+1] - v[k-1]) * cx
				d := (2*(v[k+2*nx]-v[k-2*nx]) + v[k+nx] - v[k-nx]) * cy
				if t := a + b + c + d; t != t || !stat[k].Valid() {
					if !slow(k, k-row, j) {
						return false
					}
					continue
				}
				dudx[k], dudy[k], dvdx[k], dvdy[k], sten[k] = a, b, c, d, fullStencil
			}
		case Circulation:
			cx, cy := hx/8, hy/8
			for k := lo; k < hi; k++ {
				a := (u[k+nx+1] + 2*u[k+1] + u[k-nx+1] - u[k+nx-1] - 2*u[k-1] - u[k-nx-1]) * cx
				b := (u[k+nx+1] + 2*u[k+nx] + u[k+nx-1] - u[k-nx+1] - 2*u[k-nx] - u[k-nx-1]) * cy
				c := (v[k+nx+1] + 2*v[k+1] + v[k-nx+1] - v[k+nx-1] - 2*v[k-1] - v[k-nx-1]) * cx
				d := (v[k+nx+1] + 2*v[k+nx] + v[k+nx-1] - v[k-nx+1] - 2*v[k-nx] - v[k-nx-1]) * cy
				if t := a + b + c + d; t != t || !stat[k].Valid() {
					if !slow(k, k-row, j) {
						return false
					}
					continue
				}
				dudx[k], dudy[k], dvdx[k], dvdy[k], sten[k] = a, b, c, d, fullStencil
			}
		default:
			cx, cy := hx/2, hy/2
			// Row views let the compiler drop most bounds checks in the hottest loop.
			m := hi - lo
			ur, vr := u[lo-1:hi+1], v[lo-1:hi+1]
			us, un, vs, vn := u[lo-nx:hi-nx], u[lo+nx:hi+nx], v[lo-nx:hi-nx], v[lo+nx:hi+nx]
			ux, uy, vx, vy := dudx[lo:hi], dudy[lo:hi], dvdx[lo:hi], dvdy[lo:hi]
			sc, ss := stat[lo:hi], sten[lo:hi]
			_, _, _, _, _, _ = us[m-1], un[m-1], vs[m-1], vn[m-1], ur[m+1], vr[m+1]
			_, _, _, _, _, _ = ux[m-1], uy[m-1], vx[m-1], vy[m-1], sc[m-1], ss[m-1]
			for p := 0; p < m; p++ {
				a := (ur[p+2] - ur[p]) * cx
				b := (un[p] - us[p]) * cy
				c := (vr[p+2] - vr[p]) * cx
				d := (vn[p] - vs[p]) * cy
				if t := a + b + c + d; t != t || !sc[p].Valid() {
					if !slow(lo+p, lo+p-row, j) {
						return false
					}
					continue
				}
				ux[p], uy[p], vx[p], vy[p], ss[p] = a, b, c, d, fullStencil
			}
		}
		return true
	})
}

// Vorticity returns dV/dx - dU/dy at every node (w_z, or w_theta above the axis of an
// axisymmetric plane).
func (g *Gradient) Vorticity() []float64 { return g.Scalar(QVorticity) }

// Divergence returns the divergence du/dx + dv/dy, plus the hoop strain v/r in axisymmetric
// geometry (where it is the full 3-D divergence and vanishes for incompressible flow).
func (g *Gradient) Divergence() []float64 { return g.Scalar(QDivergence) }

// PlanarDivergence returns du/dx + dv/dy without the hoop term, whatever the geometry.
func (g *Gradient) PlanarDivergence() []float64 { return g.Scalar(QPlanarDivergence) }

// StrainRate returns the in-plane components of the strain-rate tensor S = (A + A^T)/2:
// Sxx = du/dx, Syy = dv/dy and Sxy = (du/dy + dv/dx)/2. In axisymmetric geometry the third
// diagonal component is HoopStrain.
func (g *Gradient) StrainRate() (sxx, syy, sxy []float64) {
	return g.Scalar(QStrainXX), g.Scalar(QStrainYY), g.Scalar(QStrainXY)
}

// HoopStrain returns the hoop strain v/r of axisymmetric geometry (zero for planar data, NaN
// where the tensor is).
func (g *Gradient) HoopStrain() []float64 { return g.Scalar(QHoopStrain) }

// StrainMagnitude returns |S| = sqrt(2 S_ij S_ij), summed over the in-plane components and, in
// axisymmetric geometry, the hoop component S_theta,theta = v/r. With this normalisation a
// simple shear du/dy = G has |S| = |G| (common practice).
func (g *Gradient) StrainMagnitude() []float64 { return g.Scalar(QStrainMagnitude) }

// Q returns the Q criterion Q = (|Omega|^2 - |S|^2)/2 (Hunt, Wray & Moin 1988), with Omega and
// S the antisymmetric and symmetric parts of the 3-D velocity-gradient tensor: for planar data
// the in-plane tensor with zero out-of-plane derivatives, in axisymmetric geometry the tensor
// with the hoop strain v/r (see the package documentation). Q > 0 where rotation dominates
// strain.
func (g *Gradient) Q() []float64 { return g.Scalar(QCriterion) }

// Lambda2 returns the lambda2 criterion (Jeong & Hussain 1995): the middle eigenvalue of
// S^2 + Omega^2 for the 3-D tensor described at Q. Negative inside a vortex.
func (g *Gradient) Lambda2() []float64 { return g.Scalar(QLambda2) }

// Swirl returns the swirling strength lambda_ci (Zhou et al. 1999): the imaginary part of the
// complex eigenvalues of the velocity-gradient tensor, zero where they are real. The hoop
// strain of axisymmetric geometry is a real eigenvalue of its own and does not change
// lambda_ci. With signed, lambda_ci takes the sign of the vorticity.
func (g *Gradient) Swirl(signed bool) []float64 {
	if signed {
		return g.Scalar(QSignedSwirl)
	}
	return g.Scalar(QSwirl)
}

// Enstrophy returns the enstrophy density w^2/2 of the in-plane vorticity component.
func (g *Gradient) Enstrophy() []float64 { return g.Scalar(QEnstrophy) }

func q2(a, b, c, d, h float64) float64 {
	w := (b - c) / 2
	s := (b + c) / 2
	return w*w - (a*a+d*d+h*h)/2 - s*s
}

// lambda2 of the tensor [[a b 0] [c d 0] [0 0 h]]: S^2 + Omega^2 is block diagonal, with the
// 2x2 block M = S2^2 + W2^2 of the in-plane parts and h^2 in the third slot.
func lambda2(a, b, c, d, h float64) float64 {
	s := (b + c) / 2
	w := (b - c) / 2
	// S2 = [[a s] [s d]], W2 = [[0 w] [-w 0]], W2^2 = -w^2 I.
	m11 := a*a + s*s - w*w
	m22 := s*s + d*d - w*w
	m12 := s * (a + d)
	mean := (m11 + m22) / 2
	e := (m11 - m22) / 2
	rad := math.Sqrt(e*e + m12*m12)
	e1, e2, e3 := mean-rad, mean+rad, h*h
	// The middle of three values; NaN in, NaN out.
	if e1 != e1 || e3 != e3 {
		return math.NaN()
	}
	return max(e1, min(e2, e3))
}

// swirl returns lambda_ci of [[a b] [c d]], whose eigenvalues are
// (a+d)/2 +- sqrt(((a-d)/2)^2 + b c); with signed it takes the sign of c - b.
func swirl(a, b, c, d float64, signed bool) float64 {
	e := (a - d) / 2
	disc := e*e + b*c
	if disc != disc {
		return math.NaN()
	}
	if disc >= 0 {
		return 0
	}
	l := math.Sqrt(-disc)
	if signed && c-b < 0 {
		return -l
	}
	return l
}

// VorticityUncertainty returns, per node, the random error of the vorticity caused by an
// independent random error sigma [m/s] in each velocity component: sigma times the root of the
// sums of squared weights of the stencils actually used (dV/dx over DX^2 plus dU/dy over DY^2).
// On a square grid with full stencils this is VorticityNoiseFactor(scheme) * sigma / DX.
func (g *Gradient) VorticityUncertainty(sigma float64) []float64 {
	out := make([]float64, len(g.DUDX))
	ix2, iy2 := 1/(g.Grid.DX*g.Grid.DX), 1/(g.Grid.DY*g.Grid.DY)
	var tab [5]float64
	for kind := range tab {
		tab[kind] = sumSq(g.Scheme, StencilKind(kind))
	}
	for k, st := range g.Stencil {
		x, y := st.X(), st.Y()
		if x == StencilNone || y == StencilNone {
			out[k] = math.NaN()
			continue
		}
		out[k] = sigma * math.Sqrt(tab[x]*ix2+tab[y]*iy2)
	}
	return out
}
