// Package stats computes statistics over a series of velocity fields: per-node ensemble
// moments (mean, RMS of the fluctuations, Reynolds stresses, a planar turbulent kinetic energy
// estimate, valid-sample counts) in one pass, phase averages for periodic pulsing, snapshot
// proper orthogonal decomposition, and power spectra at probe points.
//
// Moments use Welford's one-pass update (Welford 1962, Technometrics 4:419), so memory does
// not grow with the number of frames and the variances do not suffer the cancellation of the
// sum-of-squares formula. Variances and covariances are the unbiased sample estimates
// (divided by n − 1).
package stats

import (
	"fmt"
	"math"

	"github.com/wakekit/wakekit/piv"
)

// Moments accumulates per-node statistics of u and v over frames on one grid. Only valid
// vectors count, so each node has its own sample count.
type Moments struct {
	grid   piv.Grid
	frames int
	first  string // the first frame's name, for grid-mismatch messages
	n      []float64
	mu, mv []float64
	m2u    []float64 // Σ (u − ū)²
	m2v    []float64
	cuv    []float64 // Σ (u − ū)(v − v̄)
}

// NewMoments returns an empty accumulator on g.
func NewMoments(g piv.Grid) (*Moments, error) {
	if err := g.Validate(0); err != nil {
		return nil, err
	}
	n := g.N()
	return &Moments{grid: g, n: make([]float64, n), mu: make([]float64, n), mv: make([]float64, n),
		m2u: make([]float64, n), m2v: make([]float64, n), cuv: make([]float64, n)}, nil
}

// Grid returns the accumulator's grid.
func (m *Moments) Grid() piv.Grid { return m.grid }

// Frames returns how many frames were added.
func (m *Moments) Frames() int { return m.frames }

// CheckGrid returns an error naming the frame if f is not on grid g; first names the frame
// that set the grid.
func CheckGrid(g piv.Grid, first string, f *piv.Field) error {
	if f.Grid.Same(g) {
		return nil
	}
	return piv.Errorf(f.Name(), 0, 0, "grid %s differs from the grid of %s (%s); statistics need every frame on the same grid",
		f.Grid, first, g)
}

// Add adds the valid vectors of f.
func (m *Moments) Add(f *piv.Field) error {
	first := m.first
	if first == "" {
		first = "the statistics"
	}
	if err := CheckGrid(m.grid, first, f); err != nil {
		return err
	}
	if m.frames == 0 {
		m.first = f.Name()
	}
	if err := f.Check(); err != nil {
		return piv.Errorf(f.Name(), 0, 0, "%v", err)
	}
	m.frames++
	for k := range m.n {
		if !f.Valid(k) {
			continue
		}
		u, v := f.U[k], f.V[k]
		m.n[k]++
		du := u - m.mu[k]
		dv := v - m.mv[k]
		m.mu[k] += du / m.n[k]
		m.mv[k] += dv / m.n[k]
		m.m2u[k] += du * (u - m.mu[k])
		m.m2v[k] += dv * (v - m.mv[k])
		m.cuv[k] += du * (v - m.mv[k])
	}
	return nil
}

// Result holds the per-node statistics, NaN where a node has too few samples (the mean needs
// one, the second moments two).
type Result struct {
	Grid         piv.Grid
	Frames       int
	Count        []int     // valid samples per node
	MeanU, MeanV []float64 // ensemble mean [m/s]
	RMSU, RMSV   []float64 // RMS of the fluctuations, √<u'u'> [m/s]
	UU, VV, UV   []float64 // Reynolds stresses per unit density <u'u'>, <v'v'>, <u'v'> [m²/s²]
	// TKE is the planar estimate of the turbulent kinetic energy per unit mass,
	// k = (3/4)(<u'u'> + <v'v'>) [m²/s²]: the unmeasured out-of-plane variance <w'w'> is taken
	// as the mean of the two in-plane ones (common practice for planar measurements; it is
	// exact for isotropic turbulence). The in-plane energy alone is ½(<u'u'> + <v'v'>) =
	// (2/3)·TKE.
	TKE []float64
}

// Result returns the statistics so far. Nodes with fewer than minCount samples (at least 1 for
// the mean, 2 for the rest) are NaN.
func (m *Moments) Result(minCount int) *Result {
	n := m.grid.N()
	r := &Result{Grid: m.grid, Frames: m.frames, Count: make([]int, n),
		MeanU: piv.NaNs(n), MeanV: piv.NaNs(n), RMSU: piv.NaNs(n), RMSV: piv.NaNs(n),
		UU: piv.NaNs(n), VV: piv.NaNs(n), UV: piv.NaNs(n), TKE: piv.NaNs(n)}
	for k := 0; k < n; k++ {
		c := m.n[k]
		r.Count[k] = int(c)
		if c < 1 || c < float64(minCount) {
			continue
		}
		r.MeanU[k], r.MeanV[k] = m.mu[k], m.mv[k]
		if c < 2 {
			continue
		}
		uu, vv := m.m2u[k]/(c-1), m.m2v[k]/(c-1)
		r.UU[k], r.VV[k], r.UV[k] = uu, vv, m.cuv[k]/(c-1)
		r.RMSU[k], r.RMSV[k] = math.Sqrt(uu), math.Sqrt(vv)
		r.TKE[k] = 0.75 * (uu + vv)
	}
	return r
}

// MeanField returns the mean as a field: nodes with a mean are Measured, others Missing.
func (r *Result) MeanField() *piv.Field {
	f := piv.NewField(r.Grid)
	for k := range f.U {
		if !math.IsNaN(r.MeanU[k]) {
			f.Set(k, r.MeanU[k], r.MeanV[k])
		}
	}
	return f
}

// CheckPeriod checks a pulsing period against the frame times of a series: it must be finite
// and positive, span at least two frame intervals (so a period has two samples), and not be
// longer than the series.
func CheckPeriod(period float64, times []float64) error {
	if len(times) < 2 {
		return fmt.Errorf("phase averaging needs at least two frames, the series has %d", len(times))
	}
	span := times[len(times)-1] - times[0]
	dt := span / float64(len(times)-1)
	switch {
	case !(period > 0) || math.IsInf(period, 0):
		return fmt.Errorf("period %g s must be finite and positive", period)
	case period > span:
		return fmt.Errorf("period %g s is longer than the series (%g s from the first frame to the last); phase averaging needs at least one whole period",
			period, span)
	case period < 2*dt:
		return fmt.Errorf("period %g s is shorter than two frame intervals (%g s); the pulsing is not resolved", period, 2*dt)
	}
	return nil
}

// PhaseAverage accumulates moments in phase bins of a periodic flow: a frame at time t falls
// in bin floor(bins·frac((t − T0)/Period)).
type PhaseAverage struct {
	Period, T0 float64
	Bins       []*Moments
}

// NewPhaseAverage returns an empty phase average on g with the given number of bins, after
// checking the period against the series' frame times (CheckPeriod).
func NewPhaseAverage(g piv.Grid, period, t0 float64, bins int, times []float64) (*PhaseAverage, error) {
	if err := CheckPeriod(period, times); err != nil {
		return nil, err
	}
	if bins < 1 || bins > 1000 {
		return nil, fmt.Errorf("%d phase bins: use 1 to 1000", bins)
	}
	if !isFinite(t0) {
		return nil, fmt.Errorf("phase origin %g s is not finite", t0)
	}
	p := &PhaseAverage{Period: period, T0: t0, Bins: make([]*Moments, bins)}
	for b := range p.Bins {
		m, err := NewMoments(g)
		if err != nil {
			return nil, err
		}
		p.Bins[b] = m
	}
	return p, nil
}

// Bin returns the phase bin of time t.
func (p *PhaseAverage) Bin(t float64) int {
	ph := (t - p.T0) / p.Period
	ph -= math.Floor(ph)
	b := int(ph * float64(len(p.Bins)))
	return min(max(b, 0), len(p.Bins)-1)
}

// Phase returns the centre phase of bin b as a fraction of the period in [0, 1).
func (p *PhaseAverage) Phase(b int) float64 { return (float64(b) + 0.5) / float64(len(p.Bins)) }

// Add adds f to the bin of its time.
func (p *PhaseAverage) Add(f *piv.Field) error {
	return p.Bins[p.Bin(f.Time)].Add(f)
}

func isFinite(x float64) bool { return !math.IsNaN(x) && !math.IsInf(x, 0) }
