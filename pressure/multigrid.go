package pressure

import (
	"fmt"
	"math"

	"gonum.org/v1/gonum/mat"
)

// level is one grid of the multigrid hierarchy: a five-point operator with couplings cx (east)
// and cy (north), a diagonal, and the unknown flags.
type level struct {
	nx, ny int
	cx, cy []float64
	diag   []float64
	inv    []float64 // 1/diag for unknowns
	unk    []bool
	r, x   []float64 // work vectors (right-hand side and correction on coarse levels)
	// coarsest level: dense Cholesky factor over the unknowns
	idx  []int
	chol *mat.Cholesky
}

// coarsestNodes is the size below which the hierarchy stops and the level is solved directly.
const coarsestNodes = 64

// overCorrection scales the coarse-grid correction: piecewise-constant aggregation
// under-estimates smooth errors, and a factor between 1 and 2 restores the convergence rate
// (Braess 1995, "Towards algebraic multigrid for elliptic problems of second order").
const overCorrection = 1.8

// pin makes node k a fixed node with value 0, for regions without any prescribed value.
func (s *system) pin(k int) {
	s.fixed[k], s.val[k] = true, 0
	nx := s.nx
	i, j := k%nx, k/nx
	if i > 0 {
		s.cx[k-1] = 0
	}
	s.cx[k] = 0
	if j > 0 {
		s.cy[k-nx] = 0
	}
	s.cy[k] = 0
	s.b[k], s.diag[k] = 0, 0
}

// hierarchy builds the multigrid levels from the fine system by 2x2 aggregation with the
// Galerkin coarse operator P^T A P for piecewise-constant prolongation P (couplings summed
// across aggregate boundaries, diagonals summed less the internal couplings).
func hierarchy(s *system) []*level {
	n := s.nx * s.ny
	fine := &level{nx: s.nx, ny: s.ny, cx: s.cx, cy: s.cy, diag: s.diag, unk: make([]bool, n)}
	for k := range fine.unk {
		fine.unk[k] = s.unknown(k)
	}
	levels := []*level{fine}
	for {
		f := levels[len(levels)-1]
		f.inv = make([]float64, f.nx*f.ny)
		for k, u := range f.unk {
			if u && f.diag[k] > 0 {
				f.inv[k] = 1 / f.diag[k]
			}
		}
		if f.nx*f.ny <= coarsestNodes || (f.nx == 1 && f.ny == 1) {
			f.factor()
			break
		}
		levels = append(levels, coarsen(f))
	}
	for _, l := range levels[1:] {
		l.r = make([]float64, l.nx*l.ny)
		l.x = make([]float64, l.nx*l.ny)
	}
	return levels
}

func coarsen(f *level) *level {
	cnx, cny := (f.nx+1)/2, (f.ny+1)/2
	n := cnx * cny
	c := &level{nx: cnx, ny: cny, cx: make([]float64, n), cy: make([]float64, n),
		diag: make([]float64, n), unk: make([]bool, n)}
	for j := 0; j < f.ny; j++ {
		for i := 0; i < f.nx; i++ {
			k := j*f.nx + i
			if !f.unk[k] {
				continue
			}
			K := (j/2)*cnx + i/2
			c.unk[K] = true
			c.diag[K] += f.diag[k]
			if i+1 < f.nx && f.cx[k] != 0 {
				if (i+1)/2 == i/2 {
					c.diag[K] -= 2 * f.cx[k]
				} else {
					c.cx[K] += f.cx[k]
				}
			}
			if j+1 < f.ny && f.cy[k] != 0 {
				if (j+1)/2 == j/2 {
					c.diag[K] -= 2 * f.cy[k]
				} else {
					c.cy[K] += f.cy[k]
				}
			}
		}
	}
	return c
}

// factor prepares the dense Cholesky factorisation of the coarsest level.
func (l *level) factor() {
	l.idx = l.idx[:0]
	pos := make([]int, l.nx*l.ny)
	for k, u := range l.unk {
		pos[k] = -1
		if u {
			pos[k] = len(l.idx)
			l.idx = append(l.idx, k)
		}
	}
	m := len(l.idx)
	if m == 0 {
		return
	}
	a := mat.NewSymDense(m, nil)
	for q, k := range l.idx {
		a.SetSym(q, q, l.diag[k])
		i, j := k%l.nx, k/l.nx
		if i+1 < l.nx && pos[k+1] >= 0 {
			a.SetSym(q, pos[k+1], -l.cx[k])
		}
		if j+1 < l.ny && pos[k+l.nx] >= 0 {
			a.SetSym(q, pos[k+l.nx], -l.cy[k])
		}
	}
	var ch mat.Cholesky
	if ch.Factorize(a) {
		l.chol = &ch
	}
}

// The kernels below rely on two properties of every level: couplings to non-unknown nodes, the
// east coupling of the last column and the north coupling of the last row are zero, and
// non-unknown nodes have zero diagonal, inverse diagonal and right-hand side. Rows other than the
// first and last can then be swept without any test: the west neighbour of a row's first node
// is the previous row's last node, whose east coupling is zero.

// gs does one Gauss–Seidel sweep on l for A x = b, forward or backward.
func (l *level) gs(b, x []float64, forward bool) {
	ny := l.ny
	if forward {
		for j := 0; j < ny; j++ {
			l.gsRow(b, x, j, true)
		}
		return
	}
	for j := ny - 1; j >= 0; j-- {
		l.gsRow(b, x, j, false)
	}
}

func (l *level) gsRow(b, x []float64, j int, forward bool) {
	nx, ny := l.nx, l.ny
	n := nx * ny
	lo, hi := j*nx, (j+1)*nx
	cx, cy, inv := l.cx, l.cy, l.inv
	if j == 0 || j == ny-1 {
		step, k0, k1 := 1, lo, hi
		if !forward {
			step, k0, k1 = -1, hi-1, lo-1
		}
		for k := k0; k != k1; k += step {
			v := b[k]
			if k > 0 {
				v += cx[k-1] * x[k-1]
			}
			if k+1 < n {
				v += cx[k] * x[k+1]
			}
			if k >= nx {
				v += cy[k-nx] * x[k-nx]
			}
			if k+nx < n {
				v += cy[k] * x[k+nx]
			}
			x[k] = v * inv[k]
		}
		return
	}
	if forward {
		for k := lo; k < hi; k++ {
			x[k] = (b[k] + cx[k-1]*x[k-1] + cx[k]*x[k+1] + cy[k-nx]*x[k-nx] + cy[k]*x[k+nx]) * inv[k]
		}
		return
	}
	for k := hi - 1; k >= lo; k-- {
		x[k] = (b[k] + cx[k-1]*x[k-1] + cx[k]*x[k+1] + cy[k-nx]*x[k-nx] + cy[k]*x[k+nx]) * inv[k]
	}
}

// firstSweep is the forward Gauss–Seidel sweep from x = 0 followed by the residual, fused:
// when node k is updated its east and north neighbours are still zero, so the sweep reads only
// the west and south ones, and afterwards the residual of node k is exactly the contribution of
// the east and north neighbours updated after it, r_k = cx_k x_{k+1} + cy_k x_{k+nx}. Every
// entry of x and r is written.
func (l *level) firstSweep(b, x, r []float64) {
	nx := l.nx
	n := nx * l.ny
	cx, cy, inv := l.cx, l.cy, l.inv
	for k := 0; k < n; k++ {
		v := b[k]
		if k > 0 {
			v += cx[k-1] * x[k-1]
		}
		if k >= nx {
			v += cy[k-nx] * x[k-nx]
		}
		x[k] = v * inv[k]
	}
	for k := 0; k < n-nx; k++ {
		r[k] = cx[k]*x[k+1] + cy[k]*x[k+nx]
	}
	for k := max(n-nx, 0); k < n; k++ {
		v := 0.0
		if k+1 < n {
			v = cx[k] * x[k+1]
		}
		r[k] = v
	}
}

// offDiag returns Σ c x over the neighbours of node k (with the edge tests).
func (l *level) offDiag(x []float64, k int) float64 {
	nx := l.nx
	n := nx * l.ny
	v := 0.0
	if k > 0 {
		v += l.cx[k-1] * x[k-1]
	}
	if k+1 < n {
		v += l.cx[k] * x[k+1]
	}
	if k >= nx {
		v += l.cy[k-nx] * x[k-nx]
	}
	if k+nx < n {
		v += l.cy[k] * x[k+nx]
	}
	return v
}

// resid computes r = b - A x on l.
func (l *level) resid(b, x, r []float64) {
	nx := l.nx
	n := nx * l.ny
	cx, cy, d := l.cx, l.cy, l.diag
	for k := 0; k < nx && k < n; k++ {
		r[k] = b[k] - d[k]*x[k] + l.offDiag(x, k)
	}
	for k := nx; k < n-nx; k++ {
		r[k] = b[k] - d[k]*x[k] + cx[k-1]*x[k-1] + cx[k]*x[k+1] + cy[k-nx]*x[k-nx] + cy[k]*x[k+nx]
	}
	for k := max(n-nx, nx); k < n; k++ {
		r[k] = b[k] - d[k]*x[k] + l.offDiag(x, k)
	}
}

// vcycle applies one symmetric V-cycle to b on level li, writing the approximation into x
// (which it zeroes first). work is a residual buffer of the level's size.
func vcycle(levels []*level, li int, b, x []float64, work [][]float64) {
	l := levels[li]
	if li == len(levels)-1 {
		for k := range x {
			x[k] = 0
		}
		l.direct(b, x)
		return
	}
	r := work[li]
	l.firstSweep(b, x, r)
	c := levels[li+1]
	// Restriction: sum the residuals of each 2x2 aggregate.
	for J := 0; J < c.ny; J++ {
		dst := c.r[J*c.nx : (J+1)*c.nx]
		for k := range dst {
			dst[k] = 0
		}
		for j := 2 * J; j < 2*J+2 && j < l.ny; j++ {
			src := r[j*l.nx : (j+1)*l.nx]
			for i, v := range src {
				dst[i>>1] += v
			}
		}
	}
	vcycle(levels, li+1, c.r, c.x, work)
	// Prolongation: add the (over-corrected) aggregate correction to its unknowns.
	for j := 0; j < l.ny; j++ {
		src := c.x[(j>>1)*c.nx : (j>>1+1)*c.nx]
		row := x[j*l.nx : (j+1)*l.nx]
		unk := l.unk[j*l.nx : (j+1)*l.nx]
		for i := range row {
			if unk[i] {
				row[i] += overCorrection * src[i>>1]
			}
		}
	}
	l.gs(b, x, false)
}

// direct solves the coarsest level (Cholesky, or Gauss–Seidel sweeps when the factorisation
// failed).
func (l *level) direct(b, x []float64) {
	if l.chol == nil {
		for it := 0; it < 50; it++ {
			l.gs(b, x, true)
			l.gs(b, x, false)
		}
		return
	}
	m := len(l.idx)
	rhs := mat.NewVecDense(m, nil)
	for q, k := range l.idx {
		rhs.SetVec(q, b[k])
	}
	var sol mat.VecDense
	if err := l.chol.SolveVecTo(&sol, rhs); err != nil {
		return
	}
	for q, k := range l.idx {
		x[k] = sol.AtVec(q)
	}
}

// solvePCG solves s by conjugate gradients preconditioned with one multigrid V-cycle per
// iteration (Hestenes & Stiefel 1952; the multigrid-preconditioned variant as in Tatebe 1993).
// Regions without a prescribed value are pinned at one node and shifted afterwards. It returns
// the solution (fixed values at fixed nodes), the iteration count, and an error when the
// tolerance is not reached.
func solvePCG(s *system, tol float64, maxIter int) ([]float64, int, error) {
	label, touches := s.components()
	pinned := make([]bool, len(touches))
	for k, l := range label {
		if l >= 0 && !touches[l] && !pinned[l] {
			s.pin(k)
			pinned[l] = true
		}
	}
	n := s.nx * s.ny
	levels := hierarchy(s)
	work := make([][]float64, len(levels))
	for i, l := range levels {
		work[i] = make([]float64, l.nx*l.ny)
	}
	x := make([]float64, n)
	r := make([]float64, n)
	z := make([]float64, n)
	p := make([]float64, n)
	ap := make([]float64, n)
	bb := 0.0
	for k := 0; k < n; k++ {
		if s.unknown(k) {
			r[k] = s.b[k]
			bb += r[k] * r[k]
		}
	}
	bn := math.Sqrt(bb)
	out := func() []float64 {
		for k := range x {
			if s.fixed[k] {
				x[k] = s.val[k]
			}
		}
		return x
	}
	if bn == 0 {
		return out(), 0, nil
	}
	vcycle(levels, 0, r, z, work)
	copy(p, z)
	rz := dot(r, z)
	for it := 1; it <= maxIter; it++ {
		pap := levels[0].applyDot(p, ap)
		if !(pap > 0) {
			return nil, it, fmt.Errorf("conjugate gradients broke down after %d iterations (operator not positive definite)", it)
		}
		alpha := rz / pap
		rr := 0.0
		for k := range x {
			x[k] += alpha * p[k]
			r[k] -= alpha * ap[k]
			rr += r[k] * r[k]
		}
		if math.Sqrt(rr) <= tol*bn {
			return out(), it, nil
		}
		vcycle(levels, 0, r, z, work)
		rzNew := dot(r, z)
		beta := rzNew / rz
		rz = rzNew
		for k := range p {
			p[k] = z[k] + beta*p[k]
		}
	}
	return nil, maxIter, fmt.Errorf("the multigrid-preconditioned conjugate gradients did not reach the relative residual %g in %d iterations", tol, maxIter)
}

// apply computes y = A x on the level (zero at non-unknowns).
func (l *level) apply(x, y []float64) {
	nx := l.nx
	n := nx * l.ny
	cx, cy, d := l.cx, l.cy, l.diag
	for k := 0; k < nx && k < n; k++ {
		y[k] = d[k]*x[k] - l.offDiag(x, k)
	}
	for k := nx; k < n-nx; k++ {
		y[k] = d[k]*x[k] - cx[k-1]*x[k-1] - cx[k]*x[k+1] - cy[k-nx]*x[k-nx] - cy[k]*x[k+nx]
	}
	for k := max(n-nx, nx); k < n; k++ {
		y[k] = d[k]*x[k] - l.offDiag(x, k)
	}
}

// applyDot computes y = A x and returns x·y in the same pass.
func (l *level) applyDot(x, y []float64) float64 {
	nx := l.nx
	n := nx * l.ny
	cx, cy, d := l.cx, l.cy, l.diag
	s := 0.0
	for k := 0; k < nx && k < n; k++ {
		y[k] = d[k]*x[k] - l.offDiag(x, k)
		s += x[k] * y[k]
	}
	for k := nx; k < n-nx; k++ {
		v := d[k]*x[k] - cx[k-1]*x[k-1] - cx[k]*x[k+1] - cy[k-nx]*x[k-nx] - cy[k]*x[k+nx]
		y[k] = v
		s += x[k] * v
	}
	for k := max(n-nx, nx); k < n; k++ {
		y[k] = d[k]*x[k] - l.offDiag(x, k)
		s += x[k] * y[k]
	}
	return s
}

func dot(a, b []float64) float64 {
	s := 0.0
	for k := range a {
		s += a[k] * b[k]
	}
	return s
}
