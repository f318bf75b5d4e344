package pressure

import (
	"fmt"
	"math"
	"strings"

	"github.com/wakekit/wakekit/piv"
)

// Edges is a set of grid edges.
type Edges uint8

// The four edges of a grid.
const (
	Left   Edges = 1 << iota // column i = 0
	Right                    // column i = NX-1
	Bottom                   // row j = 0
	Top                      // row j = NY-1
)

// ParseEdges reads a comma-separated list of edge names: left, right, bottom, top (also
// "all" and "none"). An empty string is no edge.
func ParseEdges(s string) (Edges, error) {
	var e Edges
	for _, p := range strings.Split(s, ",") {
		switch strings.ToLower(strings.TrimSpace(p)) {
		case "":
		case "none":
		case "left":
			e |= Left
		case "right":
			e |= Right
		case "bottom":
			e |= Bottom
		case "top":
			e |= Top
		case "all":
			e |= Left | Right | Bottom | Top
		default:
			return 0, fmt.Errorf("unknown edge %q (expected left, right, bottom, top, all or none)", p)
		}
	}
	return e, nil
}

// String lists the edges, e.g. "right,top", or "none".
func (e Edges) String() string {
	var parts []string
	for _, x := range []struct {
		e    Edges
		name string
	}{{Left, "left"}, {Right, "right"}, {Bottom, "bottom"}, {Top, "top"}} {
		if e&x.e != 0 {
			parts = append(parts, x.name)
		}
	}
	if len(parts) == 0 {
		return "none"
	}
	return strings.Join(parts, ",")
}

// system is the finite-volume discretisation of the pressure Poisson problem on a grid.
//
// Every node with a finite pressure gradient is the centre of a control volume of size
// DX x DY (axisymmetric: weighted by the radius). Between two neighbouring active nodes P and N
// the face flux is the face area times (p_N - p_P)/h, and the source is the face area times the
// face-averaged measured gradient (G_P + G_N)/2 · n. Faces towards missing, solid or outside
// nodes carry no term at all: the Neumann condition n·∇p = n·G there is imposed by using the
// measured gradient as the flux, which cancels on both sides of the balance. The discrete
// problem is therefore compatible by construction (every interior face appears twice with
// opposite signs) and is the weighted least-squares fit of the pressure differences to the
// face gradients. Dirichlet nodes have a known value and drop out of the unknowns.
//
// All coefficients are divided by the cell area DX*DY, so the planar operator is the familiar
// five-point Laplacian with 1/DX^2 and 1/DY^2 weights.
type system struct {
	nx, ny int
	// cx[k] couples node k=(i,j) with (i+1,j); cy[k] couples k with (i,j+1). Zero unless both
	// nodes are unknowns (couplings to fixed nodes live in diag and b).
	cx, cy []float64
	active []bool    // node has a pressure (unknown or fixed)
	fixed  []bool    // node value is known (Dirichlet or pin)
	val    []float64 // values of fixed nodes
	b      []float64 // right-hand side for the unknowns (fixed values moved in)
	diag   []float64 // diagonal of the operator for unknowns
	row    []float64 // control-volume weight of each row (for means)
	anyFix bool
}

// radialWeights returns the control-volume weight of each row: 1 for planar geometry, and the
// mean radius (1/DY)∫|r| dr over the row's cell for axisymmetric geometry; and the weight of
// each horizontal face between rows j and j+1 (planar 1, axisymmetric |r| at the face).
func radialWeights(g piv.Grid, geom piv.Geometry) (row, face []float64) {
	row = make([]float64, g.NY)
	face = make([]float64, g.NY)
	for j := 0; j < g.NY; j++ {
		if !geom.Axisymmetric {
			row[j], face[j] = 1, 1
			continue
		}
		r := g.Y(j) - geom.AxisY
		a, b := r-g.DY/2, r+g.DY/2
		row[j] = absIntegral(a, b) / g.DY
		face[j] = math.Abs(b)
	}
	return row, face
}

// absIntegral returns ∫_a^b |r| dr for a < b.
func absIntegral(a, b float64) float64 {
	if a >= 0 {
		return (b*b - a*a) / 2
	}
	if b <= 0 {
		return (a*a - b*b) / 2
	}
	return (a*a + b*b) / 2
}

// newSystem builds the discretisation for gradient (gx, gy) on g. fixedVal holds the known
// value of each Dirichlet node (NaN elsewhere); it may be nil.
func newSystem(g piv.Grid, geom piv.Geometry, gx, gy, fixedVal []float64) *system {
	n := g.N()
	nx := g.NX
	s := &system{nx: nx, ny: g.NY,
		cx: make([]float64, n), cy: make([]float64, n),
		active: make([]bool, n), fixed: make([]bool, n), val: make([]float64, n),
		b: make([]float64, n), diag: make([]float64, n)}
	row, face := radialWeights(g, geom)
	s.row = row
	for j := 0; j < g.NY; j++ {
		if row[j] <= 0 {
			continue
		}
		act := s.active[j*nx : (j+1)*nx]
		ax, ay := gx[j*nx:(j+1)*nx], gy[j*nx:(j+1)*nx]
		for i := range act {
			act[i] = isFinite(ax[i]) && isFinite(ay[i])
		}
	}
	if fixedVal != nil {
		for k := 0; k < n; k++ {
			if s.active[k] && !math.IsNaN(fixedVal[k]) {
				s.fixed[k], s.val[k] = true, fixedVal[k]
				s.anyFix = true
			}
		}
	}
	ax := 1 / (g.DX * g.DX)
	ay := 1 / (g.DY * g.DY)
	hx, hy := 0.5*g.DX, 0.5*g.DY
	// Flux balance: for unknown P, Σ_f c_f (p_P - p_N) = -Σ_f c_f h_f (G_f · n_f), with c the
	// face coefficient (area over distance, per cell area).
	for j := 0; j < g.NY; j++ {
		cxRow := ax * row[j]
		cyRow := ay * face[j]
		for i := 0; i < nx; i++ {
			k := j*nx + i
			if !s.active[k] {
				continue
			}
			if i+1 < nx && s.active[k+1] {
				cg := cxRow * hx * (gx[k] + gx[k+1])
				if s.anyFix {
					s.couple(k, k+1, cxRow, cg)
				} else {
					s.diag[k] += cxRow
					s.diag[k+1] += cxRow
					s.b[k] -= cg
					s.b[k+1] += cg
					s.cx[k] = cxRow
				}
			}
			if j+1 < g.NY && s.active[k+nx] {
				cg := cyRow * hy * (gy[k] + gy[k+nx])
				if s.anyFix {
					s.couple(k, k+nx, cyRow, cg)
				} else {
					s.diag[k] += cyRow
					s.diag[k+nx] += cyRow
					s.b[k] -= cg
					s.b[k+nx] += cg
					s.cy[k] = cyRow
				}
			}
		}
	}
	return s
}

// couple adds the face between nodes a and b (b to the east or north of a) with coefficient c
// and cg = c h (G_f · e_ab), h G_f · e_ab being the integrated face gradient.
func (s *system) couple(a, b int, c, cg float64) {
	// Equation of a: c (p_a - p_b) = -cg ; equation of b: c (p_b - p_a) = +cg.
	if !s.fixed[a] {
		s.diag[a] += c
		s.b[a] -= cg
		if s.fixed[b] {
			s.b[a] += c * s.val[b]
		}
	}
	if !s.fixed[b] {
		s.diag[b] += c
		s.b[b] += cg
		if s.fixed[a] {
			s.b[b] += c * s.val[a]
		}
	}
	if !s.fixed[a] && !s.fixed[b] {
		if b == a+1 {
			s.cx[a] = c
		} else {
			s.cy[a] = c
		}
	}
}

// unknown reports whether node k is an unknown of the linear system.
func (s *system) unknown(k int) bool { return s.active[k] && !s.fixed[k] }

// apply computes y = A x over the unknowns (zero elsewhere). Couplings to nodes that are not
// unknowns are zero, so their values in x do not matter as long as they are finite.
func (s *system) apply(x, y []float64) {
	l := level{nx: s.nx, ny: s.ny, cx: s.cx, cy: s.cy, diag: s.diag}
	l.apply(x, y)
}

// components labels the connected groups of unknown nodes (through non-zero couplings) and
// reports for each whether it touches a fixed node. Labels are -1 for non-unknown nodes.
func (s *system) components() (label []int, touchesFixed []bool) {
	n := s.nx * s.ny
	label = make([]int, n)
	all := true
	for k := range label {
		label[k] = -1
		all = all && s.active[k]
	}
	if all && s.anyFix {
		// A full rectangle with prescribed nodes is one region touching them.
		for k := range label {
			if s.unknown(k) {
				label[k] = 0
			}
		}
		return label, []bool{true}
	}
	queue := make([]int, 0, 64)
	for k0 := 0; k0 < n; k0++ {
		if !s.unknown(k0) || label[k0] >= 0 {
			continue
		}
		id := len(touchesFixed)
		touchesFixed = append(touchesFixed, false)
		label[k0] = id
		queue = append(queue[:0], k0)
		for len(queue) > 0 {
			k := queue[len(queue)-1]
			queue = queue[:len(queue)-1]
			// A fixed neighbour shows as a diagonal larger than the sum of couplings.
			sum := 0.0
			i, j := k%s.nx, k/s.nx
			visit := func(m int, c float64) {
				sum += c
				if c > 0 && label[m] < 0 {
					label[m] = id
					queue = append(queue, m)
				}
			}
			if i > 0 {
				visit(k-1, s.cx[k-1])
			}
			if i+1 < s.nx {
				visit(k+1, s.cx[k])
			}
			if j > 0 {
				visit(k-s.nx, s.cy[k-s.nx])
			}
			if j+1 < s.ny {
				visit(k+s.nx, s.cy[k])
			}
			if s.diag[k] > sum*(1+1e-12) {
				touchesFixed[id] = true
			}
		}
	}
	return label, touchesFixed
}

func isFinite(x float64) bool { return !math.IsNaN(x) && !math.IsInf(x, 0) }
