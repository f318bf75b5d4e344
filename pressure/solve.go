package pressure

import (
	"errors"
	"fmt"
	"math"

	"github.com/wakekit/wakekit/piv"
)

// Solver names a way of integrating a pressure gradient into a pressure field.
type Solver int

const (
	// Auto picks Transform when the problem allows it and Multigrid otherwise.
	Auto Solver = iota
	// Transform is the direct solver: a fast cosine or sine transform along x (matching the
	// left/right boundary types) and a tridiagonal solve along y for each mode. It needs every
	// node valid and the left and right edges of the same type (a planar problem whose bottom
	// and top edges are of one type instead is solved on the transposed grid); it handles
	// axisymmetric problems because the radial operator is tridiagonal.
	Transform
	// Multigrid is the matrix-free conjugate-gradient method preconditioned by one V-cycle of
	// an aggregation multigrid; it handles any mask.
	Multigrid
	// Paths integrates the gradient directly along many marching paths started from the four
	// corners in two orders and averages them; it solves no Poisson equation and serves as an
	// independent cross-check.
	Paths
)

// ParseSolver reads "auto", "transform", "multigrid" or "paths".
func ParseSolver(s string) (Solver, error) {
	switch s {
	case "auto", "":
		return Auto, nil
	case "transform", "fft", "direct":
		return Transform, nil
	case "multigrid", "cg", "mg":
		return Multigrid, nil
	case "paths", "path":
		return Paths, nil
	}
	return 0, fmt.Errorf("unknown solver %q (expected auto, transform, multigrid or paths)", s)
}

// String returns the solver's name.
func (s Solver) String() string {
	switch s {
	case Transform:
		return "transform"
	case Multigrid:
		return "multigrid"
	case Paths:
		return "paths"
	}
	return "auto"
}

// Options configures the integration of a pressure gradient.
type Options struct {
	// Solver selects the integrator (Auto by default).
	Solver Solver
	// Dirichlet names the edges on which the pressure is prescribed. Nodes of those edges
	// without a gradient (missing or solid) are skipped; an edge with no valid node at all is
	// an error.
	Dirichlet Edges
	// Boundary gives the prescribed value at node (i, j) of a Dirichlet edge; nil means PInf.
	Boundary func(i, j int) float64
	// PInf is the reference pressure [Pa] (default 0).
	PInf float64
	// LevelOnly keeps the Neumann condition (the measured gradient) on every edge and uses the
	// prescribed edge values only to fix the pressure level: the solution is shifted so that
	// its mean over the valid nodes of the Dirichlet edges equals the mean prescribed value.
	LevelOnly bool
	// RefPoint, when set and no edge is prescribed, fixes the level so that the pressure
	// interpolated at (RefX, RefY) equals PInf. With neither, the mean pressure is PInf.
	RefPoint   bool
	RefX, RefY float64
	// Tol is the relative residual at which the iterative solver stops (default 1e-8).
	Tol float64
	// MaxIter bounds the conjugate-gradient iterations (default 500).
	MaxIter int
}

// Result is a pressure field and how it was obtained.
type Result struct {
	// P is the pressure [Pa] on the grid, NaN where the gradient is not known.
	P []float64
	// Solver is the integrator actually used.
	Solver Solver
	// Iterations of the conjugate-gradient solver (0 for direct solvers).
	Iterations int
	// Residual is the final relative residual ||b - A p|| / ||b|| of the discrete Poisson
	// problem (also reported for the direct and path solvers, for comparison).
	Residual float64
	// Components is the number of disconnected regions of valid data; each without a
	// Dirichlet node has its level fixed separately (mean PInf).
	Components int
}

// ErrNoData is returned when no node has a finite pressure gradient.
var ErrNoData = errors.New("no node has a pressure gradient (no valid velocity data)")

// Integrate turns the pressure gradient (gx, gy) [Pa/m] on grid g into a pressure field.
// Nodes where either component is NaN have no pressure; the Neumann condition is applied around
// them and on every edge not named in opt.Dirichlet.
//
// The Poisson solvers use the finite-volume discretisation described on system (second order);
// planar and axisymmetric (cylindrical Laplacian (1/r)∂r(r ∂r p) + ∂xx p) geometries are
// supported.
func Integrate(g piv.Grid, geom piv.Geometry, gx, gy []float64, opt Options) (*Result, error) {
	n := g.N()
	if len(gx) != n || len(gy) != n {
		return nil, fmt.Errorf("gradient slices (%d, %d) do not match the %dx%d grid", len(gx), len(gy), g.NX, g.NY)
	}
	if opt.Tol <= 0 {
		opt.Tol = 1e-8
	}
	if opt.MaxIter <= 0 {
		opt.MaxIter = 500
	}
	any := false
	for k := range gx {
		if isFinite(gx[k]) && isFinite(gy[k]) {
			any = true
			break
		}
	}
	if !any {
		return nil, ErrNoData
	}
	if t, ok := transposeFor(g, geom, gx, gy, opt); ok {
		return t, nil
	}
	fixedVal, err := dirichletValues(g, gx, gy, opt)
	if err != nil {
		return nil, err
	}
	if opt.RefPoint && fixedVal == nil {
		if err := checkRefPoint(g, opt.RefX, opt.RefY); err != nil {
			return nil, err
		}
	}
	var sysFixed []float64
	if !opt.LevelOnly {
		sysFixed = fixedVal
	}
	s := newSystem(g, geom, gx, gy, sysFixed)
	solver := opt.Solver
	if solver == Auto {
		solver = Multigrid
		if transformApplies(s, opt) == nil {
			solver = Transform
		}
	}
	res := &Result{Solver: solver}
	var p []float64
	switch solver {
	case Transform:
		if err := transformApplies(s, opt); err != nil {
			return nil, err
		}
		p = solveTransform(s, g, geom, effectiveEdges(opt))
	case Multigrid:
		p, res.Iterations, err = solvePCG(s, opt.Tol, opt.MaxIter)
		if err != nil {
			return nil, err
		}
	case Paths:
		p = integratePaths(g, gx, gy, s.active)
	default:
		return nil, fmt.Errorf("unknown solver %d", solver)
	}
	res.Residual = s.residual(p)
	if res.Components, err = fixLevel(s, g, p, fixedVal, opt, solver == Paths); err != nil {
		return nil, err
	}
	for k := range p {
		if !s.active[k] {
			p[k] = math.NaN()
		}
	}
	res.P = p
	return res, nil
}

// transposeFor solves a planar full-rectangle problem whose left and right edges differ in type
// but whose bottom and top edges agree with the transform solver on the transposed grid, where
// the roles are swapped. ok is false when that does not apply (the caller then solves as
// usual).
func transposeFor(g piv.Grid, geom piv.Geometry, gx, gy []float64, opt Options) (*Result, bool) {
	if geom.Axisymmetric || (opt.Solver != Auto && opt.Solver != Transform) {
		return nil, false
	}
	d := opt.Dirichlet
	if opt.LevelOnly {
		d = 0
	}
	xMixed := (d&Left != 0) != (d&Right != 0)
	yMixed := (d&Bottom != 0) != (d&Top != 0)
	if !xMixed || yMixed {
		return nil, false
	}
	for k := range gx {
		if !isFinite(gx[k]) || !isFinite(gy[k]) {
			return nil, false
		}
	}
	tg := piv.Grid{NX: g.NY, NY: g.NX, X0: g.Y0, Y0: g.X0, DX: g.DY, DY: g.DX}
	n := g.N()
	tx, ty := make([]float64, n), make([]float64, n)
	for j := 0; j < g.NY; j++ {
		for i := 0; i < g.NX; i++ {
			k, kt := g.Index(i, j), tg.Index(j, i)
			tx[kt], ty[kt] = gy[k], gx[k]
		}
	}
	to := opt
	to.Solver = Transform
	to.Dirichlet = 0
	for _, m := range [][2]Edges{{Left, Bottom}, {Right, Top}, {Bottom, Left}, {Top, Right}} {
		if opt.Dirichlet&m[0] != 0 {
			to.Dirichlet |= m[1]
		}
	}
	if opt.Boundary != nil {
		to.Boundary = func(i, j int) float64 { return opt.Boundary(j, i) }
	}
	to.RefX, to.RefY = opt.RefY, opt.RefX
	res, err := Integrate(tg, geom, tx, ty, to)
	if err != nil {
		return nil, false
	}
	p := make([]float64, n)
	for j := 0; j < g.NY; j++ {
		for i := 0; i < g.NX; i++ {
			p[g.Index(i, j)] = res.P[tg.Index(j, i)]
		}
	}
	res.P = p
	return res, true
}

// dirichletValues returns the prescribed value at every valid node of the Dirichlet edges (NaN
// elsewhere), or nil when no edge is named.
func dirichletValues(g piv.Grid, gx, gy []float64, opt Options) ([]float64, error) {
	if opt.Dirichlet == 0 {
		return nil, nil
	}
	val := piv.NaNs(g.N())
	edges := []struct {
		e    Edges
		name string
		i0   int
		j0   int
		di   int
		dj   int
		n    int
	}{
		{Left, "left", 0, 0, 0, 1, g.NY},
		{Right, "right", g.NX - 1, 0, 0, 1, g.NY},
		{Bottom, "bottom", 0, 0, 1, 0, g.NX},
		{Top, "top", 0, g.NY - 1, 1, 0, g.NX},
	}
	for _, e := range edges {
		if opt.Dirichlet&e.e == 0 {
			continue
		}
		count := 0
		for m := 0; m < e.n; m++ {
			i, j := e.i0+m*e.di, e.j0+m*e.dj
			k := g.Index(i, j)
			if !isFinite(gx[k]) || !isFinite(gy[k]) {
				continue
			}
			v := opt.PInf
			if opt.Boundary != nil {
				v = opt.Boundary(i, j)
			}
			if !isFinite(v) {
				return nil, fmt.Errorf("reference pressure at node (%d, %d) of the %s edge is not finite", i, j, e.name)
			}
			val[k] = v
			count++
		}
		if count == 0 {
			return nil, fmt.Errorf("the %s edge, named as a reference (Dirichlet) edge, has no valid data", e.name)
		}
	}
	return val, nil
}

// residual returns ||b - A p|| / ||b|| over the unknowns, with p holding the fixed values at
// fixed nodes (a common constant shift is removed first for components without fixed nodes,
// which does not change A p).
func (s *system) residual(p []float64) float64 {
	// Couplings to non-unknown nodes are zero, so p can be applied as it is (it holds no NaN
	// before the inactive nodes are blanked).
	y := make([]float64, len(p))
	s.apply(p, y)
	var rr, bb float64
	for k := range y {
		if s.unknown(k) {
			d := s.b[k] - y[k]
			rr += d * d
			bb += s.b[k] * s.b[k]
		}
	}
	if bb == 0 {
		return math.Sqrt(rr)
	}
	return math.Sqrt(rr / bb)
}

// fixLevel sets the additive constant of each connected region of p that the Dirichlet values
// do not determine, and writes the fixed values. It returns the number of regions. Each region
// is shifted so that it matches the mean of its prescribed values (level-only references and
// the path integrator), else the reference point when it lies in the region, else so that its
// volume-weighted mean is PInf. Cost O(N) whatever the number of regions. A reference point
// without valid data around it is an error: the level it should set would otherwise fall
// silently to the mean.
func fixLevel(s *system, g piv.Grid, p, fixedVal []float64, opt Options, allFree bool) (int, error) {
	if !allFree {
		for k := range p {
			if s.fixed[k] {
				p[k] = s.val[k]
			}
		}
	}
	label, nc := connected(g, s.active)
	determined := make([]bool, nc)
	target := make([]float64, nc)
	have := make([]float64, nc)
	wsum := make([]float64, nc)
	if fixedVal != nil {
		for k, l := range label {
			if l < 0 || math.IsNaN(fixedVal[k]) {
				continue
			}
			if !allFree && !opt.LevelOnly {
				determined[l] = true
			}
			target[l] += fixedVal[k]
			have[l] += p[k]
			wsum[l]++
		}
	} else if opt.RefPoint {
		// The region of the node nearest to the reference point.
		fi, fj := g.Frac(opt.RefX, opt.RefY)
		i, j := int(math.Round(fi)), int(math.Round(fj))
		set := false
		if g.In(i, j) {
			if c := label[g.Index(i, j)]; c >= 0 {
				if pr := piv.Sample(g, maskNaN(p, label, c), opt.RefX, opt.RefY, piv.Bilinear); !math.IsNaN(pr) {
					target[c], have[c], wsum[c] = opt.PInf, pr, 1
					set = true
				}
			}
		}
		if !set {
			return nc, fmt.Errorf("the reference point (%g, %g) m lies next to nodes without a pressure gradient (missing, solid or outside the data); choose a point in measured fluid", opt.RefX, opt.RefY)
		}
	}
	// Regions still without a level: volume-weighted mean equal to PInf.
	var mean, mw []float64
	for c := range wsum {
		if wsum[c] == 0 && !determined[c] {
			if mean == nil {
				mean, mw = make([]float64, nc), make([]float64, nc)
				for k, l := range label {
					if l >= 0 {
						w := s.row[k/s.nx]
						mean[l] += w * p[k]
						mw[l] += w
					}
				}
			}
			target[c], have[c], wsum[c] = opt.PInf*mw[c], mean[c], mw[c]
		}
	}
	shift := make([]float64, nc)
	for c := range shift {
		if !determined[c] && wsum[c] > 0 {
			shift[c] = (target[c] - have[c]) / wsum[c]
		}
	}
	for k, l := range label {
		if l >= 0 {
			p[k] += shift[l]
		}
	}
	return nc, nil
}

// checkRefPoint refuses a reference point that is not a finite position between the outermost
// nodes, where the bilinear interpolation that reads the pressure there reaches (piv.Sample,
// which allows 1e-9 of a spacing for rounding).
func checkRefPoint(g piv.Grid, x, y float64) error {
	fi, fj := g.Frac(x, y)
	const eps = 1e-9
	if !isFinite(fi) || !isFinite(fj) || fi < -eps || fj < -eps || fi > float64(g.NX-1)+eps || fj > float64(g.NY-1)+eps {
		return fmt.Errorf("the reference point (%g, %g) m is outside the field (x %g .. %g m, y %g .. %g m)",
			x, y, g.X0, g.X(g.NX-1), g.Y0, g.Y(g.NY-1))
	}
	return nil
}

// maskNaN returns a copy of p with NaN outside region c.
func maskNaN(p []float64, label []int, c int) []float64 {
	q := make([]float64, len(p))
	for k := range p {
		if label[k] == c {
			q[k] = p[k]
		} else {
			q[k] = math.NaN()
		}
	}
	return q
}

// connected labels the 4-connected regions of active nodes (-1 elsewhere) and returns the
// number of regions.
func connected(g piv.Grid, active []bool) ([]int, int) {
	label := make([]int, len(active))
	all := true
	for k := range label {
		label[k] = -1
		all = all && active[k]
	}
	if all {
		for k := range label {
			label[k] = 0
		}
		return label, 1
	}
	id := 0
	var stack []int
	for k0, a := range active {
		if !a || label[k0] >= 0 {
			continue
		}
		label[k0] = id
		stack = append(stack[:0], k0)
		for len(stack) > 0 {
			k := stack[len(stack)-1]
			stack = stack[:len(stack)-1]
			i, j := k%g.NX, k/g.NX
			for _, m := range [4][2]int{{i - 1, j}, {i + 1, j}, {i, j - 1}, {i, j + 1}} {
				if g.In(m[0], m[1]) {
					q := g.Index(m[0], m[1])
					if active[q] && label[q] < 0 {
						label[q] = id
						stack = append(stack, q)
					}
				}
			}
		}
		id++
	}
	return label, id
}
