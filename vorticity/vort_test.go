package vorticity

import (
	"math"
	"math/rand/v2"
	"testing"

	"github.com/wakekit/wakekit/piv"
	"github.com/wakekit/wakekit/piv/analytic"
)

// generalVorticity is the vorticity by the general path alone: every node of the masked
// field (masked, the copies VorticityTo falls back to) goes through along, the per-node
// stencil choice of the package documentation, with no fast loop.
func generalVorticity(f *piv.Field, sc Scheme) []float64 {
	g := f.Grid
	u, v, st := masked(f)
	out := make([]float64, g.N())
	for j := 0; j < g.NY; j++ {
		for i := 0; i < g.NX; i++ {
			k := g.Index(i, j)
			if !st[k].Valid() {
				out[k] = math.NaN()
				continue
			}
			a, _ := along(v, k, i, g.NX, 1, 1/g.DX, sc, j, g.NY, g.NX)
			b, _ := along(u, k, j, g.NY, g.NX, 1/g.DY, sc, i, g.NX, 1)
			out[k] = a - b
		}
	}
	return out
}

// TestVorticityFastPathMatchesGeneral is the property test of the fast loops (whole usable
// rows, rows with holes, the runs between holes): on random fields and masks the vorticity of
// VorticityTo equals, bit for bit, that of the general per-node path (for the circulation
// scheme to round-off, see below). The masks range from
// none to half the nodes, with solid blocks, unusable nodes holding finite garbage (a field
// never normalized) and usable-status nodes with a NaN component; the grid widths include
// ones below and around the eight-status blocks the row check reads.
func TestVorticityFastPathMatchesGeneral(t *testing.T) {
	rng := rand.New(rand.NewPCG(21, 8))
	flow := analytic.Superposition{lambOseen, analytic.Uniform{U: 0.03, V: -0.01}}
	for trial := 0; trial < 60; trial++ {
		nx, ny := 1+rng.IntN(40), 1+rng.IntN(30)
		if trial%4 == 0 {
			nx = 8*(1+rng.IntN(5)) + 2 // interior rows of whole eight-status blocks
		}
		g := piv.Grid{NX: nx, NY: ny, X0: -0.01, Y0: -0.008, DX: 0.0004 + 0.0003*rng.Float64(), DY: 0.0005}
		f := analytic.Sample(flow, g, 0)
		share := []float64{0, 0, 0.002, 0.02, 0.1, 0.5}[trial%6]
		for k := range f.Status {
			if rng.Float64() < share {
				f.Status[k] = piv.Missing
			}
		}
		if trial%3 == 1 && nx > 4 && ny > 4 { // a solid block
			i0, j0 := rng.IntN(nx-3), rng.IntN(ny-3)
			for j := j0; j < j0+3; j++ {
				for i := i0; i < i0+3; i++ {
					f.Status[g.Index(i, j)] = piv.Solid
				}
			}
		}
		f.Normalize()
		switch trial % 5 {
		case 2: // finite garbage at unusable nodes
			for k, s := range f.Status {
				if !s.Valid() {
					f.U[k], f.V[k] = rng.NormFloat64(), rng.NormFloat64()
				}
			}
		case 3: // a usable status with a NaN component
			k := rng.IntN(g.N())
			if f.Status[k].Valid() {
				f.U[k] = math.NaN()
			}
		}
		// Round-off scale of a stencil sum: the largest speed over the smaller spacing.
		umax := 0.0
		for k, s := range f.Status {
			if s.Valid() && f.U[k] == f.U[k] && f.V[k] == f.V[k] {
				umax = max(umax, math.Abs(f.U[k]), math.Abs(f.V[k]))
			}
		}
		roundOff := 64 * 0x1p-52 * umax / min(g.DX, g.DY)
		for _, sc := range Schemes {
			want := generalVorticity(f, sc)
			got := make([]float64, g.N())
			for k := range got {
				got[k] = 12345 // every node must be written
			}
			VorticityTo(got, f, sc)
			for k := range got {
				same := math.Float64bits(got[k]) == math.Float64bits(want[k]) || math.IsNaN(got[k]) && math.IsNaN(want[k])
				if sc == Circulation && !same {
					// The fast circulation stencil sums the six values of both differences in one
					// expression, the general path each derivative apart: equal to round-off.
					same = math.Abs(got[k]-want[k]) <= roundOff
				}
				if !same {
					i, j := g.IJ(k)
					t.Fatalf("trial %d (%dx%d, %.3g missing) %s: node (%d, %d) fast %v, general %v",
						trial, nx, ny, share, sc, i, j, got[k], want[k])
				}
			}
		}
	}
}

// TestRowUsable checks the eight-at-a-time status scan against Status.Valid on every
// position of short rows.
func TestRowUsable(t *testing.T) {
	for n := 0; n <= 20; n++ {
		row := make([]piv.Status, n)
		if !rowUsable(row) {
			t.Fatalf("row of %d measured nodes reported unusable", n)
		}
		for p := 0; p < n; p++ {
			for _, s := range []piv.Status{piv.Replaced | piv.RejectedMedian, piv.Missing, piv.Solid, piv.Missing | piv.RejectedStd} {
				for q := range row {
					row[q] = piv.Measured
				}
				row[p] = s
				if got := rowUsable(row); got != s.Valid() {
					t.Fatalf("length %d, %v at %d: rowUsable %v, want %v", n, s, p, got, s.Valid())
				}
			}
		}
	}
}
