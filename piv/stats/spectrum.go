package stats

import (
	"fmt"
	"math"
	"math/cmplx"

	"github.com/mjibson/go-dsp/spectral"
	"github.com/mjibson/go-dsp/window"
	"gonum.org/v1/gonum/dsp/fourier"

	"github.com/wakekit/wakekit/piv"
)

// Spectrum is a one-sided power spectral density: PSD[j] at Freq[j] = j·DF [Hz], in the
// signal's units squared per hertz, so that Σ PSD·DF is the signal's (window-weighted) mean
// square.
type Spectrum struct {
	Freq, PSD     []float64
	DF            float64 // frequency resolution [Hz]
	SegmentLength int     // samples per segment
	Segments      int     // segments averaged
}

// Peak returns the frequency of the largest PSD value above zero frequency, and its index.
func (s *Spectrum) Peak() (float64, int) {
	best := 1
	for j := 2; j < len(s.PSD); j++ {
		if s.PSD[j] > s.PSD[best] {
			best = j
		}
	}
	return s.Freq[best], best
}

// Power returns Σ PSD·DF, the spectrum's integral.
func (s *Spectrum) Power() float64 {
	p := 0.0
	for _, v := range s.PSD {
		p += v * s.DF
	}
	return p
}

func checkSignal(x []float64, fs float64) error {
	if !(fs > 0) || math.IsInf(fs, 0) {
		return fmt.Errorf("sampling frequency %g Hz must be finite and positive", fs)
	}
	for k, v := range x {
		if !isFinite(v) {
			return fmt.Errorf("sample %d of the signal is %g; fill the gaps first", k+1, v)
		}
	}
	return nil
}

// demean returns x minus its mean.
func demean(x []float64) []float64 {
	m := 0.0
	for _, v := range x {
		m += v
	}
	m /= float64(len(x))
	d := make([]float64, len(x))
	for k, v := range x {
		d[k] = v - m
	}
	return d
}

// Welch estimates the power spectral density of x sampled at fs by Welch's method (Welch
// 1967, IEEE Trans. Audio Electroacoust. 15:70) with github.com/mjibson/go-dsp's Pwelch: Hann
// windowed segments of segLen samples overlapping by overlap samples, averaged. The mean of x
// is removed first (Pwelch does not detrend), and the options are always explicit with no
// padding beyond the segment (Pwelch panics on nil options and mis-scales padded segments).
// segLen must be even, at least 4 and at most len(x).
func Welch(x []float64, fs float64, segLen, overlap int) (*Spectrum, error) {
	if err := checkSignal(x, fs); err != nil {
		return nil, err
	}
	switch {
	case segLen < 4 || segLen%2 != 0:
		return nil, fmt.Errorf("spectrum segment length %d must be even and at least 4", segLen)
	case segLen > len(x):
		return nil, fmt.Errorf("spectrum segment length %d is longer than the signal's %d samples", segLen, len(x))
	case overlap < 0 || overlap >= segLen:
		return nil, fmt.Errorf("segment overlap %d must lie in 0..%d", overlap, segLen-1)
	}
	opt := &spectral.PwelchOptions{NFFT: segLen, Pad: segLen, Noverlap: overlap, Window: window.Hann}
	psd, freq := spectral.Pwelch(demean(x), fs, opt)
	segs := (len(x)-segLen)/(segLen-overlap) + 1
	return &Spectrum{Freq: freq, PSD: psd, DF: fs / float64(segLen), SegmentLength: segLen, Segments: segs}, nil
}

// Periodogram is the Hann-windowed periodogram of the whole of x (one segment, mean removed),
// computed with gonum's dsp/fourier and scaled like Welch, so that it equals Welch with one
// segment of the whole signal (len(x) even).
func Periodogram(x []float64, fs float64) (*Spectrum, error) {
	if err := checkSignal(x, fs); err != nil {
		return nil, err
	}
	n := len(x)
	if n < 4 {
		return nil, fmt.Errorf("a spectrum needs at least 4 samples, got %d", n)
	}
	w := window.Hann(n)
	d := demean(x)
	s2 := 0.0
	for k := range d {
		d[k] *= w[k]
		s2 += w[k] * w[k]
	}
	c := fourier.NewFFT(n).Coefficients(nil, d)
	psd := make([]float64, len(c))
	freq := make([]float64, len(c))
	for j, z := range c {
		p := real(z*cmplx.Conj(z)) / (s2 * fs)
		if j > 0 && !(n%2 == 0 && j == n/2) {
			p *= 2 // one-sided: fold the negative frequencies
		}
		psd[j] = p
		freq[j] = float64(j) * fs / float64(n)
	}
	return &Spectrum{Freq: freq, PSD: psd, DF: fs / float64(n), SegmentLength: n, Segments: 1}, nil
}

// DominantFrequency returns the frequency of the strongest periodic component of x sampled at
// fs: the peak of the Hann-windowed periodogram of the whole record, refined by fitting a
// parabola through the logarithms of the peak bin and its two neighbours (quadratic
// interpolation of spectral peaks, common practice; for a Hann window its bias is a few
// hundredths of a bin, from memory — the tests check 0.1 bin).
func DominantFrequency(x []float64, fs float64) (float64, error) {
	s, err := Periodogram(x, fs)
	if err != nil {
		return 0, err
	}
	f, j := s.Peak()
	if s.PSD[j] == 0 {
		return 0, fmt.Errorf("the signal is constant; no frequency can be detected")
	}
	if j+1 < len(s.PSD) && s.PSD[j-1] > 0 && s.PSD[j+1] > 0 {
		a, b, c := math.Log(s.PSD[j-1]), math.Log(s.PSD[j]), math.Log(s.PSD[j+1])
		if den := a - 2*b + c; den < 0 {
			f += 0.5 * (a - c) / den * s.DF
		}
	}
	return f, nil
}

// Strouhal returns the Strouhal number f·D/U for a frequency f [Hz], length D [m] and velocity
// U [m/s].
func Strouhal(f, D, U float64) (float64, error) {
	if !(D > 0) || !(U > 0) || math.IsInf(D, 0) || math.IsInf(U, 0) {
		return 0, fmt.Errorf("the Strouhal number needs a finite positive length and velocity (got D = %g m, U = %g m/s)", D, U)
	}
	return f * D / U, nil
}

// UniformRate checks that times are evenly spaced (to 1% of the mean interval) and returns
// the sampling frequency.
func UniformRate(times []float64) (float64, error) {
	if len(times) < 4 {
		return 0, fmt.Errorf("a spectrum needs at least 4 frames, got %d", len(times))
	}
	dt := (times[len(times)-1] - times[0]) / float64(len(times)-1)
	for k := 1; k < len(times); k++ {
		if d := times[k] - times[k-1]; math.Abs(d-dt) > 0.01*dt {
			return 0, fmt.Errorf("frame %d is %g s after frame %d, the mean interval is %g s; spectra need evenly spaced frames",
				k+1, d, k, dt)
		}
	}
	return 1 / dt, nil
}

// Probe records the velocity at a point through a series (bilinear interpolation; NaN where
// the point has no data in a frame).
type Probe struct {
	X, Y float64
	U, V []float64
}

// Add records the velocity of f at the probe.
func (p *Probe) Add(f *piv.Field) {
	u, v, ok := f.At(p.X, p.Y, piv.Bilinear)
	if !ok {
		u, v = math.NaN(), math.NaN()
	}
	p.U = append(p.U, u)
	p.V = append(p.V, v)
}

// FillTimeGaps replaces NaN samples of x in place by linear interpolation between the nearest
// valid samples (the nearest one at the ends) and returns how many it replaced. It refuses a
// signal with more than half its samples missing.
func FillTimeGaps(x []float64) (int, error) {
	var valid []int
	for k, v := range x {
		if !math.IsNaN(v) {
			valid = append(valid, k)
		}
	}
	if 2*len(valid) < len(x) {
		return 0, fmt.Errorf("%d of %d samples are missing; too few for a spectrum", len(x)-len(valid), len(x))
	}
	filled := len(x) - len(valid)
	if filled == 0 {
		return 0, nil
	}
	for k := 0; k < valid[0]; k++ {
		x[k] = x[valid[0]]
	}
	for k := valid[len(valid)-1] + 1; k < len(x); k++ {
		x[k] = x[valid[len(valid)-1]]
	}
	for a := 1; a < len(valid); a++ {
		k0, k1 := valid[a-1], valid[a]
		for k := k0 + 1; k < k1; k++ {
			t := float64(k-k0) / float64(k1-k0)
			x[k] = (1-t)*x[k0] + t*x[k1]
		}
	}
	return filled, nil
}

// DefaultSegment returns the Welch segment length for a record of n samples: the largest power
// of two up to n/4 (so that about seven half-overlapping segments are averaged, common
// practice), or the largest even length up to n for records shorter than 16 samples.
func DefaultSegment(n int) int {
	if n < 16 {
		return n &^ 1
	}
	s := 4
	for s*2 <= n/4 {
		s *= 2
	}
	return s
}

// ProbeSpectrum is the pair of Welch spectra of the two velocity components at a probe.
type ProbeSpectrum struct {
	U, V *Spectrum
	// Filled is the number of missing samples filled by linear interpolation in time, per
	// component.
	FilledU, FilledV int
	// Dominant is the frequency of the largest value of PSD_u + PSD_v above zero frequency
	// [Hz], the dominant frequency of the velocity fluctuation at the probe.
	Dominant float64
}

// Spectra fills the probe's gaps in time (FillTimeGaps, on copies) and computes the Welch
// spectra of u and v with the given segment length and overlap.
func (p *Probe) Spectra(fs float64, segLen, overlap int) (*ProbeSpectrum, error) {
	u := append([]float64(nil), p.U...)
	v := append([]float64(nil), p.V...)
	var ps ProbeSpectrum
	var err error
	if ps.FilledU, err = FillTimeGaps(u); err != nil {
		return nil, fmt.Errorf("probe (%g, %g) m: %v", p.X, p.Y, err)
	}
	if ps.FilledV, err = FillTimeGaps(v); err != nil {
		return nil, fmt.Errorf("probe (%g, %g) m: %v", p.X, p.Y, err)
	}
	if ps.U, err = Welch(u, fs, segLen, overlap); err != nil {
		return nil, err
	}
	if ps.V, err = Welch(v, fs, segLen, overlap); err != nil {
		return nil, err
	}
	best := 1
	for j := 1; j < len(ps.U.PSD); j++ {
		if ps.U.PSD[j]+ps.V.PSD[j] > ps.U.PSD[best]+ps.V.PSD[best] {
			best = j
		}
	}
	ps.Dominant = ps.U.Freq[best]
	return &ps, nil
}
