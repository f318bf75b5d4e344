package piv

import (
	"math"
	"testing"
)

// linearField is u = 1 + 2x − 3y, v = −0.5 + 0.25x + 4y on a 30×24 grid.
func linearField() *Field {
	g := Grid{NX: 30, NY: 24, X0: -0.1, Y0: 0.2, DX: 0.01, DY: 0.0125}
	f := NewField(g)
	for j := 0; j < g.NY; j++ {
		for i := 0; i < g.NX; i++ {
			x, y := g.X(i), g.Y(j)
			f.Set(g.Index(i, j), 1+2*x-3*y, -0.5+0.25*x+4*y)
		}
	}
	return f
}

func punch(f *Field, i0, j0, i1, j1 int) []int {
	var ks []int
	for j := j0; j <= j1; j++ {
		for i := i0; i <= i1; i++ {
			k := f.Grid.Index(i, j)
			reject(f, k, RejectedMedian)
			ks = append(ks, k)
		}
	}
	return ks
}

func TestLaplaceFillLinearExact(t *testing.T) {
	// A linear function is discretely harmonic (the five-point Laplacian of x and y is zero),
	// so the Laplace fill of an enclosed gap must return it to round-off (exact solution of
	// the discrete Dirichlet problem).
	want := linearField()
	f := want.Clone()
	holes := punch(f, 5, 4, 12, 9)                     // 8x6 rectangle
	holes = append(holes, punch(f, 20, 10, 20, 18)...) // thin vertical slit
	holes = append(holes, punch(f, 21, 14, 24, 14)...) // joined to it: an L-shaped gap
	c, err := Fill(f, FillOptions{Method: FillLaplace})
	if err != nil {
		t.Fatal(err)
	}
	if c.Filled != len(holes) || c.LeftMissing != 0 || c.Gaps != 2 {
		t.Fatalf("counts %+v, want %d filled in 2 gaps", c, len(holes))
	}
	worst := 0.0
	for _, k := range holes {
		if s := f.Status[k]; s.Kind() != Replaced || s&RejectedMedian == 0 {
			t.Fatalf("node %d status %v, want replaced:median", k, s)
		}
		worst = math.Max(worst, math.Max(math.Abs(f.U[k]-want.U[k]), math.Abs(f.V[k]-want.V[k])))
	}
	t.Logf("Laplace fill of a linear field: largest error %.2e m/s", worst)
	// Round-off: the solver stops at a relative residual of 1e-12 on values of order 1.
	if worst > 1e-11 {
		t.Fatalf("linear field filled with error %g", worst)
	}
}

func TestLaplaceFillLambOseen(t *testing.T) {
	// Error bound from the discrete maximum principle: the fill error e satisfies Δh e = −Δh u
	// in the gap and e = 0 on its boundary, so with M = max |Δh u| over the gap and a the
	// gap's half-width (to the boundary nodes, in x), the comparison function M(a² − (x−xc)²)/2
	// bounds it: |e| ≤ M a²/2 (e.g. Morton & Mayers, Numerical Solution of PDEs, §6.5).
	want, peak := vortexField()
	g := want.Grid
	// Square gaps of 1, 3 and 5 nodes a side, starting just right of the centre at about the
	// core radius (6 spacings).
	for _, side := range []int{1, 3, 5} {
		f := want.Clone()
		i0, j0 := 37, 30
		holes := punch(f, i0, j0, i0+side-1, j0+side-1)
		if _, err := Fill(f, FillOptions{Method: FillLaplace}); err != nil {
			t.Fatal(err)
		}
		lap := func(s []float64, k int) float64 {
			return (s[k-1]+s[k+1]-2*s[k])/(g.DX*g.DX) + (s[k-g.NX]+s[k+g.NX]-2*s[k])/(g.DY*g.DY)
		}
		var worst, M float64
		for _, k := range holes {
			M = math.Max(M, math.Max(math.Abs(lap(want.U, k)), math.Abs(lap(want.V, k))))
			worst = math.Max(worst, math.Max(math.Abs(f.U[k]-want.U[k]), math.Abs(f.V[k]-want.V[k])))
		}
		a := float64(side+1) / 2 * g.DX // half-width to the boundary nodes
		bound := M * a * a / 2
		t.Logf("Laplace fill of a %dx%d gap in a Lamb–Oseen vortex: largest error %.3g px/frame (%.2f%% of the peak swirl), bound %.3g",
			side, side, worst, 100*worst/peak, bound)
		if worst > bound || worst == 0 {
			t.Fatalf("%dx%d gap: fill error %g exceeds the maximum-principle bound %g", side, side, worst, bound)
		}
	}
}

func TestFillMedianAndLimits(t *testing.T) {
	want := linearField()
	f := want.Clone()
	g := f.Grid
	// Isolated missing nodes: the eight neighbours of a linear field come in pairs symmetric
	// about the centre value, so their median is the centre value (property of the median).
	singles := []int{g.Index(3, 3), g.Index(10, 7), g.Index(25, 20)}
	for _, k := range singles {
		reject(f, k, RejectedStd)
	}
	big := punch(f, 14, 2, 18, 6) // 25 nodes
	f.Status[g.Index(0, 0)] = Solid
	f.U[g.Index(0, 0)], f.V[g.Index(0, 0)] = math.NaN(), math.NaN()
	c, err := Fill(f, FillOptions{Method: FillMedian, MaxGap: 24})
	if err != nil {
		t.Fatal(err)
	}
	if c.Filled != len(singles) || c.TooLarge != 1 || c.LeftMissing != len(big) {
		t.Fatalf("counts %+v", c)
	}
	for _, k := range singles {
		if math.Abs(f.U[k]-want.U[k]) > 1e-14 || math.Abs(f.V[k]-want.V[k]) > 1e-14 || f.Status[k].Kind() != Replaced {
			t.Fatalf("node %d: (%g, %g) %v, want (%g, %g)", k, f.U[k], f.V[k], f.Status[k], want.U[k], want.V[k])
		}
	}
	for _, k := range big {
		if f.Status[k].Kind() != Missing || !math.IsNaN(f.U[k]) {
			t.Fatalf("node %d of the oversized gap was filled", k)
		}
	}
	if f.Status[g.Index(0, 0)] != Solid || !math.IsNaN(f.U[0]) {
		t.Fatal("solid node changed")
	}
	// The median method fills a larger gap from its edge inward when allowed.
	c, err = Fill(f, FillOptions{Method: FillMedian})
	if err != nil || c.Filled != len(big) || c.LeftMissing != 0 {
		t.Fatalf("second pass: %+v, %v", c, err)
	}
	if _, err := Fill(f, FillOptions{MaxGap: -1}); err == nil {
		t.Fatal("negative gap size accepted")
	}
}

func TestLaplaceFillNextToSolidAndEdge(t *testing.T) {
	// A gap walled in by solid nodes on one side and the grid edge on another: filled (Neumann
	// there), values within the range of the valid neighbours (discrete maximum principle),
	// solid untouched. A gap enclosed only by solid nodes stays missing.
	f := linearField()
	g := f.Grid
	for j := 0; j < g.NY; j++ {
		k := g.Index(6, j)
		f.Status[k] = Solid
	}
	f.Normalize()
	holes := punch(f, 0, 3, 5, 6)
	lo, hi := math.Inf(1), math.Inf(-1)
	for _, k := range holes {
		for _, q := range neighbours(g, k) {
			if q >= 0 && f.Valid(q) {
				lo, hi = math.Min(lo, f.U[q]), math.Max(hi, f.U[q])
			}
		}
	}
	box := NewField(Grid{NX: 3, NY: 3, DX: 1, DY: 1})
	for k := range box.Status {
		box.Status[k] = Solid
	}
	box.Status[4] = Missing
	if c, err := Fill(box, FillOptions{}); err != nil || c.Filled != 0 || c.LeftMissing != 1 {
		t.Fatalf("enclosed gap: %+v, %v", c, err)
	}
	if _, err := Fill(f, FillOptions{}); err != nil {
		t.Fatal(err)
	}
	for _, k := range holes {
		if f.Status[k].Kind() != Replaced || f.U[k] < lo-1e-12 || f.U[k] > hi+1e-12 {
			t.Fatalf("node %d: %v u = %g outside [%g, %g]", k, f.Status[k], f.U[k], lo, hi)
		}
	}
	for j := 0; j < g.NY; j++ {
		if f.Status[g.Index(6, j)] != Solid {
			t.Fatal("solid node filled")
		}
	}
}

func TestCleanPass(t *testing.T) {
	// The whole pass on a Lamb–Oseen field with injected outliers: the outliers are rejected
	// and replaced, and the replaced vectors are close to the exact field (Laplace fill of
	// isolated nodes: error well below the injected outliers' size, see the fill tests).
	want, peak := vortexField()
	f := want.Clone()
	g := f.Grid
	bad := []int{g.Index(10, 10), g.Index(40, 33), g.Index(33, 40), g.Index(50, 12)}
	for _, k := range bad {
		f.U[k] += 3 * peak
	}
	f.MaskSolid(Rect{X0: 0, Y0: 0, X1: 3 * g.DX, Y1: 3 * g.DY})
	r, err := Clean(f, CleanOptions{
		Validate: ValidateOptions{Median: &MedianOptions{Epsilon: DefaultMedianEpsilonPx}},
		Fill:     &FillOptions{MaxGap: 10},
		Smooth:   SmoothGaussianFilter, Sigma: 0.5,
	})
	if err != nil {
		t.Fatal(err)
	}
	if r.Validation.Median != len(bad) || r.Filled != len(bad) || r.Missing != 0 || r.Solid != 16 {
		t.Fatalf("report %+v", r)
	}
	if s := r.SpuriousShare(); math.Abs(s-float64(len(bad))/float64(g.N()-16)) > 1e-15 {
		t.Fatalf("spurious share %g", s)
	}
	for _, k := range bad {
		if f.Status[k] != Replaced|RejectedMedian {
			t.Fatalf("node %d status %v", k, f.Status[k])
		}
		// Within 10% of the peak swirl: the Laplace error of one node is of order h²|Δu|/4
		// and the σ = 0.5 Gaussian changes the smooth field by a few per cent there.
		if math.Abs(f.U[k]-want.U[k]) > 0.1*peak {
			t.Fatalf("node %d cleaned to %g, exact %g", k, f.U[k], want.U[k])
		}
	}
	var total CleanReport
	total.Add(r)
	total.Add(r)
	if total.Filled != 2*len(bad) || total.Validation.Checked != 2*r.Validation.Checked {
		t.Fatalf("sum %+v", total)
	}
}

func BenchmarkFillLaplace1024(b *testing.B) {
	// Many small gaps (5% of the nodes rejected at random) on a 1024x1024 field: the cost
	// must stay proportional to the nodes, not to nodes × gaps.
	g := Grid{NX: 1024, NY: 1024, DX: 1, DY: 1}
	f := NewField(g)
	for k := range f.U {
		i, j := g.IJ(k)
		f.Set(k, math.Sin(float64(i)/30), math.Cos(float64(j)/20))
	}
	for k := 7; k < g.N(); k += 20 {
		reject(f, k, RejectedMedian)
	}
	work := f.Clone()
	for b.Loop() {
		b.StopTimer()
		copy(work.U, f.U)
		copy(work.V, f.V)
		copy(work.Status, f.Status)
		b.StartTimer()
		if _, err := Fill(work, FillOptions{MaxGap: 25}); err != nil {
			b.Fatal(err)
		}
	}
	b.ReportMetric(float64(b.Elapsed().Nanoseconds())/float64(b.N)/float64(g.N()), "ns/node")
}
