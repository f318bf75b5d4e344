package vorticity

import (
	"math"

	"github.com/wakekit/wakekit/piv"
)

// consistent reports whether node k of a field has values that agree with its status: an
// unusable status with both components NaN, or a usable status with both components numbers
// or both NaN (piv.Field.Normalize leaves every node so).
func consistent(st piv.Status, u, v float64) bool {
	un, vn := u != u, v != v
	if !st.Valid() {
		return un && vn
	}
	return un == vn
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
