package vorticity

import (
	"fmt"
	"math"
	"strings"

	"github.com/wakekit/wakekit/piv"
)

// Scheme selects the difference scheme for spatial derivatives.
type Scheme int

const (
	// Central is the second-order central difference.
	Central Scheme = iota
	// Richardson is the fourth-order Richardson-extrapolated central difference.
	Richardson
	// LeastSquares is the noise-robust second-order least-squares difference.
	LeastSquares
	// Circulation is the local-circulation estimate around the 8 neighbours of a node; for
	// derivatives it is the central difference smoothed by (1, 2, 1)/4 across the difference
	// direction (see the package documentation).
	Circulation
)

// Schemes lists every scheme, in the order of their constants.
var Schemes = []Scheme{Central, Richardson, LeastSquares, Circulation}

// ParseScheme reads a scheme name: "central", "richardson", "least-squares" or
// "circulation".
func ParseScheme(name string) (Scheme, error) {
	switch strings.ToLower(strings.TrimSpace(name)) {
	case "central":
		return Central, nil
	case "richardson":
		return Richardson, nil
	case "least-squares", "leastsquares", "least_squares":
		return LeastSquares, nil
	case "circulation":
		return Circulation, nil
	}
	return 0, fmt.Errorf("unknown scheme %q (expected central, richardson, least-squares or circulation)", name)
}

// String returns the scheme's name as ParseScheme reads it.
func (s Scheme) String() string {
	switch s {
	case Central:
		return "central"
	case Richardson:
		return "richardson"
	case LeastSquares:
		return "least-squares"
	case Circulation:
		return "circulation"
	}
	return fmt.Sprintf("Scheme(%d)", int(s))
}

// Order returns the formal order of accuracy of the scheme's full stencil.
func (s Scheme) Order() int {
	if s == Richardson {
		return 4
	}
	return 2
}

// Halo returns how many nodes the scheme's full stencil reaches from the centre along the
// difference direction.
func (s Scheme) Halo() int {
	if s == Richardson || s == LeastSquares {
		return 2
	}
	return 1
}

// sumSq returns the sum of the squared weights (in units of 1/h^2) of the stencil kind k of
// scheme s along one direction. For the Circulation scheme's full stencil it counts the six
// weights (1, 2, 1)/8 and -(1, 2, 1)/8.
func sumSq(s Scheme, k StencilKind) float64 {
	switch k {
	case StencilFull:
		switch s {
		case Richardson:
			return (1 + 64 + 64 + 1) / 144.0
		case LeastSquares:
			return (4 + 1 + 1 + 4) / 100.0
		case Circulation:
			return 2 * (1 + 4 + 1) / 64.0
		}
		return 0.5
	case StencilCentral:
		return 0.5 // (1/2)^2 + (1/2)^2
	case StencilOneSided:
		return (9 + 16 + 1) / 4.0 // (-3, 4, -1)/2
	case StencilFirstOrder:
		return 2 // (-1, 1)
	}
	return math.NaN()
}

// NoiseFactor returns k such that a derivative computed with the scheme's full stencil on a
// grid of spacing h, from values carrying independent random errors of standard deviation
// sigma, has a random error k*sigma/h: the square root of the sum of the squared stencil
// weights. Central 1/sqrt(2) = 0.707, Richardson sqrt(130)/12 = 0.950, least-squares
// 1/sqrt(10) = 0.316, circulation sqrt(12)/8 = 0.433.
func NoiseFactor(s Scheme) float64 { return math.Sqrt(sumSq(s, StencilFull)) }

// VorticityNoiseFactor returns k such that the vorticity dV/dx - dU/dy computed with the
// scheme's full stencils on a square grid of spacing h, from velocities with independent
// random errors sigma in each component, has a random error k*sigma/h. The two derivatives
// use different components, so their errors add in quadrature: central 1, Richardson 1.344,
// least-squares 0.447, circulation sqrt(3/8) = 0.612.
func VorticityNoiseFactor(s Scheme) float64 { return math.Sqrt(2 * sumSq(s, StencilFull)) }

// VorticityNoise returns the random error [1/s] of the vorticity computed with the scheme's
// full stencils on grid g from velocities with independent random errors sigma [m/s] in each
// component: sigma * sqrt(w/DX^2 + w/DY^2), w the sum of squared weights of one derivative.
// On a square grid it is VorticityNoiseFactor(s) * sigma / DX. Nodes that fall back to other
// stencils have the errors given by Gradient.VorticityUncertainty.
func VorticityNoise(s Scheme, g piv.Grid, sigma float64) float64 {
	w := sumSq(s, StencilFull)
	return sigma * math.Sqrt(w/(g.DX*g.DX)+w/(g.DY*g.DY))
}

// Range returns the smallest and largest finite values of v and how many there are (NaN,
// NaN, 0 when there are none).
func Range(v []float64) (lo, hi float64, n int) {
	lo, hi = math.Inf(1), math.Inf(-1)
	for _, x := range v {
		if x == x && !math.IsInf(x, 0) {
			lo, hi = min(lo, x), max(hi, x)
			n++
		}
	}
	if n == 0 {
		return math.NaN(), math.NaN(), 0
	}
	return lo, hi, n
}
