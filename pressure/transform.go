package pressure

import (
	"errors"
	"math"

	"github.com/wakekit/wakekit/piv"
	"gonum.org/v1/gonum/dsp/fourier"
)

// transformApplies reports why the direct transform solver cannot solve s, or nil when it can:
// every node must be valid, and the left and right edges must both be prescribed or both not.
func transformApplies(s *system, opt Options) error {
	for k := range s.active {
		if !s.active[k] {
			return errors.New("the transform solver needs a full rectangle of valid data; use --solver multigrid for masked or missing regions")
		}
	}
	d := effectiveEdges(opt)
	if s.nx < 2 || s.ny < 2 {
		return errors.New("the transform solver needs at least 2 columns and 2 rows; use --solver multigrid")
	}
	rows := s.ny
	if d&Bottom != 0 {
		rows--
	}
	if d&Top != 0 {
		rows--
	}
	if rows < 1 {
		return errors.New("the transform solver needs a row between prescribed bottom and top edges")
	}
	if (d&Left != 0) != (d&Right != 0) {
		return errors.New("the transform solver needs the left and right edges of the same type (both prescribed or both not); use --solver multigrid")
	}
	if d&Left != 0 && s.nx < 3 {
		return errors.New("the transform solver needs at least 3 columns between prescribed left and right edges")
	}
	return nil
}

// effectiveEdges returns the edges whose values enter the linear system (none for level-only
// references).
func effectiveEdges(opt Options) Edges {
	if opt.LevelOnly {
		return 0
	}
	return opt.Dirichlet
}

// solveTransform solves the full-rectangle system directly. Along x the operator is the
// constant-coefficient three-point Laplacian, diagonalised by the type-II discrete cosine
// transform for mirror (finite-volume Neumann) ends and by the type-I discrete sine transform
// for prescribed end nodes (both from gonum's dsp/fourier); along y each mode leaves a
// tridiagonal system (with the radial weights in the axisymmetric case), solved by the Thomas
// algorithm. Cost O(N log NX). Written here because gonum offers the transforms but no fast
// Poisson solver.
func solveTransform(s *system, g piv.Grid, geom piv.Geometry, d Edges) []float64 {
	nx, ny := s.nx, s.ny
	row, face := radialWeights(g, geom)
	ax := 1 / (g.DX * g.DX)
	ay := 1 / (g.DY * g.DY)
	dirX := d&Left != 0
	i0, m := 0, nx
	if dirX {
		i0, m = 1, nx-2
	}
	j0, j1 := 0, ny-1
	if d&Bottom != 0 {
		j0 = 1
	}
	if d&Top != 0 {
		j1 = ny - 2
	}
	rows := j1 - j0 + 1
	lam := make([]float64, m)
	var cosT *fourier.QuarterWaveFFT
	var sinT *fourier.DST
	if dirX {
		sinT = fourier.NewDST(m)
		for k := range lam {
			lam[k] = 2 * ax * (1 - math.Cos(math.Pi*float64(k+1)/float64(m+1)))
		}
	} else {
		cosT = fourier.NewQuarterWaveFFT(m)
		for k := range lam {
			lam[k] = 2 * ax * (1 - math.Cos(math.Pi*float64(k)/float64(m)))
		}
	}
	B := make([]float64, rows*m)
	for r := 0; r < rows; r++ {
		j := j0 + r
		src := s.b[j*nx+i0 : j*nx+i0+m]
		dst := B[r*m : (r+1)*m]
		if dirX {
			sinT.Transform(dst, src)
		} else {
			cosT.CosSequence(dst, src)
		}
	}
	// Thomas algorithm for every mode at once: A_r x_{r-1} + D_r x_r + C_r x_{r+1} = F_r.
	singular := !dirX && j0 == 0 && j1 == ny-1
	cp := make([]float64, rows*m)
	for r := 0; r < rows; r++ {
		j := j0 + r
		var lo, hi, dy float64
		if j > 0 {
			dy += ay * face[j-1]
			if r > 0 {
				lo = -ay * face[j-1]
			}
		}
		if j < ny-1 {
			dy += ay * face[j]
			if r < rows-1 {
				hi = -ay * face[j]
			}
		}
		f := B[r*m : (r+1)*m]
		c := cp[r*m : (r+1)*m]
		for k := 0; k < m; k++ {
			if singular && k == 0 && r == 0 {
				// The constant mode of the all-Neumann problem is fixed by x_0 = 0; the
				// dropped first equation holds by compatibility.
				c[0], f[0] = 0, 0
				continue
			}
			d := lam[k]*row[j] + dy
			prevC, prevF := 0.0, 0.0
			if r > 0 {
				prevC, prevF = cp[(r-1)*m+k], B[(r-1)*m+k]
			}
			den := d - lo*prevC
			c[k] = hi / den
			f[k] = (f[k] - lo*prevF) / den
		}
	}
	for r := rows - 2; r >= 0; r-- {
		f := B[r*m : (r+1)*m]
		c := cp[r*m : (r+1)*m]
		next := B[(r+1)*m : (r+2)*m]
		for k := 0; k < m; k++ {
			f[k] -= c[k] * next[k]
		}
	}
	p := make([]float64, nx*ny)
	scale := 1 / float64(4*m)
	if dirX {
		scale = 1 / float64(2*(m+1))
	}
	tmp := make([]float64, m)
	for r := 0; r < rows; r++ {
		j := j0 + r
		if dirX {
			sinT.Transform(tmp, B[r*m:(r+1)*m])
		} else {
			cosT.CosCoefficients(tmp, B[r*m:(r+1)*m])
		}
		for i := 0; i < m; i++ {
			p[j*nx+i0+i] = tmp[i] * scale
		}
	}
	for k := range p {
		if s.fixed[k] {
			p[k] = s.val[k]
		}
	}
	return p
}
