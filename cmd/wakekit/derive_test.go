package main

import (
	"encoding/csv"
	"encoding/json"
	"fmt"
	"math"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"testing"

	"github.com/wakekit/wakekit/piv"
	"github.com/wakekit/wakekit/piv/analytic"
	"github.com/wakekit/wakekit/vorticity"
)

// deriveVortex is the test flow: an invented tank vortex of 0.004 m^2/s, core radius 3 mm,
// drifting at 5 mm/s.
var deriveVortex = analytic.LambOseen{Gamma: 0.004, CoreRadius: 0.003, Uc: 0.005}

// writeDeriveSeries writes n frames of the test vortex on a 61x41 grid of 0.25 mm (12 nodes
// per core radius) and returns their paths.
func writeDeriveSeries(t *testing.T, dir string, n int) []string {
	t.Helper()
	g := piv.Grid{NX: 61, NY: 41, X0: -0.0075, Y0: -0.005, DX: 0.00025, DY: 0.00025}
	var paths []string
	for k := range n {
		f := analytic.Sample(deriveVortex, g, float64(k)*0.01)
		f.Status[g.Index(30, 5)] = piv.Missing // one hole, away from the core
		f.Normalize()
		p := filepath.Join(dir, fmt.Sprintf("frame_%04d.csv", k))
		if err := piv.WriteCSV(p, f); err != nil {
			t.Fatal(err)
		}
		paths = append(paths, p)
	}
	return paths
}

// readColumns reads a CSV written by derive into columns by header name.
func readColumns(t *testing.T, path string) map[string][]float64 {
	t.Helper()
	fh, err := os.Open(path)
	if err != nil {
		t.Fatal(err)
	}
	defer fh.Close()
	rows, err := csv.NewReader(fh).ReadAll()
	if err != nil {
		t.Fatal(err)
	}
	cols := map[string][]float64{}
	for _, r := range rows[1:] {
		for c, h := range rows[0] {
			v, err := strconv.ParseFloat(r[c], 64)
			if err != nil {
				v = math.NaN()
			}
			cols[h] = append(cols[h], v)
		}
	}
	return cols
}

// TestDeriveSeries runs derive end to end on a three-frame series: exit status 0, every file
// written, the CSV columns equal to the vorticity package's results, the peak vorticity close
// to Gamma/(pi r_c^2) (Saffman, Vortex Dynamics 1992: 1% at 12 nodes per core radius covers the
// second-order truncation, about 0.3%), and the summary printed.
func TestDeriveSeries(t *testing.T) {
	in := t.TempDir()
	paths := writeDeriveSeries(t, in, 3)
	out := filepath.Join(t.TempDir(), "derived")
	args := append([]string{"derive", "--quantities", "vorticity,q,lambda2,swirl,gamma2,divergence,strain",
		"--format", "csv,vtk,png", "--uncertainty", "0.001", "--stencils", "--arrows", "--png-size", "400x300",
		"--workers", "2", "--dt", "0.01", "--out", out}, paths...)
	code, stdout, stderr := runCapture(args...)
	if code != 0 {
		t.Fatalf("status %d\nstdout: %s\nstderr: %s", code, stdout, stderr)
	}
	for k := range 3 {
		base := fmt.Sprintf("frame_%04d", k)
		for _, name := range []string{base + ".csv", base + ".vtk", base + "_vorticity.png", base + "_gamma2.png", base + "_strain.png"} {
			if st, err := os.Stat(filepath.Join(out, name)); err != nil || st.Size() == 0 {
				t.Errorf("%s not written: %v", name, err)
			}
		}
	}
	for _, name := range []string{"derive.csv", "derive.json"} {
		if _, err := os.Stat(filepath.Join(out, name)); err != nil {
			t.Errorf("%s not written: %v", name, err)
		}
	}
	cols := readColumns(t, filepath.Join(out, "frame_0001.csv"))
	for _, h := range []string{"vorticity [1/s]", "q [1/s^2]", "lambda2 [1/s^2]", "swirl [1/s]", "gamma2", "divergence [1/s]", "strain [1/s]", "vorticity_sigma [1/s]", "stencil"} {
		if len(cols[h]) != 61*41 {
			t.Fatalf("column %q has %d values; header has %v", h, len(cols[h]), keys(cols))
		}
	}
	f, err := piv.ReadFile(paths[1], piv.ReadOptions{})
	if err != nil {
		t.Fatal(err)
	}
	want := vorticity.Vorticity(f, vorticity.Central)
	peak := 0.0
	for k, w := range cols["vorticity [1/s]"] {
		if !(w == want[k] || math.IsNaN(w) && math.IsNaN(want[k])) {
			t.Fatalf("node %d: vorticity column %g, package %g", k, w, want[k])
		}
		peak = math.Max(peak, w)
	}
	exact := deriveVortex.PeakVorticity(0.01)
	if math.Abs(peak-exact) > 0.01*exact {
		t.Errorf("peak vorticity %.5g, Gamma/(pi rc^2) = %.5g", peak, exact)
	}
	if k := 5*61 + 30; !math.IsNaN(cols["vorticity [1/s]"][k]) || cols["stencil"][k] != 0 {
		t.Errorf("the missing node has vorticity %g, stencil %g", cols["vorticity [1/s]"][k], cols["stencil"][k])
	}
	sigma := vorticity.VorticityNoise(vorticity.Central, f.Grid, 0.001)
	if !strings.Contains(stdout, "3 of 3") && !strings.Contains(stdout, "3 frames") {
		t.Errorf("summary does not give the frame count:\n%s", stdout)
	}
	if !strings.Contains(stdout, fmt.Sprintf("%.5g", sigma)) || !strings.Contains(stdout, "vorticity") || !strings.Contains(stdout, "gamma2") {
		t.Errorf("summary lacks the vorticity error %.5g or the quantities:\n%s", sigma, stdout)
	}
	var sum deriveSummary
	b, err := os.ReadFile(filepath.Join(out, "derive.json"))
	if err != nil {
		t.Fatal(err)
	}
	if err := json.Unmarshal(b, &sum); err != nil {
		t.Fatal(err)
	}
	if sum.Frames != 3 || len(sum.Ranges) != 7 || sum.Ranges[0].Name != "vorticity" || math.Abs(float64(sum.Ranges[0].Max)-peak) > 0.02*peak {
		t.Errorf("derive.json: %+v", sum)
	}
}

func keys(m map[string][]float64) []string {
	var out []string
	for k := range m {
		out = append(out, k)
	}
	return out
}

// TestDeriveResumeSameOutput checks that derive's per-frame work depends only on the frame:
// after two frames' outputs are deleted, a run with --resume recomputes them, and the folder
// equals that of a single run byte for byte.
func TestDeriveResumeSameOutput(t *testing.T) {
	in := t.TempDir()
	paths := writeDeriveSeries(t, in, 4)
	run := func(dir string, extra ...string) {
		t.Helper()
		args := append(append([]string{"derive", "--dt", "0.01", "--quantities", "vorticity,q", "--format", "csv,png",
			"--png-size", "300x200", "--out", dir}, extra...), paths...)
		if code, _, errs := runCapture(args...); code != 0 {
			t.Fatalf("%v: status %d: %s", extra, code, errs)
		}
	}
	whole := filepath.Join(t.TempDir(), "whole")
	run(whole)
	part := filepath.Join(t.TempDir(), "part")
	run(part)
	for _, name := range []string{"frame_0000.csv", "frame_0002_q.png", "derive.json"} {
		if err := os.Remove(filepath.Join(part, name)); err != nil {
			t.Fatal(err)
		}
	}
	run(part, "--resume")
	sameTrees(t, whole, part)
}

// TestDeriveBadInput checks the exit statuses: usage mistakes give 2, unreadable data 1, and
// neither leaves output files.
func TestDeriveBadInput(t *testing.T) {
	in := t.TempDir()
	paths := writeDeriveSeries(t, in, 1)
	for _, args := range [][]string{
		{"--quantities", "vorticity,nonsense"},
		{"--scheme", "fifth-order"},
		{"--format", "gif"},
		{"--gamma-radius", "0"},
		{"--uncertainty", "-1"},
		{"--png-size", "10x10"},
	} {
		out := filepath.Join(t.TempDir(), "o")
		code, _, errs := runCapture(append(append([]string{"derive", "--out", out}, args...), paths...)...)
		if code != 2 {
			t.Errorf("%v: status %d, want 2 (%s)", args, code, errs)
		}
		if _, err := os.Stat(out); !os.IsNotExist(err) {
			t.Errorf("%v: output folder created", args)
		}
	}
	bad := filepath.Join(in, "bad.csv")
	if err := os.WriteFile(bad, []byte("x,y,u,v\n0,0,1,1\n0.001,0,1.2.3,1\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	out := filepath.Join(t.TempDir(), "o")
	code, _, errs := runCapture("derive", "--out", out, bad)
	if code != 1 || !strings.Contains(errs, "bad.csv") {
		t.Errorf("bad file: status %d, stderr %q", code, errs)
	}
	if _, err := os.Stat(out); !os.IsNotExist(err) {
		entries, _ := os.ReadDir(out)
		t.Errorf("bad file left output: %v", entries)
	}
	if code, _, _ := runCapture("derive"); code != 2 {
		t.Errorf("no files: status %d, want 2", code)
	}
}

// TestDeriveAxisymmetric runs derive on Hill's vortex in the meridional plane: the 3-D
// divergence (with v/r) is zero inside the sphere to round-off while the planar one is not
// (Lamb, Hydrodynamics §165: the inner flow is quadratic, so central differences are exact).
func TestDeriveAxisymmetric(t *testing.T) {
	in := t.TempDir()
	hill := analytic.Hill{Radius: 0.01, Speed: 0.05, CoMoving: true}
	g := piv.Grid{NX: 41, NY: 21, X0: -0.01, Y0: 0, DX: 0.0005, DY: 0.0005}
	f := analytic.Sample(hill, g, 0)
	p := filepath.Join(in, "hill.csv")
	if err := piv.WriteCSV(p, f); err != nil {
		t.Fatal(err)
	}
	out := filepath.Join(t.TempDir(), "o")
	code, stdout, errs := runCapture("derive", "--axisymmetric", "--axis", "0", "--quantities", "divergence,vorticity", "--out", out, p)
	if code != 0 {
		t.Fatalf("status %d: %s", code, errs)
	}
	if !strings.Contains(stdout, "axisymmetric") {
		t.Errorf("summary does not say axisymmetric:\n%s", stdout)
	}
	cols := readColumns(t, filepath.Join(out, "hill.csv"))
	div := cols["divergence [1/s]"]
	for j := 1; j < g.NY; j++ {
		for i := 0; i < g.NX; i++ {
			x, r := g.X(i), g.Y(j)
			if math.Hypot(x, r) > hill.Radius-3*g.DX {
				continue
			}
			if d := div[g.Index(i, j)]; math.Abs(d) > 1e-9*hill.Speed/hill.Radius {
				t.Fatalf("divergence at (%g, %g) = %g, want 0", x, r, d)
			}
		}
	}
}
