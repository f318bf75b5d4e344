package stats

import (
	"math"
	"math/rand/v2"
	"strings"
	"testing"

	"gonum.org/v1/gonum/dsp/fourier"
	"gonum.org/v1/gonum/mat"
	"gonum.org/v1/gonum/stat"

	"github.com/mjibson/go-dsp/window"

	"github.com/wakekit/wakekit/piv"
)

func TestMomentsAgainstGonum(t *testing.T) {
	// Reference: gonum's stat.Mean, stat.Variance and stat.Covariance (two-pass, unbiased).
	g := piv.Grid{NX: 4, NY: 3, DX: 1, DY: 1}
	m, err := NewMoments(g)
	if err != nil {
		t.Fatal(err)
	}
	rng := rand.New(rand.NewPCG(1, 2))
	series := make([][2][]float64, g.N())
	for frame := 0; frame < 200; frame++ {
		f := piv.NewField(g)
		for k := range f.U {
			if k == 5 && frame%3 == 0 {
				continue // node 5 misses every third frame
			}
			if k == 7 {
				continue // node 7 never has data
			}
			// A large mean on a small fluctuation: the one-pass formula must not cancel.
			u := 1e4 + rng.NormFloat64()
			v := -3 + 0.5*u - 5e3 + 0.2*rng.NormFloat64()
			f.Set(k, u, v)
			series[k][0] = append(series[k][0], u)
			series[k][1] = append(series[k][1], v)
		}
		f.Time = float64(frame)
		if err := m.Add(f); err != nil {
			t.Fatal(err)
		}
	}
	r := m.Result(0)
	for k := 0; k < g.N(); k++ {
		u, v := series[k][0], series[k][1]
		if r.Count[k] != len(u) {
			t.Fatalf("node %d count %d, want %d", k, r.Count[k], len(u))
		}
		if len(u) == 0 {
			if !math.IsNaN(r.MeanU[k]) || !math.IsNaN(r.TKE[k]) {
				t.Fatal("node without data has statistics")
			}
			continue
		}
		check := func(name string, got, want, tol float64) {
			if math.Abs(got-want) > tol*math.Max(1, math.Abs(want)) {
				t.Errorf("node %d %s = %.15g, gonum %.15g", k, name, got, want)
			}
		}
		// Tolerances: round-off of sums of 200 terms of order 1e4 (relative 1e-12).
		check("mean u", r.MeanU[k], stat.Mean(u, nil), 1e-12)
		check("mean v", r.MeanV[k], stat.Mean(v, nil), 1e-12)
		check("u'u'", r.UU[k], stat.Variance(u, nil), 1e-9)
		check("v'v'", r.VV[k], stat.Variance(v, nil), 1e-9)
		check("u'v'", r.UV[k], stat.Covariance(u, v, nil), 1e-9)
		check("rms u", r.RMSU[k], math.Sqrt(stat.Variance(u, nil)), 1e-9)
		check("tke", r.TKE[k], 0.75*(stat.Variance(u, nil)+stat.Variance(v, nil)), 1e-9)
	}
	// Acceptance: frames of different grids are a clear error naming the frame.
	h := piv.NewField(piv.Grid{NX: 5, NY: 3, DX: 1, DY: 1})
	h.Source = "run2/frame_0009.csv"
	err = m.Add(h)
	if err == nil || !strings.Contains(err.Error(), "run2/frame_0009.csv") || !strings.Contains(err.Error(), "same grid") {
		t.Fatalf("grid mismatch: %v", err)
	}
}

func TestPhaseAverage(t *testing.T) {
	// u(t) = sin(2π t/T) sampled 8 times per period: each phase bin of width T/8 holds the
	// same phase every period, so its mean is exactly the sine at that phase (periodic
	// signal, exact) and its variance zero.
	g := piv.Grid{NX: 2, NY: 2, DX: 1, DY: 1}
	const T, dt = 0.02, 0.0025
	var times []float64
	for k := 0; k < 80; k++ {
		times = append(times, float64(k)*dt)
	}
	p, err := NewPhaseAverage(g, T, -dt/2, 8, times)
	if err != nil {
		t.Fatal(err)
	}
	for _, tt := range times {
		f := piv.NewField(g)
		for k := range f.U {
			f.Set(k, math.Sin(2*math.Pi*tt/T), 1)
		}
		f.Time = tt
		if err := p.Add(f); err != nil {
			t.Fatal(err)
		}
	}
	for b, m := range p.Bins {
		r := m.Result(0)
		want := math.Sin(2 * math.Pi * float64(b) / 8)
		if r.Count[0] != 10 || math.Abs(r.MeanU[0]-want) > 1e-12 || r.UU[0] > 1e-20 {
			t.Fatalf("bin %d: count %d mean %g (want %g) var %g", b, r.Count[0], r.MeanU[0], want, r.UU[0])
		}
	}
	// Acceptance: a period longer than the series is a clear error.
	if _, err := NewPhaseAverage(g, 1, 0, 8, times); err == nil || !strings.Contains(err.Error(), "longer than the series") {
		t.Fatalf("long period: %v", err)
	}
	if _, err := NewPhaseAverage(g, dt, 0, 8, times); err == nil {
		t.Fatal("unresolved period accepted")
	}
}

// podSeries builds N snapshots u(x, t) = mean + Σ a_k(t) φ_k(x) from three orthonormal
// spatial modes (discrete sine functions, exactly orthogonal on the grid) and temporal
// amplitudes a_k(t_j) = A_k cos(2π m_k j/N + θ_k), which have zero mean, are mutually
// orthogonal over the N samples (discrete orthogonality of the Fourier basis) and have mean
// square A_k²/2 — the modal energies a correct decomposition must return.
func podSeries(g piv.Grid, N int) (frames []*piv.Field, modes [3][]float64, energies [3]float64) {
	n := g.N()
	shape := func(p, q int) []float64 {
		s := make([]float64, n)
		for j := 0; j < g.NY; j++ {
			for i := 0; i < g.NX; i++ {
				s[g.Index(i, j)] = math.Sin(math.Pi*float64(p*(i+1))/float64(g.NX+1)) * math.Sin(math.Pi*float64(q*(j+1))/float64(g.NY+1))
			}
		}
		return s
	}
	// Modes as 2n vectors (u then v): one in u only, one in v only, one in both.
	modes[0] = append(shape(1, 1), make([]float64, n)...)
	modes[1] = append(make([]float64, n), shape(2, 1)...)
	modes[2] = append(shape(1, 2), shape(3, 1)...)
	for _, m := range modes {
		nrm := 0.0
		for _, v := range m {
			nrm += v * v
		}
		for a := range m {
			m[a] /= math.Sqrt(nrm)
		}
	}
	A := [3]float64{3, 2, 0.7}
	mk := [3]int{1, 2, 5}
	theta := [3]float64{0.3, 1.1, -0.4}
	for k := range energies {
		energies[k] = A[k] * A[k] / 2
	}
	for j := 0; j < N; j++ {
		f := piv.NewField(g)
		f.Time = float64(j) * 0.01
		for q := 0; q < n; q++ {
			x, y := float64(q%g.NX), float64(q/g.NX)
			u, v := 0.5+0.01*x, -0.2+0.02*y
			for k := range modes {
				a := A[k] * math.Cos(2*math.Pi*float64(mk[k]*j)/float64(N)+theta[k])
				u += a * modes[k][q]
				v += a * modes[k][n+q]
			}
			f.Set(q, u, v)
		}
		frames = append(frames, f)
	}
	return frames, modes, energies
}

func TestPODKnownModes(t *testing.T) {
	g := piv.Grid{NX: 12, NY: 9, DX: 0.001, DY: 0.001}
	const N = 40
	frames, modes, energies := podSeries(g, N)
	p, err := NewPOD(g, N, 0)
	if err != nil {
		t.Fatal(err)
	}
	for _, f := range frames {
		if err := p.Add(f); err != nil {
			t.Fatal(err)
		}
	}
	m, err := p.Decompose(3)
	if err != nil {
		t.Fatal(err)
	}
	n := g.N()
	total := energies[0] + energies[1] + energies[2]
	for k := 0; k < 3; k++ {
		// Acceptance: energies to 1e-9 relative, modes up to sign.
		if math.Abs(m.Energies[k]-energies[k]) > 1e-9*energies[k] {
			t.Errorf("mode %d energy %.15g, want %.15g", k+1, m.Energies[k], energies[k])
		}
		dot := 0.0
		for q := 0; q < n; q++ {
			dot += m.U[k][q]*modes[k][q] + m.V[k][q]*modes[k][n+q]
		}
		if math.Abs(math.Abs(dot)-1) > 1e-9 {
			t.Errorf("mode %d: |<found, true>| = %.15g, want 1", k+1, math.Abs(dot))
		}
		ms := 0.0
		for _, a := range m.Coeffs[k] {
			ms += a * a / N
		}
		if math.Abs(ms-energies[k]) > 1e-9*energies[k] {
			t.Errorf("mode %d: mean square coefficient %g, energy %g", k+1, ms, energies[k])
		}
	}
	for k := 3; k < N; k++ {
		if m.Energies[k] > 1e-12*total {
			t.Errorf("mode %d energy %g, want 0", k+1, m.Energies[k])
		}
	}
	if sh := m.Share(0); math.Abs(sh-energies[0]/total) > 1e-9 {
		t.Errorf("mode 1 share %g, want %g", sh, energies[0]/total)
	}
	if c := m.Cumulative(); math.Abs(c[2]-1) > 1e-12 {
		t.Errorf("three modes hold %g of the energy, want 1", c[2])
	}
	// The velocity-scaled modes and unit coefficients split the snapshots the same way.
	for q := 0; q < n; q++ {
		u := m.MeanU[q]
		for k := 0; k < 3; k++ {
			u += m.UnitCoeffs(k)[11] * m.ScaledField(k).U[q]
		}
		if math.Abs(u-frames[11].U[q]) > 1e-12 {
			t.Fatalf("snapshot 12 node %d: scaled reconstruction %g, stored %g", q, u, frames[11].U[q])
		}
	}
	// Reconstruction of a snapshot from mean + Σ a φ.
	for q := 0; q < n; q++ {
		u := m.MeanU[q]
		for k := 0; k < 3; k++ {
			u += m.Coeffs[k][7] * m.U[k][q]
		}
		if math.Abs(u-frames[7].U[q]) > 1e-12 {
			t.Fatalf("snapshot 8 node %d: reconstructed %g, stored %g", q, u, frames[7].U[q])
		}
	}

	// Cross-check with gonum's SVD of the fluctuation snapshot matrix: λ_k = σ_k²/N, and the
	// right singular vectors are the spatial modes.
	X := mat.NewDense(N, 2*n, nil)
	for j, f := range frames {
		for q := 0; q < n; q++ {
			X.Set(j, q, f.U[q]-m.MeanU[q])
			X.Set(j, n+q, f.V[q]-m.MeanV[q])
		}
	}
	var svd mat.SVD
	if !svd.Factorize(X, mat.SVDThin) {
		t.Fatal("gonum SVD failed")
	}
	sv := svd.Values(nil)
	var vt mat.Dense
	svd.VTo(&vt)
	for k := 0; k < 3; k++ {
		lam := sv[k] * sv[k] / N
		if math.Abs(lam-m.Energies[k]) > 1e-10*lam {
			t.Errorf("mode %d: POD energy %.15g, SVD %.15g", k+1, m.Energies[k], lam)
		}
		dot := 0.0
		for q := 0; q < n; q++ {
			dot += vt.At(q, k)*m.U[k][q] + vt.At(n+q, k)*m.V[k][q]
		}
		if math.Abs(math.Abs(dot)-1) > 1e-9 {
			t.Errorf("mode %d: |<POD, SVD>| = %g", k+1, math.Abs(dot))
		}
	}
}

func TestPODErrors(t *testing.T) {
	g := piv.Grid{NX: 6, NY: 5, DX: 1, DY: 1}
	frames, _, _ := podSeries(g, 10)
	p, _ := NewPOD(g, 10, 0)
	for _, f := range frames {
		p.Add(f)
	}
	// Acceptance: more modes than frames is a clear error.
	if _, err := p.Decompose(12); err == nil || !strings.Contains(err.Error(), "12 modes requested from 10 frames") {
		t.Fatalf("too many modes: %v", err)
	}
	if _, err := NewPOD(piv.Grid{NX: 1000, NY: 1000, DX: 1, DY: 1}, 1000, 1<<30); err == nil {
		t.Fatal("memory limit not enforced")
	}
	q, _ := NewPOD(g, 2, 0)
	q.Add(frames[0])
	h := piv.NewField(piv.Grid{NX: 6, NY: 4, DX: 1, DY: 1})
	if err := q.Add(h); err == nil {
		t.Fatal("grid mismatch accepted")
	}
}

func sineSignal(n int, fs, f0, amp, noise float64, seed uint64) []float64 {
	rng := rand.New(rand.NewPCG(seed, 1))
	x := make([]float64, n)
	for k := range x {
		x[k] = 0.4 + amp*math.Sin(2*math.Pi*f0*float64(k)/fs) + noise*rng.NormFloat64()
	}
	return x
}

func TestWelchSinePeakAndParseval(t *testing.T) {
	const fs, f0 = 500.0, 37.3
	x := sineSignal(4096, fs, f0, 1.5, 0.3, 5)
	s, err := Welch(x, fs, 256, 128)
	if err != nil {
		t.Fatal(err)
	}
	// Acceptance: the peak lies within one frequency bin of the sine's frequency.
	fp, _ := s.Peak()
	t.Logf("Welch: peak %.3f Hz for a %.3f Hz sine, bin %.3f Hz, %d segments", fp, f0, s.DF, s.Segments)
	if math.Abs(fp-f0) > s.DF {
		t.Errorf("peak at %g Hz, sine at %g Hz, bin %g Hz", fp, f0, s.DF)
	}
	// Parseval (exact): for each Hann-windowed segment, Σ PSD·DF = Σ (w x)²/Σ w² (the DFT's
	// Parseval theorem); Welch averages the segments.
	d := demean(x)
	w := window.Hann(256)
	s2 := 0.0
	for _, v := range w {
		s2 += v * v
	}
	want := 0.0
	for seg := 0; seg < s.Segments; seg++ {
		e := 0.0
		for k := 0; k < 256; k++ {
			v := w[k] * d[seg*128+k]
			e += v * v
		}
		want += e / s2 / float64(s.Segments)
	}
	if got := s.Power(); math.Abs(got-want) > 1e-10*want {
		t.Errorf("Σ PSD·df = %.12g, Parseval %.12g", got, want)
	}
	// And it estimates the variance A²/2 + σ²: the window weighting and the finite record
	// leave a statistical error of a few per cent (31 segments, 50% overlap).
	variance := 1.5*1.5/2 + 0.3*0.3
	t.Logf("Welch power %.4f, signal variance %.4f", s.Power(), variance)
	if math.Abs(s.Power()-variance) > 0.05*variance {
		t.Errorf("power %g, variance %g", s.Power(), variance)
	}
}

func TestWelchAgainstGonumPeriodogram(t *testing.T) {
	// Cross-check go-dsp against a Hann periodogram computed here directly with gonum's
	// dsp/fourier: one segment covering the whole signal.
	const fs = 200.0
	x := sineSignal(512, fs, 23, 1, 0.5, 9)
	s, err := Welch(x, fs, 512, 0)
	if err != nil {
		t.Fatal(err)
	}
	d := demean(x)
	w := window.Hann(512)
	s2 := 0.0
	for k := range d {
		d[k] *= w[k]
		s2 += w[k] * w[k]
	}
	c := fourier.NewFFT(512).Coefficients(nil, d)
	if len(c) != len(s.PSD) {
		t.Fatalf("%d gonum coefficients, %d PSD values", len(c), len(s.PSD))
	}
	for j, z := range c {
		p := (real(z)*real(z) + imag(z)*imag(z)) / (s2 * fs)
		if j > 0 && j < 256 {
			p *= 2
		}
		if math.Abs(p-s.PSD[j]) > 1e-10*math.Max(p, 1e-6) {
			t.Fatalf("bin %d: go-dsp %g, gonum %g", j, s.PSD[j], p)
		}
	}
	// The package's own periodogram is the same estimate.
	q, err := Periodogram(x, fs)
	if err != nil {
		t.Fatal(err)
	}
	for j := range q.PSD {
		if math.Abs(q.PSD[j]-s.PSD[j]) > 1e-10*math.Max(q.PSD[j], 1e-6) {
			t.Fatalf("bin %d: periodogram %g, Welch %g", j, q.PSD[j], s.PSD[j])
		}
	}
}

func TestDominantFrequencyAndStrouhal(t *testing.T) {
	const fs = 1000.0
	for _, f0 := range []float64{12.34, 50, 77.7} {
		x := sineSignal(1000, fs, f0, 1, 0.05, 3)
		f, err := DominantFrequency(x, fs)
		if err != nil {
			t.Fatal(err)
		}
		// Quadratic peak interpolation on a Hann window: within 0.1 bin (bin = 1 Hz here).
		if math.Abs(f-f0) > 0.1 {
			t.Errorf("dominant frequency %g Hz, sine %g Hz", f, f0)
		}
	}
	st, err := Strouhal(5, 0.02, 0.5)
	if err != nil || math.Abs(st-0.2) > 1e-15 {
		t.Fatalf("St = %g, %v", st, err)
	}
	if _, err := Strouhal(5, 0, 1); err == nil {
		t.Fatal("zero diameter accepted")
	}
	if _, err := Welch(make([]float64, 10), fs, 16, 0); err == nil {
		t.Fatal("segment longer than the signal accepted")
	}
	if _, err := Welch([]float64{1, 2, math.NaN(), 4, 5, 6}, fs, 4, 0); err == nil {
		t.Fatal("NaN sample accepted")
	}
	y := []float64{math.NaN(), 1, math.NaN(), math.NaN(), 4, 5, math.NaN(), 7}
	if n, err := FillTimeGaps(y); err != nil || n != 4 || y[0] != 1 || y[2] != 2 || y[3] != 3 || y[6] != 6 {
		t.Fatalf("gap filling: %v %d %v", y, n, err)
	}
	if _, err := UniformRate([]float64{0, 1, 2, 3.5}); err == nil {
		t.Fatal("uneven frames accepted")
	}
}

func TestFillTimeGapsRefuses(t *testing.T) {
	if _, err := FillTimeGaps([]float64{math.NaN(), 1, math.NaN(), math.NaN()}); err == nil {
		t.Fatal("a signal three quarters missing was accepted")
	}
}

func BenchmarkPOD500x128x128(b *testing.B) {
	// Acceptance: POD of 500 frames of 128x128 at most 5 s.
	g := piv.Grid{NX: 128, NY: 128, DX: 1, DY: 1}
	const N = 500
	rng := rand.New(rand.NewPCG(1, 1))
	frames := make([]*piv.Field, N)
	for j := range frames {
		f := piv.NewField(g)
		for q := range f.U {
			f.Set(q, rng.NormFloat64(), rng.NormFloat64())
		}
		frames[j] = f
	}
	b.ResetTimer()
	for b.Loop() {
		p, err := NewPOD(g, N, 0)
		if err != nil {
			b.Fatal(err)
		}
		for _, f := range frames {
			if err := p.Add(f); err != nil {
				b.Fatal(err)
			}
		}
		if _, err := p.Decompose(10); err != nil {
			b.Fatal(err)
		}
	}
	b.ReportMetric(b.Elapsed().Seconds()/float64(b.N), "s/decomposition")
	b.ReportMetric(float64(b.Elapsed().Nanoseconds())/float64(b.N)/float64(N*g.N()), "ns/node-frame")
}

func TestProbeSpectra(t *testing.T) {
	// A probe in a field oscillating at 20 Hz in v (twice the amplitude of a 45 Hz u
	// oscillation): the dominant frequency of u and v together is 20 Hz within a bin; one
	// frame without data is filled in time.
	g := piv.Grid{NX: 3, NY: 3, DX: 0.01, DY: 0.01}
	const fs = 400.0
	p := &Probe{X: 0.01, Y: 0.01}
	for k := 0; k < 512; k++ {
		tt := float64(k) / fs
		f := piv.NewField(g)
		if k != 100 {
			for q := range f.U {
				f.Set(q, 0.3*math.Sin(2*math.Pi*45*tt), 0.6*math.Cos(2*math.Pi*20*tt))
			}
		}
		p.Add(f)
	}
	seg := DefaultSegment(512)
	if seg != 128 {
		t.Fatalf("default segment %d for 512 samples, want 128", seg)
	}
	ps, err := p.Spectra(fs, seg, seg/2)
	if err != nil {
		t.Fatal(err)
	}
	if ps.FilledU != 1 || ps.FilledV != 1 || math.Abs(ps.Dominant-20) > ps.U.DF {
		t.Fatalf("filled %d/%d, dominant %g Hz (bin %g)", ps.FilledU, ps.FilledV, ps.Dominant, ps.U.DF)
	}
	if fu, _ := ps.U.Peak(); math.Abs(fu-45) > ps.U.DF {
		t.Fatalf("u peak %g Hz, want 45", fu)
	}
	if DefaultSegment(10) != 10 || DefaultSegment(11) != 10 || DefaultSegment(40) != 8 {
		t.Fatal("default segment of short records")
	}
}
