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

// VorticityTo writes the vorticity of f into dst (length f.Grid.N()). It allocates nothing
// for a field whose values agree with its status (piv.Field.Normalize); for other fields it
// works on masked copies.
func VorticityTo(dst []float64, f *piv.Field, scheme Scheme) {
	g := f.Grid
	if len(dst) != g.N() || len(f.U) != g.N() || len(f.V) != g.N() || len(f.Status) != g.N() {
		panic(fmt.Sprintf("vorticity.VorticityTo: slices of length %d, %d, %d, %d for a %dx%d grid",
			len(dst), len(f.U), len(f.V), len(f.Status), g.NX, g.NY))
	}
	if !vorticityPass(dst, g, f.U, f.V, f.Status, scheme) {
		u, v, st := masked(f)
		vorticityPass(dst, g, u, v, st, scheme)
	}
}

// vorticityPass writes the vorticity of u, v into dst; it returns false, leaving dst
// incomplete, when it meets a node whose values disagree with its status.
func vorticityPass(dst []float64, g piv.Grid, u, v []float64, stat []piv.Status, scheme Scheme) bool {
	nx, ny := g.NX, g.NY
	hx, hy := 1/g.DX, 1/g.DY
	h := scheme.Halo()
	slow := func(k, i, j int) bool {
		if !consistentAround(stat, u, v, k, i, j, nx, ny, false, true, true, false) {
			return false
		}
		if !stat[k].Valid() {
			dst[k] = math.NaN()
			return true
		}
		a, _ := along(v, k, i, nx, 1, hx, scheme, j, ny, nx)
		b, _ := along(u, k, j, ny, nx, hy, scheme, i, nx, 1)
		dst[k] = a - b
		return true
	}
	for j := 0; j < ny; j++ {
		row := j * nx
		if j < h || j >= ny-h || nx <= 2*h {
			for i := 0; i < nx; i++ {
				if !slow(row+i, i, j) {
					return false
				}
			}
			continue
		}
		for i := 0; i < h; i++ {
			if !slow(row+i, i, j) {
				return false
			}
		}
		lo, hi := row+h, row+nx-h
		// A NaN anywhere in the stencils, or an unusable status at the centre, sends the node to
		// the fallback path (which also checks the centre's values; see consistentAround).
		switch scheme {
		case Richardson:
			cx, cy := hx/12, hy/12
			for k := lo; k < hi; k++ {
				w := (v[k-2]-8*v[k-1]+8*v[k+1]-v[k+2])*cx - (u[k-2*nx]-8*u[k-nx]+8*u[k+nx]-u[k+2*nx])*cy
				if w != w || !stat[k].Valid() {
					if !slow(k, k-row, j) {
						return false
					}
					continue
				}
				dst[k] = w
			}
		case LeastSquares:
			cx, cy := hx/10, hy/10
			for k := lo; k < hi; k++ {
				w := (2*(v[k+2]-v[k-2])+v[k+1]-v[k-1])*cx - (2*(u[k+2*nx]-u[k-2*nx])+u[k+nx]-u[k-nx])*cy
				if w != w || !stat[k].Valid() {
					if !slow(k, k-row, j) {
						return false
					}
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
				if w != w || !stat[k].Valid() {
					if !slow(k, k-row, j) {
						return false
					}
					continue
				}
				dst[k] = w
			}
		default:
			cx, cy := hx/2, hy/2
			// Row views let the compiler drop most bounds checks in the hottest loop.
			vr := v[lo-1 : hi+1]
			us, un := u[lo-nx:hi-nx], u[lo+nx:hi+nx]
			sc, out := stat[lo:hi], dst[lo:hi]
			for m := range out {
				w := (vr[m+2]-vr[m])*cx - (un[m]-us[m])*cy
				if w != w || !sc[m].Valid() {
					if !slow(lo+m, lo+m-row, j) {
						return false
					}
					continue
				}
				out[m] = w
			}
		}
		for i := nx - h; i < nx; i++ {
			if !slow(row+i, i, j) {
				return false
			}
		}
	}
	return true
}
