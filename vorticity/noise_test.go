package vorticity

import (
	"math"
	"math/rand/v2"
	"testing"

	"github.com/wakekit/wakekit/piv"
	"github.com/wakekit/wakekit/piv/analytic"
	"gonum.org/v1/gonum/stat"
)

// TestNoiseFactorsQuoted compares the factors derived from the stencil weights (sum of
// squared weights, square-rooted; derivation in NoiseFactor) with those quoted in Raffel et
// al., Particle Image Velocimetry: A Practical Guide, for the random error of a derivative
// and of the vorticity in units of sigma_u / h. The quoted values are from memory:
// per derivative central 0.71, Richardson 0.95, least-squares 0.32; vorticity central 1.00,
// Richardson 1.34, least-squares 0.45, local circulation 0.61. They agree to the two digits
// quoted (tolerance 0.006, half a unit of the last quoted digit plus rounding).
func TestNoiseFactorsQuoted(t *testing.T) {
	derivative := map[Scheme]float64{Central: 0.71, Richardson: 0.95, LeastSquares: 0.32}
	vort := map[Scheme]float64{Central: 1.00, Richardson: 1.34, LeastSquares: 0.45, Circulation: 0.61}
	for sc, q := range derivative {
		if got := NoiseFactor(sc); math.Abs(got-q) > 0.006 {
			t.Errorf("%s: derivative factor %.4f, quoted %.2f", sc, got, q)
		}
	}
	for sc, q := range vort {
		if got := VorticityNoiseFactor(sc); math.Abs(got-q) > 0.006 {
			t.Errorf("%s: vorticity factor %.4f, quoted %.2f", sc, got, q)
		}
	}
	// Derived exactly: central 1/sqrt(2), Richardson sqrt(130)/12, least-squares 1/sqrt(10),
	// circulation sqrt(12)/8 per derivative; vorticity sqrt(2) times these.
	exact := map[Scheme]float64{Central: 1 / math.Sqrt2, Richardson: math.Sqrt(130) / 12,
		LeastSquares: 1 / math.Sqrt(10), Circulation: math.Sqrt(12) / 8}
	for sc, e := range exact {
		if math.Abs(NoiseFactor(sc)-e) > 1e-15 || math.Abs(VorticityNoiseFactor(sc)-math.Sqrt2*e) > 1e-15 {
			t.Errorf("%s: factors %.6f, %.6f; derived %.6f, %.6f", sc, NoiseFactor(sc), VorticityNoiseFactor(sc), e, math.Sqrt2*e)
		}
	}
}

// noisyUniform returns a uniform flow on g with seeded independent Gaussian noise of standard
// deviation sigma added to each component.
func noisyUniform(g piv.Grid, sigma float64, rng *rand.Rand) *piv.Field {
	f := analytic.Sample(analytic.Uniform{U: 0.3, V: -0.1}, g, 0)
	for k := range f.U {
		f.U[k] += sigma * rng.NormFloat64()
		f.V[k] += sigma * rng.NormFloat64()
	}
	return f
}

// TestNoiseMonteCarlo adds seeded Gaussian noise of known sigma to a uniform flow and compares
// the measured standard deviation of each scheme's derivatives and vorticity with the closed
// form k sigma / h within 3% (the acceptance limit). With about 62 000 interior nodes the
// sampling error of a standard deviation is about 0.3%, a few times more for the correlated
// estimates of the wide stencils.
func TestNoiseMonteCarlo(t *testing.T) {
	const sigma, h = 0.01, 0.001
	g := squareGrid(256, h)
	f := noisyUniform(g, sigma, rand.New(rand.NewPCG(2026, 12)))
	for _, sc := range Schemes {
		gr := NewGradient(f, sc)
		w := gr.Vorticity()
		var dudx, dvdy, vort []float64
		for k, st := range gr.Stencil {
			if st == fullStencil {
				dudx = append(dudx, gr.DUDX[k])
				dvdy = append(dvdy, gr.DVDY[k])
				vort = append(vort, w[k])
			}
		}
		check := func(name string, x []float64, want float64) {
			got := stat.StdDev(x, nil)
			t.Logf("%s %s: measured %.4f, closed form %.4f sigma/h", sc, name, got*h/sigma, want*h/sigma)
			if math.Abs(got-want) > 0.03*want {
				t.Errorf("%s %s: standard deviation %.5g, closed form %.5g (more than 3%% apart)", sc, name, got, want)
			}
		}
		check("du/dx", dudx, NoiseFactor(sc)*sigma/h)
		check("dv/dy", dvdy, NoiseFactor(sc)*sigma/h)
		check("vorticity", vort, VorticityNoiseFactor(sc)*sigma/h)
	}
}

// TestVorticityUncertaintyField checks the per-node uncertainty, fallback stencils included,
// by Monte Carlo: over 1500 seeded realisations of noise on a small grid with holes and an
// unequal spacing, the mean ratio of measured to predicted vorticity variance within each
// class of stencil pair is 1 within 3% (the sampling error of a class mean is below 1%).
func TestVorticityUncertaintyField(t *testing.T) {
	const sigma = 0.01
	g := piv.Grid{NX: 36, NY: 30, DX: 0.001, DY: 0.0015}
	rng := rand.New(rand.NewPCG(77, 1))
	holes := make([]bool, g.N())
	for k := range holes {
		holes[k] = rng.Float64() < 0.12
	}
	for _, sc := range Schemes {
		var pred []float64
		var stencils []Stencil
		sum := make([]float64, g.N())
		sum2 := make([]float64, g.N())
		const runs = 1500
		for range runs {
			f := noisyUniform(g, sigma, rng)
			for k, h := range holes {
				if h {
					f.Status[k] = piv.Missing
				}
			}
			f.Normalize()
			gr := NewGradient(f, sc)
			if pred == nil {
				pred = gr.VorticityUncertainty(sigma)
				stencils = gr.Stencil
			}
			for k, w := range gr.Vorticity() {
				sum[k] += w
				sum2[k] += w * w
			}
		}
		// At a node with full stencils the field equals the grid-level figure.
		for k, st := range stencils {
			if st == fullStencil {
				if want := VorticityNoise(sc, g, sigma); math.Abs(pred[k]-want) > 1e-12*want {
					t.Fatalf("%s: full-stencil uncertainty %.6g, VorticityNoise %.6g", sc, pred[k], want)
				}
				break
			}
		}
		ratio := map[Stencil][]float64{}
		for k, p := range pred {
			if math.IsNaN(p) {
				if !math.IsNaN(sum[k]) {
					t.Fatalf("%s: node %d has a vorticity but no uncertainty", sc, k)
				}
				continue
			}
			mean := sum[k] / runs
			v := (sum2[k]/runs - mean*mean) * runs / (runs - 1)
			ratio[stencils[k]] = append(ratio[stencils[k]], v/(p*p))
		}
		for st, r := range ratio {
			if len(r) < 8 {
				continue // too few nodes for a class mean
			}
			m := stat.Mean(r, nil)
			if math.Abs(m-1) > 0.03 {
				t.Errorf("%s: stencils %v (%d nodes): measured/predicted variance %.4f", sc, st, len(r), m)
			}
		}
		if len(ratio) < 4 {
			t.Errorf("%s: only %d stencil classes exercised", sc, len(ratio))
		}
	}
}

// TestRange checks Range on a hand-made slice (the values are their own reference).
func TestRange(t *testing.T) {
	lo, hi, n := Range([]float64{math.NaN(), 3, -2, math.Inf(1), 7, 0})
	if lo != -2 || hi != 7 || n != 4 {
		t.Errorf("Range = %g, %g, %d; want -2, 7, 4", lo, hi, n)
	}
	if lo, hi, n := Range([]float64{math.NaN()}); !math.IsNaN(lo) || !math.IsNaN(hi) || n != 0 {
		t.Errorf("Range of no finite values = %g, %g, %d", lo, hi, n)
	}
}
