package main

import (
	"encoding/csv"
	"math"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"testing"

	"github.com/wakekit/wakekit/piv"
	"github.com/wakekit/wakekit/piv/analytic"
)

// writeFrames samples fl at times k*dt on g and writes frame_NNNN.csv files into a new folder;
// it returns the file names.
func writeFrames(t *testing.T, fl analytic.Flow, g piv.Grid, n int, dt float64) []string {
	t.Helper()
	dir := t.TempDir()
	var names []string
	for k := 0; k < n; k++ {
		name := filepath.Join(dir, "frame_"+strconv.Itoa(1000 + k)[1:]+".csv")
		if err := piv.WriteCSV(name, analytic.Sample(fl, g, float64(k)*dt)); err != nil {
			t.Fatal(err)
		}
		names = append(names, name)
	}
	return names
}

// readTable reads a CSV output into rows of cells keyed by the header names (units stripped).
func readTable(t *testing.T, path string) []map[string]string {
	t.Helper()
	fh, err := os.Open(path)
	if err != nil {
		t.Fatal(err)
	}
	defer fh.Close()
	recs, err := csv.NewReader(fh).ReadAll()
	if err != nil {
		t.Fatal(err)
	}
	var out []map[string]string
	for _, r := range recs[1:] {
		m := map[string]string{}
		for c, h := range recs[0] {
			name, _ := piv.SplitHeader(h)
			m[name] = r[c]
		}
		out = append(out, m)
	}
	return out
}

func cell(t *testing.T, row map[string]string, name string) float64 {
	t.Helper()
	v, err := strconv.ParseFloat(row[name], 64)
	if err != nil {
		t.Fatalf("column %q: %v", name, err)
	}
	return v
}

// The command's line and area circulation of a Lamb–Oseen vortex (Saffman 1992) on a circle of
// 2 r_c match Γ(1 - e^-4) within 0.1 % (bicubic default, 10 nodes per core radius; see the
// package tests), given in mm with --coord-unit.
func TestCirculationCommandCircle(t *testing.T) {
	rc := 0.005
	h := rc / 10
	vx := analytic.LambOseen{Gamma: 1e-3, CoreRadius: rc, X: 0.3 * h, Y: 0.1 * h}
	files := writeFrames(t, vx, piv.Grid{NX: 81, NY: 81, X0: -0.02, Y0: -0.02, DX: h, DY: h}, 2, 0.01)
	out := t.TempDir()
	code, stdout, stderr := runCapture("circulation", "--dt", "0.01", "-q", "-o", out, "--coord-unit", "mm",
		"--circle", "0.15,0.05,10", "--rect", "-12,-12,12,12", files[0], files[1])
	if code != 0 {
		t.Fatalf("status %d: %s", code, stderr)
	}
	if !strings.Contains(stdout, "Γ line") {
		t.Errorf("no table on stdout:\n%s", stdout)
	}
	rows := readTable(t, filepath.Join(out, "circulation.csv"))
	if len(rows) != 4 {
		t.Fatalf("%d rows, want 2 frames x 2 contours", len(rows))
	}
	want := vx.Circulation(2*rc, 0)
	if got := cell(t, rows[0], "gamma_line"); math.Abs(got/want-1) > 1e-3 {
		t.Errorf("line Γ %.6g, want %.6g", got, want)
	}
	if got := cell(t, rows[0], "gamma_area"); math.Abs(got/want-1) > 2e-3 {
		t.Errorf("area Γ %.6g, want %.6g (central-difference vorticity, O(h²))", got, want)
	}
}

// Profile and fit through the command: Γ∞ and r_c within 0.5 % on exact data.
func TestCirculationCommandProfile(t *testing.T) {
	rc := 0.005
	h := rc / 10
	vx := analytic.LambOseen{Gamma: 1e-3, CoreRadius: rc}
	files := writeFrames(t, vx, piv.Grid{NX: 81, NY: 81, X0: -0.02, Y0: -0.02, DX: h, DY: h}, 1, 0)
	out := t.TempDir()
	code, _, stderr := runCapture("circulation", "-q", "-o", out, "--profile", "0.0002,-0.0001", "--rmax", "0.012", files[0])
	if code != 0 {
		t.Fatalf("status %d: %s", code, stderr)
	}
	fit := readTable(t, filepath.Join(out, "fit.csv"))
	if len(fit) != 1 || math.Abs(cell(t, fit[0], "gamma")/vx.Gamma-1) > 5e-3 || math.Abs(cell(t, fit[0], "core_radius")/rc-1) > 5e-3 {
		t.Errorf("fit %v", fit)
	}
	if prof := readTable(t, filepath.Join(out, "profile.csv")); len(prof) != 48 {
		t.Errorf("%d profile radii, want 48", len(prof))
	}
}

// Bad input is a clear error with exit status 1 and no output file: a contour outside the
// field, a radius of zero or less, an empty polygon file, a series of one frame for tracking.
func TestCirculationVorticesBadInput(t *testing.T) {
	h := 5e-4
	files := writeFrames(t, analytic.LambOseen{Gamma: 1e-3, CoreRadius: 0.005}, piv.Grid{NX: 41, NY: 41, X0: -0.01, Y0: -0.01, DX: h, DY: h}, 1, 0)
	empty := filepath.Join(t.TempDir(), "empty.csv")
	if err := os.WriteFile(empty, []byte("# no vertices\nx,y\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	for _, c := range []struct {
		args []string
		want string
	}{
		{[]string{"circulation", "--circle", "0.05,0,0.002"}, "leaves the field"},
		{[]string{"circulation", "--circle", "0,0,0"}, "radius"},
		{[]string{"circulation", "--circle", "0,0,-0.001"}, "radius"},
		{[]string{"circulation", "--polygon", empty}, "empty.csv"},
		{[]string{"vortices"}, "at least 2 frames"},
	} {
		out := filepath.Join(t.TempDir(), "out")
		args := append(append(c.args, "-q", "-o", out), files[0])
		code, _, stderr := runCapture(args...)
		if code != 1 || !strings.Contains(stderr, c.want) {
			t.Errorf("%v: status %d, stderr %q; want status 1 mentioning %q", c.args, code, stderr, c.want)
		}
		if _, err := os.Stat(out); !os.IsNotExist(err) {
			ents, _ := os.ReadDir(out)
			t.Errorf("%v: left the output folder behind (%d entries)", c.args, len(ents))
		}
	}
	if code, _, _ := runCapture("circulation", files[0]); code != 2 {
		t.Errorf("no contour: status %d, want 2", code)
	}
	// Non-finite numbers in contour and step flags are usage errors naming the flag.
	for _, c := range []struct {
		flag string
		args []string
	}{
		{"--circle", []string{"--circle", "Inf,0,0.002"}}, {"--rect", []string{"--rect", "0,0,NaN,0.001"}},
		{"--profile", []string{"--profile", "NaN,0", "--rmax", "0.002"}},
		{"--dr", []string{"--profile", "0,0", "--rmax", "0.002", "--dr", "Inf"}},
		{"--spacing", []string{"--circle", "0,0,0.002", "--spacing", "Inf"}},
	} {
		args := c.args
		out := filepath.Join(t.TempDir(), "out")
		code, _, stderr := runCapture(append(append([]string{"circulation", "-q", "-o", out}, args...), files[0])...)
		if code != 2 || !strings.Contains(stderr, c.flag) {
			t.Errorf("%v: status %d, stderr %q; want 2 naming %s", args, code, stderr, c.flag)
		}
		if _, err := os.Stat(out); !os.IsNotExist(err) {
			t.Errorf("%v: output folder made", args)
		}
	}
	// A bad frame late in a series stops the run: no table, and none of the maps drawn for the
	// frames before it, is left, neither in a new folder nor in one that existed.
	series := writeFrames(t, analytic.LambOseen{Gamma: 1e-3, CoreRadius: 0.005, Uc: 0.01}, piv.Grid{NX: 41, NY: 41, X0: -0.01, Y0: -0.01, DX: h, DY: h}, 4, 0.05)
	if err := os.WriteFile(series[3], []byte("x,y,u,v\n0,0,1,1\n1,0,1.2.3,1\n0,1,1,1\n1,1,1,1\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	for _, args := range [][]string{
		{"vortices", "--format", "png", "--dt", "0.05"},
		{"circulation", "--circle", "0,0,0.004", "--dt", "0.05"},
	} {
		out := filepath.Join(t.TempDir(), "out")
		code, _, stderr := runCapture(append(append(args, "-q", "-o", out), series...)...)
		if code != 1 || !strings.Contains(stderr, series[3]+":3:3") {
			t.Errorf("%v: status %d, stderr %q; want status 1 naming %s:3:3", args, code, stderr, series[3])
		}
		if _, err := os.Stat(out); !os.IsNotExist(err) {
			t.Errorf("%v: left the output folder behind", args)
		}
		kept := t.TempDir()
		if err := os.WriteFile(filepath.Join(kept, "notes.txt"), []byte("mine"), 0o644); err != nil {
			t.Fatal(err)
		}
		runCapture(append(append(args, "-q", "-o", kept), series...)...)
		if ents, _ := os.ReadDir(kept); len(ents) != 1 || ents[0].Name() != "notes.txt" {
			names := []string{}
			for _, e := range ents {
				names = append(names, e.Name())
			}
			t.Errorf("%v: existing folder holds %v after the failed run, want only notes.txt", args, names)
		}
	}
}
