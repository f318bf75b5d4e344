// Package circulation turns velocity and vorticity fields into integral quantities of vortices:
// circulation by line and area integrals, radial profiles and Lamb–Oseen core fits, vortex
// detection and tracking through a series, vortex-ring and vortex-pair properties, and the
// hydrodynamic impulse.
//
// Conventions follow package piv: SI units, counter-clockwise circulation positive, and in the
// axisymmetric case the meridional plane with x axial and r = y - AxisY radial.
package circulation
