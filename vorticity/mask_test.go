package vorticity

import (
	"math"
	"math/rand/v2"
	"testing"

	"github.com/wakekit/wakekit/piv"
	"github.com/wakekit/wakekit/piv/analytic"
)

// maskRandom marks a share of the nodes of f Missing (seeded) and normalizes the field.
func maskRandom(f *piv.Field, share float64, seed uint64) {
	rng := rand.New(rand.NewPCG(seed, 1))
	for k := range f.Status {
		if rng.Float64() < share {
			f.Status[k] = piv.Missing
		}
	}
	f.Normalize()
}

// allOutputs returns every derived scalar of the package for f and scheme.
func allOutputs(f *piv.Field, sc Scheme) map[string][]float64 {
	gr := NewGradient(f, sc)
	sxx, syy, sxy := gr.StrainRate()
	return map[string][]float64{
		"dudx": gr.DUDX, "dudy": gr.DUDY, "dvdx": gr.DVDX, "dvdy": gr.DVDY,
		"vorticity": gr.Vorticity(), "fused-vorticity": Vorticity(f, sc),
		"divergence": gr.Divergence(), "sxx": sxx, "syy": syy, "sxy": sxy,
		"strain": gr.StrainMagnitude(), "q": gr.Q(), "lambda2": gr.Lambda2(),
		"swirl": gr.Swirl(true), "enstrophy": gr.Enstrophy(), "hoop": gr.HoopStrain(),
		"sigma-w": gr.VorticityUncertainty(0.01),
		"gamma1":  Gamma1(f, 2), "gamma2": Gamma2(f, 2),
	}
}

// touched returns the nodes the recorded stencil kind of one direction reads at node (i, j),
// the node itself included, with the step (di, dj) along the direction. ok reports whether the
// reconstruction is unique (first-order and one-sided stencils may go either way; both are
// returned and the caller accepts the side that is valid).
func touched(sc Scheme, kind StencilKind, i, j, di, dj int) [][][2]int {
	at := func(ds ...int) [][2]int {
		out := [][2]int{{i, j}}
		for _, d := range ds {
			out = append(out, [2]int{i + d*di, j + d*dj})
		}
		return out
	}
	switch kind {
	case StencilFull:
		switch sc {
		case Richardson, LeastSquares:
			return [][][2]int{at(-2, -1, 1, 2)}
		case Circulation:
			base := at(-1, 1)
			for _, d := range []int{-1, 1} {
				for _, o := range []int{-1, 1} {
					base = append(base, [2]int{i + d*di + o*dj, j + d*dj + o*di})
				}
			}
			return [][][2]int{base}
		}
		return [][][2]int{at(-1, 1)}
	case StencilCentral:
		return [][][2]int{at(-1, 1)}
	case StencilOneSided:
		return [][][2]int{at(1, 2), at(-1, -2)}
	case StencilFirstOrder:
		return [][][2]int{at(1), at(-1)}
	}
	return nil
}

// TestMaskProperty is the mask property test: on a field with a solid rectangle and 15% of
// random missing nodes, whose unusable nodes hold finite garbage velocities (as a field that
// was never normalized might), no quantity is finite at an unusable node, every finite
// derivative comes from a recorded stencil whose nodes are all usable, and every output is
// bit-for-bit the same for two different garbage fillings and for the normalized field, so no
// stencil read an unusable node.
func TestMaskProperty(t *testing.T) {
	g := squareGrid(48, 0.0004)
	base := analytic.Sample(analytic.Superposition{lambOseen, analytic.Uniform{U: 0.05, V: -0.02}}, g, 0)
	solid := piv.Mask(g, piv.Rect{X0: -0.004, Y0: -0.002, X1: 0.001, Y1: 0.003})
	rng := rand.New(rand.NewPCG(11, 3))
	for k := range base.Status {
		switch {
		case solid[k]:
			base.Status[k] = piv.Solid
		case rng.Float64() < 0.15:
			base.Status[k] = piv.Missing
		}
	}
	garbage := func(seed uint64) *piv.Field {
		f := base.Clone()
		r := rand.New(rand.NewPCG(seed, 5))
		for k, s := range f.Status {
			if !s.Valid() {
				f.U[k], f.V[k] = 100*r.NormFloat64(), 100*r.NormFloat64()
			}
		}
		return f
	}
	fa, fb := garbage(1), garbage(2)
	fn := base.Clone()
	fn.Normalize()
	for _, sc := range Schemes {
		oa, ob, on := allOutputs(fa, sc), allOutputs(fb, sc), allOutputs(fn, sc)
		for name, a := range oa {
			for k := range a {
				same := func(x, y float64) bool { return x == y || math.IsNaN(x) && math.IsNaN(y) }
				if !same(a[k], ob[name][k]) || !same(a[k], on[name][k]) {
					t.Fatalf("%s %s: node %d differs between fillings of unusable nodes: %g, %g, %g",
						sc, name, k, a[k], ob[name][k], on[name][k])
				}
				if !base.Status[k].Valid() && !math.IsNaN(a[k]) {
					t.Fatalf("%s %s: finite value %g at unusable node %d", sc, name, a[k], k)
				}
			}
		}
		gr := NewGradient(fa, sc)
		valid := func(p [2]int) bool { return g.In(p[0], p[1]) && base.Status[g.Index(p[0], p[1])].Valid() }
		for k, st := range gr.Stencil {
			i, j := g.IJ(k)
			for dir, kind := range []StencilKind{st.X(), st.Y()} {
				d := []float64{gr.DUDX[k], gr.DUDY[k]}[dir]
				if kind == StencilNone {
					if !math.IsNaN(d) {
						t.Fatalf("%s: finite derivative %g at (%d, %d) with no stencil", sc, d, i, j)
					}
					continue
				}
				di, dj := 1-dir, dir
				fits := false
				for _, nodes := range touched(sc, kind, i, j, di, dj) {
					all := true
					for _, p := range nodes {
						all = all && valid(p)
					}
					fits = fits || all
				}
				if !fits {
					t.Fatalf("%s: node (%d, %d) direction %d records a %v stencil that touches an unusable node", sc, i, j, dir, kind)
				}
			}
		}
	}
}

// TestGammaNeedsWholeWindow checks that Gamma1 and Gamma2 are NaN wherever their window
// contains an unusable node or leaves the grid, and finite elsewhere.
func TestGammaNeedsWholeWindow(t *testing.T) {
	g := squareGrid(30, 0.0005)
	f := analytic.Sample(lambOseen, g, 0)
	maskRandom(f, 0.02, 9)
	for _, r := range []int{1, 2, 3} {
		g1, g2 := Gamma1(f, r), Gamma2(f, r)
		for k := range g1 {
			i, j := g.IJ(k)
			whole := i >= r && j >= r && i < g.NX-r && j < g.NY-r
			for b := j - r; whole && b <= j+r; b++ {
				for a := i - r; a <= i+r; a++ {
					whole = whole && f.Valid(g.Index(a, b))
				}
			}
			if whole == math.IsNaN(g1[k]) || whole == math.IsNaN(g2[k]) {
				t.Fatalf("radius %d node (%d, %d): whole window %v, Gamma1 %g, Gamma2 %g", r, i, j, whole, g1[k], g2[k])
			}
		}
	}
}

// TestSmallGrids checks that degenerate grids give NaN or lower-order stencils, never a panic.
func TestSmallGrids(t *testing.T) {
	for _, dims := range [][2]int{{1, 1}, {1, 5}, {2, 2}, {3, 1}, {4, 4}, {5, 2}} {
		g := piv.Grid{NX: dims[0], NY: dims[1], DX: 0.001, DY: 0.001}
		f := analytic.Sample(analytic.Rotation{Omega: 2}, g, 0)
		for _, sc := range Schemes {
			out := allOutputs(f, sc)
			w := out["vorticity"]
			for k := range w {
				if dims[0] >= 2 && dims[1] >= 2 && math.Abs(w[k]-4) > 1e-9 {
					t.Errorf("%dx%d %s: vorticity of solid-body rotation at %d = %g, want 4", dims[0], dims[1], sc, k, w[k])
				}
				if (dims[0] < 2 || dims[1] < 2) && !math.IsNaN(w[k]) {
					t.Errorf("%dx%d %s: vorticity %g on a grid one node wide, want NaN", dims[0], dims[1], sc, w[k])
				}
			}
		}
	}
}

// TestUsableStatusWithNaN checks nodes whose status says usable but whose velocity is NaN (a
// field built by hand and never normalized): one component NaN, or both. Every output must be
// NaN there and equal, bit for bit, to the outputs for the normalized field.
func TestUsableStatusWithNaN(t *testing.T) {
	g := squareGrid(24, 0.0005)
	f := analytic.Sample(lambOseen, g, 0)
	f.U[g.Index(10, 10)] = math.NaN()
	f.V[g.Index(5, 17)] = math.NaN()
	f.U[g.Index(15, 6)], f.V[g.Index(15, 6)] = math.NaN(), math.NaN()
	f.U[g.Index(0, 9)] = math.NaN() // on the edge
	n := f.Clone()
	n.Normalize()
	for _, sc := range Schemes {
		a, b := allOutputs(f, sc), allOutputs(n, sc)
		for name, x := range a {
			for k := range x {
				if !(x[k] == b[name][k] || math.IsNaN(x[k]) && math.IsNaN(b[name][k])) {
					t.Fatalf("%s %s: node %d: %g unnormalized, %g normalized", sc, name, k, x[k], b[name][k])
				}
				if !n.Status[k].Valid() && !math.IsNaN(x[k]) {
					t.Fatalf("%s %s: finite %g at node %d whose velocity is NaN", sc, name, x[k], k)
				}
			}
		}
	}
}
