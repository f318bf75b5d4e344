package piv

import (
	"math"
	"testing"
)

func TestGaussianTransferOnSine(t *testing.T) {
	// Acceptance: a Gaussian applied to a sine attenuates it by the stated transfer function.
	// Exact for the discrete kernel (H = Σ w_k cos(k κh)/Σ w_k, a property of convolution
	// with a symmetric kernel), and close to the continuous exp(−σ²κ²h²/2).
	g := Grid{NX: 80, NY: 30, DX: 0.002, DY: 0.002}
	for _, sigma := range []float64{1, 1.5, 2.5} {
		for _, wl := range []float64{6, 10, 20} { // wavelength in nodes
			kh := 2 * math.Pi / wl
			f := NewField(g)
			for j := 0; j < g.NY; j++ {
				for i := 0; i < g.NX; i++ {
					f.Set(g.Index(i, j), math.Sin(kh*float64(i)+0.3), 2)
				}
			}
			if err := SmoothGaussian(f, sigma); err != nil {
				t.Fatal(err)
			}
			H := GaussianTransfer(sigma, kh)
			R := GaussianRadius(sigma)
			worst := 0.0
			for j := 0; j < g.NY; j++ {
				for i := R; i < g.NX-R; i++ {
					k := g.Index(i, j)
					worst = math.Max(worst, math.Abs(f.U[k]-H*math.Sin(kh*float64(i)+0.3)))
					worst = math.Max(worst, math.Abs(f.V[k]-2))
				}
			}
			// Round-off only: the result is a finite sum of the same terms.
			if worst > 1e-12 {
				t.Errorf("sigma %g, wavelength %g: smoothed sine differs from H·sine by %g", sigma, wl, worst)
			}
			cont := math.Exp(-sigma * sigma * kh * kh / 2)
			// Truncation at 3σ drops 0.27% of the kernel's mass (normal-distribution tail) and
			// sampling aliases by exp(−2π²σ²) < 3e-9 for σ ≥ 1, so the discrete and continuous
			// responses agree to within 0.003 (absolute).
			if math.Abs(H-cont) > 3e-3 {
				t.Errorf("sigma %g, wavelength %g: discrete H %g, continuous %g", sigma, wl, H, cont)
			}
		}
	}
	// The stated cut-off: 2πσ/√(2 ln 2) for the continuous Gaussian.
	for _, sigma := range []float64{1, 2, 4} {
		c := GaussianCutoff(sigma)
		want := 2 * math.Pi * sigma / math.Sqrt(2*math.Ln2)
		t.Logf("Gaussian sigma %g nodes: half-amplitude wavelength %.3f nodes (continuous %.3f)", sigma, c, want)
		if math.Abs(c-want) > 0.01*want || math.Abs(GaussianTransfer(sigma, 2*math.Pi/c)-0.5) > 1e-9 {
			t.Errorf("cut-off %g, continuous %g", c, want)
		}
	}
}

// maskedConstant is a constant field (u, v) = (1.5, −0.7) with a solid block, a solid wall
// column and some missing nodes.
func maskedConstant() *Field {
	g := Grid{NX: 40, NY: 32, DX: 1, DY: 1}
	f := NewField(g)
	for k := range f.U {
		f.Set(k, 1.5, -0.7)
	}
	f.MaskSolid(Rect{X0: 10, Y0: 8, X1: 16, Y1: 14})
	f.MaskSolid(Rect{X0: 25, Y0: 0, X1: 25, Y1: 20})
	for _, k := range []int{g.Index(9, 9), g.Index(17, 12), g.Index(3, 3), g.Index(24, 5)} {
		reject(f, k, RejectedMedian)
	}
	return f
}

func TestSmoothConstantAtSolidEdges(t *testing.T) {
	// Acceptance: smoothing a constant field leaves it unchanged at solid edges (normalised
	// convolution and polynomial fits both reproduce constants).
	for name, smooth := range map[string]func(*Field) error{
		"gaussian":  func(f *Field) error { return SmoothGaussian(f, 2) },
		"sg 5x5 p2": func(f *Field) error { return SmoothSavitzkyGolay(f, 2, 2) },
		"sg 7x7 p3": func(f *Field) error { return SmoothSavitzkyGolay(f, 3, 3) },
	} {
		f := maskedConstant()
		before := f.Clone()
		if err := smooth(f); err != nil {
			t.Fatal(err)
		}
		for k := range f.U {
			if f.Status[k] != before.Status[k] {
				t.Fatalf("%s: status of node %d changed", name, k)
			}
			if !f.Valid(k) {
				if !math.IsNaN(f.U[k]) {
					t.Fatalf("%s: invalid node %d got a value", name, k)
				}
				continue
			}
			if math.Abs(f.U[k]-1.5) > 1e-12 || math.Abs(f.V[k]+0.7) > 1e-12 {
				t.Fatalf("%s: node %d changed to (%g, %g)", name, k, f.U[k], f.V[k])
			}
		}
	}
}

func TestSmoothNoLeakAcrossSolid(t *testing.T) {
	// Values 1 left of a solid wall and 100 right of it: nothing crosses the wall.
	g := Grid{NX: 30, NY: 20, DX: 1, DY: 1}
	f := NewField(g)
	for j := 0; j < g.NY; j++ {
		for i := 0; i < g.NX; i++ {
			u := 1.0
			if i > 12 {
				u = 100
			}
			f.Set(g.Index(i, j), u, u)
		}
	}
	f.MaskSolid(Rect{X0: 12, Y0: -1, X1: 12, Y1: 100})
	for _, smooth := range []func(*Field) error{
		func(f *Field) error { return SmoothGaussian(f, 2) },
		func(f *Field) error { return SmoothSavitzkyGolay(f, 3, 2) },
	} {
		h := f.Clone()
		if err := smooth(h); err != nil {
			t.Fatal(err)
		}
		for k := range h.U {
			if h.Valid(k) && math.Abs(h.U[k]-f.U[k]) > 1e-12 {
				t.Fatalf("node %d: %g became %g (leak across the wall)", k, f.U[k], h.U[k])
			}
		}
	}
}

func TestSavitzkyGolay(t *testing.T) {
	// Column sums of the 2-D kernel of order 2 on a 5x5 window are the 1-D quadratic
	// coefficients (−3, 12, 17, 12, −3)/35 (Savitzky & Golay 1964, Table I): a field constant in
	// y is fitted by the same polynomial in x.
	k, err := SavitzkyGolayKernel(2, 2)
	if err != nil {
		t.Fatal(err)
	}
	want := []float64{-3, 12, 17, 12, -3}
	for di := 0; di < 5; di++ {
		s := 0.0
		for dj := 0; dj < 5; dj++ {
			s += k[dj*5+di]
		}
		if math.Abs(s-want[di]/35) > 1e-14 {
			t.Fatalf("column %d sums to %g, want %g", di, s, want[di]/35)
		}
	}
	// Polynomials up to the order are reproduced exactly, near edges, gaps and solids too,
	// wherever the window's nodes determine the fit.
	g := Grid{NX: 25, NY: 21, DX: 1, DY: 1}
	for _, order := range []int{2, 3} {
		poly := func(x, y float64) float64 {
			p := 0.3 + 0.2*x - 0.1*y + 0.01*x*x - 0.02*x*y + 0.015*y*y
			if order == 3 {
				p += 1e-3*x*x*x - 2e-3*x*y*y
			}
			return p
		}
		f := NewField(g)
		for j := 0; j < g.NY; j++ {
			for i := 0; i < g.NX; i++ {
				x, y := float64(i), float64(j)
				f.Set(g.Index(i, j), poly(x, y), -poly(y, x))
			}
		}
		f.MaskSolid(Circle{X: 12, Y: 10, R: 2.5})
		reject(f, g.Index(3, 17), RejectedRange)
		want := f.Clone()
		// Half-width order: even a corner window then holds (order+1)² nodes, enough to
		// determine the polynomial.
		if err := SmoothSavitzkyGolay(f, order, order); err != nil {
			t.Fatal(err)
		}
		for k := range f.U {
			if f.Valid(k) && (math.Abs(f.U[k]-want.U[k]) > 1e-10 || math.Abs(f.V[k]-want.V[k]) > 1e-10) {
				t.Fatalf("order %d: node %d (%g, %g), want (%g, %g)", order, k, f.U[k], f.V[k], want.U[k], want.V[k])
			}
		}
	}
	// Sine response equals the stated transfer function (exact, convolution with the kernel).
	kh := 2 * math.Pi / 7
	f := NewField(g)
	for j := 0; j < g.NY; j++ {
		for i := 0; i < g.NX; i++ {
			f.Set(g.Index(i, j), math.Cos(kh*float64(i)), 0)
		}
	}
	if err := SmoothSavitzkyGolay(f, 2, 2); err != nil {
		t.Fatal(err)
	}
	H := SavitzkyGolayTransfer(k, 2, kh)
	for j := 2; j < g.NY-2; j++ {
		for i := 2; i < g.NX-2; i++ {
			if d := f.U[g.Index(i, j)] - H*math.Cos(kh*float64(i)); math.Abs(d) > 1e-12 {
				t.Fatalf("node (%d, %d): response differs from H = %g by %g", i, j, H, d)
			}
		}
	}
	c, err := SavitzkyGolayCutoff(2, 2)
	if err != nil {
		t.Fatal(err)
	}
	t.Logf("Savitzky–Golay 5x5 order 2: half-amplitude wavelength %.3f nodes", c)
	if math.Abs(SavitzkyGolayTransfer(k, 2, 2*math.Pi/c)-0.5) > 1e-9 {
		t.Fatal("cut-off does not halve the amplitude")
	}
	if err := SmoothSavitzkyGolay(f, 2, 5); err == nil {
		t.Fatal("order 5 in a 5x5 window accepted")
	}
	if err := SmoothGaussian(f, 0); err == nil {
		t.Fatal("sigma 0 accepted")
	}
}
