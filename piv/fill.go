package piv

import (
	"fmt"
	"math"
)

// FillMethod chooses how gaps are filled.
type FillMethod int

const (
	// FillLaplace solves Laplace's equation over each gap, each velocity component separately,
	// with the surrounding valid vectors as boundary values (Dirichlet) and a zero normal
	// derivative where the gap meets the grid edge or a solid node (Neumann). The result is the
	// smoothest field that matches the surroundings; it reproduces any linear field exactly
	// when the gap is enclosed by valid vectors.
	FillLaplace FillMethod = iota
	// FillMedian replaces each missing vector by the component-wise median of the valid
	// vectors among its eight neighbours, in passes from the edge of the gap inward (each pass
	// uses the vectors filled by the previous ones).
	FillMedian
)

// ParseFillMethod reads "laplace" or "median".
func ParseFillMethod(name string) (FillMethod, error) {
	switch name {
	case "laplace":
		return FillLaplace, nil
	case "median":
		return FillMedian, nil
	}
	return 0, fmt.Errorf("unknown fill method %q (expected laplace or median)", name)
}

// String returns the method's name.
func (m FillMethod) String() string {
	if m == FillMedian {
		return "median"
	}
	return "laplace"
}

// DefaultFillTolerance is the conjugate-gradient stopping tolerance of FillLaplace: the
// residual's 2-norm relative to the boundary data's.
const DefaultFillTolerance = 1e-12

// FillOptions configures Fill.
type FillOptions struct {
	Method FillMethod
	// MaxGap is the largest gap filled, in nodes: a gap is a 4-connected group of missing
	// (non-solid) nodes. Larger gaps are left missing. 0 means no limit.
	MaxGap int
	// Tolerance is the relative residual at which the Laplace solver stops (0 means
	// DefaultFillTolerance).
	Tolerance float64
	// MinNeighbours is the least number of valid neighbours the median method needs to fill a
	// node (0 means 3).
	MinNeighbours int
}

// FillCounts reports what Fill did.
type FillCounts struct {
	Filled      int // nodes that became Replaced
	LeftMissing int // missing non-solid nodes left missing
	Gaps        int // gaps found
	TooLarge    int // gaps larger than MaxGap, left missing
}

// Fill fills the missing non-solid nodes of f in place: each filled node becomes Replaced and
// keeps its rejection bits. Solid nodes are neither filled nor used. Gaps without any valid
// neighbour cannot be filled and stay missing.
func Fill(f *Field, opt FillOptions) (FillCounts, error) {
	var c FillCounts
	if err := f.Check(); err != nil {
		return c, err
	}
	if opt.MaxGap < 0 {
		return c, fmt.Errorf("largest gap to fill %d must not be negative", opt.MaxGap)
	}
	tol := opt.Tolerance
	if tol == 0 {
		tol = DefaultFillTolerance
	}
	if !(tol > 0 && tol < 1) {
		return c, fmt.Errorf("fill tolerance %g must lie between 0 and 1", tol)
	}
	minNb := opt.MinNeighbours
	if minNb == 0 {
		minNb = 3
	}
	if minNb < 1 || minNb > 8 {
		return c, fmt.Errorf("median fill needs between 1 and 8 neighbours, not %d", minNb)
	}
	f.Normalize()
	label, sizes := gaps(f)
	c.Gaps = len(sizes)
	eligible := make([]bool, len(sizes))
	for id, n := range sizes {
		eligible[id] = opt.MaxGap == 0 || n <= opt.MaxGap
		if !eligible[id] {
			c.TooLarge++
		}
	}
	switch opt.Method {
	case FillLaplace:
		s := newLaplaceSolver(f)
		// The nodes of each gap, grouped by gap (counting sort), so that each solve touches
		// only its own gap.
		start := make([]int, len(sizes)+1)
		for id, n := range sizes {
			start[id+1] = start[id] + n
		}
		members := make([]int, start[len(sizes)])
		next := append([]int(nil), start[:len(sizes)]...)
		for k, l := range label {
			if l >= 0 {
				members[next[l]] = k
				next[l]++
			}
		}
		for id := range sizes {
			if eligible[id] {
				s.solve(members[start[id]:start[id+1]], tol)
			}
		}
	case FillMedian:
		fillMedian(f, label, eligible, minNb)
	default:
		return c, fmt.Errorf("unknown fill method %d", opt.Method)
	}
	for k, l := range label {
		if l < 0 {
			continue
		}
		if f.Status[k].Kind() == Replaced {
			c.Filled++
		} else {
			c.LeftMissing++
		}
	}
	return c, nil
}

// gaps labels the 4-connected groups of missing non-solid nodes (label −1 elsewhere) and
// returns the labels and the size of each group.
func gaps(f *Field) ([]int32, []int) {
	g := f.Grid
	label := make([]int32, g.N())
	for k := range label {
		label[k] = -1
	}
	var sizes []int
	var stack []int
	for k0, s := range f.Status {
		if s.Kind() != Missing || label[k0] >= 0 {
			continue
		}
		id := int32(len(sizes))
		n := 0
		label[k0] = id
		stack = append(stack[:0], k0)
		for len(stack) > 0 {
			k := stack[len(stack)-1]
			stack = stack[:len(stack)-1]
			n++
			for _, q := range neighbours(g, k) {
				if q >= 0 && label[q] < 0 && f.Status[q].Kind() == Missing {
					label[q] = id
					stack = append(stack, q)
				}
			}
		}
		sizes = append(sizes, n)
	}
	return label, sizes
}

// laplaceSolver fills gaps one at a time by the Jacobi-preconditioned conjugate-gradient method
// (Hestenes & Stiefel 1952) on the five-point Laplacian, matrix-free. Conjugate gradients
// applies because the operator — the graph Laplacian of the gap plus one diagonal term per
// valid neighbour — is symmetric positive definite whenever the gap touches a valid vector.
type laplaceSolver struct {
	f     *Field
	local []int32 // node → index within the current gap
	nodes []int   // the current gap's nodes
	// per-gap work vectors
	diag, b, x, r, z, p, ap []float64
	u, v                    []float64 // the solutions for u and v
}

func newLaplaceSolver(f *Field) *laplaceSolver {
	local := make([]int32, f.Grid.N())
	for k := range local {
		local[k] = -1
	}
	return &laplaceSolver{f: f, local: local}
}

// neighbours returns the 4-neighbours of node k inside the grid (−1 where there is none).
func neighbours(g Grid, k int) [4]int {
	i, j := g.IJ(k)
	nb := [4]int{-1, -1, -1, -1}
	if i > 0 {
		nb[0] = k - 1
	}
	if i < g.NX-1 {
		nb[1] = k + 1
	}
	if j > 0 {
		nb[2] = k - g.NX
	}
	if j < g.NY-1 {
		nb[3] = k + g.NX
	}
	return nb
}

// solve fills the gap made of the given nodes.
func (s *laplaceSolver) solve(nodes []int, tol float64) {
	f, g := s.f, s.f.Grid
	s.nodes = nodes
	for a, k := range nodes {
		s.local[k] = int32(a)
	}
	defer func() {
		for _, k := range s.nodes {
			s.local[k] = -1
		}
	}()
	n := len(s.nodes)
	grow := func(v []float64) []float64 {
		if cap(v) < n {
			return make([]float64, n)
		}
		return v[:n]
	}
	s.diag, s.b, s.x, s.r, s.z, s.p, s.ap = grow(s.diag), grow(s.b), grow(s.x), grow(s.r), grow(s.z), grow(s.p), grow(s.ap)
	dirichlet := false
	for a, k := range s.nodes {
		d := 0.0
		for _, q := range neighbours(g, k) {
			if q < 0 {
				continue
			}
			if s.local[q] >= 0 || f.Valid(q) {
				d++
			}
			if f.Valid(q) {
				dirichlet = true
			}
		}
		s.diag[a] = d
	}
	if !dirichlet {
		return // no valid vector around the gap: nothing to fill it from
	}
	s.u, s.v = grow(s.u), grow(s.v)
	u, v := s.u, s.v
	okU := s.cg(f.U, u, tol)
	okV := s.cg(f.V, v, tol)
	if !okU || !okV {
		return
	}
	for a, k := range s.nodes {
		f.U[k], f.V[k] = u[a], v[a]
		f.Status[k] = f.Status[k].WithKind(Replaced)
	}
}

// apply computes out = A·in for the current gap.
func (s *laplaceSolver) apply(in, out []float64) {
	g := s.f.Grid
	for a, k := range s.nodes {
		y := s.diag[a] * in[a]
		for _, q := range neighbours(g, k) {
			if q >= 0 {
				if l := s.local[q]; l >= 0 {
					y -= in[l]
				}
			}
		}
		out[a] = y
	}
}

// cg solves A·x = b for one component whose boundary values are in comp, writing x into out.
// It reports whether the relative residual fell below tol.
func (s *laplaceSolver) cg(comp, out []float64, tol float64) bool {
	f, g := s.f, s.f.Grid
	bnorm, mean, nb := 0.0, 0.0, 0.0
	for a, k := range s.nodes {
		sum := 0.0
		for _, q := range neighbours(g, k) {
			if q >= 0 && f.Valid(q) {
				sum += comp[q]
				mean += comp[q]
				nb++
			}
		}
		s.b[a] = sum
		bnorm += sum * sum
	}
	bnorm = math.Sqrt(bnorm)
	mean /= nb
	x, r, z, p, ap := s.x, s.r, s.z, s.p, s.ap
	for a := range x {
		x[a] = mean // start from the mean boundary value
	}
	s.apply(x, ap)
	rz := 0.0
	for a := range r {
		r[a] = s.b[a] - ap[a]
		z[a] = r[a] / s.diag[a]
		p[a] = z[a]
		rz += r[a] * z[a]
	}
	done := func() bool {
		rr := 0.0
		for _, v := range r {
			rr += v * v
		}
		return math.Sqrt(rr) <= tol*bnorm
	}
	conv := bnorm == 0 || done()
	for it := 0; !conv && it < 10*len(x)+100; it++ {
		s.apply(p, ap)
		pap := 0.0
		for a := range p {
			pap += p[a] * ap[a]
		}
		if !(pap > 0) {
			break
		}
		alpha := rz / pap
		rzNew := 0.0
		for a := range x {
			x[a] += alpha * p[a]
			r[a] -= alpha * ap[a]
			z[a] = r[a] / s.diag[a]
			rzNew += r[a] * z[a]
		}
		conv = done()
		beta := rzNew / rz
		rz = rzNew
		for a := range p {
			p[a] = z[a] + beta*p[a]
		}
	}
	copy(out, x)
	return conv
}

// fillMedian fills eligible gaps by neighbour medians, pass by pass from the gap's edge.
func fillMedian(f *Field, label []int32, eligible []bool, minNb int) {
	g := f.Grid
	var todo []int
	for k, l := range label {
		if l >= 0 && eligible[l] {
			todo = append(todo, k)
		}
	}
	var nu, nv [8]float64
	type fill struct {
		k    int
		u, v float64
	}
	var batch []fill
	for len(todo) > 0 {
		batch = batch[:0]
		rest := todo[:0]
		for _, k := range todo {
			i, j := g.IJ(k)
			n := 0
			for jj := j - 1; jj <= j+1; jj++ {
				for ii := i - 1; ii <= i+1; ii++ {
					if (ii != i || jj != j) && f.ValidIJ(ii, jj) {
						q := g.Index(ii, jj)
						nu[n], nv[n] = f.U[q], f.V[q]
						n++
					}
				}
			}
			if n >= minNb {
				batch = append(batch, fill{k, median(nu[:n]), median(nv[:n])})
			} else {
				rest = append(rest, k)
			}
		}
		if len(batch) == 0 {
			return
		}
		for _, b := range batch {
			f.U[b.k], f.V[b.k] = b.u, b.v
			f.Status[b.k] = f.Status[b.k].WithKind(Replaced)
		}
		todo = rest
	}
}

// SmoothMethod chooses the smoothing filter of Clean.
type SmoothMethod int

const (
	// NoSmoothing leaves the vectors as validated and filled.
	NoSmoothing SmoothMethod = iota
	// SmoothGaussianFilter applies SmoothGaussian.
	SmoothGaussianFilter
	// SmoothSGFilter applies SmoothSavitzkyGolay.
	SmoothSGFilter
)

// CleanOptions is a whole cleaning pass: validation, then filling, then smoothing.
type CleanOptions struct {
	Validate ValidateOptions
	// Fill, when not nil, fills the gaps left by validation (and any others).
	Fill *FillOptions
	// Smooth chooses the filter; Sigma [nodes] is the Gaussian's, SGHalf and SGOrder the
	// Savitzky–Golay window half-width and order.
	Smooth          SmoothMethod
	Sigma           float64
	SGHalf, SGOrder int
}

// CleanReport counts what a cleaning pass did to one frame (or, summed with Add, to a series).
type CleanReport struct {
	Nodes      int              `json:"nodes"`      // nodes of the grid
	Solid      int              `json:"solid"`      // solid nodes
	Validation ValidationCounts `json:"validation"` // vectors checked and rejected per test
	Filled     int              `json:"filled"`     // nodes filled (Replaced)
	Missing    int              `json:"missing"`    // non-solid nodes without a vector after cleaning
}

// Add adds the counts of o to r.
func (r *CleanReport) Add(o CleanReport) {
	r.Nodes += o.Nodes
	r.Solid += o.Solid
	r.Validation.Checked += o.Validation.Checked
	r.Validation.Range += o.Validation.Range
	r.Validation.Median += o.Validation.Median
	r.Validation.Std += o.Validation.Std
	r.Filled += o.Filled
	r.Missing += o.Missing
}

// SpuriousShare is the share of the checked vectors that validation rejected, the quality
// figure of a cleaning pass (0 when nothing was checked).
func (r CleanReport) SpuriousShare() float64 {
	if r.Validation.Checked == 0 {
		return 0
	}
	return float64(r.Validation.Rejected()) / float64(r.Validation.Checked)
}

// Clean validates, fills and smooths f in place, in that order, and reports the counts.
func Clean(f *Field, opt CleanOptions) (CleanReport, error) {
	r := CleanReport{Nodes: f.Grid.N()}
	var err error
	if r.Validation, err = Validate(f, opt.Validate); err != nil {
		return r, err
	}
	if opt.Fill != nil {
		c, err := Fill(f, *opt.Fill)
		if err != nil {
			return r, err
		}
		r.Filled = c.Filled
	}
	switch opt.Smooth {
	case SmoothGaussianFilter:
		err = SmoothGaussian(f, opt.Sigma)
	case SmoothSGFilter:
		err = SmoothSavitzkyGolay(f, opt.SGHalf, opt.SGOrder)
	}
	if err != nil {
		return r, err
	}
	for k, s := range f.Status {
		switch {
		case s.Kind() == Solid:
			r.Solid++
		case !f.Valid(k):
			r.Missing++
		}
	}
	return r, nil
}
