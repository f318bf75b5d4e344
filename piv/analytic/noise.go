package analytic

import (
	"fmt"
	"math"
	"math/rand/v2"
	"slices"

	"github.com/wakekit/wakekit/piv"
)

// Noise is a model of the measurement error of a velocimetry vector field, applied to an exact
// field in three steps, in this order:
//
//  1. interrogation-window averaging: each vector becomes the mean of the valid vectors in the
//     Window x Window block of nodes centred on it (a box filter; blocks are cut at the edges
//     of the grid and at invalid nodes), the spatial filtering of a correlation window that
//     spans Window vector spacings;
//  2. random error: independent Gaussian noise of standard deviation Sigma added to each
//     component of each valid vector;
//  3. spurious vectors: a share SpuriousFraction of the valid nodes, chosen at random, get a
//     vector drawn uniformly from the square [-S, S]^2, where S is the largest speed of the
//     field (or 10 Sigma when the field is at rest). A few of these land close to the true
//     vector by chance, as real outliers sometimes do.
//
// The random error may be given instead in pixels, as commonly quoted for correlation peaks:
// Sigma = SigmaPx * PixelSize / PulseSeparation. The draws come from a PCG generator seeded with
// (Seed, Stream), so the same settings always give the same field; give each frame of a series
// its own Stream (for instance the frame number).
type Noise struct {
	Sigma            float64 // random error per component [m/s]
	SigmaPx          float64 // random error per component [px], instead of Sigma
	PixelSize        float64 // [m/px], with SigmaPx
	PulseSeparation  float64 // time between the two exposures [s], with SigmaPx
	SpuriousFraction float64 // share of valid nodes replaced by spurious vectors, 0..1
	Window           int     // box-average window in nodes, odd; 0 or 1 for none
	Seed, Stream     uint64  // PCG seed words
}

// SigmaSI returns the random error per component in m/s, converting SigmaPx when it is given.
func (n Noise) SigmaSI() (float64, error) {
	if err := n.Validate(); err != nil {
		return 0, err
	}
	if n.SigmaPx > 0 {
		return n.SigmaPx * n.PixelSize / n.PulseSeparation, nil
	}
	return n.Sigma, nil
}

// Validate checks the settings: non-negative finite errors, the pixel conversion when SigmaPx
// is used (and not both Sigma and SigmaPx), a fraction in [0, 1] and an odd window.
func (n Noise) Validate() error {
	bad := func(x float64) bool { return math.IsNaN(x) || math.IsInf(x, 0) || x < 0 }
	switch {
	case bad(n.Sigma):
		return fmt.Errorf("noise level %g m/s must be a finite number >= 0", n.Sigma)
	case bad(n.SigmaPx):
		return fmt.Errorf("noise level %g px must be a finite number >= 0", n.SigmaPx)
	case n.SigmaPx > 0 && n.Sigma > 0:
		return fmt.Errorf("give the noise level in m/s or in px, not both")
	case n.SigmaPx > 0 && (bad(n.PixelSize) || n.PixelSize == 0 || bad(n.PulseSeparation) || n.PulseSeparation == 0):
		return fmt.Errorf("a noise level in px needs a positive pixel size (m/px) and pulse separation (s); got %g and %g",
			n.PixelSize, n.PulseSeparation)
	case math.IsNaN(n.SpuriousFraction) || n.SpuriousFraction < 0 || n.SpuriousFraction > 1:
		return fmt.Errorf("spurious-vector fraction %g must be between 0 and 1", n.SpuriousFraction)
	case n.Window < 0 || (n.Window > 1 && n.Window%2 == 0):
		return fmt.Errorf("window of %d nodes must be an odd number (1, 3, 5, ...)", n.Window)
	}
	return nil
}

// Zero reports whether the model leaves a field unchanged.
func (n Noise) Zero() bool {
	return n.Sigma == 0 && n.SigmaPx == 0 && n.SpuriousFraction == 0 && n.Window <= 1
}

// Apply adds the modelled error to f in place and returns the sorted indices of the nodes made
// spurious (the ground truth for outlier tests). Invalid nodes are left as they are. Noisy and
// spurious vectors keep their status (Measured for a sampled flow): the error is part of the
// measurement, for the validation tests to find.
func (n Noise) Apply(f *piv.Field) ([]int, error) {
	sigma, err := n.SigmaSI()
	if err != nil {
		return nil, err
	}
	if err := f.Check(); err != nil {
		return nil, err
	}
	if n.Window > 1 {
		BoxAverage(f, n.Window)
	}
	rng := rand.New(rand.NewPCG(n.Seed, n.Stream))
	valid := make([]int, 0, len(f.U))
	for k := range f.U {
		if f.Valid(k) {
			valid = append(valid, k)
		}
	}
	if sigma > 0 {
		for _, k := range valid {
			f.U[k] += sigma * rng.NormFloat64()
			f.V[k] += sigma * rng.NormFloat64()
		}
	}
	m := int(math.Round(n.SpuriousFraction * float64(len(valid))))
	if m == 0 {
		return nil, nil
	}
	s := 0.0
	for _, k := range valid {
		s = math.Max(s, math.Hypot(f.U[k], f.V[k]))
	}
	if s == 0 {
		s = 10 * sigma
	}
	if s == 0 {
		return nil, fmt.Errorf("%s: spurious vectors need a velocity scale, but the field is at rest and has no noise", f.Name())
	}
	// Partial Fisher–Yates shuffle: the first m entries become a uniform random subset.
	for i := 0; i < m; i++ {
		j := i + rng.IntN(len(valid)-i)
		valid[i], valid[j] = valid[j], valid[i]
	}
	spurious := valid[:m]
	for _, k := range spurious {
		f.U[k] = s * (2*rng.Float64() - 1)
		f.V[k] = s * (2*rng.Float64() - 1)
	}
	out := slices.Clone(spurious)
	slices.Sort(out)
	return out, nil
}

// BoxAverage replaces each valid vector of f by the mean of the valid vectors in the w x w
// block of nodes centred on it (w odd; blocks are cut at the grid's edges). It is computed as
// separable running sums of the valid values and of the valid counts, so its cost does not grow
// with w.
func BoxAverage(f *piv.Field, w int) {
	if w <= 1 {
		return
	}
	g := f.Grid
	n := g.N()
	half := w / 2
	mask := make([]float64, n)
	su := make([]float64, n)
	sv := make([]float64, n)
	for k := range mask {
		if f.Valid(k) {
			mask[k], su[k], sv[k] = 1, f.U[k], f.V[k]
		}
	}
	tmp := make([]float64, max(g.NX, g.NY))
	for _, a := range [][]float64{mask, su, sv} {
		boxSum(a, g.NX, g.NY, 1, g.NX, half, tmp) // along x: rows of NX nodes, stride 1
		boxSum(a, g.NY, g.NX, g.NX, 1, half, tmp) // along y: columns of NY nodes, stride NX
	}
	for k := range mask {
		if f.Valid(k) {
			f.U[k], f.V[k] = su[k]/mask[k], sv[k]/mask[k]
		}
	}
}

// boxSum replaces each of the lines of a (count lines of length n, element stride step, line
// stride lineStep) by its running sum over +-half neighbours, cut at the ends.
func boxSum(a []float64, n, count, step, lineStep, half int, tmp []float64) {
	tmp = tmp[:n]
	for l := 0; l < count; l++ {
		base := l * lineStep
		for i := 0; i < n; i++ {
			tmp[i] = a[base+i*step]
		}
		// A running sum: add the node entering the window, drop the one leaving it. Rounding
		// drifts by about eps times the line length, and restarts on every line.
		s := 0.0
		for i := 0; i < n && i <= half; i++ {
			s += tmp[i]
		}
		for i := 0; i < n; i++ {
			a[base+i*step] = s
			if j := i + half + 1; j < n {
				s += tmp[j]
			}
			if j := i - half; j >= 0 {
				s -= tmp[j]
			}
		}
	}
}
