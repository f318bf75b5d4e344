package vorticity

import (
	"math"

	"github.com/wakekit/wakekit/piv"
)

// Gamma1 returns the Gamma1 function of Graftieaux, Michard & Grosjean (2001, Meas. Sci.
// Technol. 12:1422) at every node: the mean, over the other nodes M of the square of
// (2*radius+1)^2 nodes centred on P, of sin of the angle from PM to the velocity at M,
// (PM x U_M)_z / (|PM| |U_M|). |Gamma1| is at most 1 and close to 1 at the centre of an
// axisymmetric vortex; its sign is the sense of rotation. A node gets NaN unless the whole
// square lies inside the grid and every node of it is usable; a node M with zero velocity
// contributes zero. radius < 1 is taken as 1.
func Gamma1(f *piv.Field, radius int) []float64 { return gamma(f, radius, false) }

// Gamma2 returns the Gamma2 function of Graftieaux, Michard & Grosjean (2001): as Gamma1, but
// with the velocity relative to the mean velocity of the square, U_M - mean(U), so that it is
// Galilean invariant. |Gamma2| > 2/pi marks the vortex core: in the limit of a small square it
// is exactly where rotation dominates strain.
func Gamma2(f *piv.Field, radius int) []float64 { return gamma(f, radius, true) }

func gamma(f *piv.Field, radius int, relative bool) []float64 {
	if radius < 1 {
		radius = 1
	}
	g := f.Grid
	u, v := usable(f)
	out := piv.NaNs(g.N())
	nx, ny := g.NX, g.NY
	if nx < 2*radius+1 || ny < 2*radius+1 {
		return out
	}
	// Flags of unusable nodes and their summed-area table, so a square with a hole is skipped
	// in constant time.
	bad := make([]int32, g.N())
	for k := range bad {
		if u[k] != u[k] || v[k] != v[k] {
			bad[k] = 1
		}
	}
	// sat[(j+1)*(nx+1)+i+1] counts the unusable nodes in columns 0..i of rows 0..j.
	sat := make([]int32, (nx+1)*(ny+1))
	for j := 0; j < ny; j++ {
		var rowSum int32
		for i := 0; i < nx; i++ {
			rowSum += bad[j*nx+i]
			sat[(j+1)*(nx+1)+i+1] = sat[j*(nx+1)+i+1] + rowSum
		}
	}
	dx, dy := g.DX, g.DY
	nodes := float64((2*radius+1)*(2*radius+1) - 1)
	for j := radius; j < ny-radius; j++ {
		for i := radius; i < nx-radius; i++ {
			i0, j0, i1, j1 := i-radius, j-radius, i+radius+1, j+radius+1
			holes := sat[j1*(nx+1)+i1] - sat[j0*(nx+1)+i1] - sat[j1*(nx+1)+i0] + sat[j0*(nx+1)+i0]
			if holes != 0 {
				continue
			}
			var mu, mv float64
			if relative {
				for b := j0; b < j1; b++ {
					for a := i0; a < i1; a++ {
						mu += u[b*nx+a]
						mv += v[b*nx+a]
					}
				}
				mu /= nodes + 1
				mv /= nodes + 1
			}
			var sum float64
			for b := j0; b < j1; b++ {
				py := float64(b-j) * dy
				for a := i0; a < i1; a++ {
					if a == i && b == j {
						continue
					}
					px := float64(a-i) * dx
					um, vm := u[b*nx+a]-mu, v[b*nx+a]-mv
					den := math.Hypot(px, py) * math.Hypot(um, vm)
					if den > 0 {
						sum += (px*vm - py*um) / den
					}
				}
			}
			out[j*nx+i] = sum / nodes
		}
	}
	return out
}
