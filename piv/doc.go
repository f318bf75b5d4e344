// Package piv holds wakekit's data model for planar velocity fields: the uniform Grid, the
// per-frame Field with its per-node Status and Geometry, the lazily read Series of frames, and
// the readers, writers, validation, filling, smoothing and interpolation that act on them.
//
// Conventions (see the design notes in the README): SI units inside; node (i, j) sits at
// (X0 + i*DX, Y0 + j*DY) with x to the right and y up; slices are row-major with i fastest
// (index j*NX + i). Nodes whose status is not valid carry NaN velocities, and derived scalars
// are NaN wherever they are undefined.
package piv
