package vorticity

import (
	"fmt"
	"math"

	"github.com/wakekit/wakekit/piv"
)

// Vorticity returns dV/dx - dU/dy of f at every node with the given scheme (w_z; in the
// meridional plane of an axisymmetric flow w_theta above the axis). It gives the same values
// as NewGradient(f, scheme).Vorticity() without forming the whole tensor.
func Vorticity(f *piv.Field, scheme Scheme) []float64 {
	out := make([]float64, f.Grid.N())
	VorticityTo(out, f, scheme)
	return out
}

// VorticityTo writes the vorticity of f into dst (length f.Grid.N()), allocating nothing for
// a normalized field.
func VorticityTo(dst []float64, f *piv.Field, scheme Scheme) {
	g := f.Grid
	if len(dst) != g.N() {
		panic(fmt.Sprintf("vorticity.VorticityTo: dst has length %d for a %dx%d grid", len(dst), g.NX, g.NY))
	}
	u, v := usable(f)
	nx, ny := g.NX, g.NY
	hx, hy := 1/g.DX, 1/g.DY
	h := scheme.Halo()
	slow := func(i, j int) {
		k := j*nx + i
		if u[k] != u[k] || v[k] != v[k] {
			dst[k] = math.NaN()
			return
		}
		a, _ := along(v, k, i, nx, 1, hx, scheme, j, ny, nx)
		b, _ := along(u, k, j, ny, nx, hy, scheme, i, nx, 1)
		dst[k] = a - b
	}
	for j := 0; j < ny; j++ {
		if j < h || j >= ny-h || nx <= 2*h {
			for i := 0; i < nx; i++ {
				slow(i, j)
			}
			continue
		}
		for i := 0; i < h; i++ {
			slow(i, j)
		}
		row := j * nx
		lo, hi := row+h, row+nx-h
		switch scheme {
		case Richardson:
			cx, cy := hx/12, hy/12
			for k := lo; k < hi; k++ {
				w := (v[k-2]-8*v[k-1]+8*v[k+1]-v[k+2])*cx - (u[k-2*nx]-8*u[k-nx]+8*u[k+nx]-u[k+2*nx])*cy
				if w != w || u[k] != u[k] || v[k] != v[k] {
					slow(k-row, j)
					continue
				}
				dst[k] = w
			}
		case LeastSquares:
			cx, cy := hx/10, hy/10
			for k := lo; k < hi; k++ {
				w := (2*(v[k+2]-v[k-2])+v[k+1]-v[k-1])*cx - (2*(u[k+2*nx]-u[k-2*nx])+u[k+nx]-u[k-nx])*cy
				if w != w || u[k] != u[k] || v[k] != v[k] {
					slow(k-row, j)
					continue
				}
				dst[k] = w
			}
		case Circulation:
			cx, cy := hx/8, hy/8
			for k := lo; k < hi; k++ {
				a := (v[k+nx+1] + 2*v[k+1] + v[k-nx+1] - v[k+nx-1] - 2*v[k-1] - v[k-nx-1]) * cx
				b := (u[k+nx+1] + 2*u[k+nx] + u[k+nx-1] - u[k-nx+1] - 2*u[k-nx] - u[k-nx-1]) * cy
				w := a - b
				// The x stencil of v and the y stencil of u each need their own six nodes; a NaN
				// anywhere, or at the centre, sends the node to the fallback path.
				if w != w || u[k] != u[k] || v[k] != v[k] {
					slow(k-row, j)
					continue
				}
				dst[k] = w
			}
		default:
			cx, cy := hx/2, hy/2
			for k := lo; k < hi; k++ {
				w := (v[k+1]-v[k-1])*cx - (u[k+nx]-u[k-nx])*cy
				if w != w || u[k] != u[k] || v[k] != v[k] {
					slow(k-row, j)
					continue
				}
				dst[k] = w
			}
		}
		for i := nx - h; i < nx; i++ {
			slow(i, j)
		}
	}
}
