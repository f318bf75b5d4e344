package vorticity

import (
	"math"

	"github.com/wakekit/wakekit/piv"
)

// consistent reports whether a node's values agree with its status: an unusable status with
// both components NaN, or a usable status with both components numbers (piv.Field.Normalize
// leaves every node so).
func consistent(st piv.Status, u, v float64) bool {
	un, vn := u != u, v != v
	if !st.Valid() {
		return un && vn
	}
	return !un && !vn
}

// consistentAround reports whether node k at (i, j) is consistent and none of its four
// neighbours is a usable-status node with a NaN velocity. The fast loops check only the
// centre's status and whether the stencil produced a NaN; such a neighbour makes the stencil
// NaN, so the node takes the fallback path, which calls this and finds it. (Unusable-status
// nodes with finite values are found when they are the centre.) Only the components the fast
// stencils read are examined: u and v along x when xu and xv, along y when yu and yv.
func consistentAround(stat []piv.Status, u, v []float64, k, i, j, nx, ny int, xu, xv, yu, yv bool) bool {
	if !consistent(stat[k], u[k], v[k]) {
		return false
	}
	// A NaN component at a usable-status neighbour is inconsistent; a NaN at an unusable one is
	// expected (its other component is checked when it is the centre).
	bad := func(n int, cu, cv bool) bool {
		return (cu && u[n] != u[n] || cv && v[n] != v[n]) && stat[n].Valid()
	}
	if i > 0 && bad(k-1, xu, xv) || i < nx-1 && bad(k+1, xu, xv) ||
		j > 0 && bad(k-nx, yu, yv) || j < ny-1 && bad(k+nx, yu, yv) {
		return false
	}
	return true
}

// masked returns copies of the field's components with NaN at every node that is not usable
// (status neither Measured nor Replaced, or either component NaN), and the matching status.
func masked(f *piv.Field) (u, v []float64, st []piv.Status) {
	n := len(f.U)
	u, v, st = make([]float64, n), make([]float64, n), make([]piv.Status, n)
	nan := math.NaN()
	for k := range u {
		if f.Valid(k) {
			u[k], v[k] = f.U[k], f.V[k]
		} else {
			u[k], v[k], st[k] = nan, nan, piv.Missing
		}
	}
	return u, v, st
}

// usable returns the field's components if every node is consistent, masked copies otherwise.
func usable(f *piv.Field) (u, v []float64) {
	for k, s := range f.Status {
		if !consistent(s, f.U[k], f.V[k]) {
			u, v, _ = masked(f)
			return u, v
		}
	}
	return f.U, f.V
}
