package circulation

import (
	"errors"
	"math"
	"math/rand/v2"
	"testing"

	"github.com/wakekit/wakekit/piv"
	"github.com/wakekit/wakekit/piv/analytic"
)

// plainSample is the interpolation rule of Line written plainly, one point at a time with no
// cached stencil status: bicubic (Keys 1981) where the 4x4 stencil fits and all its nodes are
// usable, bilinear where its 2x2 stencil is usable, no velocity otherwise.
func plainSample(f *piv.Field, x, y float64, m piv.Interp) (u, v float64, rep, ok bool) {
	g := f.Grid
	fi, fj := g.Frac(x, y)
	i0 := min(max(int(math.Floor(fi)), 0), g.NX-2)
	j0 := min(max(int(math.Floor(fj)), 0), g.NY-2)
	tx, ty := fi-float64(i0), fj-float64(j0)
	usable := func(s piv.Status) bool { return s.Kind() == piv.Measured || s.Kind() == piv.Replaced }
	if m == piv.Bicubic && i0 >= 1 && j0 >= 1 && i0+2 < g.NX && j0+2 < g.NY {
		wx, wy := keys(tx), keys(ty)
		var su, sv float64
		all, anyRep := true, false
		for b := 0; b < 4; b++ {
			row := (j0-1+b)*g.NX + i0 - 1
			for a := 0; a < 4; a++ {
				all = all && usable(f.Status[row+a])
				anyRep = anyRep || f.Status[row+a].Kind() == piv.Replaced
			}
			su += wy[b] * (wx[0]*f.U[row] + wx[1]*f.U[row+1] + wx[2]*f.U[row+2] + wx[3]*f.U[row+3])
			sv += wy[b] * (wx[0]*f.V[row] + wx[1]*f.V[row+1] + wx[2]*f.V[row+2] + wx[3]*f.V[row+3])
		}
		if all && !math.IsNaN(su) && !math.IsNaN(sv) {
			return su, sv, anyRep, true
		}
	}
	k := j0*g.NX + i0
	nodes := []int{k, k + 1, k + g.NX, k + g.NX + 1}
	for _, q := range nodes {
		if !usable(f.Status[q]) {
			return 0, 0, false, false
		}
		rep = rep || f.Status[q].Kind() == piv.Replaced
	}
	w00, w10, w01, w11 := (1-tx)*(1-ty), tx*(1-ty), (1-tx)*ty, tx*ty
	u = w00*f.U[k] + w10*f.U[k+1] + w01*f.U[k+g.NX] + w11*f.U[k+g.NX+1]
	v = w00*f.V[k] + w10*f.V[k+1] + w01*f.V[k+g.NX] + w11*f.V[k+g.NX+1]
	if math.IsNaN(u) || math.IsNaN(v) {
		return 0, 0, rep, false
	}
	return u, v, rep, true
}

// plainLine is Line written plainly on plainSample: the containment check for every point,
// the tangential velocity of every point, the shares, the bridging of gaps and the sum.
func plainLine(f *piv.Field, c *Contour, opt LineOptions) (LineResult, error) {
	res := LineResult{Gamma: math.NaN(), Length: c.Length, Points: c.Len()}
	for k := range c.X {
		if !f.Grid.Contains(c.X[k], c.Y[k]) {
			return res, errors.New("outside")
		}
	}
	n := c.Len()
	q := make([]float64, n)
	var wRep, wGap, wAll float64
	for k := 0; k < n; k++ {
		w := c.W[k]
		wAll += w
		u, v, rep, ok := plainSample(f, c.X[k], c.Y[k], opt.Interp)
		if !ok {
			wGap += w
			q[k] = math.NaN()
			continue
		}
		if rep {
			wRep += w
		}
		if w > 0 {
			q[k] = (u*c.TX[k] + v*c.TY[k]) / w
		}
	}
	if wAll > 0 {
		res.ReplacedShare, res.GapShare = wRep/wAll, wGap/wAll
	}
	res.BadShare = res.ReplacedShare + res.GapShare
	if res.BadShare > opt.maxBad() || res.GapShare >= 1 {
		return res, ErrQuality
	}
	if wGap > 0 {
		bridge(q, c.S, c.Length)
	}
	sum := 0.0
	for k := 0; k < n; k++ {
		sum += q[k] * c.W[k]
	}
	res.Gamma = sum
	return res, nil
}

// TestLineMatchesPlain is the property test of the line integral's cached stencil status and
// single pass: on random fields, masks and contours, both interpolations give bit for bit the
// velocities, replaced flags and gaps of plainSample at every point, and Line the circulation,
// shares and refusals of plainLine. The masks hold missing, solid and replaced nodes and
// usable-status nodes with a NaN component; the contours include circles and rectangles that
// touch the edges, pass next to holes or leave the field.
func TestLineMatchesPlain(t *testing.T) {
	rng := rand.New(rand.NewPCG(17, 4))
	fl := analytic.Superposition{
		analytic.LambOseen{Gamma: 1.5e-3, CoreRadius: 0.008, X: -0.004, Y: 0.003},
		analytic.Uniform{U: 0.02, V: -0.01},
	}
	same := func(a, b float64) bool { return math.Float64bits(a) == math.Float64bits(b) || a != a && b != b }
	refused, gaps := 0, 0
	for trial := 0; trial < 120; trial++ {
		h := 0.001 * (0.7 + 0.6*rng.Float64())
		g := squareGrid(h, 0.02, 0.3*h*rng.Float64(), -0.2*h*rng.Float64())
		f := analytic.Sample(fl, g, 0)
		share := []float64{0, 0, 0.001, 0.005, 0.02, 0.1}[trial%6]
		for k := range f.Status {
			switch x := rng.Float64(); {
			case x < share:
				f.Status[k], f.U[k], f.V[k] = piv.Missing, math.NaN(), math.NaN()
			case x < 2*share:
				f.Status[k] = piv.Replaced | piv.RejectedMedian
			case x < 2.2*share:
				f.Status[k], f.U[k], f.V[k] = piv.Solid, math.NaN(), math.NaN()
			case x < 2.3*share:
				f.V[k] = math.NaN() // usable status, NaN component
			}
		}
		var c *Contour
		var err error
		if trial%3 == 0 {
			x0, y0 := -0.02+0.03*rng.Float64(), -0.02+0.03*rng.Float64()
			c, err = RectContour(g, piv.Rect{X0: x0, Y0: y0, X1: x0 + 0.002 + 0.02*rng.Float64(), Y1: y0 + 0.002 + 0.02*rng.Float64()}, 0)
		} else {
			c, err = CircleContour(piv.Circle{X: 0.004 * rng.NormFloat64(), Y: 0.004 * rng.NormFloat64(), R: 0.001 + 0.018*rng.Float64()},
				16+rng.IntN(1500))
		}
		if err != nil {
			t.Fatal(err)
		}
		for _, m := range []piv.Interp{piv.Bilinear, piv.Bicubic} {
			s := newSampler(f, m)
			for k := range c.X {
				if !g.Contains(c.X[k], c.Y[k]) {
					continue
				}
				u, v, rep, ok := s.at(c.X[k], c.Y[k])
				pu, pv, prep, pok := plainSample(f, c.X[k], c.Y[k], m)
				if !same(u, pu) || !same(v, pv) || rep != prep || ok != pok {
					t.Fatalf("trial %d %v point %d: (%v, %v, %v, %v), plain (%v, %v, %v, %v)", trial, m, k, u, v, rep, ok, pu, pv, prep, pok)
				}
			}
			opt := LineOptions{Interp: m, MaxBadShare: []float64{0, 0.2, -1}[trial%3], NaNOnBad: trial%2 == 0}
			got, gerr := Line(f, c, opt)
			want, werr := plainLine(f, c, opt)
			switch {
			case werr != nil && werr.Error() == "outside":
				if gerr == nil || errors.Is(gerr, ErrQuality) {
					t.Fatalf("trial %d %v: contour leaves the field, Line gives %v", trial, m, gerr)
				}
				continue
			case werr != nil: // refused for quality
				refused++
				if opt.NaNOnBad {
					if gerr != nil || got.Warning == "" || !math.IsNaN(got.Gamma) {
						t.Fatalf("trial %d %v: NaNOnBad refusal gave %+v, %v", trial, m, got, gerr)
					}
				} else if !errors.Is(gerr, ErrQuality) {
					t.Fatalf("trial %d %v: refusal gave %v", trial, m, gerr)
				}
			case gerr != nil:
				t.Fatalf("trial %d %v: %v, plain accepts", trial, m, gerr)
			}
			if want.GapShare > 0 {
				gaps++
			}
			if !same(got.Gamma, want.Gamma) || !same(got.ReplacedShare, want.ReplacedShare) ||
				!same(got.GapShare, want.GapShare) || !same(got.BadShare, want.BadShare) {
				t.Fatalf("trial %d %v: %+v, plain %+v", trial, m, got, want)
			}
		}
	}
	// The cases must reach the refusals and the bridged gaps, not only clean contours.
	if refused < 10 || gaps < 10 {
		t.Fatalf("only %d refusals and %d contours with gaps", refused, gaps)
	}
}
