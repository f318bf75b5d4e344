package vorticity

import (
	"math"
	"testing"

	"github.com/wakekit/wakekit/piv"
	"github.com/wakekit/wakekit/piv/analytic"
	"gonum.org/v1/gonum/stat"
)

// squareGrid returns an n x n grid of spacing h centred on the origin (a node sits at the
// centre when n is odd).
func squareGrid(n int, h float64) piv.Grid {
	half := float64(n-1) / 2 * h
	return piv.Grid{NX: n, NY: n, X0: -half, Y0: -half, DX: h, DY: h}
}

// lambOseen is the vortex the tests use: circulation 0.02 m^2/s, core radius 5 mm, centred on
// the origin (an invented test case).
var lambOseen = analytic.LambOseen{Gamma: 0.02, CoreRadius: 0.005}

// TestConvergenceLambOseen fits the slope of log(max vorticity error) against log(h) for
// spacings h, h/2, h/4 on the Lamb–Oseen vortex (Saffman, Vortex Dynamics, 1992, §2.1). The
// expected slope is the formal order of each scheme's truncation error: 2 for central,
// least-squares and circulation, 4 for Richardson. Errors are taken within 2.5 core radii,
// where every node has the scheme's full stencil. A band of +-0.25 around the order allows
// for the higher-order terms still present at the coarsest spacing (r_c/h = 5).
func TestConvergenceLambOseen(t *testing.T) {
	rc := lambOseen.CoreRadius
	for _, sc := range Schemes {
		var logH, logE []float64
		for _, perCore := range []int{5, 10, 20} {
			h := rc / float64(perCore)
			n := 6*perCore + 1 // spans +-3 r_c
			g := squareGrid(n, h)
			f := analytic.Sample(lambOseen, g, 0)
			w := Vorticity(f, sc)
			maxErr := 0.0
			for j := 0; j < g.NY; j++ {
				for i := 0; i < g.NX; i++ {
					x, y := g.X(i), g.Y(j)
					if math.Hypot(x, y) > 2.5*rc {
						continue
					}
					k := g.Index(i, j)
					maxErr = math.Max(maxErr, math.Abs(w[k]-lambOseen.Vorticity(x, y, 0)))
				}
			}
			logH = append(logH, math.Log(h))
			logE = append(logE, math.Log(maxErr))
		}
		_, slope := stat.LinearRegression(logH, logE, nil, false)
		want := float64(sc.Order())
		t.Logf("%s: max vorticity error slope %.3f (errors %.3g, %.3g, %.3g 1/s)", sc, slope,
			math.Exp(logE[0]), math.Exp(logE[1]), math.Exp(logE[2]))
		if math.Abs(slope-want) > 0.25 {
			t.Errorf("%s: convergence slope %.3f, want %g +- 0.25", sc, slope, want)
		}
	}
}

// TestPeakVorticityCentral checks the central scheme's peak vorticity at 20 nodes per core
// radius against Gamma / (pi r_c^2) (Saffman, Vortex Dynamics, 1992, §2.1) within 1%, the
// acceptance limit; the expected truncation error is about (h/r_c)^2/2 = 0.1%.
func TestPeakVorticityCentral(t *testing.T) {
	rc := lambOseen.CoreRadius
	h := rc / 20
	g := squareGrid(121, h)
	f := analytic.Sample(lambOseen, g, 0)
	w := Vorticity(f, Central)
	peak := math.Inf(-1)
	for _, v := range w {
		if v > peak {
			peak = v
		}
	}
	want := lambOseen.Gamma / (math.Pi * rc * rc)
	rel := (peak - want) / want
	t.Logf("peak %.6g, Gamma/(pi rc^2) %.6g, relative error %.2e", peak, want, rel)
	if math.Abs(rel) > 0.01 {
		t.Errorf("central peak vorticity %.6g, want %.6g within 1%%", peak, want)
	}
}

// TestHillVortex checks the axisymmetric operators on Hill's spherical vortex (Lamb,
// Hydrodynamics, 1932, §165): inside the sphere w_theta = 15 U r / (2 a^2) and the flow is
// solenoidal in 3-D, du/dx + dv/dr + v/r = 0, while the planar divergence du/dx + dv/dr is
// -(3U/2) x / a^2 (from the stream function psi = (3U/4) r^2 (1 - R^2/a^2)). The grid spans
// the axis with a row on it, so the on-axis limit and the mirrored lower half are covered.
func TestHillVortex(t *testing.T) {
	hill := analytic.Hill{Radius: 0.02, Speed: 0.1, CoMoving: true}
	a, U := hill.Radius, hill.Speed
	h := a / 20 // a/Delta = 20
	g := piv.Grid{NX: 61, NY: 61, X0: -1.5 * a, Y0: -1.5 * a, DX: h, DY: h}
	f := analytic.Sample(hill, g, 0)
	if !f.Geometry.Axisymmetric {
		t.Fatal("Hill's vortex sample is not axisymmetric")
	}
	for _, sc := range Schemes {
		gr := NewGradient(f, sc)
		w := gr.Vorticity()
		div := gr.Divergence()
		planar := gr.PlanarDivergence()
		checked := 0
		for j := 0; j < g.NY; j++ {
			for i := 0; i < g.NX; i++ {
				x, r := g.X(i), g.Y(j)
				// Away from the sphere's edge: the whole stencil (3 nodes, diagonals included)
				// lies inside, where the velocity is a quadratic polynomial.
				if math.Hypot(x, r) > a-3.5*h {
					continue
				}
				k := g.Index(i, j)
				checked++
				// With the signed r this is -w_theta(|r|) below the axis, as the plane shows it
				// (package documentation).
				want := 7.5 * U * r / (a * a)
				// 1% of the largest w_theta in the checked region, the acceptance limit.
				scale := 7.5 * U / a
				if math.Abs(w[k]-want) > 0.01*scale {
					t.Errorf("%s: w at (%.4g, %.4g) = %.6g, want %.6g", sc, x, r, w[k], want)
				}
				// The field is quadratic inside, so every scheme differentiates it exactly and
				// the 3-D divergence vanishes to round-off (1e-9 of U/a).
				if math.Abs(div[k]) > 1e-9*U/a {
					t.Errorf("%s: 3-D divergence at (%.4g, %.4g) = %.3g, want 0", sc, x, r, div[k])
				}
				wantPlanar := -1.5 * U * x / (a * a)
				if math.Abs(planar[k]-wantPlanar) > 1e-9*U/a {
					t.Errorf("%s: planar divergence at (%.4g, %.4g) = %.6g, want %.6g", sc, x, r, planar[k], wantPlanar)
				}
			}
		}
		if checked < 800 {
			t.Fatalf("%s: only %d nodes checked", sc, checked)
		}
	}
	// The planar divergence is not zero: at x = a/2 it is -(3/4) U/a.
	gr := NewGradient(f, Central)
	k := g.Index(40, 35)
	if got := gr.PlanarDivergence()[k]; got > -0.5*U/a {
		t.Errorf("planar divergence at x = a/2 is %.4g, want about %.4g", got, -0.75*U/a)
	}
}

// TestAxisLimit checks the hoop strain on and below the axis: for the radial velocity
// v = c x r (Hill's vortex inside has c = 3U/(2a^2)) the hoop strain v/r is c x on both sides,
// and on the axis itself its limit dv/dr = c x.
func TestAxisLimit(t *testing.T) {
	g := piv.Grid{NX: 9, NY: 9, X0: -0.004, Y0: -0.004, DX: 0.001, DY: 0.001}
	f := piv.NewField(g)
	f.Geometry = piv.Geometry{Axisymmetric: true, AxisY: 0}
	const c = 3.0
	for j := 0; j < g.NY; j++ {
		for i := 0; i < g.NX; i++ {
			f.Set(g.Index(i, j), 0.1, c*g.X(i)*g.Y(j))
		}
	}
	gr := NewGradient(f, Central)
	hs := gr.HoopStrain()
	for j := 0; j < g.NY; j++ {
		for i := 0; i < g.NX; i++ {
			want := c * g.X(i)
			if got := hs[g.Index(i, j)]; math.Abs(got-want) > 1e-9 {
				t.Errorf("hoop strain at (%d, %d) (r = %.3g) = %.9g, want %.9g", i, j, g.Y(j), got, want)
			}
		}
	}
}

// TestLinearAndQuadraticExact checks the fallback stencils on polynomials, where they are exact
// (Taylor series, common practice): every stencil differentiates a linear function exactly,
// and every stencil except the first-order one differentiates a quadratic exactly, the
// Richardson stencil even a quartic along the line.
func TestLinearAndQuadraticExact(t *testing.T) {
	g := piv.Grid{NX: 13, NY: 11, X0: 0.1, Y0: -0.2, DX: 0.01, DY: 0.02}
	holes := map[int]bool{}
	for _, ij := range [][2]int{{3, 3}, {4, 3}, {8, 7}, {0, 5}, {12, 0}, {6, 9}, {6, 10}, {1, 1}, {10, 4}} {
		holes[g.Index(ij[0], ij[1])] = true
	}
	quad := func(x, y float64) float64 { return 2*x*x + 3*x*y - y*y + x - 4*y + 0.5 }
	qx := func(x, y float64) float64 { return 4*x + 3*y + 1 }
	qy := func(x, y float64) float64 { return 3*x - 2*y - 4 }
	s := make([]float64, g.N())
	for j := 0; j < g.NY; j++ {
		for i := 0; i < g.NX; i++ {
			k := g.Index(i, j)
			if holes[k] {
				s[k] = math.NaN()
			} else {
				s[k] = quad(g.X(i), g.Y(j))
			}
		}
	}
	dx, dy := make([]float64, g.N()), make([]float64, g.N())
	st := make([]Stencil, g.N())
	for _, sc := range Schemes {
		Deriv(g, s, sc, dx, dy, st)
		seen := map[StencilKind]bool{}
		for j := 0; j < g.NY; j++ {
			for i := 0; i < g.NX; i++ {
				k := g.Index(i, j)
				if holes[k] {
					if !math.IsNaN(dx[k]) || !math.IsNaN(dy[k]) || st[k] != 0 {
						t.Errorf("%s: hole (%d, %d) got %g, %g, %v", sc, i, j, dx[k], dy[k], st[k])
					}
					continue
				}
				x, y := g.X(i), g.Y(j)
				seen[st[k].X()] = true
				seen[st[k].Y()] = true
				// A first-order stencil is off by h f''/2; others are exact to round-off.
				check := func(got, want float64, kind StencilKind, second, h float64, dir string) {
					if kind == StencilNone {
						// Allowed only when neither neighbour along the direction is usable.
						for _, d := range []int{-1, 1} {
							p, q := i, j
							if dir == "x" {
								p += d
							} else {
								q += d
							}
							if g.In(p, q) && !holes[g.Index(p, q)] {
								t.Errorf("%s: no %s stencil at (%d, %d) although (%d, %d) is usable", sc, dir, i, j, p, q)
							}
						}
						return
					}
					tol := 1e-9
					if kind == StencilFirstOrder {
						tol = math.Abs(second)*h/2 + 1e-9
					}
					if math.Abs(got-want) > tol {
						t.Errorf("%s: d/d%s at (%d, %d) with %v = %.12g, want %.12g", sc, dir, i, j, kind, got, want)
					}
				}
				check(dx[k], qx(x, y), st[k].X(), 4, g.DX, "x")
				check(dy[k], qy(x, y), st[k].Y(), -2, g.DY, "y")
			}
		}
		for _, kind := range []StencilKind{StencilFull, StencilOneSided} {
			if !seen[kind] {
				t.Errorf("%s: the test grid never used a %v stencil", sc, kind)
			}
		}
	}
}

// TestCirculationScheme compares the Circulation scheme with the circulation around the
// square through the 8 neighbours by the trapezoidal rule, divided by its area 4 DX DY
// (Raffel et al., Particle Image Velocimetry: A Practical Guide, local-circulation vorticity
// estimate), computed directly here.
func TestCirculationScheme(t *testing.T) {
	g := piv.Grid{NX: 40, NY: 30, X0: -0.012, Y0: -0.01, DX: 0.0007, DY: 0.0009}
	f := analytic.Sample(analytic.TaylorGreen{U: 0.1, K: 300}, g, 0)
	w := Vorticity(f, Circulation)
	U := func(i, j int) float64 { return f.U[g.Index(i, j)] }
	V := func(i, j int) float64 { return f.V[g.Index(i, j)] }
	for j := 1; j < g.NY-1; j++ {
		for i := 1; i < g.NX-1; i++ {
			dx, dy := g.DX, g.DY
			// Counter-clockwise: bottom edge left to right, right edge up, top right to left,
			// left edge down; each edge of length 2h in two trapezoidal panels.
			gam := dx/2*(U(i-1, j-1)+2*U(i, j-1)+U(i+1, j-1)) +
				dy/2*(V(i+1, j-1)+2*V(i+1, j)+V(i+1, j+1)) -
				dx/2*(U(i-1, j+1)+2*U(i, j+1)+U(i+1, j+1)) -
				dy/2*(V(i-1, j-1)+2*V(i-1, j)+V(i-1, j+1))
			want := gam / (4 * dx * dy)
			got := w[g.Index(i, j)]
			if math.Abs(got-want) > 1e-9*math.Abs(want)+1e-9 {
				t.Fatalf("circulation vorticity at (%d, %d) = %.12g, want %.12g", i, j, got, want)
			}
		}
	}
}

// TestVorticityMatchesGradient checks that the fused Vorticity gives the same values as the
// gradient tensor for every scheme, on a field with holes.
func TestVorticityMatchesGradient(t *testing.T) {
	g := squareGrid(41, 0.0005)
	f := analytic.Sample(lambOseen, g, 0)
	maskRandom(f, 0.1, 7)
	for _, sc := range Schemes {
		a := Vorticity(f, sc)
		b := NewGradient(f, sc).Vorticity()
		for k := range a {
			if !(a[k] == b[k] || math.IsNaN(a[k]) && math.IsNaN(b[k])) {
				t.Fatalf("%s: node %d: Vorticity %.12g, gradient %.12g", sc, k, a[k], b[k])
			}
		}
	}
}
