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
)

// writePulsed writes n frames of an invented pulsed jet test case on a 16x12 grid: u = 0.2 +
// 0.05 sin(2π t/T) over the whole field, v = 0.01 x/m, sampled every dt, with a frame index.
// Returns the folder.
func writePulsed(t *testing.T, n int, dt, T float64, grid func(k int) piv.Grid) string {
	t.Helper()
	dir := t.TempDir()
	idx := "file,time [s]\n"
	for k := 0; k < n; k++ {
		g := grid(k)
		f := piv.NewField(g)
		tt := float64(k) * dt
		for q := range f.U {
			i, _ := g.IJ(q)
			f.Set(q, 0.2+0.05*math.Sin(2*math.Pi*tt/T), 0.01*g.X(i))
		}
		name := fmt.Sprintf("pulse_%03d.csv", k)
		if err := piv.WriteCSV(filepath.Join(dir, name), f); err != nil {
			t.Fatal(err)
		}
		idx += fmt.Sprintf("%s,%g\n", name, tt)
	}
	if err := os.WriteFile(filepath.Join(dir, "frames.csv"), []byte(idx), 0o644); err != nil {
		t.Fatal(err)
	}
	return dir
}

func pulsedGrid(int) piv.Grid { return piv.Grid{NX: 16, NY: 12, DX: 0.001, DY: 0.001} }

// The command on a periodic series: the period detected at the exit point, phase averages
// equal the known phase values, the mean and RMS are those of the sine (mean 0.2, RMS
// 0.05/√2 × √(n/(n−1)) for the unbiased estimate over whole periods), one POD mode holds all
// the energy, and the probe's dominant frequency gives the stated Strouhal number.
func TestStatsCommand(t *testing.T) {
	const n, dt, T = 64, 0.005, 0.04 // 8 frames per period, 8 periods
	in := writePulsed(t, n, dt, T, pulsedGrid)
	out := filepath.Join(t.TempDir(), "st")
	code, stdout, errs := runCapture("stats", filepath.Join(in, "frames.csv"), "--phase-bins", "8", "--phase-origin", "-0.0025",
		"--exit", "0.001,0.005", "--pod", "2", "--probe", "0.008,0.006", "--diameter", "0.02", "--velocity", "0.2", "--no-png", "-o", out)
	if code != 0 {
		t.Fatalf("status %d: %s", code, errs)
	}
	t.Log(stdout)
	var sum statsSummary
	b, err := os.ReadFile(filepath.Join(out, "stats.json"))
	if err != nil || json.Unmarshal(b, &sum) != nil {
		t.Fatalf("stats.json: %v", err)
	}
	// Period from the exit spectrum: quadratic peak interpolation, within 1% here (the
	// record holds exactly 8 periods, so the peak falls on a bin).
	if p := float64(sum.Period); math.Abs(p-T) > 0.01*T || sum.PhaseBins != 8 {
		t.Fatalf("period %g s, want %g", p, T)
	}
	if len(sum.Probes) != 1 || math.Abs(float64(sum.Probes[0].Dominant)-1/T) > 1e-9 ||
		math.Abs(float64(sum.Probes[0].Strouhal)-(1/T)*0.02/0.2) > 1e-9 {
		t.Fatalf("probe summary %+v", sum.Probes)
	}
	s, err := piv.OpenSeries([]string{filepath.Join(out, "stats.csv")}, piv.ReadOptions{})
	if err != nil {
		t.Fatal(err)
	}
	st, _ := s.Frame(0)
	for q := range st.U {
		if math.Abs(st.U[q]-0.2) > 1e-12 {
			t.Fatalf("mean u %g at node %d, want 0.2", st.U[q], q)
		}
	}
	// RMS of a sine of amplitude A sampled evenly over whole periods: A/√2, times √(n/(n−1))
	// for the unbiased variance; TKE = (3/4)(u'u' + v'v') with v steady.
	wantRMS := 0.05 / math.Sqrt2 * math.Sqrt(float64(n)/float64(n-1))
	fh, err := os.Open(filepath.Join(out, "stats.csv"))
	if err != nil {
		t.Fatal(err)
	}
	rows, err := csv.NewReader(fh).ReadAll()
	fh.Close()
	if err != nil || len(rows) != 193 || rows[0][5] != "rms_u [m/s]" || rows[0][10] != "tke [m^2/s^2]" {
		t.Fatalf("stats.csv: %d rows, header %v, %v", len(rows), rows[0], err)
	}
	for _, r := range rows[1:] {
		rms, _ := strconv.ParseFloat(r[5], 64)
		tke, _ := strconv.ParseFloat(r[10], 64)
		if math.Abs(rms-wantRMS) > 1e-12 || math.Abs(tke-0.75*wantRMS*wantRMS) > 1e-12 {
			t.Fatalf("rms u %g, tke %g; want %g, %g", rms, tke, wantRMS, 0.75*wantRMS*wantRMS)
		}
	}
	for b := 1; b <= 8; b++ {
		s, err := piv.OpenSeries([]string{filepath.Join(out, fmt.Sprintf("phase_%02d.csv", b))}, piv.ReadOptions{})
		if err != nil {
			t.Fatal(err)
		}
		f, _ := s.Frame(0)
		want := 0.2 + 0.05*math.Sin(2*math.Pi*float64(b-1)/8)
		if math.Abs(f.U[0]-want) > 1e-12 {
			t.Fatalf("phase bin %d: u %g, want %g", b, f.U[0], want)
		}
	}
	// One mode carries all the fluctuation: energy = Σ over nodes of the variance (biased,
	// divided by n, as POD energies are time means) = nodes × (0.05²/2).
	if e := float64(sum.PODEnergy[0]); math.Abs(e-192*0.05*0.05/2) > 1e-9 || float64(sum.PODShare[0]) < 1-1e-9 {
		t.Fatalf("POD energy %g (share %g), want %g", e, float64(sum.PODShare[0]), 192*0.05*0.05/2)
	}
	for _, name := range []string{"pod_energy.csv", "pod_mode_01.csv", "pod_coefficients.csv", "spectrum_probe1.csv", "phase.csv"} {
		if _, err := os.Stat(filepath.Join(out, name)); err != nil {
			t.Errorf("missing %s", name)
		}
	}
}

// Acceptance: frames of different grids, a period longer than the series and more modes than
// frames are clear errors with exit status 1.
func TestStatsBadInput(t *testing.T) {
	in := writePulsed(t, 12, 0.01, 0.04, pulsedGrid)
	idx := filepath.Join(in, "frames.csv")
	check := func(name string, wantMsg string, args ...string) {
		t.Helper()
		code, _, errs := runCapture(append([]string{"stats", idx, "--no-png", "-o", t.TempDir()}, args...)...)
		if code != 1 || !strings.Contains(errs, wantMsg) {
			t.Errorf("%s: status %d, stderr %q (want 1 and %q)", name, code, errs, wantMsg)
		}
	}
	check("long period", "longer than the series", "--phase-bins", "4", "--period", "1")
	check("too many modes", "13 modes requested from 12 frames", "--pod", "13")
	check("probe outside", "outside the grid", "--probe", "5,5")
	mixed := writePulsed(t, 6, 0.01, 0.04, func(k int) piv.Grid {
		if k == 4 {
			return piv.Grid{NX: 16, NY: 11, DX: 0.001, DY: 0.001}
		}
		return pulsedGrid(k)
	})
	code, _, errs := runCapture("stats", filepath.Join(mixed, "frames.csv"), "--no-png", "-o", t.TempDir())
	if code != 1 || !strings.Contains(errs, "pulse_004.csv") {
		t.Errorf("mixed grids: status %d, stderr %q", code, errs)
	}
	if code, _, _ := runCapture("stats", idx, "--phase-bins", "4", "-o", t.TempDir()); code != 2 {
		t.Errorf("phase bins without period or exit: status %d, want 2", code)
	}
}
