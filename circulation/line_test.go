package circulation

import (
	"errors"
	"math"
	"math/rand/v2"
	"strings"
	"testing"

	"gonum.org/v1/gonum/diff/fd"
	"gonum.org/v1/gonum/integrate/quad"
	"gonum.org/v1/gonum/mat"

	"github.com/wakekit/wakekit/piv"
	"github.com/wakekit/wakekit/piv/analytic"
	"github.com/wakekit/wakekit/vorticity"
)

// squareGrid returns a grid of spacing h covering [-half, half]² (rounded to whole nodes),
// shifted by (ox, oy) so that flow centres can sit between nodes.
func squareGrid(h, half, ox, oy float64) piv.Grid {
	n := int(math.Round(2*half/h)) + 1
	return piv.Grid{NX: n, NY: n, X0: -half + ox, Y0: -half + oy, DX: h, DY: h}
}

// Lamb–Oseen vortex (Saffman 1992, Vortex Dynamics §2.1): the circulation on a circle of
// radius R about the centre is Γ(1 - exp(-R²/r_c²)). With bicubic interpolation (O(h³)) the
// issue's 0.1 % holds at 10 nodes per core radius on circles of r_c, 2 r_c and 4 r_c.
//
// Bilinear interpolation has a known bias: averaged over the sub-cell positions a contour
// crosses, its error is (h²/12)∇²u, and ∮∇²u·dl = ∮∂ω/∂n ds for incompressible flow, so
// ΔΓ ≈ (h²/12)·2πR·∂ω/∂r on a circle about the centre (derived here from the bilinear error
// term; for the Gaussian core ∂ω/∂r = -2r/r_c²·ω). The test checks the bilinear error against
// this prediction to 15 % (the prediction neglects O(h⁴) terms and the incomplete averaging
// over cell positions on a finite circle), plus 1e-5 Γ for where the bias itself vanishes.
func TestLineLambOseenCircles(t *testing.T) {
	rc := 0.01
	h := rc / 10
	vx := analytic.LambOseen{Gamma: 2e-3, CoreRadius: rc, X: 0.37 * h, Y: -0.21 * h}
	f := analytic.Sample(vx, squareGrid(h, 5*rc, 0, 0), 0)
	for _, m := range []piv.Interp{piv.Bilinear, piv.Bicubic} {
		for _, R := range []float64{rc, 2 * rc, 4 * rc} {
			c, err := CircleSampled(f.Grid, piv.Circle{X: vx.X, Y: vx.Y, R: R}, 0)
			if err != nil {
				t.Fatal(err)
			}
			res, err := Line(f, c, LineOptions{Interp: m})
			if err != nil {
				t.Fatal(err)
			}
			want := vx.Circulation(R, 0)
			if res.BadShare != 0 {
				t.Errorf("clean field reports a bad share of %g", res.BadShare)
			}
			if m == piv.Bicubic {
				if rel := math.Abs(res.Gamma-want) / want; rel > 1e-3 {
					t.Errorf("%v R = %g rc: Γ = %.8g, want %.8g (rel. error %.2e > 1e-3)", m, R/rc, res.Gamma, want, rel)
				}
				continue
			}
			dwdr := -2 * R / (rc * rc) * vx.Vorticity(vx.X+R, vx.Y, 0)
			bias := h * h / 12 * 2 * math.Pi * R * dwdr
			if got := res.Gamma - want; math.Abs(got-bias) > 0.15*math.Abs(bias)+1e-5*want {
				t.Errorf("bilinear R = %g rc: error %.4g, predicted bias %.4g", R/rc, got, bias)
			}
		}
	}
}

// twoVortices is a smooth flow without symmetry about any contour used below: two offset
// Lamb–Oseen vortices of different strength and size.
func twoVortices() analytic.Superposition {
	return analytic.Superposition{
		analytic.LambOseen{Gamma: 1.5e-3, CoreRadius: 0.008, X: -0.006, Y: 0.004},
		analytic.LambOseen{Gamma: -0.7e-3, CoreRadius: 0.005, X: 0.011, Y: -0.009},
	}
}

// exactCircle is the reference circulation: gonum's fixed-order Gauss–Legendre quadrature of
// the exact velocity along the circle (gonum integrate/quad, 400 nodes).
func exactCircle(fl analytic.Flow, c piv.Circle) float64 {
	return quad.Fixed(func(th float64) float64 {
		s, co := math.Sincos(th)
		u, v := fl.Velocity(c.X+c.R*co, c.Y+c.R*s, 0)
		return c.R * (-u*s + v*co)
	}, 0, 2*math.Pi, 400, nil, 0)
}

// exactPolygon integrates the exact velocity along each edge with gonum's Gauss–Legendre rule.
func exactPolygon(fl analytic.Flow, p piv.Polygon) float64 {
	sum := 0.0
	n := len(p.X)
	for a := 0; a < n; a++ {
		b := (a + 1) % n
		ex, ey := p.X[b]-p.X[a], p.Y[b]-p.Y[a]
		sum += quad.Fixed(func(s float64) float64 {
			u, v := fl.Velocity(p.X[a]+s*ex, p.Y[a]+s*ey, 0)
			return u*ex + v*ey
		}, 0, 1, 200, nil, 0)
	}
	return sum
}

// The line-integral rule against gonum quadrature of the exact velocity on a non-symmetric
// two-vortex flow: the error falls as h² (bilinear) and h³ (bicubic) when the grid spacing
// halves (Keys 1981 for the cubic rule), so the quadrature along the contour is not what limits
// it. Orders are checked with a margin of 0.5 for the pre-asymptotic range.
func TestLineOrderAgainstQuadrature(t *testing.T) {
	fl := twoVortices()
	circle := piv.Circle{X: 0.002, Y: -0.001, R: 0.013}
	poly := piv.Polygon{X: []float64{-0.015, 0.012, 0.016, -0.004}, Y: []float64{-0.013, -0.016, 0.010, 0.017}}
	refC, refP := exactCircle(fl, circle), exactPolygon(fl, poly)
	for _, c := range []struct {
		m     piv.Interp
		order float64
	}{{piv.Bilinear, 2}, {piv.Bicubic, 3}} {
		var errC, errP []float64
		for _, h := range []float64{0.002, 0.001, 0.0005} {
			f := analytic.Sample(fl, squareGrid(h, 0.03, 0.00013, -0.00007), 0)
			cc, err := CircleSampled(f.Grid, circle, 0)
			if err != nil {
				t.Fatal(err)
			}
			pc, err := PolygonContour(f.Grid, poly, 0)
			if err != nil {
				t.Fatal(err)
			}
			rc, err := Line(f, cc, LineOptions{Interp: c.m})
			if err != nil {
				t.Fatal(err)
			}
			rp, err := Line(f, pc, LineOptions{Interp: c.m})
			if err != nil {
				t.Fatal(err)
			}
			errC = append(errC, math.Abs(rc.Gamma-refC))
			errP = append(errP, math.Abs(rp.Gamma-refP))
		}
		for _, e := range [][]float64{errC, errP} {
			for a := 0; a+1 < len(e); a++ {
				if ord := math.Log2(e[a] / e[a+1]); ord < c.order-0.5 {
					t.Errorf("%v: observed order %.2f between h and h/2 (errors %.3e, %.3e), want about %g", c.m, ord, e[a], e[a+1], c.order)
				}
			}
		}
		t.Logf("%v: circle errors %.3e; polygon errors %.3e (reference Γ %.6e, %.6e)", c.m, errC, errP, refC, refP)
	}
}

// The trapezoidal rule on a circle converges spectrally for a smooth periodic integrand
// (Trefethen & Weideman 2014): with exact velocities on a 64-point circle its error is at
// rounding level compared with gonum's 400-point Gauss–Legendre reference.
func TestCircleRuleSpectral(t *testing.T) {
	fl := twoVortices()
	circle := piv.Circle{X: 0.002, Y: -0.001, R: 0.013}
	c, err := CircleContour(circle, 64)
	if err != nil {
		t.Fatal(err)
	}
	sum := 0.0
	for k := range c.X {
		u, v := fl.Velocity(c.X[k], c.Y[k], 0)
		sum += u*c.TX[k] + v*c.TY[k]
	}
	ref := exactCircle(fl, circle)
	if math.Abs(sum-ref) > 1e-10*math.Abs(ref) {
		t.Errorf("64-point trapezoidal Γ = %.15g, Gauss–Legendre %.15g", sum, ref)
	}
}

// Stokes' theorem: the line integral round a circle and the area integral of the vorticity
// (central differences, O(h²); Raffel et al., PIV: A Practical Guide) inside it agree. Both
// carry O(h²) error, so their difference must fall by about 4 when h halves; at 10 nodes per
// core radius it must be within 0.1 %, the accuracy the issue asks of the line integral there.
func TestLineAreaStokes(t *testing.T) {
	rc := 0.01
	var diffs []float64
	for _, h := range []float64{rc / 5, rc / 10, rc / 20} {
		vx := analytic.LambOseen{Gamma: 2e-3, CoreRadius: rc, X: 0.3 * h, Y: 0.45 * h}
		f := analytic.Sample(vx, squareGrid(h, 4*rc, 0, 0), 0)
		omega := vorticity.Vorticity(f, vorticity.Central)
		circ := piv.Circle{X: vx.X, Y: vx.Y, R: 2 * rc}
		c, err := CircleSampled(f.Grid, circ, 0)
		if err != nil {
			t.Fatal(err)
		}
		lr, err := Line(f, c, LineOptions{})
		if err != nil {
			t.Fatal(err)
		}
		reg, err := ShapeRegion(f.Grid, circ)
		if err != nil {
			t.Fatal(err)
		}
		ar, err := Area(omega, reg, AreaOptions{})
		if err != nil {
			t.Fatal(err)
		}
		st := StokesDifference(lr.Gamma, ar.Gamma)
		diffs = append(diffs, math.Abs(st.Rel))
		if h == rc/10 && math.Abs(st.Rel) > 1e-3 {
			t.Errorf("h = rc/10: line %.6g, area %.6g, relative Stokes difference %.2e > 1e-3", lr.Gamma, ar.Gamma, st.Rel)
		}
		want := vx.Circulation(2*rc, 0)
		t.Logf("h = rc/%g: line %.4e (err %.1e), area %.4e (err %.1e)", rc/h, lr.Gamma, lr.Gamma/want-1, ar.Gamma, ar.Gamma/want-1)
	}
	for a := 0; a+1 < len(diffs); a++ {
		if ord := math.Log2(diffs[a] / diffs[a+1]); ord < 1.5 {
			t.Errorf("Stokes difference falls with order %.2f (%.2e -> %.2e), want about 2", ord, diffs[a], diffs[a+1])
		}
	}
}

// The analytic Jacobian of the Lamb–Oseen model against gonum's central finite differences
// (gonum diff/fd), to 1e-6 relative.
func TestFitJacobian(t *testing.T) {
	m := &loModel{bg: true, strain: true, xs: []float64{0.3, -1.2, 2.5, 0.01, 0}, ys: []float64{-0.7, 0.4, 1.9, 0.02, 0},
		us: make([]float64, 5), vs: make([]float64, 5)}
	p := []float64{1.3, 0.9, 0.05, -0.1, 0.2, -0.3, 0.07, -0.04}
	n := 2 * len(m.xs)
	an := mat.NewDense(n, 8, nil)
	r := make([]float64, n)
	m.residuals(p, r, an)
	num := mat.NewDense(n, 8, nil)
	fd.Jacobian(num, func(y, x []float64) { m.residuals(x, y, nil) }, p, &fd.JacobianSettings{Formula: fd.Central})
	for i := 0; i < n; i++ {
		for j := 0; j < 8; j++ {
			if a, b := an.At(i, j), num.At(i, j); math.Abs(a-b) > 1e-6*(1+math.Abs(b)) {
				t.Errorf("J[%d][%d] = %.10g, finite differences %.10g", i, j, a, b)
			}
		}
	}
}

// The area of a shape region equals the shape's area: exactly for rectangles and polygons
// (clipping is exact; shoelace formula), and for a circle to the share-sampling error.
func TestShapeRegionArea(t *testing.T) {
	g := piv.Grid{NX: 40, NY: 30, X0: 0.1, Y0: -0.2, DX: 0.01, DY: 0.012}
	rect := piv.Rect{X0: 0.137, Y0: -0.151, X1: 0.3311, Y1: 0.0093}
	poly := piv.Polygon{X: []float64{0.15, 0.4, 0.25, 0.3, 0.12}, Y: []float64{-0.15, -0.1, -0.05, 0.1, 0.05}} // not convex
	circ := piv.Circle{X: 0.3, Y: -0.03, R: 0.0833}
	for _, c := range []struct {
		s    piv.Shape
		want float64
		tol  float64
	}{
		{rect, (rect.X1 - rect.X0) * (rect.Y1 - rect.Y0), 1e-12},
		{poly, math.Abs(poly.Area()), 1e-12},
		{circ, math.Pi * circ.R * circ.R, 1e-3},
	} {
		r, err := ShapeRegion(g, c.s)
		if err != nil {
			t.Fatal(err)
		}
		if rel := math.Abs(r.Area()-c.want) / c.want; rel > c.tol {
			t.Errorf("%T: region area %.10g, shape area %.10g (rel. %.2e > %g)", c.s, r.Area(), c.want, rel, c.tol)
		}
	}
}

// The area integral of the exact Lamb–Oseen vorticity over a disc of radius 2 r_c matches
// Γ(1 - e^-4) to the midpoint rule's O(h²) error: 0.2 % at 10 nodes per core radius.
func TestAreaExactVorticity(t *testing.T) {
	rc := 0.01
	h := rc / 10
	vx := analytic.LambOseen{Gamma: 2e-3, CoreRadius: rc, X: 0.31 * h, Y: -0.17 * h}
	g := squareGrid(h, 3*rc, 0, 0)
	omega, err := analytic.SampleVorticity(vx, g, 0)
	if err != nil {
		t.Fatal(err)
	}
	circ := piv.Circle{X: vx.X, Y: vx.Y, R: 2 * rc}
	reg, err := ShapeRegion(g, circ)
	if err != nil {
		t.Fatal(err)
	}
	ar, err := Area(omega, reg, AreaOptions{})
	if err != nil {
		t.Fatal(err)
	}
	want := vx.Circulation(2*rc, 0)
	if rel := math.Abs(ar.Gamma-want) / want; rel > 2e-3 {
		t.Errorf("area Γ = %.8g, want %.8g (rel. %.2e)", ar.Gamma, want, rel)
	}
}

// Contours next to missing, replaced or solid nodes: the shares are reported; a small gap is
// bridged (result still close to exact), a large one is refused, or NaN with a warning.
func TestLineQuality(t *testing.T) {
	rc := 0.01
	h := rc / 10
	vx := analytic.LambOseen{Gamma: 2e-3, CoreRadius: rc}
	f := analytic.Sample(vx, squareGrid(h, 4*rc, 0, 0), 0)
	circ := piv.Circle{R: 2 * rc}
	c, _ := CircleSampled(f.Grid, circ, 0)
	// One missing node on the circle's path (at angle 0, radius 2 rc).
	small := f.Clone()
	k := small.Grid.Index(small.Grid.NX/2+20, small.Grid.NY/2)
	small.Status[k], small.U[k], small.V[k] = piv.Missing, math.NaN(), math.NaN()
	res, err := Line(small, c, LineOptions{})
	if err != nil {
		t.Fatal(err)
	}
	if !(res.GapShare > 0 && res.GapShare < 0.05) {
		t.Errorf("gap share %g, want a small positive share", res.GapShare)
	}
	// The bridged gap spans about 2 spacings of a smooth tangential velocity: error well below 0.1 %.
	if rel := math.Abs(res.Gamma/vx.Circulation(2*rc, 0) - 1); rel > 1e-3 {
		t.Errorf("bridged Γ rel. error %.2e", rel)
	}
	// A solid block over a quarter of the circle is refused.
	big := f.Clone()
	big.MaskSolid(piv.Rect{X0: 0, Y0: 0, X1: 1, Y1: 1})
	if _, err := Line(big, c, LineOptions{}); !errors.Is(err, ErrQuality) {
		t.Errorf("quarter of the contour solid: got %v, want ErrQuality", err)
	}
	res, err = Line(big, c, LineOptions{NaNOnBad: true})
	if err != nil || !math.IsNaN(res.Gamma) || res.Warning == "" {
		t.Errorf("NaNOnBad: Γ %g, warning %q, err %v", res.Gamma, res.Warning, err)
	}
	if math.Abs(res.GapShare-0.25) > 0.03 {
		t.Errorf("gap share %g, want about 0.25", res.GapShare)
	}
	// Replaced nodes count toward the bad share but give a value.
	rep := f.Clone()
	for j := 0; j < rep.Grid.NY; j++ {
		for i := rep.Grid.NX / 2; i < rep.Grid.NX; i++ {
			rep.Status[rep.Grid.Index(i, j)] = piv.Replaced
		}
	}
	res, err = Line(rep, c, LineOptions{MaxBadShare: 0.6})
	if err != nil || math.Abs(res.ReplacedShare-0.5) > 0.03 || math.IsNaN(res.Gamma) {
		t.Errorf("replaced half: share %g, Γ %g, err %v", res.ReplacedShare, res.Gamma, err)
	}
}

// Bad contours: outside the field, radius zero or negative, empty or degenerate polygon.
func TestLineBadInput(t *testing.T) {
	f := analytic.Sample(analytic.LambOseen{Gamma: 1e-3, CoreRadius: 0.01}, squareGrid(0.001, 0.02, 0, 0), 0)
	c, err := CircleSampled(f.Grid, piv.Circle{X: 0.015, R: 0.01}, 0)
	if err != nil {
		t.Fatal(err)
	}
	if _, err := Line(f, c, LineOptions{}); err == nil || !strings.Contains(err.Error(), "leaves the field") {
		t.Errorf("contour outside: %v", err)
	}
	for _, r := range []float64{0, -1, math.NaN()} {
		if _, err := CircleSampled(f.Grid, piv.Circle{R: r}, 0); err == nil {
			t.Errorf("radius %g accepted", r)
		}
	}
	if _, err := PolygonContour(f.Grid, piv.Polygon{}, 0); err == nil {
		t.Error("empty polygon accepted")
	}
	if _, err := PolygonContour(f.Grid, piv.Polygon{X: []float64{0, 1, 2}, Y: []float64{0, 1, 2}}, 0); err == nil {
		t.Error("zero-area polygon accepted")
	}
	if _, err := RectContour(f.Grid, piv.Rect{X0: 1, X1: 0, Y1: 1}, 0); err == nil {
		t.Error("inverted rectangle accepted")
	}
	if _, err := ShapeRegion(f.Grid, piv.Circle{X: 5, Y: 5, R: 0.1}); err == nil {
		t.Error("region outside the field accepted")
	}
}

// Radial profile of a Lamb–Oseen vortex: Γ(r) = Γ(1 - e^{-r²/r_c²}) within 0.1 % (bicubic,
// as in TestLineLambOseenCircles) and <u_r> ≈ 0 (Saffman 1992).
func TestRadialProfile(t *testing.T) {
	rc := 0.01
	h := rc / 10
	vx := analytic.LambOseen{Gamma: 2e-3, CoreRadius: rc, X: 0.4 * h, Y: 0.2 * h}
	f := analytic.Sample(vx, squareGrid(h, 4*rc, 0, 0), 0)
	p, err := RadialProfile(f, vx.X, vx.Y, 3*rc, ProfileOptions{Line: LineOptions{Interp: piv.Bicubic}})
	if err != nil {
		t.Fatal(err)
	}
	if len(p.R) != 60 || p.Warning != "" {
		t.Fatalf("%d radii, warning %q", len(p.R), p.Warning)
	}
	peak := LambOseenUTheta(vx.Gamma, rc, 1.1209*rc)
	for a, r := range p.R {
		want := vx.Circulation(r, 0)
		if r >= rc/2 && math.Abs(p.Gamma[a]/want-1) > 1e-3 {
			t.Errorf("r = %.4g: Γ %.6g, want %.6g", r, p.Gamma[a], want)
		}
		if math.Abs(p.UR[a]) > 1e-3*peak {
			t.Errorf("r = %.4g: <u_r> = %.3g, want about 0", r, p.UR[a])
		}
	}
	// Larger radii leave the field: profile cut short with a warning.
	p, err = RadialProfile(f, vx.X, vx.Y, 10*rc, ProfileOptions{})
	if err != nil || p.Warning == "" {
		t.Errorf("profile past the field: err %v, warning %q", err, p.Warning)
	}
	if _, err := RadialProfile(f, 1, 1, rc, ProfileOptions{}); err == nil {
		t.Error("profile centred outside the field accepted")
	}
}

// Lamb–Oseen fit with 2 % seeded velocity noise (Gaussian, σ = 2 % of the peak tangential
// velocity): Γ∞ and r_c within 0.5 % and the centre, placed between nodes, within a tenth of
// the spacing. With ~1200 nodes the statistical error of Γ is ~0.1 %, so the limit holds with
// margin; the reported uncertainties must also cover the actual errors (within 4σ).
func TestFitLambOseenNoise(t *testing.T) {
	rc := 0.01
	h := rc / 10
	for seed := uint64(1); seed <= 3; seed++ {
		vx := analytic.LambOseen{Gamma: 2e-3, CoreRadius: rc, X: 0.37 * h, Y: -0.42 * h, Uc: 0.01, Vc: -0.004}
		f := analytic.Sample(vx, squareGrid(h, 4*rc, 0, 0), 0)
		rng := rand.New(rand.NewPCG(seed, 7))
		sigma := 0.02 * LambOseenUTheta(vx.Gamma, rc, 1.1209*rc)
		for k := range f.U {
			f.U[k] += sigma * rng.NormFloat64()
			f.V[k] += sigma * rng.NormFloat64()
		}
		// Seeds 1 and 2 fit with a uniform background, seed 3 with uniform strain as well.
		fit, err := FitLambOseen(f, 0, 0, 2*rc, FitOptions{Strain: seed == 3})
		if err != nil {
			t.Fatal(err)
		}
		if e := math.Abs(fit.Gamma/vx.Gamma - 1); e > 5e-3 || e > 4*fit.SigmaGamma/vx.Gamma+1e-4 {
			t.Errorf("seed %d: Γ %.6g (σ %.2g), want %.6g", seed, fit.Gamma, fit.SigmaGamma, vx.Gamma)
		}
		if e := math.Abs(fit.Rc/rc - 1); e > 5e-3 || e > 4*fit.SigmaRc/rc+1e-4 {
			t.Errorf("seed %d: r_c %.6g (σ %.2g), want %.6g", seed, fit.Rc, fit.SigmaRc, rc)
		}
		if d := math.Hypot(fit.X-vx.X, fit.Y-vx.Y); d > 0.1*h {
			t.Errorf("seed %d: centre (%.6g, %.6g) is %.3f spacings from (%.6g, %.6g)", seed, fit.X, fit.Y, d/h, vx.X, vx.Y)
		}
		// The background is a mean over the ~1260 nodes within 2 r_c: its standard error is
		// about σ/√1260 = 0.028σ (more with the strain terms), so 0.15σ is over 5 standard errors.
		// The residual RMS estimates σ itself; its relative standard error is 1/√(2·2·1260) = 1%.
		if math.Abs(fit.U-vx.Uc) > 0.15*sigma || math.Abs(fit.V-vx.Vc) > 0.15*sigma || math.Abs(fit.RMS/sigma-1) > 0.05 {
			t.Errorf("seed %d: background (%.4g, %.4g), rms %.3g vs noise %.3g", seed, fit.U, fit.V, fit.RMS, sigma)
		}
	}
}

// A fit with nothing to fit is an error, not a made-up vortex: a uniform stream has no
// rotation, and a fit radius holding too few nodes is refused.
func TestFitRefusals(t *testing.T) {
	g := squareGrid(0.001, 0.01, 0, 0)
	if _, err := FitLambOseen(analytic.Sample(analytic.Uniform{U: 0.1}, g, 0), 0, 0, 0.005, FitOptions{}); err == nil {
		t.Error("fit of a uniform stream accepted")
	}
	f := analytic.Sample(analytic.LambOseen{Gamma: 1e-3, CoreRadius: 0.003}, g, 0)
	if _, err := FitLambOseen(f, 0, 0, 0.0015, FitOptions{Strain: true}); err == nil {
		t.Error("fit on 9 nodes for 8 parameters accepted")
	}
	if _, err := FitLambOseen(f, 0, 0, -1, FitOptions{}); err == nil {
		t.Error("negative fit radius accepted")
	}
}
