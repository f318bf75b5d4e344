package analytic

import (
	"math"
	"slices"
	"testing"

	"github.com/wakekit/wakekit/piv"
)

func noiseGrid(nx, ny int) piv.Grid {
	return piv.Grid{NX: nx, NY: ny, X0: -0.05, Y0: 0.01, DX: 1e-3, DY: 1e-3}
}

// The same seed gives the same field bit for bit; another seed or stream gives another.
func TestNoiseReproducible(t *testing.T) {
	g := noiseGrid(40, 30)
	flow := LambOseen{Gamma: 0.01, CoreRadius: 4e-3, X: -0.03, Y: 0.025}
	n := Noise{Sigma: 0.01, SpuriousFraction: 0.05, Window: 3, Seed: 42, Stream: 7}
	a, b := Sample(flow, g, 0), Sample(flow, g, 0)
	sa, err := n.Apply(a)
	if err != nil {
		t.Fatal(err)
	}
	sb, _ := n.Apply(b)
	if !slices.Equal(a.U, b.U) || !slices.Equal(a.V, b.V) || !slices.Equal(sa, sb) {
		t.Fatal("same seed, different fields")
	}
	for _, m := range []Noise{{Sigma: 0.01, SpuriousFraction: 0.05, Window: 3, Seed: 43, Stream: 7},
		{Sigma: 0.01, SpuriousFraction: 0.05, Window: 3, Seed: 42, Stream: 8}} {
		c := Sample(flow, g, 0)
		m.Apply(c)
		if slices.Equal(a.U, c.U) {
			t.Errorf("seed %d stream %d gives the same field as seed 42 stream 7", m.Seed, m.Stream)
		}
	}
}

// The random error has the stated standard deviation, zero mean and a normal distribution:
// on 2 x 90000 draws the sample standard deviation has a relative standard error of
// 1/sqrt(2N) = 0.17%, asserted within 1% (6 standard errors); the share within one sigma is
// 0.6827 for a normal law (any statistics handbook) with binomial standard error 0.0011,
// asserted within 0.007. The px form converts as sigma_px * pixel size / pulse separation.
func TestNoiseSigma(t *testing.T) {
	g := noiseGrid(300, 300)
	base := Uniform{U: 0.2, V: -0.1}
	for _, n := range []Noise{
		{Sigma: 0.004, Seed: 1},
		{SigmaPx: 0.1, PixelSize: 2e-5, PulseSeparation: 5e-4, Seed: 2}, // 0.1 px * 20 um / 0.5 ms = 4 mm/s
	} {
		sigma, err := n.SigmaSI()
		if err != nil || math.Abs(sigma-0.004) > 1e-15 {
			t.Fatalf("%+v: sigma %g m/s (%v), want 0.004", n, sigma, err)
		}
		f := Sample(base, g, 0)
		if _, err := n.Apply(f); err != nil {
			t.Fatal(err)
		}
		var sum, sum2 float64
		within := 0
		for k := range f.U {
			for _, e := range []float64{f.U[k] - base.U, f.V[k] - base.V} {
				sum += e
				sum2 += e * e
				if math.Abs(e) <= sigma {
					within++
				}
			}
		}
		N := float64(2 * len(f.U))
		mean := sum / N
		std := math.Sqrt(sum2/N - mean*mean)
		if math.Abs(std/sigma-1) > 0.01 {
			t.Errorf("%+v: sample std %.5g, want %.5g", n, std, sigma)
		}
		if math.Abs(mean) > 6*sigma/math.Sqrt(N) {
			t.Errorf("%+v: sample mean %.3g, want 0 within %.3g", n, mean, 6*sigma/math.Sqrt(N))
		}
		if share := float64(within) / N; math.Abs(share-0.6827) > 0.007 {
			t.Errorf("%+v: share within one sigma %.4f, normal law 0.6827", n, share)
		}
	}
}

// Spurious vectors: exactly round(fraction * valid nodes) distinct valid nodes, reported sorted;
// their vectors lie within the field's speed scale, and every other node keeps its Gaussian
// error only. Missing nodes are left alone.
func TestNoiseSpurious(t *testing.T) {
	g := noiseGrid(50, 40)
	flow := Uniform{U: 0.3}
	f := Sample(flow, g, 0)
	f.Status[5], f.U[5], f.V[5] = piv.Missing, math.NaN(), math.NaN()
	n := Noise{Sigma: 1e-4, SpuriousFraction: 0.1, Seed: 9}
	sp, err := n.Apply(f)
	if err != nil {
		t.Fatal(err)
	}
	if want := int(math.Round(0.1 * float64(g.N()-1))); len(sp) != want {
		t.Fatalf("%d spurious vectors, want %d", len(sp), want)
	}
	if !slices.IsSorted(sp) || len(slices.Compact(slices.Clone(sp))) != len(sp) {
		t.Fatal("spurious nodes not sorted and distinct")
	}
	isSp := map[int]bool{}
	far := 0
	for _, k := range sp {
		isSp[k] = true
		if k == 5 {
			t.Fatal("a missing node was made spurious")
		}
		// The speed scale is the largest speed after the Gaussian error, 0.3 m/s + a few 1e-4.
		if math.Abs(f.U[k]) > 0.301 || math.Abs(f.V[k]) > 0.301 {
			t.Errorf("spurious vector (%g, %g) beyond the field's speed scale", f.U[k], f.V[k])
		}
		if math.Hypot(f.U[k]-0.3, f.V[k]) > 10*n.Sigma {
			far++
		}
	}
	// A uniform draw from [-S, S]^2 lands within 1e-3 m/s of the true vector with probability
	// below 1e-5: essentially all must be far.
	if far < len(sp)-1 {
		t.Errorf("only %d of %d spurious vectors differ from the truth", far, len(sp))
	}
	for k := range f.U {
		if k == 5 {
			if f.Status[k] != piv.Missing || !math.IsNaN(f.U[k]) {
				t.Error("missing node changed")
			}
			continue
		}
		if !isSp[k] && math.Hypot(f.U[k]-0.3, f.V[k]) > 6*n.Sigma {
			t.Fatalf("node %d: (%g, %g) deviates beyond the Gaussian error", k, f.U[k], f.V[k])
		}
	}
}

// Window averaging: the mean of (x + i h)^2 over i = -m..m is x^2 + h^2 m(m+1)/3 (sum of
// squares formula), and a linear field is unchanged, away from the edges; at an edge the block
// is cut, so the corner of a 5-node window averages the 3 x 3 nodes that exist.
func TestBoxAverage(t *testing.T) {
	g := noiseGrid(20, 15)
	f := piv.NewField(g)
	for j := 0; j < g.NY; j++ {
		for i := 0; i < g.NX; i++ {
			x, y := g.X(i), g.Y(j)
			f.Set(g.Index(i, j), x*x, 2*x-3*y)
		}
	}
	orig := f.Clone()
	if _, err := (Noise{Window: 5}).Apply(f); err != nil {
		t.Fatal(err)
	}
	m, h := 2.0, g.DX
	for j := 2; j < g.NY-2; j++ {
		for i := 2; i < g.NX-2; i++ {
			k := g.Index(i, j)
			x := g.X(i)
			if e := math.Abs(f.U[k] - (x*x + h*h*m*(m+1)/3)); e > 1e-15 {
				t.Fatalf("node (%d,%d): box mean of x^2 %.17g, want %.17g", i, j, f.U[k], x*x+h*h*m*(m+1)/3)
			}
			if e := math.Abs(f.V[k] - orig.V[k]); e > 1e-15 {
				t.Fatalf("node (%d,%d): linear field changed by %g", i, j, e)
			}
		}
	}
	var want float64
	for j := 0; j < 3; j++ {
		for i := 0; i < 3; i++ {
			want += orig.U[g.Index(i, j)] / 9
		}
	}
	if math.Abs(f.U[0]-want) > 1e-15 {
		t.Errorf("corner: %.17g, want the 3x3 mean %.17g", f.U[0], want)
	}
	// Invalid nodes take no part: a uniform field with holes stays uniform, holes stay holes.
	u := Sample(Uniform{U: 0.25, V: -0.5}, g, 0)
	for _, k := range []int{0, 21, 22, 150} {
		u.Status[k], u.U[k], u.V[k] = piv.Missing, math.NaN(), math.NaN()
	}
	BoxAverage(u, 7)
	for k := range u.U {
		if u.Valid(k) && (math.Abs(u.U[k]-0.25) > 1e-15 || math.Abs(u.V[k]+0.5) > 1e-15) {
			t.Fatalf("node %d: (%g, %g) after averaging a uniform field with holes", k, u.U[k], u.V[k])
		}
		if !u.Valid(k) && !math.IsNaN(u.U[k]) {
			t.Fatalf("hole %d filled", k)
		}
	}
}

func TestNoiseValidate(t *testing.T) {
	bad := []Noise{
		{Sigma: -1}, {Sigma: math.NaN()}, {Sigma: math.Inf(1)},
		{SigmaPx: 0.1}, {SigmaPx: 0.1, PixelSize: 1e-5}, {SigmaPx: 0.1, Sigma: 0.1, PixelSize: 1, PulseSeparation: 1},
		{SpuriousFraction: 1.5}, {SpuriousFraction: -0.1}, {Window: 4}, {Window: -3},
	}
	f := Sample(Uniform{U: 1}, noiseGrid(4, 4), 0)
	for _, n := range bad {
		if _, err := n.Apply(f.Clone()); err == nil {
			t.Errorf("%+v accepted", n)
		}
	}
	if _, err := (Noise{SpuriousFraction: 0.5}).Apply(Sample(Uniform{}, noiseGrid(4, 4), 0)); err == nil {
		t.Error("spurious vectors in a field at rest without noise accepted")
	}
	if !(Noise{Window: 1, Seed: 3}).Zero() || (Noise{Window: 3}).Zero() {
		t.Error("Zero")
	}
}
