package main

import (
	"bytes"
	"context"
	"math"
	"math/rand/v2"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"github.com/wakekit/wakekit/circulation"
	"github.com/wakekit/wakekit/internal/demo"
	"github.com/wakekit/wakekit/piv"
	"github.com/wakekit/wakekit/pressure"
)

// demoFrames extracts the built-in run and returns its index file and all its frames in memory.
func demoFrames(t *testing.T) (string, []*piv.Field) {
	t.Helper()
	index, err := demo.Extract(filepath.Join(t.TempDir(), "frames"))
	if err != nil {
		t.Fatal(err)
	}
	s, err := piv.OpenSeries([]string{index}, piv.ReadOptions{Geometry: piv.Geometry{Axisymmetric: true, AxisY: demo.AxisY}})
	if err != nil {
		t.Fatal(err)
	}
	frames := make([]*piv.Field, s.Len())
	for k := range frames {
		if frames[k], err = s.Frame(k); err != nil {
			t.Fatal(err)
		}
	}
	return index, frames
}

// withGarbage returns copies of the frames whose nodes inside shape carry random velocities
// of up to +-0.5 m/s, twelve times the jet's exit velocity (what a camera sees on a lit wall).
func withGarbage(frames []*piv.Field, shape piv.Shape) []*piv.Field {
	rng := rand.New(rand.NewPCG(3, 5))
	out := make([]*piv.Field, len(frames))
	for k, f := range frames {
		c := f.Clone()
		for n, in := range piv.Mask(c.Grid, shape) {
			if in {
				c.U[n], c.V[n] = rng.Float64()-0.5, rng.Float64()-0.5
			}
		}
		out[k] = c
	}
	return out
}

// solidJet runs the jet analysis (no Monte-Carlo replicas, with the pressure route) on frames
// with the exit plane at x = exitX and the given solid shape (nil for none).
func solidJet(t *testing.T, frames []*piv.Field, exitX float64, shape piv.Shape) (*jetOutcome, error) {
	t.Helper()
	series, err := piv.MemorySeries(frames)
	if err != nil {
		t.Fatal(err)
	}
	s := &jetSettings{exit: circulation.ExitConfig{X: exitX, Diameter: demo.Diameter, LipOuter: 0.02, Rho: demo.Rho, Nu: demo.Nu},
		threshold: 0.05, noise: -1, samples: 0, seed: 1, smooth: 3, restTime: 0}
	if shape != nil {
		s.solid = &solidMask{shape: shape, describe: "test wall"}
		if err := s.solid.load(frames[0], piv.ReadOptions{}); err != nil {
			t.Fatal(err)
		}
	}
	var out, errb bytes.Buffer
	return runJet(context.Background(), &env{stdout: &out, stderr: &errb}, series, s, &runFlags{workers: 2, quiet: true}, nil,
		func() (string, error) { return t.TempDir(), nil })
}

func figureMap(o *jetOutcome) map[string]float64 {
	m := map[string]float64{}
	for _, f := range o.figures[0] {
		m[f.Key] = f.Value
	}
	return m
}

// The nozzle wall of the demo's geometry moved to x <= 10 mm, 12.5..20 mm from the axis (30
// nodes of the 96 x 40 grid), is filled with garbage velocities. With the wall masked solid the
// budget equals that of the clean series:
//   - exactly (bit for bit) for every figure taken from the exit station column and the
//     columns downstream of it (exit program, slug model, circulation and impulse in view, the
//     leading ring, route (b)), since masking changes no value there;
//   - within 2% for the circulation delivered by the vorticity flux, whose dv/dx at the five
//     wall rows of the station falls back from the central difference (which reads the column
//     inside the wall) to the second-order one-sided one: both are O(h^2) and differ by their
//     truncation errors on 5 of the 40 rows;
//   - within 1% of the momentum-flux impulse for the route (a) over-pressure impulses: the
//     pressure solve integrates the measured gradient around the wall (Neumann) instead of
//     through it, the path change of a Poisson integration (van Oudheusden 2013) on 30 nodes;
//   - within 3% for the estimated noise level, 60 of about 7000 residuals fewer.
//
// Without the mask the garbage moves the delivered circulation and route (a) far outside those
// bounds, so the check can fail.
func TestJetSolidWallGarbage(t *testing.T) {
	_, clean := demoFrames(t)
	wall := pressure.Nozzle{X: 0.010, RIn: 0.0125, ROut: 0.020}
	dirty := withGarbage(clean, wall)
	a, err := solidJet(t, clean, 0.010, nil)
	if err != nil {
		t.Fatal(err)
	}
	b, err := solidJet(t, dirty, 0.010, nil)
	if err != nil {
		t.Fatal(err)
	}
	c, err := solidJet(t, dirty, 0.010, wall)
	if err != nil {
		t.Fatal(err)
	}
	if c.settings.solid.nodes != 30 {
		t.Fatalf("wall covers %d nodes, want 30", c.settings.solid.nodes)
	}
	fa, fb, fc := figureMap(a), figureMap(b), figureMap(c)
	scale := math.Abs(fa["momentum_impulse"])
	exact := []string{"stroke_ratio", "reynolds", "hold_velocity", "slug_circulation", "slug_impulse", "momentum_impulse",
		"gamma_end", "gamma_final", "ring_circulation", "impulse_final", "ring_x", "ring_speed", "pressure_window_b", "peak_force"}
	for _, key := range exact {
		if fc[key] != fa[key] && !(math.IsNaN(fc[key]) && math.IsNaN(fa[key])) {
			t.Errorf("%s: masked %g, clean %g; want equal", key, fc[key], fa[key])
		}
	}
	rel := func(x, y float64) float64 { return math.Abs(x-y) / math.Abs(y) }
	t.Logf("flux circulation: clean %.5g, masked %.5g (%.2f%%), unmasked garbage %.5g", fa["flux_circulation"], fc["flux_circulation"],
		100*rel(fc["flux_circulation"], fa["flux_circulation"]), fb["flux_circulation"])
	if rel(fc["flux_circulation"], fa["flux_circulation"]) > 0.02 {
		t.Errorf("flux circulation masked %g, clean %g: more than 2%%", fc["flux_circulation"], fa["flux_circulation"])
	}
	if rel(fb["flux_circulation"], fa["flux_circulation"]) < 0.1 {
		t.Errorf("unmasked garbage changed the flux circulation only from %g to %g: the check cannot tell", fa["flux_circulation"], fb["flux_circulation"])
	}
	for _, key := range []string{"pressure_impulse_a", "pressure_window_a", "peak_pressure_a"} {
		unit := scale
		if key == "peak_pressure_a" {
			unit = math.Abs(fa["peak_momentum_flux"]) // a force: compare with the peak momentum flux
		}
		t.Logf("%s: clean %.4g, masked %.4g (%.2f%% of the scale), unmasked garbage %.4g", key, fa[key], fc[key], 100*math.Abs(fc[key]-fa[key])/unit, fb[key])
		if math.Abs(fc[key]-fa[key]) > 0.01*unit {
			t.Errorf("%s masked %g, clean %g: more than 1%% of %g", key, fc[key], fa[key], unit)
		}
	}
	if math.Abs(fb["pressure_window_a"]-fa["pressure_window_a"]) < 0.05*scale {
		t.Errorf("unmasked garbage changed route (a) only from %g to %g", fa["pressure_window_a"], fb["pressure_window_a"])
	}
	t.Logf("noise: clean %.4g, masked %.4g, unmasked garbage %.4g m/s", a.noise, c.noise, b.noise)
	if rel(c.noise, a.noise) > 0.03 {
		t.Errorf("noise estimate masked %g, clean %g", c.noise, a.noise)
	}
}

// When the grid column at the exit plane lies on the wall's end face, the exit is measured at
// the next column: the figures then equal those of the clean series measured there (the same
// exactness argument as above), the station is recorded and the shift is said.
func TestJetSolidWallEndFace(t *testing.T) {
	_, clean := demoFrames(t)
	g := clean[0].Grid
	wall := pressure.Nozzle{X: g.X(6), RIn: 0.0125, ROut: 0.020}
	c, err := solidJet(t, withGarbage(clean, wall), g.X(6), wall)
	if err != nil {
		t.Fatal(err)
	}
	if c.stationX != g.X(7) {
		t.Errorf("station x = %g, want the next column %g", c.stationX, g.X(7))
	}
	said := false
	for _, s := range c.notDone {
		said = said || strings.Contains(s, "end face")
	}
	if !said {
		t.Errorf("the shift of the exit station is not reported: %q", c.notDone)
	}
	a, err := solidJet(t, clean, g.X(7), nil)
	if err != nil {
		t.Fatal(err)
	}
	fa, fc := figureMap(a), figureMap(c)
	for _, key := range []string{"stroke_ratio", "slug_circulation", "gamma_final", "ring_circulation", "impulse_final", "pressure_window_b"} {
		if fc[key] != fa[key] {
			t.Errorf("%s: %g with the shifted station, %g measured at that column; want equal", key, fc[key], fa[key])
		}
	}
	// A mask that reaches past the exit station is refused, naming the node.
	if _, err := solidJet(t, clean, 0.010, piv.Rect{X0: 0.05, Y0: 0.03, X1: 0.06, Y1: 0.04}); err == nil || !strings.Contains(err.Error(), "reaches the exit station") {
		t.Errorf("mask downstream of the exit: %v", err)
	}
}

// From the command line --nozzle and a --mask file marking the same nodes give the same
// summary; both are recorded in the settings, and a mask on another grid is refused.
func TestJetSolidFlags(t *testing.T) {
	index, frames := demoFrames(t)
	wall := pressure.Nozzle{X: 0.010, RIn: 0.0125, ROut: 0.020}
	mf := frames[0].Clone()
	mf.MaskSolid(wall)
	dir := t.TempDir()
	mask := filepath.Join(dir, "mask.csv")
	if err := piv.WriteCSV(mask, mf); err != nil {
		t.Fatal(err)
	}
	common := []string{"jet", index, "--axisymmetric", "--exit", "0.01", "--diameter", "0.025", "--lip", "0.02", "--samples", "0", "--no-pressure", "-q"}
	runOne := func(name string, extra ...string) jsonSummary {
		out := filepath.Join(dir, name)
		code, _, stderr := runCapture(append(append(append([]string(nil), common...), extra...), "--out", out)...)
		if code != 0 {
			t.Fatalf("%s: exit %d: %s", name, code, stderr)
		}
		return readSummary(t, out)
	}
	n := runOne("nozzle", "--nozzle", "0.01,0.0125,0.02")
	m := runOne("mask", "--mask", mask)
	if n.Settings["solid_nodes"] != float64(30) || m.Settings["solid_nodes"] != float64(30) || m.Settings["mask_sha256"] == nil || n.Settings["nozzle_m"] == nil {
		t.Errorf("settings lack the mask: %v / %v", n.Settings, m.Settings)
	}
	for key, f := range n.Pulses[0].Figures {
		g := m.Pulses[0].Figures[key]
		if (f.Value == nil) != (g.Value == nil) || f.Value != nil && *f.Value != *g.Value {
			t.Errorf("%s: --nozzle %v, --mask %v", key, f.Value, g.Value)
		}
	}
	b, err := os.ReadFile(filepath.Join(dir, "mask", "report.html"))
	if err != nil || !strings.Contains(string(b), "solid mask") {
		t.Errorf("report does not state the mask (%v)", err)
	}
	for _, c := range []struct {
		args []string
		want string
	}{
		{[]string{"--nozzle", "0.01,0.02,0.0125"}, "0 <= R_IN < R_OUT"},
		{[]string{"--nozzle", "5,0.0125,0.02"}, "outside the field"},
		{[]string{"--nozzle", "0.01,0.0125,0.02", "--mask", mask}, "exclude each other"},
		{[]string{"--mask", filepath.Join(dir, "none.csv")}, "none.csv"},
	} {
		out := filepath.Join(dir, "bad")
		code, _, stderr := runCapture(append(append(append([]string(nil), common...), c.args...), "--out", out)...)
		if code == 0 || !strings.Contains(stderr, c.want) {
			t.Errorf("%v: exit %d, %q; want %q", c.args, code, stderr, c.want)
		}
		if _, err := os.Stat(out); !os.IsNotExist(err) {
			t.Errorf("%v left %s", c.args, out)
		}
	}
}
