package vorticity

import (
	"fmt"
	"math"

	"github.com/wakekit/wakekit/piv"
)

// StencilKind is the kind of difference stencil one derivative used at one node, from worst
// to best.
type StencilKind uint8

const (
	// StencilNone means no stencil fitted: the derivative is NaN.
	StencilNone StencilKind = iota
	// StencilFirstOrder is the two-point one-sided difference (first order).
	StencilFirstOrder
	// StencilOneSided is the three-point one-sided second-order difference.
	StencilOneSided
	// StencilCentral is the plain central difference, used as the fallback of the wider
	// schemes.
	StencilCentral
	// StencilFull is the scheme's own stencil.
	StencilFull
)

// String names the stencil kind: "none", "first-order", "one-sided", "central" or "full".
func (k StencilKind) String() string {
	switch k {
	case StencilNone:
		return "none"
	case StencilFirstOrder:
		return "first-order"
	case StencilOneSided:
		return "one-sided"
	case StencilCentral:
		return "central"
	case StencilFull:
		return "full"
	}
	return fmt.Sprintf("StencilKind(%d)", uint8(k))
}

// Stencil records, per node, which stencil kind the x derivative (low four bits) and the y
// derivative (high four bits) used.
type Stencil uint8

// MakeStencil packs the stencil kinds of the x and y derivatives.
func MakeStencil(x, y StencilKind) Stencil { return Stencil(x&15 | (y&15)<<4) }

// X returns the kind of the x-derivative stencil.
func (s Stencil) X() StencilKind { return StencilKind(s & 15) }

// Y returns the kind of the y-derivative stencil.
func (s Stencil) Y() StencilKind { return StencilKind(s >> 4) }

// Worst returns the lower of the two kinds.
func (s Stencil) Worst() StencilKind { return min(s.X(), s.Y()) }

// String describes both directions, e.g. "full/one-sided" (x first).
func (s Stencil) String() string { return s.X().String() + "/" + s.Y().String() }

var fullStencil = MakeStencil(StencilFull, StencilFull)

// Deriv computes the derivatives ds/dx and ds/dy of the scalar s on grid g (NaN marks nodes
// without data) with the given scheme into dx and dy, and records the stencil used at each node
// in st (which may be nil). All slices must have length g.N(). Nodes where s is NaN get NaN
// derivatives; elsewhere each direction falls back as described in the package documentation.
// Deriv allocates nothing.
func Deriv(g piv.Grid, s []float64, scheme Scheme, dx, dy []float64, st []Stencil) {
	n := g.N()
	if len(s) != n || len(dx) != n || len(dy) != n || (st != nil && len(st) != n) {
		panic(fmt.Sprintf("vorticity.Deriv: slices of length %d, %d, %d do not match the %dx%d grid",
			len(s), len(dx), len(dy), g.NX, g.NY))
	}
	nx, ny := g.NX, g.NY
	hx, hy := 1/g.DX, 1/g.DY
	h := scheme.Halo()
	slow := func(i, j int) {
		k := j*nx + i
		if s[k] != s[k] {
			dx[k], dy[k] = math.NaN(), math.NaN()
			if st != nil {
				st[k] = 0
			}
			return
		}
		a, ka := along(s, k, i, nx, 1, hx, scheme, j, ny, nx)
		b, kb := along(s, k, j, ny, nx, hy, scheme, i, nx, 1)
		dx[k], dy[k] = a, b
		if st != nil {
			st[k] = MakeStencil(ka, kb)
		}
	}
	edge := func(_, i, j int) bool { slow(i, j); return true }
	sweepRows(nx, ny, h, edge, func(lo, hi, row, j int) bool {
		switch scheme {
		case Richardson:
			cx, cy := hx/12, hy/12
			for k := lo; k < hi; k++ {
				a := (s[k-2] - 8*s[k-1] + 8*s[k+1] - s[k+2]) * cx
				b := (s[k-2*nx] - 8*s[k-nx] + 8*s[k+nx] - s[k+2*nx]) * cy
				if a != a || b != b || s[k] != s[k] {
					slow(k-row, j)
					continue
				}
				dx[k], dy[k] = a, b
				if st != nil {
					st[k] = fullStencil
				}
			}
		case LeastSquares:
			cx, cy := hx/10, hy/10
			for k := lo; k < hi; k++ {
				a := (2*(s[k+2]-s[k-2]) + s[k+1] - s[k-1]) * cx
				b := (2*(s[k+2*nx]-s[k-2*nx]) + s[k+nx] - s[k-nx]) * cy
				if a != a || b != b || s[k] != s[k] {
					slow(k-row, j)
					continue
				}
				dx[k], dy[k] = a, b
				if st != nil {
					st[k] = fullStencil
				}
			}
		case Circulation:
			cx, cy := hx/8, hy/8
			for k := lo; k < hi; k++ {
				ne, nw, se, sw := s[k+nx+1], s[k+nx-1], s[k-nx+1], s[k-nx-1]
				a := (ne + 2*s[k+1] + se - nw - 2*s[k-1] - sw) * cx
				b := (ne + 2*s[k+nx] + nw - se - 2*s[k-nx] - sw) * cy
				if a != a || b != b || s[k] != s[k] {
					slow(k-row, j)
					continue
				}
				dx[k], dy[k] = a, b
				if st != nil {
					st[k] = fullStencil
				}
			}
		default:
			cx, cy := hx/2, hy/2
			for k := lo; k < hi; k++ {
				a := (s[k+1] - s[k-1]) * cx
				b := (s[k+nx] - s[k-nx]) * cy
				if a != a || b != b || s[k] != s[k] {
					slow(k-row, j)
					continue
				}
				dx[k], dy[k] = a, b
				if st != nil {
					st[k] = fullStencil
				}
			}
		}
		return true
	})
}

// along returns the derivative of s along one grid line at node k, which sits at position i of
// the n nodes of the line (step apart in the slice), with the widest stencil of the scheme
// whose nodes are all inside the line and not NaN; inv is 1/h. For the Circulation scheme the
// full stencil also needs the neighbouring lines: o is the node's position across (of m, ostep
// apart). s[k] must not be NaN.
func along(s []float64, k, i, n, step int, inv float64, scheme Scheme, o, m, ostep int) (float64, StencilKind) {
	nan := math.NaN()
	// The second neighbours are read only when a stencil needs them (they may not be in cache).
	p2 := func() float64 {
		if i+2 < n {
			return s[k+2*step]
		}
		return nan
	}
	m2 := func() float64 {
		if i >= 2 {
			return s[k-2*step]
		}
		return nan
	}
	p1, m1 := nan, nan
	if i+1 < n {
		p1 = s[k+step]
	}
	if i >= 1 {
		m1 = s[k-step]
	}
	hasP1, hasM1 := p1 == p1, m1 == m1
	if hasP1 && hasM1 {
		switch scheme {
		case Central:
			return (p1 - m1) * (inv / 2), StencilFull
		case Richardson:
			if q, r := p2(), m2(); q == q && r == r {
				return (r - 8*m1 + 8*p1 - q) * (inv / 12), StencilFull
			}
		case LeastSquares:
			if q, r := p2(), m2(); q == q && r == r {
				return (2*(q-r) + p1 - m1) * (inv / 10), StencilFull
			}
		case Circulation:
			if o >= 1 && o < m-1 {
				p, q := k+step, k-step
				d := (s[p-ostep] + 2*p1 + s[p+ostep] - s[q-ostep] - 2*m1 - s[q+ostep]) * (inv / 8)
				if d == d {
					return d, StencilFull
				}
			}
		}
		return (p1 - m1) * (inv / 2), StencilCentral
	}
	if hasP1 {
		if q := p2(); q == q {
			return (-3*s[k] + 4*p1 - q) * (inv / 2), StencilOneSided
		}
		return (p1 - s[k]) * inv, StencilFirstOrder
	}
	if hasM1 {
		if r := m2(); r == r {
			return (3*s[k] - 4*m1 + r) * (inv / 2), StencilOneSided
		}
		return (s[k] - m1) * inv, StencilFirstOrder
	}
	return nan, StencilNone
}
