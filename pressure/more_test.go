package pressure

import (
	"math"
	"strings"
	"testing"

	"github.com/wakekit/wakekit/piv"
	"github.com/wakekit/wakekit/piv/analytic"
	"gonum.org/v1/gonum/mat"
)

// maskedProblem is the manufactured problem on a 40x30 grid with a solid disc and a missing
// strip, so that the valid region is not a rectangle.
func maskedProblem() (piv.Grid, []float64, []float64, []float64) {
	g, exact, gx, gy := manufacturedGrid(40, 0)
	g.NY = 30
	n := g.N()
	exact, gx, gy = exact[:n], gx[:n], gy[:n]
	for j := 0; j < g.NY; j++ {
		for i := 0; i < g.NX; i++ {
			k := g.Index(i, j)
			x, y := g.X(i), g.Y(j)
			if (x-0.5)*(x-0.5)+(y-0.4)*(y-0.4) < 0.01 || (i == 30 && j > 5) {
				gx[k], gy[k], exact[k] = math.NaN(), math.NaN(), math.NaN()
			}
		}
	}
	return g, exact, gx, gy
}

// TestSolversAgreeMasked solves the same masked finite-volume system with the multigrid-CG
// solver and with gonum's dense LU factorisation (the reference), and the full-rectangle
// system with the transform and multigrid solvers: they must agree to the solver tolerance.
func TestSolversAgreeMasked(t *testing.T) {
	for _, edges := range []Edges{0, Right | Top} {
		g, exact, gx, gy := maskedProblem()
		opt := Options{Solver: Multigrid, Dirichlet: edges, Tol: 1e-10,
			Boundary: func(i, j int) float64 { return exact[g.Index(i, j)] }}
		res, err := Integrate(g, piv.Geometry{Axisymmetric: true, AxisY: -0.2}, gx, gy, opt)
		if err != nil {
			t.Fatal(err)
		}
		// Dense reference of the same system (before any pinning).
		fixed, _ := dirichletValues(g, gx, gy, opt)
		s := newSystem(g, piv.Geometry{Axisymmetric: true, AxisY: -0.2}, gx, gy, fixed)
		var idx []int
		pos := make([]int, g.N())
		for k := range pos {
			pos[k] = -1
			if s.unknown(k) {
				pos[k] = len(idx)
				idx = append(idx, k)
			}
		}
		m := len(idx)
		A := mat.NewDense(m, m, nil)
		b := mat.NewVecDense(m, nil)
		x := make([]float64, g.N())
		y := make([]float64, g.N())
		for c, k := range idx {
			x[k] = 1
			s.apply(x, y)
			x[k] = 0
			for r, q := range idx {
				A.Set(r, c, y[q])
			}
			b.SetVec(c, s.b[k])
		}
		if edges == 0 {
			// Pure Neumann: replace the first equation by p = 0 there (the system is singular).
			for c := 0; c < m; c++ {
				A.Set(0, c, 0)
			}
			A.Set(0, 0, 1)
			b.SetVec(0, 0)
		}
		var sol mat.VecDense
		if err := sol.SolveVec(A, b); err != nil {
			t.Fatal(err)
		}
		ref := make([]float64, g.N())
		for k := range ref {
			ref[k] = math.NaN()
			if s.fixed[k] {
				ref[k] = s.val[k]
			}
		}
		for c, k := range idx {
			ref[k] = sol.AtVec(c)
		}
		d := maxErr(res.P, ref, edges == 0) / rangeOf(ref)
		t.Logf("masked, Dirichlet %v: multigrid-CG %d iterations, residual %.2g; max difference from dense LU %.2g of the range",
			edges, res.Iterations, res.Residual, d)
		// Relative residual 1e-10 on a system with condition number ~1e3..1e4 bounds the
		// relative solution error near 1e-6.
		if d > 1e-6 {
			t.Errorf("Dirichlet %v: multigrid differs from the dense solution by %.2g of the range", edges, d)
		}
		if res.Residual > 1e-10 {
			t.Errorf("reported residual %.2g above the tolerance", res.Residual)
		}
	}
	// Full rectangle: transform against multigrid.
	g, exact, gx, gy := manufacturedGrid(48, 0)
	for _, edges := range []Edges{0, Top, Left | Right | Bottom, Left | Bottom | Top, Right} {
		opt := Options{Dirichlet: edges, Tol: 1e-11, Boundary: func(i, j int) float64 { return exact[g.Index(i, j)] }}
		opt.Solver = Transform
		a, err := Integrate(g, piv.Geometry{}, gx, gy, opt)
		if err != nil {
			t.Fatal(err)
		}
		opt.Solver = Multigrid
		b, err := Integrate(g, piv.Geometry{}, gx, gy, opt)
		if err != nil {
			t.Fatal(err)
		}
		d := maxErr(a.P, b.P, false) / rangeOf(a.P)
		t.Logf("full rectangle, Dirichlet %v: transform residual %.2g, multigrid %d iterations; difference %.2g of the range", edges, a.Residual, b.Iterations, d)
		if d > 1e-8 {
			t.Errorf("Dirichlet %v: transform and multigrid differ by %.2g of the range", edges, d)
		}
	}
}

// TestNoiseGrowth measures how 1% Gaussian velocity noise degrades the Taylor–Green
// reconstruction on 64x64 (the figure stated in the package documentation) and compares the
// Eulerian and Lagrangian estimates.
func TestNoiseGrowth(t *testing.T) {
	tg, g, _ := taylorGreen(t, 64)
	// Frames one grid spacing of travel at the peak speed apart, as in a typical
	// time-resolved recording (the noise in ∂u/∂t scales as σ/Δt).
	dt := g.DX / tg.U
	s := seriesOf(t, tg, g, []float64{0.1, 0.1 + dt, 0.1 + 2*dt, 0.1 + 3*dt, 0.1 + 4*dt})
	exact, _ := analytic.SamplePressure(tg, g, s.Time(2))
	frames := make([]*piv.Field, s.Len())
	for k := range frames {
		f, _ := s.Frame(k)
		frames[k] = f.Clone()
		nm := analytic.Noise{Sigma: 0.01 * tg.U, Seed: 7, Stream: uint64(k)}
		if _, err := nm.Apply(frames[k]); err != nil {
			t.Fatal(err)
		}
	}
	noisy, _ := piv.MemorySeries(frames)
	for _, m := range []Method{Eulerian, Lagrangian} {
		opt := FrameOptions{Accel: AccelOptions{Method: m}, Fluid: Fluid{Rho: tg.Rho, Nu: tg.Nu}}
		clean, err := Reconstruct(s, 2, opt)
		if err != nil {
			t.Fatal(err)
		}
		dirty, err := Reconstruct(noisy, 2, opt)
		if err != nil {
			t.Fatal(err)
		}
		ec := offsetErr(clean.P, exact, rangeOf(exact))
		en := offsetErr(dirty.P, exact, rangeOf(exact))
		rms := rmsOffsetErr(dirty.P, exact) / rangeOf(exact)
		t.Logf("Taylor–Green 64x64, %s: max error %.3g%% of the range without noise, %.3g%% (RMS %.3g%%) with 1%% noise", m, 100*ec, 100*en, 100*rms)
		// The bounds documented in the package comment, for 1% noise at one grid spacing of
		// travel per frame: RMS error <= 2.5% of the range, maximum <= 15% (the maximum sits on
		// the edges, where one-sided differences amplify the noise 3.6 times).
		if rms > 0.025 || en > 0.15 {
			t.Errorf("%s: RMS %.3g%%, max %.3g%% of the range with 1%% noise, want <= 2.5%% and <= 15%% (package documentation)", m, 100*rms, 100*en)
		}
	}
}

func TestBadInput(t *testing.T) {
	tg := analytic.TaylorGreen{U: 0.1, K: 60, Nu: 1e-4}
	g := piv.Grid{NX: 16, NY: 16, DX: 0.005, DY: 0.005}
	one := seriesOf(t, tg, g, []float64{0})
	for _, m := range []Method{Eulerian, Lagrangian} {
		err := CheckSeries(one, AccelOptions{Method: m})
		if err == nil || !strings.Contains(err.Error(), "frames") {
			t.Errorf("%s on one frame: error %v, want a message about frames", m, err)
		}
		if _, err := Reconstruct(one, 0, FrameOptions{Accel: AccelOptions{Method: m}, Fluid: Water20}); err == nil {
			t.Errorf("%s on one frame: no error", m)
		}
	}
	if err := CheckSeries(one, AccelOptions{Method: Steady}); err != nil {
		t.Errorf("steady on one frame: %v", err)
	}
	// Non-monotonic times through the Frames interface.
	s := seriesOf(t, tg, g, []float64{0, 0.01, 0.02})
	bad := badTimes{s}
	if err := CheckSeries(bad, AccelOptions{}); err == nil || !strings.Contains(err.Error(), "increase") {
		t.Errorf("non-monotonic times: error %v", err)
	}
	// A Dirichlet edge with no data.
	f := analytic.Sample(tg, g, 0)
	for i := 0; i < g.NX; i++ {
		k := g.Index(i, g.NY-1)
		f.Status[k] = piv.Missing
	}
	f.Normalize()
	ms, _ := piv.MemorySeries([]*piv.Field{f})
	_, err := Reconstruct(ms, 0, FrameOptions{Accel: AccelOptions{Method: Steady}, Fluid: Water20, Solve: Options{Dirichlet: Top}})
	if err == nil || !strings.Contains(err.Error(), "top edge") {
		t.Errorf("missing Dirichlet edge: error %v", err)
	}
	// A nozzle exit outside the field.
	_, err = Reconstruct(s, 1, FrameOptions{Fluid: Water20, Exit: &Exit{X: 1, Radius: 0.01}})
	if err == nil || !strings.Contains(err.Error(), "outside the field") {
		t.Errorf("exit outside the field: error %v", err)
	}
	// A nozzle wall whose exit plane lies beyond the field.
	_, err = Reconstruct(s, 1, FrameOptions{Fluid: Water20, Solid: Nozzle{X: 1, RIn: 0.01, ROut: 0.02}})
	if err == nil || !strings.Contains(err.Error(), "outside the field") {
		t.Errorf("nozzle outside the field: error %v", err)
	}
	// A nozzle wall inside the field is masked solid and the solve goes around it.
	r, err := Reconstruct(s, 1, FrameOptions{Fluid: Water20, Solid: Nozzle{X: 0.02, RIn: 0.02, ROut: 0.03}})
	if err != nil {
		t.Fatal(err)
	}
	if r.Solver != Multigrid || !math.IsNaN(r.P[g.Index(0, 5)]) || math.IsNaN(r.P[g.Index(10, 5)]) {
		t.Errorf("nozzle mask: solver %v, p at the wall %g, beside it %g", r.Solver, r.P[g.Index(0, 5)], r.P[g.Index(10, 5)])
	}
	if _, err := ParseEdges("right,north"); err == nil {
		t.Error("unknown edge accepted")
	}
}

// rmsOffsetErr returns the RMS of p - ref after removing the mean difference.
func rmsOffsetErr(p, ref []float64) float64 {
	off, n := 0.0, 0.0
	for k := range p {
		if !math.IsNaN(p[k]) && !math.IsNaN(ref[k]) {
			off += p[k] - ref[k]
			n++
		}
	}
	off /= n
	ss := 0.0
	for k := range p {
		if !math.IsNaN(p[k]) && !math.IsNaN(ref[k]) {
			d := p[k] - ref[k] - off
			ss += d * d
		}
	}
	return math.Sqrt(ss / n)
}

type badTimes struct{ *piv.Series }

func (b badTimes) Time(k int) float64 { return -float64(k) }

// TestManyRegions checks that each disconnected region gets its own level (mean p∞) and that
// the cost stays linear: a grid cut into 400 islands by missing lines.
func TestManyRegions(t *testing.T) {
	g, exact, gx, gy := manufacturedGrid(200, 0)
	for k := range gx {
		i, j := g.IJ(k)
		if i%10 == 9 || j%10 == 9 {
			gx[k], gy[k] = math.NaN(), math.NaN()
		}
	}
	for _, solver := range []Solver{Multigrid, Paths} {
		res, err := Integrate(g, piv.Geometry{}, gx, gy, Options{Solver: solver, PInf: 3, Tol: 1e-10})
		if err != nil {
			t.Fatal(err)
		}
		if res.Components != 400 {
			t.Fatalf("%v: %d regions, want 400", solver, res.Components)
		}
		// Island (0,0): mean 3, and the shape of the exact pressure (second-order error of a
		// 9x9 island at h = 1/200, well below 1e-4).
		var sum, sumE float64
		for j := 0; j < 9; j++ {
			for i := 0; i < 9; i++ {
				sum += res.P[g.Index(i, j)] / 81
				sumE += exact[g.Index(i, j)] / 81
			}
		}
		worst := 0.0
		for j := 0; j < 9; j++ {
			for i := 0; i < 9; i++ {
				k := g.Index(i, j)
				worst = math.Max(worst, math.Abs(res.P[k]-sum-(exact[k]-sumE)))
			}
		}
		if math.Abs(sum-3) > 1e-9 || worst > 1e-4 {
			t.Errorf("%v: island mean %g (want 3), shape error %g", solver, sum, worst)
		}
	}
}
