package analytic

import "math"

// VortexPair returns two counter-rotating Lamb–Oseen vortices of circulation +Gamma (upper,
// counter-clockwise) and -Gamma (lower), Separation apart across the line y = Y, centred on x = X
// at t = 0: the planar cut through a vortex ring moving toward +x, with the sign convention
// "positive in the upper half". The pair moves along +x at the speed of a point-vortex pair,
// Gamma / (2 pi Separation) (Lamb, Hydrodynamics, 1932, §155). It is a kinematic superposition:
// with viscous cores it is an exact solution only in the limit of cores small against the
// separation, and its pressure is not given.
func VortexPair(gamma, coreRadius, separation, nu, x, y float64) Superposition {
	uc := PairSpeed(gamma, separation)
	return Superposition{
		LambOseen{Gamma: gamma, CoreRadius: coreRadius, Nu: nu, X: x, Y: y + separation/2, Uc: uc},
		LambOseen{Gamma: -gamma, CoreRadius: coreRadius, Nu: nu, X: x, Y: y - separation/2, Uc: uc},
	}
}

// PairSpeed returns Gamma / (2 pi d), the speed of a pair of point vortices of circulation
// +-Gamma at distance d (Lamb, Hydrodynamics, 1932, §155).
func PairSpeed(gamma, d float64) float64 { return gamma / (2 * math.Pi * d) }
