package piv

import (
	"math"
	"testing"

	"gonum.org/v1/gonum/floats"
	"gonum.org/v1/gonum/stat"
)

// Summarize against gonum (reference library): mean, min and max of the valid values.
func TestSummarize(t *testing.T) {
	f, _ := randomField(31, 17)
	s := Summarize(f)
	var us, vs, sp []float64
	for k := range f.U {
		if f.Valid(k) {
			us = append(us, f.U[k])
			vs = append(vs, f.V[k])
			sp = append(sp, math.Hypot(f.U[k], f.V[k]))
		}
	}
	// Tolerance: summation order differs from gonum's, round-off of a few ulps per term.
	tol := 1e-12
	if s.Measured+s.Replaced != len(us) || s.Measured+s.Replaced+s.Missing+s.Solid != f.Grid.N() ||
		math.Abs(s.ValidShare-float64(len(us))/float64(f.Grid.N())) > 1e-15 {
		t.Errorf("counts %+v for %d valid", s, len(us))
	}
	check := func(name string, got, want float64) {
		if math.Abs(got-want) > tol*math.Max(1, math.Abs(want)) {
			t.Errorf("%s = %v, gonum gives %v", name, got, want)
		}
	}
	check("UMean", s.UMean, stat.Mean(us, nil))
	check("VMean", s.VMean, stat.Mean(vs, nil))
	check("UMin", s.UMin, floats.Min(us))
	check("UMax", s.UMax, floats.Max(us))
	check("VMin", s.VMin, floats.Min(vs))
	check("SpeedMax", s.SpeedMax, floats.Max(sp))
	check("SpeedMean", s.SpeedMean, stat.Mean(sp, nil))
	check("URMS", s.URMS, floats.Norm(sp, 2)/math.Sqrt(float64(len(sp))))
	empty := Summarize(NewField(Grid{NX: 2, NY: 2, DX: 1, DY: 1}))
	if empty.ValidShare != 0 || !math.IsNaN(empty.UMean) || empty.Missing != 4 {
		t.Errorf("empty field %+v", empty)
	}
}

// Frame intervals of times 0, 1, 3, 6 s by hand: 1, 2 and 3 s, mean 2 s.
func TestTiming(t *testing.T) {
	g := Grid{NX: 2, NY: 2, DX: 1, DY: 1}
	var frames []*Field
	for _, tm := range []float64{0, 1, 3, 6} {
		f := NewField(g)
		f.Time = tm
		frames = append(frames, f)
	}
	s, _ := MemorySeries(frames)
	if m, lo, hi := Timing(s); m != 2 || lo != 1 || hi != 3 {
		t.Errorf("timing %v %v %v", m, lo, hi)
	}
	one, _ := MemorySeries(frames[:1])
	if m, _, _ := Timing(one); !math.IsNaN(m) {
		t.Errorf("single frame dt %v", m)
	}
}

// Hand values: speeds 3, 4 and 0 m/s at three valid nodes give URMS = sqrt((9+16+0)/3) =
// sqrt(25/3) m/s; divergences 2 and -2 1/s (NaN elsewhere) give RMS 2 1/s; with h = 0.5 m the
// residual is 2 / (sqrt(25/3)/0.5) = 1/sqrt(25/3) = 0.34641.
func TestContinuityResidual(t *testing.T) {
	f := NewField(Grid{NX: 2, NY: 2, DX: 0.5, DY: 1})
	f.Set(0, 3, 0)
	f.Set(1, 0, 4)
	f.Set(2, 0, 0)
	div := []float64{2, math.NaN(), -2, math.NaN()}
	res, rms, n := ContinuityResidual(f, div)
	want := 1 / math.Sqrt(25.0/3)
	if math.Abs(res-want) > 1e-15 || rms != 2 || n != 2 {
		t.Errorf("residual %v rms %v over %d, want %v 2 over 2", res, rms, n, want)
	}
	if res, _, n := ContinuityResidual(f, []float64{math.NaN(), math.NaN(), math.NaN(), math.NaN()}); !math.IsNaN(res) || n != 0 {
		t.Errorf("no divergence: %v %d", res, n)
	}
}
