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

// usable returns the field's velocity components with NaN at every node that is not usable
// (status neither Measured nor Replaced, or either component NaN). For a normalized field
// (piv.Field.Normalize) these are the field's own slices; otherwise masked copies.
func usable(f *piv.Field) (u, v []float64) {
	clean := true
	for k, s := range f.Status {
		if !s.Valid() {
			if f.U[k] == f.U[k] || f.V[k] == f.V[k] {
				clean = false
				break
			}
		}
	}
	if clean {
		return f.U, f.V
	}
	u = make([]float64, len(f.U))
	v = make([]float64, len(f.V))
	nan := math.NaN()
	for k := range u {
		if f.Valid(k) {
			u[k], v[k] = f.U[k], f.V[k]
		} else {
			u[k], v[k] = nan, nan
		}
	}
	return u, v
}

// NewGradient computes the velocity-gradient tensor of f with the given scheme. A node whose u
// or v is NaN is not usable for either component; fields are expected to be normalized
// (piv.Field.Normalize), which keeps both components NaN together.
func NewGradient(f *piv.Field, scheme Scheme) *Gradient {
	u, v := usable(f)
	n := f.Grid.N()
	buf := make([]float64, 4*n)
	g := &Gradient{
		Grid: f.Grid, Geometry: f.Geometry, Scheme: scheme, V: v,
		DUDX: buf[:n:n], DUDY: buf[n : 2*n : 2*n], DVDX: buf[2*n : 3*n : 3*n], DVDY: buf[3*n:],
		Stencil: make([]Stencil, n),
	}
	Deriv(f.Grid, u, scheme, g.DUDX, g.DUDY, g.Stencil)
	Deriv(f.Grid, v, scheme, g.DVDX, g.DVDY, nil)
	return g
}

// hoop returns the hoop strain v/r at node k of row j for axisymmetric geometry (0 for
// planar): r is y - AxisY, signed; on the axis (|r| <= 1e-6 DY) its limit dv/dr.
func (g *Gradient) hoop(k, j int) float64 {
	if !g.Geometry.Axisymmetric {
		return 0
	}
	r := g.Grid.Y(j) - g.Geometry.AxisY
	if math.Abs(r) <= 1e-6*g.Grid.DY {
		return g.DVDY[k]
	}
	return g.V[k] / r
}

// eachNode calls fn for every node with its index and row; fn writes the node's output.
func (g *Gradient) eachNode(out []float64, fn func(k, j int) float64) []float64 {
	nx := g.Grid.NX
	for j := 0; j < g.Grid.NY; j++ {
		for k := j * nx; k < (j+1)*nx; k++ {
			out[k] = fn(k, j)
		}
	}
	return out
}

// Vorticity returns dV/dx - dU/dy at every node (w_z, or w_theta above the axis of an
// axisymmetric plane).
func (g *Gradient) Vorticity() []float64 {
	out := make([]float64, len(g.DUDX))
	for k := range out {
		out[k] = g.DVDX[k] - g.DUDY[k]
	}
	return out
}

// Divergence returns the divergence du/dx + dv/dy, plus the hoop strain v/r in axisymmetric
// geometry (where it is the full 3-D divergence and vanishes for incompressible flow).
func (g *Gradient) Divergence() []float64 {
	return g.eachNode(make([]float64, len(g.DUDX)), func(k, j int) float64 {
		return g.DUDX[k] + g.DVDY[k] + g.hoop(k, j)
	})
}

// PlanarDivergence returns du/dx + dv/dy without the hoop term, whatever the geometry.
func (g *Gradient) PlanarDivergence() []float64 {
	out := make([]float64, len(g.DUDX))
	for k := range out {
		out[k] = g.DUDX[k] + g.DVDY[k]
	}
	return out
}

// StrainRate returns the components of the strain-rate tensor S = (A + A^T)/2: Sxx = du/dx,
// Syy = dv/dy and Sxy = (du/dy + dv/dx)/2.
func (g *Gradient) StrainRate() (sxx, syy, sxy []float64) {
	n := len(g.DUDX)
	sxx = append([]float64(nil), g.DUDX...)
	syy = append([]float64(nil), g.DVDY...)
	sxy = make([]float64, n)
	for k := range sxy {
		sxy[k] = (g.DUDY[k] + g.DVDX[k]) / 2
	}
	return sxx, syy, sxy
}

// HoopStrain returns the hoop strain v/r of axisymmetric geometry (zero for planar data, NaN
// where v is missing).
func (g *Gradient) HoopStrain() []float64 {
	return g.eachNode(make([]float64, len(g.DUDX)), func(k, j int) float64 {
		if g.V[k] != g.V[k] || g.DVDY[k] != g.DVDY[k] {
			return math.NaN()
		}
		return g.hoop(k, j)
	})
}

// StrainMagnitude returns |S| = sqrt(2 S_ij S_ij), summed over the in-plane components and, in
// axisymmetric geometry, the hoop component S_theta,theta = v/r. With this normalisation a
// simple shear du/dy = G has |S| = |G| (common practice).
func (g *Gradient) StrainMagnitude() []float64 {
	return g.eachNode(make([]float64, len(g.DUDX)), func(k, j int) float64 {
		a, d := g.DUDX[k], g.DVDY[k]
		s := (g.DUDY[k] + g.DVDX[k]) / 2
		h := g.hoop(k, j)
		return math.Sqrt(2 * (a*a + d*d + 2*s*s + h*h))
	})
}

// Q returns the Q criterion Q = (|Omega|^2 - |S|^2)/2 (Hunt, Wray & Moin 1988), with Omega and
// S the antisymmetric and symmetric parts of the 3-D velocity-gradient tensor: for planar data
// the in-plane tensor with zero out-of-plane derivatives, in axisymmetric geometry the tensor
// with the hoop strain v/r (see the package documentation). Q > 0 where rotation dominates
// strain.
func (g *Gradient) Q() []float64 {
	return g.eachNode(make([]float64, len(g.DUDX)), func(k, j int) float64 {
		return q(g.DUDX[k], g.DUDY[k], g.DVDX[k], g.DVDY[k], g.hoop(k, j))
	})
}

func q(a, b, c, d, h float64) float64 {
	w := (b - c) / 2
	s := (b + c) / 2
	return w*w - (a*a+d*d+h*h)/2 - s*s
}

// Lambda2 returns the lambda2 criterion (Jeong & Hussain 1995): the middle eigenvalue of
// S^2 + Omega^2 for the 3-D tensor described at Q. Negative inside a vortex.
func (g *Gradient) Lambda2() []float64 {
	return g.eachNode(make([]float64, len(g.DUDX)), func(k, j int) float64 {
		return lambda2(g.DUDX[k], g.DUDY[k], g.DVDX[k], g.DVDY[k], g.hoop(k, j))
	})
}

// lambda2 of the tensor [[a b 0] [c d 0] [0 0 h]]: S^2 + Omega^2 is block diagonal, with the
// 2x2 block M = S2^2 + W2^2 of the in-plane parts and h^2 in the third slot.
func lambda2(a, b, c, d, h float64) float64 {
	if a != a || b != b || c != c || d != d || h != h {
		return math.NaN()
	}
	s := (b + c) / 2
	w := (b - c) / 2
	// S2 = [[a s] [s d]], W2 = [[0 w] [-w 0]], W2^2 = -w^2 I.
	m11 := a*a + s*s - w*w
	m22 := s*s + d*d - w*w
	m12 := s * (a + d)
	mean := (m11 + m22) / 2
	rad := math.Hypot((m11-m22)/2, m12)
	e1, e2, e3 := mean-rad, mean+rad, h*h
	// The middle of three values.
	return max(min(e1, e2), min(max(e1, e2), e3))
}

// Swirl returns the swirling strength lambda_ci (Zhou et al. 1999): the imaginary part of the
// complex eigenvalues of the velocity-gradient tensor, zero where they are real. The hoop
// strain of axisymmetric geometry is a real eigenvalue of its own and does not change
// lambda_ci. With signed, lambda_ci takes the sign of the vorticity.
func (g *Gradient) Swirl(signed bool) []float64 {
	out := make([]float64, len(g.DUDX))
	for k := range out {
		out[k] = swirl(g.DUDX[k], g.DUDY[k], g.DVDX[k], g.DVDY[k], signed)
	}
	return out
}

func swirl(a, b, c, d float64, signed bool) float64 {
	// Eigenvalues of [[a b] [c d]]: (a+d)/2 +- sqrt(((a-d)/2)^2 + b c).
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

// Enstrophy returns the enstrophy density w^2/2 of the in-plane vorticity component.
func (g *Gradient) Enstrophy() []float64 {
	out := make([]float64, len(g.DUDX))
	for k := range out {
		w := g.DVDX[k] - g.DUDY[k]
		out[k] = w * w / 2
	}
	return out
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
