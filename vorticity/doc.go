// Package vorticity computes spatial derivatives on masked velocimetry grids and the kinematic
// fields built from them: vorticity, divergence, strain rate, the Q criterion, lambda2,
// swirling strength, the Gamma1/Gamma2 vortex-identification functions and enstrophy density,
// together with the propagation of a velocity random error into each derivative.
//
// # Schemes
//
// Four difference schemes are offered, named as in Raffel et al., Particle Image Velocimetry:
// A Practical Guide (Springer):
//
//   - Central: the second-order central difference (f[i+1] - f[i-1]) / 2h.
//   - Richardson: the fourth-order Richardson-extrapolated central difference
//     (f[i-2] - 8 f[i-1] + 8 f[i+1] - f[i+2]) / 12h.
//   - LeastSquares: the second-order least-squares difference
//     (2 f[i+2] + f[i+1] - f[i-1] - 2 f[i-2]) / 10h, which trades resolution for a lower
//     random error.
//   - Circulation: vorticity from the circulation around the square through the 8
//     neighbours of a node (trapezoidal rule), divided by the enclosed area 4 DX DY. That
//     estimate is algebraically the central difference smoothed by the weights (1, 2, 1)/4
//     across the difference direction, so the Circulation scheme uses exactly that smoothed
//     central difference for every derivative: the vorticity of its gradient tensor is the
//     local-circulation estimate, and divergence, strain, Q, lambda2 and swirl use the same
//     stencil.
//
// # Masks and fallback
//
// A node is usable when its value is not NaN (for a velocity field: when the node is Measured
// or Replaced and both components are numbers). A derivative is NaN at a node that is not
// usable. Elsewhere each direction uses the scheme's own stencil if all its nodes are usable
// and inside the grid; otherwise the plain central difference; otherwise the one-sided
// second-order difference (-3 f[i] + 4 f[i+1] - f[i+2]) / 2h or its mirror; otherwise the
// first-order two-point difference; otherwise NaN. No stencil ever reads a node that is not
// usable. The stencil used is recorded per node and direction in a Stencil.
//
// # Axisymmetric geometry
//
// In the meridional plane of an axisymmetric flow (piv.Geometry.Axisymmetric, x axial,
// r = y - AxisY radial, v the radial velocity) the velocity-gradient tensor of a swirl-free
// flow in cylindrical components (x, r, theta) is
//
//	| du/dx  du/dr  0   |
//	| dv/dx  dv/dr  0   |
//	| 0      0      v/r |
//
// The hoop strain v/r enters the divergence (du/dx + dv/dr + v/r), the strain rate, Q,
// lambda2 and the strain magnitude; swirling strength is unaffected because v/r is a real
// eigenvalue of its own. Nodes below the axis (r < 0) are handled with the signed r: v and r
// both change sign there, so v/r is still the hoop strain. On the axis (|r| below a
// millionth of DY) v/r is replaced by its limit dv/dr (v vanishes on the axis by symmetry).
// Vorticity is always reported as dV/dx - dU/dy: it is w_theta above the axis and -w_theta
// below it, so a ring appears as the counter-rotating pair seen in the plane.
package vorticity
