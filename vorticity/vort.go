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
	return sweepRows(nx, ny, h, slow, func(lo, hi, row, j int) bool {
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
			// Row views let the compiler drop most bounds checks in the hottest loop, which runs
			// in a function of its own so that its state stays in registers; when every centre
			// status of the row is usable, it tests only the stencil result.
			vr := v[lo-1 : hi+1]
			us, un := u[lo-nx:hi-nx], u[lo+nx:hi+nx]
			sc, out := stat[lo:hi], dst[lo:hi]
			usable := rowUsable(sc)
			for m := 0; ; m++ {
				if usable {
					m = centralRun(out, vr, us, un, cx, cy, m)
				} else {
					m = centralRunMasked(out, vr, us, un, sc, cx, cy, m)
				}
				if m == len(out) {
					break
				}
				if !slow(lo+m, lo+m-row, j) {
					return false
				}
			}
		}
		return true
	})
}

// rowUsable reports whether every status in sc is usable (Measured or Replaced: kind bit 1
// clear), eight at a time.
func rowUsable(sc []piv.Status) bool {
	var or piv.Status
	m := 0
	for ; m+8 <= len(sc); m += 8 {
		s := sc[m : m+8 : m+8]
		or |= s[0] | s[1] | s[2] | s[3] | s[4] | s[5] | s[6] | s[7]
	}
	for _, s := range sc[m:] {
		or |= s
	}
	return or&2 == 0
}

// centralRun writes the central-difference vorticity (vr[m+2]-vr[m])·cx - (un[m]-us[m])·cy
// into out from position m0 on, where vr is the v row shifted one node left and us, un the u
// rows below and above, and stops at the first NaN result. It returns that position, or
// len(out) when there is none. It is kept out of line: inlined into the caller, whose fallback
// closure needs many registers, the loop index lived on the stack.
//
//go:noinline
func centralRun(out, vr, us, un []float64, cx, cy float64, m0 int) int {
	out = out[m0:]
	vr, us, un = vr[m0:m0+len(out)+2], us[m0:m0+len(out)], un[m0:m0+len(out)]
	for m := range out {
		w := (vr[m+2]-vr[m])*cx - (un[m]-us[m])*cy
		if w != w {
			return m0 + m
		}
		out[m] = w
	}
	return m0 + len(out)
}

// centralRunMasked is centralRun that also stops at a centre whose status sc[m] is unusable.
func centralRunMasked(out, vr, us, un []float64, sc []piv.Status, cx, cy float64, m0 int) int {
	out = out[m0:]
	vr, us, un, sc = vr[m0:m0+len(out)+2], us[m0:m0+len(out)], un[m0:m0+len(out)], sc[m0:m0+len(out)]
	for m := range out {
		w := (vr[m+2]-vr[m])*cx - (un[m]-us[m])*cy
		if w != w || !sc[m].Valid() {
			return m0 + m
		}
		out[m] = w
	}
	return m0 + len(out)
}
