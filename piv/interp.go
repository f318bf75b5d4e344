package piv

import (
	"fmt"
	"math"
)

// Interp names an interpolation rule for values between nodes.
type Interp int

const (
	// Bilinear interpolation from the 4 surrounding nodes: exact for linear fields, error
	// O(h^2) in the second derivatives.
	Bilinear Interp = iota
	// Bicubic is Keys' cubic convolution (a = -1/2; Keys 1981, IEEE Trans. ASSP 29:1153) over the
	// 4x4 surrounding nodes: exact for quadratics, error O(h^3). Next to an edge, where the 4x4
	// stencil does not fit, it falls back to bilinear.
	Bicubic
)

// ParseInterp reads "bilinear" or "bicubic".
func ParseInterp(name string) (Interp, error) {
	switch name {
	case "bilinear", "linear":
		return Bilinear, nil
	case "bicubic", "cubic":
		return Bicubic, nil
	}
	return 0, fmt.Errorf("unknown interpolation %q (expected bilinear or bicubic)", name)
}

// String returns the interpolation's name.
func (m Interp) String() string {
	if m == Bicubic {
		return "bicubic"
	}
	return "bilinear"
}

// Sample interpolates the scalar s on grid g at the point (x, y). It returns NaN outside the
// grid or when any node the rule needs is NaN (missing data), never a guess.
func Sample(g Grid, s []float64, x, y float64, m Interp) float64 {
	fi, fj := g.Frac(x, y)
	const eps = 1e-9
	if fi < -eps || fj < -eps || fi > float64(g.NX-1)+eps || fj > float64(g.NY-1)+eps || math.IsNaN(fi+fj) {
		return math.NaN()
	}
	i0 := int(math.Floor(fi))
	j0 := int(math.Floor(fj))
	if i0 >= g.NX-1 {
		i0 = g.NX - 2
	}
	if j0 >= g.NY-1 {
		j0 = g.NY - 2
	}
	if i0 < 0 {
		i0 = 0
	}
	if j0 < 0 {
		j0 = 0
	}
	if g.NX == 1 || g.NY == 1 {
		return sample1D(g, s, fi, fj)
	}
	tx, ty := fi-float64(i0), fj-float64(j0)
	if m == Bicubic && i0 >= 1 && j0 >= 1 && i0+2 < g.NX && j0+2 < g.NY {
		wx := keys(tx)
		wy := keys(ty)
		sum := 0.0
		for b := 0; b < 4; b++ {
			row := (j0-1+b)*g.NX + i0 - 1
			r := wx[0]*s[row] + wx[1]*s[row+1] + wx[2]*s[row+2] + wx[3]*s[row+3]
			sum += wy[b] * r
		}
		return sum
	}
	k := j0*g.NX + i0
	a, b, c, d := s[k], s[k+1], s[k+g.NX], s[k+g.NX+1]
	return (1-ty)*((1-tx)*a+tx*b) + ty*((1-tx)*c+tx*d)
}

// sample1D handles degenerate grids of one row or one column by linear interpolation.
func sample1D(g Grid, s []float64, fi, fj float64) float64 {
	t, n := fi, g.NX
	if g.NX == 1 {
		t, n = fj, g.NY
	}
	if n == 1 {
		return s[0]
	}
	i0 := int(math.Floor(t))
	if i0 >= n-1 {
		i0 = n - 2
	}
	if i0 < 0 {
		i0 = 0
	}
	w := t - float64(i0)
	return (1-w)*s[i0] + w*s[i0+1]
}

// keys returns the four weights of Keys' cubic convolution kernel (a = -1/2) at offset t in [0,1].
func keys(t float64) [4]float64 {
	t2, t3 := t*t, t*t*t
	return [4]float64{
		-0.5*t3 + t2 - 0.5*t,
		1.5*t3 - 2.5*t2 + 1,
		-1.5*t3 + 2*t2 + 0.5*t,
		0.5*t3 - 0.5*t2,
	}
}

// At interpolates the velocity of f at (x, y). ok is false when either component is NaN
// (outside the grid, or next to missing or solid nodes).
func (f *Field) At(x, y float64, m Interp) (u, v float64, ok bool) {
	u = Sample(f.Grid, f.U, x, y, m)
	v = Sample(f.Grid, f.V, x, y, m)
	return u, v, !math.IsNaN(u) && !math.IsNaN(v)
}
