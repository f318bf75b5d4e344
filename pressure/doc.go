// Package pressure reconstructs pressure fields from time-resolved planar velocity fields and
// evaluates the forces at a nozzle exit (reviewed by van Oudheusden 2013, Meas. Sci. Technol.
// 24:032001).
//
// The steps are:
//
//   - Acceleration: the material acceleration Du/Dt, Eulerian (second-order time differences
//     on possibly non-uniform frame times plus the convective term) or Lagrangian
//     (pseudo-tracking of fluid parcels over ±k frames, de Kat & van Oudheusden 2012), or the
//     convective term alone for steady flow.
//   - Gradient: ∇p = −ρ Du/Dt + μ∇²u, planar or axisymmetric (cylindrical viscous terms).
//   - Integrate: the Poisson equation ∇²p = ∇·(∇p) in finite-volume form, where the measured
//     gradient is the face flux, so Neumann edges and holes need no special treatment and the
//     problem is compatible by construction; Dirichlet values on named edges (constant, or the
//     unsteady far field of the nozzle's volume source). Solvers: a direct transform solver
//     (cosine/sine transforms along x, tridiagonal along y), conjugate gradients preconditioned
//     by an aggregation multigrid V-cycle for masked or mixed problems, and a multi-path direct
//     integration as an independent cross-check.
//   - ExitProfile: exit pressure profile, pressure force 2π∫(p − p∞) r dr, momentum flux
//     2πρ∫u² r dr and their sum, with the exit plane anywhere within one spacing of a column.
//
// Reconstruct runs these steps for one frame of a series and reads only the frames around it,
// so it serves as a stage of the frame pipeline.
//
// Accuracy (from the package tests): on exact Taylor–Green data (64x64, 5 frames) the error is
// 0.16% of the pressure range and second order in the spacing; Lamb–Oseen at 10 nodes per core
// radius 0.4% of the central deficit; Hill's vortex translating 1.5% of ρU². With independent
// Gaussian velocity noise of 1% of the peak speed, frames one grid spacing of travel apart, the
// Taylor–Green error grows to an RMS of at most 2.5% of the pressure range and a maximum of at
// most 15%, found at the edges where one-sided differences amplify the noise (Eulerian and
// Lagrangian alike; the interior maximum is about 5%). On the axisymmetric starting-jet CFD
// reference the exit pressure force is within 1.9% RMS of the solver's (2.5% with 1% noise).
package pressure
