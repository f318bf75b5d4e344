package analytic

import (
	"fmt"
	"math"

	"github.com/wakekit/wakekit/piv"
	"gonum.org/v1/gonum/integrate/quad"
)

// SampleWindowed is Sample with the continuous interrogation-window average: each node gets the
// mean velocity of the flow over the size x size square centred on it, the top-hat spatial
// filter of a correlation window of that size [m] (unlike Noise.Window, which averages node
// values). The mean is taken with a points x points Gauss–Legendre product rule from gonum
// (exact for polynomials of degree 2 points - 1 in each direction); 8 points are ample for
// windows up to the size of a vortex core. points < 1 means 8.
func SampleWindowed(f Flow, g piv.Grid, t, size float64, points int) (*piv.Field, error) {
	if !(size > 0) || math.IsInf(size, 0) {
		return nil, fmt.Errorf("window size %g m must be a positive number", size)
	}
	if points < 1 {
		points = 8
	}
	if points > 64 {
		return nil, fmt.Errorf("%d quadrature points per direction is more than the 64 allowed", points)
	}
	xs := make([]float64, points)
	ws := make([]float64, points)
	quad.Legendre{}.FixedLocations(xs, ws, -size/2, size/2)
	norm := 1 / (size * size)
	fld := Sample(f, g, t)
	for j := 0; j < g.NY; j++ {
		for i := 0; i < g.NX; i++ {
			k := g.Index(i, j)
			if !fld.Valid(k) {
				continue
			}
			x0, y0 := g.X(i), g.Y(j)
			var su, sv float64
			for b, dy := range xs {
				for a, dx := range xs {
					u, v := f.Velocity(x0+dx, y0+dy, t)
					w := ws[a] * ws[b]
					su += w * u
					sv += w * v
				}
			}
			fld.U[k], fld.V[k] = su*norm, sv*norm
		}
	}
	fld.Normalize()
	return fld, nil
}
