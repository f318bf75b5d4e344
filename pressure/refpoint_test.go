package pressure

import (
	"math"
	"strings"
	"testing"

	"github.com/wakekit/wakekit/piv"
)

// A reference point sets the pressure level: on the manufactured problem (see manufactured)
// every solver must give p = PInf interpolated at the point, and p - PInf must equal the
// closed form minus its value at the point. The bound 4e-4 is the sum of the solvers'
// discretisation error at n = 64 (at most 7.2e-5 at every node, TestManufacturedSecondOrder),
// counted twice (at the node and through the level at the point), and the error of the
// bilinear interpolation at the point, h²/8 (max|p_xx| + max|p_yy|) <= h²/8 (3.2 + 4.3) =
// 2.3e-4 for this p.
func TestReferencePoint(t *testing.T) {
	const n = 64
	g, _, gx, gy := manufacturedGrid(n, 0)
	rx, ry := 0.41, 0.57 // between nodes
	pr, _, _ := manufactured(rx, ry)
	for _, solver := range []Solver{Transform, Multigrid, Paths} {
		res, err := Integrate(g, piv.Geometry{}, gx, gy, Options{Solver: solver, RefPoint: true, RefX: rx, RefY: ry, PInf: 2, Tol: 1e-11})
		if err != nil {
			t.Fatalf("%v: %v", solver, err)
		}
		if at := piv.Sample(g, res.P, rx, ry, piv.Bilinear); math.Abs(at-2) > 1e-12 {
			t.Errorf("%v: pressure %.15g at the reference point, want 2", solver, at)
		}
		worst := 0.0
		for k := range res.P {
			i, j := g.IJ(k)
			p, _, _ := manufactured(g.X(i), g.Y(j))
			worst = math.Max(worst, math.Abs(res.P[k]-2-(p-pr)))
		}
		t.Logf("%v: largest error %.3g against the closed form levelled at the point", solver, worst)
		if worst > 4e-4 {
			t.Errorf("%v: largest error %.3g, want <= 4e-4", solver, worst)
		}
	}
}

// A reference point outside the field, not finite, or where the gradient is missing cannot set
// the level and is an error (it used to fall back to the mean without a word).
func TestReferencePointRefused(t *testing.T) {
	g, _, gx, gy := manufacturedGrid(32, 0)
	for _, c := range []struct {
		name   string
		x, y   float64
		expect string
	}{
		{"outside", 5, 0.5, "outside the field"},
		{"just beyond the last node", g.X(g.NX-1) + g.DX/4, 0.5, "outside the field"},
		{"not a number", math.NaN(), 0.5, "outside the field"},
	} {
		_, err := Integrate(g, piv.Geometry{}, gx, gy, Options{RefPoint: true, RefX: c.x, RefY: c.y})
		if err == nil || !strings.Contains(err.Error(), c.expect) {
			t.Errorf("%s: error %v, want one saying %q", c.name, err, c.expect)
		}
	}
	// A hole of missing gradient around the point.
	hx, hy := append([]float64(nil), gx...), append([]float64(nil), gy...)
	for j := 10; j < 14; j++ {
		for i := 10; i < 14; i++ {
			k := g.Index(i, j)
			hx[k], hy[k] = math.NaN(), math.NaN()
		}
	}
	for _, solver := range []Solver{Multigrid, Paths} {
		_, err := Integrate(g, piv.Geometry{}, hx, hy, Options{Solver: solver, RefPoint: true, RefX: g.X(11) + g.DX/3, RefY: g.Y(12)})
		if err == nil || !strings.Contains(err.Error(), "without a pressure gradient") {
			t.Errorf("%v: reference point in a hole: error %v", solver, err)
		}
	}
	// With a Dirichlet edge the point is not used, and not checked.
	if _, err := Integrate(g, piv.Geometry{}, gx, gy, Options{Dirichlet: Top, RefPoint: true, RefX: 5, RefY: 5}); err != nil {
		t.Errorf("reference point beside a Dirichlet edge: %v", err)
	}
}
