package pressure

import (
	"math"
	"testing"

	"github.com/wakekit/wakekit/piv"
)

// manufactured is a smooth pressure with its exact gradient, used to check the integrators
// against a known solution (method of manufactured solutions, Roache 2002, J. Fluids Eng.
// 124:4). It is not separable, so no solver is favoured.
func manufactured(x, y float64) (p, px, py float64) {
	e := math.Exp(-(x-0.3)*(x-0.3) - 2*(y-0.6)*(y-0.6))
	s := math.Sin(2*x + y)
	p = e + 0.3*s
	px = -2*(x-0.3)*e + 0.6*math.Cos(2*x+y)
	py = -4*(y-0.6)*e + 0.3*math.Cos(2*x+y)
	return
}

func manufacturedGrid(n int, y0 float64) (piv.Grid, []float64, []float64, []float64) {
	h := 1.0 / float64(n)
	g := piv.Grid{NX: n, NY: n, X0: h / 2, Y0: y0 + h/2, DX: h, DY: h}
	p := make([]float64, g.N())
	gx := make([]float64, g.N())
	gy := make([]float64, g.N())
	for j := 0; j < n; j++ {
		for i := 0; i < n; i++ {
			k := g.Index(i, j)
			p[k], gx[k], gy[k] = manufactured(g.X(i), g.Y(j))
		}
	}
	return g, p, gx, gy
}

// maxErr returns the largest |a - b - c| over nodes where both are finite, with c the mean
// offset when free is true (pressure known up to a constant).
func maxErr(a, b []float64, free bool) float64 {
	off, n := 0.0, 0.0
	if free {
		for k := range a {
			if !math.IsNaN(a[k]) && !math.IsNaN(b[k]) {
				off += a[k] - b[k]
				n++
			}
		}
		off /= n
	}
	m := 0.0
	for k := range a {
		if !math.IsNaN(a[k]) && !math.IsNaN(b[k]) {
			m = math.Max(m, math.Abs(a[k]-b[k]-off))
		}
	}
	return m
}

func TestManufacturedSecondOrder(t *testing.T) {
	for _, tc := range []struct {
		name   string
		solver Solver
		edges  Edges
		axi    bool
	}{
		{"transform neumann", Transform, 0, false},
		{"transform dirichlet top", Transform, Top, false},
		{"transform dirichlet left,right", Transform, Left | Right, false},
		{"transform dirichlet right,bottom,top (transposed)", Transform, Right | Bottom | Top, false},
		{"multigrid neumann", Multigrid, 0, false},
		{"multigrid dirichlet right,top", Multigrid, Right | Top, false},
		{"paths", Paths, 0, false},
		{"transform axisymmetric", Transform, Top, true},
		{"multigrid axisymmetric", Multigrid, Right, true},
	} {
		var errs []float64
		for _, n := range []int{16, 32, 64} {
			g, exact, gx, gy := manufacturedGrid(n, 0)
			geom := piv.Geometry{Axisymmetric: tc.axi}
			opt := Options{Solver: tc.solver, Dirichlet: tc.edges, Tol: 1e-11}
			opt.Boundary = func(i, j int) float64 { return exact[g.Index(i, j)] }
			res, err := Integrate(g, geom, gx, gy, opt)
			if err != nil {
				t.Fatalf("%s n=%d: %v", tc.name, n, err)
			}
			errs = append(errs, maxErr(res.P, exact, tc.edges == 0))
		}
		order := math.Log2(errs[1] / errs[2])
		t.Logf("%s: max errors %.3g %.3g %.3g, observed order %.2f", tc.name, errs[0], errs[1], errs[2], order)
		// The finite-volume scheme is second order; 1.8 allows for the pre-asymptotic range on
		// these coarse grids.
		if order < 1.8 {
			t.Errorf("%s: observed order %.2f, want about 2", tc.name, order)
		}
	}
}
