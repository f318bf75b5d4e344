package pressure

import (
	"fmt"
	"math"
	"math/rand/v2"
	"testing"

	"github.com/wakekit/wakekit/piv"
)

// TestDegenerateGrids runs every solver and edge combination on tiny grids and grids with
// holes: each must return a result or an error, never panic, and reproduce a linear pressure
// (which every consistent scheme integrates exactly) wherever it returns one.
func TestDegenerateGrids(t *testing.T) {
	sizes := [][2]int{{1, 1}, {1, 5}, {5, 1}, {2, 2}, {3, 2}, {2, 7}, {4, 4}}
	solvers := []Solver{Auto, Transform, Multigrid, Paths}
	for _, sz := range sizes {
		g := piv.Grid{NX: sz[0], NY: sz[1], X0: 0.1, Y0: 0.2, DX: 0.01, DY: 0.02}
		for _, axi := range []bool{false, true} {
			for _, hole := range []bool{false, true} {
				gx, gy := make([]float64, g.N()), make([]float64, g.N())
				exact := make([]float64, g.N())
				for k := range gx {
					i, j := g.IJ(k)
					gx[k], gy[k] = 2, -3
					exact[k] = 2*g.X(i) - 3*g.Y(j)
				}
				if hole && g.N() > 2 {
					gx[g.N()/2], gy[g.N()/2] = math.NaN(), math.NaN()
				}
				for _, solver := range solvers {
					for e := Edges(0); e < 16; e++ {
						opt := Options{Solver: solver, Dirichlet: e, Tol: 1e-12,
							Boundary: func(i, j int) float64 { return exact[g.Index(i, j)] }}
						res, err := Integrate(g, piv.Geometry{Axisymmetric: axi, AxisY: 0}, gx, gy, opt)
						if err != nil {
							continue
						}
						d := regionErr(g, gx, gy, res.P, exact, opt)
						if d > 1e-9 {
							t.Errorf("%dx%d axi %v hole %v %v edges %v: error %g", sz[0], sz[1], axi, hole, solver, e, d)
						}
					}
				}
			}
		}
	}
	// No data at all.
	g := piv.Grid{NX: 3, NY: 3, DX: 1, DY: 1}
	if _, err := Integrate(g, piv.Geometry{}, piv.NaNs(9), piv.NaNs(9), Options{}); err != ErrNoData {
		t.Errorf("no data: error %v", err)
	}
}

// regionErr returns the largest error of p against exact, each disconnected region compared up
// to its own constant unless it holds a prescribed node (then its level must match too).
func regionErr(g piv.Grid, gx, gy, p, exact []float64, opt Options) float64 {
	active := make([]bool, g.N())
	for k := range active {
		active[k] = !math.IsNaN(gx[k])
	}
	label, nc := connected(g, active)
	fixed, _ := dirichletValues(g, gx, gy, opt)
	off, cnt := make([]float64, nc), make([]float64, nc)
	pinned := make([]bool, nc)
	for k, l := range label {
		if l >= 0 {
			off[l] += p[k] - exact[k]
			cnt[l]++
			if fixed != nil && !math.IsNaN(fixed[k]) {
				pinned[l] = true
			}
		}
	}
	worst := 0.0
	for k, l := range label {
		if l < 0 {
			continue
		}
		c := off[l] / cnt[l]
		if pinned[l] {
			c = 0
		}
		worst = math.Max(worst, math.Abs(p[k]-exact[k]-c))
	}
	return worst
}

// TestDegenerateFrames reconstructs tiny and thin fields with every method: an error with a
// message, or a result on the frame's grid without infinities, never a panic.
func TestDegenerateFrames(t *testing.T) {
	check := func(name string, r *FrameResult, err error, g piv.Grid) {
		t.Helper()
		if err != nil {
			if err.Error() == "" {
				t.Errorf("%s: empty error message", name)
			}
			return
		}
		if r == nil || r.Result == nil || len(r.P) != g.N() {
			t.Errorf("%s: no error and no pressure on the %dx%d grid", name, g.NX, g.NY)
			return
		}
		for k, p := range r.P {
			if math.IsInf(p, 0) {
				t.Errorf("%s: pressure %g at node %d", name, p, k)
			}
		}
		if r.Exit != nil && (math.IsInf(r.Exit.P, 0) || math.IsInf(r.Exit.M, 0)) {
			t.Errorf("%s: exit forces M %g, P %g", name, r.Exit.M, r.Exit.P)
		}
	}
	for _, sz := range [][2]int{{1, 1}, {1, 4}, {4, 1}, {2, 2}} {
		g := piv.Grid{NX: sz[0], NY: sz[1], DX: 0.01, DY: 0.01}
		var frames []*piv.Field
		for k := 0; k < 3; k++ {
			f := piv.NewField(g)
			f.Time = 0.1 * float64(k)
			for q := range f.U {
				f.Set(q, 0.1*float64(q+k), 0.02)
			}
			frames = append(frames, f)
		}
		s, _ := piv.MemorySeries(frames)
		for _, m := range []Method{Eulerian, Lagrangian, Steady} {
			for k := 0; k < 3; k++ {
				ex := &Exit{X: 0, Radius: 0.02}
				name := fmt.Sprintf("%dx%d %v frame %d", sz[0], sz[1], m, k)
				r, err := Reconstruct(s, k, FrameOptions{Accel: AccelOptions{Method: m}, Fluid: Water20, Exit: ex,
					Solve: Options{Dirichlet: Top | Right}})
				check(name+" with exit", r, err, g)
				r, err = Reconstruct(s, k, FrameOptions{Accel: AccelOptions{Method: m, Rest: true, RestTime: -1}, Fluid: Water20})
				check(name+" from rest", r, err, g)
			}
		}
	}
}

// TestRandomMasks solves a linear pressure (exact for every consistent scheme) on many seeded
// random masks with random reference edges and solvers.
func TestRandomMasks(t *testing.T) {
	rng := rand.New(rand.NewPCG(5, 11))
	for trial := 0; trial < 300; trial++ {
		g := piv.Grid{NX: 2 + rng.IntN(12), NY: 2 + rng.IntN(10), X0: -0.05, Y0: 0.001, DX: 0.01, DY: 0.013}
		gx, gy, exact := make([]float64, g.N()), make([]float64, g.N()), make([]float64, g.N())
		share := rng.Float64() * 0.5
		for k := range gx {
			i, j := g.IJ(k)
			gx[k], gy[k], exact[k] = 1.5, 0.5, 1.5*g.X(i)+0.5*g.Y(j)
			if rng.Float64() < share {
				gx[k], gy[k] = math.NaN(), math.NaN()
			}
		}
		opt := Options{Solver: Solver(rng.IntN(4)), Dirichlet: Edges(rng.IntN(16)), LevelOnly: rng.IntN(4) == 0, Tol: 1e-12,
			Boundary: func(i, j int) float64 { return exact[g.Index(i, j)] }}
		geom := piv.Geometry{Axisymmetric: rng.IntN(2) == 0}
		res, err := Integrate(g, geom, gx, gy, opt)
		if err != nil {
			continue
		}
		if opt.LevelOnly {
			opt.Dirichlet = 0 // compared up to a constant per region
		}
		if d := regionErr(g, gx, gy, res.P, exact, opt); d > 1e-8 {
			t.Errorf("trial %d (%dx%d, %v, edges %v, level %v): error %g", trial, g.NX, g.NY, opt.Solver, opt.Dirichlet, opt.LevelOnly, d)
		}
	}
}
