package piv

import (
	"math"
	"math/rand/v2"
	"testing"
)

func fillGrid(g Grid, fn func(x, y float64) float64) []float64 {
	s := make([]float64, g.N())
	for j := 0; j < g.NY; j++ {
		for i := 0; i < g.NX; i++ {
			s[g.Index(i, j)] = fn(g.X(i), g.Y(j))
		}
	}
	return s
}

// Bilinear interpolation reproduces bilinear functions exactly, and Keys' cubic convolution
// (a = -1/2) reproduces quadratics exactly (Keys 1981, IEEE Trans. ASSP 29:1153, section III).
func TestSampleExactness(t *testing.T) {
	g := Grid{NX: 12, NY: 9, X0: -0.3, Y0: 0.1, DX: 0.05, DY: 0.07}
	lin := func(x, y float64) float64 { return 1.5 - 2*x + 3*y + 0.7*x*y }
	quad := func(x, y float64) float64 { return 0.2 + x - y + 3*x*x - 2*x*y + 5*y*y }
	sl, sq := fillGrid(g, lin), fillGrid(g, quad)
	rng := rand.New(rand.NewPCG(1, 2))
	for n := 0; n < 500; n++ {
		x := g.X0 + rng.Float64()*(g.XMax()-g.X0)
		y := g.Y0 + rng.Float64()*(g.YMax()-g.Y0)
		if got, want := Sample(g, sl, x, y, Bilinear), lin(x, y); math.Abs(got-want) > 1e-12 {
			t.Fatalf("bilinear at (%g, %g) = %.15g, want %.15g", x, y, got, want)
		}
		// Away from the edges the 4x4 stencil fits and the cubic rule applies.
		fi, fj := g.Frac(x, y)
		if fi >= 1 && fi < float64(g.NX-2) && fj >= 1 && fj < float64(g.NY-2) {
			if got, want := Sample(g, sq, x, y, Bicubic), quad(x, y); math.Abs(got-want) > 1e-12 {
				t.Fatalf("bicubic at (%g, %g) = %.15g, want %.15g", x, y, got, want)
			}
		}
	}
}

// The interpolation error of a smooth function falls as h^2 (bilinear) and h^3 (cubic
// convolution) when the spacing halves (Keys 1981).
func TestSampleOrder(t *testing.T) {
	fn := func(x, y float64) float64 { return math.Sin(3*x) * math.Cos(2*y) }
	errAt := func(n int, m Interp) float64 {
		h := 1.0 / float64(n)
		g := Grid{NX: n + 1, NY: n + 1, DX: h, DY: h}
		s := fillGrid(g, fn)
		worst := 0.0
		for a := 0; a < 200; a++ {
			x := 0.3 + 0.4*float64(a)/200
			y := 0.6 - 0.3*float64(a)/200
			worst = math.Max(worst, math.Abs(Sample(g, s, x, y, m)-fn(x, y)))
		}
		return worst
	}
	for _, c := range []struct {
		m     Interp
		order float64
	}{{Bilinear, 2}, {Bicubic, 3}} {
		e1, e2 := errAt(32, c.m), errAt(64, c.m)
		got := math.Log2(e1 / e2)
		// Tolerance: the observed order of a maximum error over sample points wanders by a few
		// tenths around its asymptotic value at these resolutions.
		if math.Abs(got-c.order) > 0.35 {
			t.Errorf("%v: observed order %.2f, want %.0f (errors %.3g, %.3g)", c.m, got, c.order, e1, e2)
		}
	}
}

func TestSampleMissingAndOutside(t *testing.T) {
	g := Grid{NX: 6, NY: 6, DX: 1, DY: 1}
	s := fillGrid(g, func(x, y float64) float64 { return x + y })
	s[g.Index(2, 2)] = math.NaN()
	cases := []struct {
		x, y float64
		nan  bool
	}{
		{2.5, 2.5, true},  // next to the missing node
		{1.5, 1.5, true},  // cell touching it
		{0.5, 0.5, false}, // far away
		{-0.1, 1, true},   // outside
		{5, 5, false},     // the corner node itself
		{5.01, 1, true},   // just outside
	}
	for _, c := range cases {
		got := Sample(g, s, c.x, c.y, Bilinear)
		if math.IsNaN(got) != c.nan {
			t.Errorf("Sample(%g, %g) = %g, want NaN: %v", c.x, c.y, got, c.nan)
		}
	}
	if got := Sample(g, s, 3.5, 3.5, Bicubic); !math.IsNaN(got) {
		t.Errorf("bicubic whose 4x4 stencil holds a missing node gave %g, want NaN", got)
	}
}

func BenchmarkSampleBicubic(b *testing.B) {
	g := Grid{NX: 256, NY: 256, DX: 1, DY: 1}
	s := fillGrid(g, func(x, y float64) float64 { return math.Sin(x / 7) })
	b.ReportAllocs()
	sum := 0.0
	for n := 0; b.Loop(); n++ {
		x := 10 + float64(n%200) + 0.37
		sum += Sample(g, s, x, 100.2, Bicubic)
	}
	_ = sum
}
