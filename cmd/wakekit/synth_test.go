package main

import (
	"bytes"
	"encoding/json"
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"github.com/wakekit/wakekit/piv"
	"github.com/wakekit/wakekit/piv/analytic"
)

// "wakekit synth lamb-oseen --out DIR" alone works, and the frame read back through the frame
// index equals the exact flow to the last bit (the writer keeps every digit).
func TestSynthDefaults(t *testing.T) {
	dir := filepath.Join(t.TempDir(), "vortex")
	code, out, errs := runCapture("synth", "lamb-oseen", "--out", dir)
	if code != 0 {
		t.Fatalf("status %d: %s", code, errs)
	}
	if !strings.Contains(out, "peak vorticity") {
		t.Errorf("summary lacks the exact peak vorticity:\n%s", out)
	}
	s, err := piv.OpenSeries([]string{filepath.Join(dir, "frames.csv")}, piv.ReadOptions{})
	if err != nil {
		t.Fatal(err)
	}
	if s.Len() != 1 {
		t.Fatalf("%d frames, want 1", s.Len())
	}
	f, err := s.Frame(0)
	if err != nil {
		t.Fatal(err)
	}
	want := analytic.Sample(analytic.LambOseen{Gamma: 0.01, CoreRadius: 5e-3, Rho: analytic.Water}, f.Grid, 0)
	g := f.Grid
	if g.NX != 128 || g.NY != 96 || math.Abs(g.DX-1e-3) > 1e-15 || math.Abs(g.X0+0.0635) > 1e-15 {
		t.Fatalf("grid %v, want 128x96 at 1 mm centred on the vortex", g)
	}
	for k := range f.U {
		if f.U[k] != want.U[k] || f.V[k] != want.V[k] || f.Status[k] != piv.Measured {
			t.Fatalf("node %d: read (%v, %v, %v), exact (%v, %v)", k, f.U[k], f.V[k], f.Status[k], want.U[k], want.V[k])
		}
	}
	var sum synthSummary
	b, err := os.ReadFile(filepath.Join(dir, "synth.json"))
	if err != nil || json.Unmarshal(b, &sum) != nil {
		t.Fatalf("synth.json: %v", err)
	}
	if w := float64(sum.Exact["peak_vorticity_first_frame [1/s]"]); math.Abs(w-0.01/(math.Pi*25e-6)) > 1e-9 {
		t.Errorf("synth.json peak vorticity %g, want Gamma/(pi r0^2) = %g", w, 0.01/(math.Pi*25e-6))
	}
}

// A drifting, decaying vortex over several frames: times come from the index, and each frame
// is the exact flow at its time (the vortex has moved by drift * t).
func TestSynthSeries(t *testing.T) {
	dir := t.TempDir()
	code, _, errs := runCapture("synth", "lamb-oseen", "--frames", "5", "--dt", "0.02", "--nu", "1e-4",
		"--drift", "0.1,-0.05", "--grid", "40x30", "--spacing", "1e-3", "--exact", "--workers", "2", "-o", dir)
	if code != 0 {
		t.Fatalf("status %d: %s", code, errs)
	}
	s, err := piv.OpenSeries([]string{dir}, piv.ReadOptions{})
	if err != nil {
		t.Fatal(err)
	}
	if s.Len() != 5 || math.Abs(s.Time(4)-0.08) > 1e-15 {
		t.Fatalf("%d frames, last at %g s; want 5 frames, last at 0.08 s", s.Len(), s.Time(s.Len()-1))
	}
	flow := analytic.LambOseen{Gamma: 0.01, CoreRadius: 5e-3, Nu: 1e-4, Uc: 0.1, Vc: -0.05}
	f, err := s.Frame(4)
	if err != nil {
		t.Fatal(err)
	}
	want := analytic.Sample(flow, f.Grid, 0.08)
	for k := range f.U {
		if f.U[k] != want.U[k] || f.V[k] != want.V[k] {
			t.Fatalf("frame 4 node %d: (%v, %v), exact (%v, %v)", k, f.U[k], f.V[k], want.U[k], want.V[k])
		}
	}
	b, _ := os.ReadFile(filepath.Join(dir, "frame_0004.csv"))
	if !strings.HasPrefix(string(b), "x [m],y [m],u [m/s],v [m/s],status,omega_exact [1/s],p_exact [Pa]\n") {
		t.Errorf("--exact header: %q", strings.SplitN(string(b), "\n", 2)[0])
	}
}

// Hill's vortex is written so that reading it with --axisymmetric --axis 0 is right: the grid
// starts on the axis and the values are the axisymmetric flow about y = 0.
func TestSynthHillAxis(t *testing.T) {
	dir := t.TempDir()
	code, out, errs := runCapture("synth", "hill", "--grid", "33x17", "--spacing", "2.5e-3", "-o", dir)
	if code != 0 {
		t.Fatalf("status %d: %s", code, errs)
	}
	if !strings.Contains(out, "--axisymmetric --axis 0") {
		t.Errorf("summary does not say how to read the axis:\n%s", out)
	}
	s, err := piv.OpenSeries([]string{dir}, piv.ReadOptions{Geometry: piv.Geometry{Axisymmetric: true}})
	if err != nil {
		t.Fatal(err)
	}
	f, err := s.Frame(0)
	if err != nil {
		t.Fatal(err)
	}
	if f.Grid.Y0 != 0 {
		t.Fatalf("grid starts at y = %g, want the axis y = 0", f.Grid.Y0)
	}
	want := analytic.Sample(analytic.Hill{Radius: 0.02, Speed: 0.1}, f.Grid, 0)
	for k := range f.U {
		if f.U[k] != want.U[k] || f.V[k] != want.V[k] {
			t.Fatalf("node %d: (%v, %v), exact (%v, %v)", k, f.U[k], f.V[k], want.U[k], want.V[k])
		}
	}
	for i := 0; i < f.Grid.NX; i++ {
		if f.V[i] != 0 {
			t.Fatalf("radial velocity %g on the axis", f.V[i])
		}
	}
}

// The same seed writes the same bytes; spurious.csv lists round(fraction * nodes) nodes per
// frame, and those nodes are the ones that differ grossly from the exact flow.
func TestSynthNoise(t *testing.T) {
	args := []string{"synth", "rankine", "--grid", "30x20", "--frames", "2", "--noise", "1e-4", "--spurious", "0.05", "--seed", "11"}
	d1, d2 := t.TempDir(), t.TempDir()
	for _, d := range []string{d1, d2} {
		if code, _, errs := runCapture(append(args, "-o", d)...); code != 0 {
			t.Fatalf("status %d: %s", code, errs)
		}
	}
	for _, name := range []string{"frame_0000.csv", "frame_0001.csv", "spurious.csv"} {
		a, _ := os.ReadFile(filepath.Join(d1, name))
		b, _ := os.ReadFile(filepath.Join(d2, name))
		if len(a) == 0 || !bytes.Equal(a, b) {
			t.Errorf("%s differs between runs with the same seed", name)
		}
	}
	sp, _ := os.ReadFile(filepath.Join(d1, "spurious.csv"))
	lines := strings.Split(strings.TrimSpace(string(sp)), "\n")
	if len(lines) != 1+2*30 { // round(0.05 * 600) = 30 per frame
		t.Fatalf("spurious.csv has %d rows, want 60", len(lines)-1)
	}
	if !strings.HasPrefix(lines[0], "frame,i,j,") || !strings.HasPrefix(lines[len(lines)-1], "1,") {
		t.Errorf("spurious.csv rows: first %q, last %q", lines[0], lines[len(lines)-1])
	}
	// The folder still reads as a series with its times: the table is not a frame index.
	s, err := piv.OpenSeries([]string{d1}, piv.ReadOptions{})
	if err != nil || s.Len() != 2 || s.Time(1) != 0.01 {
		t.Fatalf("reading the folder back: %v", err)
	}
	a0, _ := os.ReadFile(filepath.Join(d1, "frame_0000.csv"))
	a1, _ := os.ReadFile(filepath.Join(d1, "frame_0001.csv"))
	if bytes.Equal(a0, a1) {
		t.Error("frames 0 and 1 of a steady flow have the same noise")
	}
}

// Bad usage exits with status 2 and writes nothing.
func TestSynthBadUsage(t *testing.T) {
	cases := [][]string{
		{}, {"no-such-flow"}, {"lamb-oseen", "rankine"},
		{"lamb-oseen", "--grid", "1x5"}, {"lamb-oseen", "--grid", "abc"}, {"lamb-oseen", "--grid", "100000x100000"},
		{"lamb-oseen", "--spacing", "-1"}, {"lamb-oseen", "--spacing", "NaN"}, {"lamb-oseen", "--frames", "0"},
		{"lamb-oseen", "--frames", "3", "--dt", "0"}, {"lamb-oseen", "--window", "4"}, {"lamb-oseen", "--spurious", "2"},
		{"lamb-oseen", "--noise", "-0.1"}, {"lamb-oseen", "--noise-px", "0.1"}, {"lamb-oseen", "--format", "png"},
		{"lamb-oseen", "--core-radius", "0"}, {"lamb-oseen", "--gamma", "0"}, {"lamb-oseen", "--nu", "-1"},
		{"lamb-oseen", "--nu", "1e-6", "--t0", "-100"}, {"hill", "--drift", "1,0"}, {"hill", "--radius", "-1"},
		{"pair", "--separation", "0"}, {"taylor-green", "--wavelength", "0"}, {"rotation", "--omega", "0"},
		{"lamb-oseen", "--origin", "1"}, {"lamb-oseen", "--rho", "0"}, {"lamb-oseen", "--shard", "1/2"},
		{"lamb-oseen", "--window-size", "-1"}, {"lamb-oseen", "--window-size", "1e-3", "--window", "3"},
	}
	for _, c := range cases {
		dir := filepath.Join(t.TempDir(), "out")
		code, _, errs := runCapture(append(append([]string{"synth"}, c...), "-o", dir)...)
		if code != 2 || errs == "" {
			t.Errorf("%v: status %d, stderr %q; want 2 and a message", c, code, errs)
		}
		if _, err := os.Stat(dir); err == nil {
			t.Errorf("%v: output folder created", c)
		}
	}
}

// Nonsense values and parameters of another flow are refused with a message that names the
// flag; each flow accepts every parameter its help lists.
func TestSynthFlagMessages(t *testing.T) {
	for _, c := range []struct {
		args []string
		want string
	}{
		{[]string{"lamb-oseen", "--dt", "-1"}, "--dt -1: give the time between frames"},
		{[]string{"lamb-oseen", "--dt", "NaN"}, "--dt NaN"},
		{[]string{"lamb-oseen", "--t0", "Inf"}, "--t0 +Inf"},
		{[]string{"uniform", "--speed", "NaN"}, "--speed NaN must be a finite number"},
		{[]string{"lamb-oseen", "--radius", "0.01"}, "--radius does not apply to lamb-oseen (it is a parameter of hill)"},
		{[]string{"rankine", "--nu", "1e-6"}, "--nu does not apply to rankine"},
		{[]string{"taylor-green", "--omega", "NaN"}, "--omega does not apply to taylor-green"},
		{[]string{"lamb-oseen", "--window", "0"}, "--window 0: give the interrogation window as an odd number"},
		{[]string{"lamb-oseen", "--pixel-size", "1e-5"}, "give --noise-px too"},
		{[]string{"lamb-oseen", "--rho", "-1000"}, "--rho -1000: give the density as a positive number"},
		{[]string{"pair", "--nu", "-1"}, "--nu -1: give the kinematic viscosity"},
	} {
		dir := filepath.Join(t.TempDir(), "out")
		code, _, errs := runCapture(append(append([]string{"synth"}, c.args...), "-o", dir)...)
		if code != 2 || !strings.Contains(errs, c.want) {
			t.Errorf("%v: status %d, stderr %q; want 2 and %q", c.args, code, errs, c.want)
		}
		if _, err := os.Stat(dir); err == nil {
			t.Errorf("%v: output folder created", c.args)
		}
	}
	values := map[string]string{"gamma": "0.02", "core-radius": "4e-3", "nu": "1e-6", "separation": "0.02", "speed": "0.05",
		"radius": "0.01", "wavelength": "0.032", "omega": "2", "drift": "0.01,0"}
	for _, ff := range synthFlowFlags {
		for _, flow := range ff.flows {
			args := []string{"synth", flow, "--grid", "8x6", "-q", "-o", filepath.Join(t.TempDir(), "out"), "--" + ff.flag}
			if v, ok := values[ff.flag]; ok {
				args[len(args)-1] += "=" + v
			}
			if code, _, errs := runCapture(args...); code != 0 {
				t.Errorf("%v: status %d, %s", args, code, errs)
			}
		}
	}
}

func TestSynthVTK(t *testing.T) {
	dir := t.TempDir()
	if code, _, errs := runCapture("synth", "taylor-green", "--grid", "16x16", "--format", "vtk", "-o", dir); code != 0 {
		t.Fatalf("status %d: %s", code, errs)
	}
	b, err := os.ReadFile(filepath.Join(dir, "frame_0000.vtk"))
	if err != nil || !bytes.HasPrefix(b, []byte("# vtk DataFile")) {
		t.Fatalf("frame_0000.vtk: %v", err)
	}
	idx, _ := os.ReadFile(filepath.Join(dir, "frames.csv"))
	if string(idx) != "file,time [s]\nframe_0000.vtk,0\n" {
		t.Errorf("frames.csv = %q", idx)
	}
}

// --window-size writes the continuous window average of the exact flow (SampleWindowed).
func TestSynthWindowSize(t *testing.T) {
	dir := t.TempDir()
	if code, _, errs := runCapture("synth", "taylor-green", "--grid", "20x20", "--window-size", "4e-3", "-o", dir); code != 0 {
		t.Fatalf("status %d: %s", code, errs)
	}
	s, err := piv.OpenSeries([]string{dir}, piv.ReadOptions{})
	if err != nil {
		t.Fatal(err)
	}
	f, err := s.Frame(0)
	if err != nil {
		t.Fatal(err)
	}
	// The grid synth wrote on (the grid read back may differ in the last bit of its spacing).
	g := piv.Grid{NX: 20, NY: 20, DX: 1e-3, DY: 1e-3}
	// k computed at run time as synth does (a constant expression would round differently).
	wavelength := 0.064
	want, err := analytic.SampleWindowed(analytic.TaylorGreen{U: 0.1, K: 2 * math.Pi / wavelength}, g, 0, 4e-3, 0)
	if err != nil {
		t.Fatal(err)
	}
	for k := range f.U {
		if f.U[k] != want.U[k] || f.V[k] != want.V[k] {
			t.Fatalf("node %d: (%v, %v), want (%v, %v)", k, f.U[k], f.V[k], want.U[k], want.V[k])
		}
	}
}
