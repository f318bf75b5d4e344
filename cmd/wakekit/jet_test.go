package main

import (
	"bytes"
	"context"
	"encoding/csv"
	"encoding/json"
	"fmt"
	"math"
	"os"
	"path/filepath"
	"runtime"
	"strconv"
	"strings"
	"testing"
	"time"

	"github.com/wakekit/wakekit/circulation"
	"github.com/wakekit/wakekit/internal/demo"
	"github.com/wakekit/wakekit/piv"
	"github.com/wakekit/wakekit/piv/analytic"
)

// jetRefDir is the CFD reference of an axisymmetric laminar starting jet (L/D = 4, Re = 1000)
// from a general-purpose Navier-Stokes solver; see its README.
const jetRefDir = "../../../shared/reference/starting-jet-LD4"

func jetReadTable(t *testing.T, path string) [][]float64 {
	t.Helper()
	f, err := os.Open(path)
	if err != nil {
		t.Skipf("CFD reference not available (%v)", err)
	}
	defer f.Close()
	rows, err := csv.NewReader(f).ReadAll()
	if err != nil {
		t.Fatal(err)
	}
	var out [][]float64
	for _, r := range rows[1:] {
		v := make([]float64, len(r))
		for c, s := range r {
			v[c], _ = strconv.ParseFloat(s, 64)
		}
		out = append(out, v)
	}
	return out
}

func readSummary(t *testing.T, dir string) jsonSummary {
	t.Helper()
	b, err := os.ReadFile(filepath.Join(dir, "summary.json"))
	if err != nil {
		t.Fatal(err)
	}
	var js jsonSummary
	if err := json.Unmarshal(b, &js); err != nil {
		t.Fatal(err)
	}
	return js
}

func fig(t *testing.T, js jsonSummary, key string) float64 {
	t.Helper()
	f, ok := js.Pulses[0].Figures[key]
	if !ok || f.Value == nil {
		t.Fatalf("summary lacks %s", key)
	}
	return *f.Value
}

// End to end on the CFD reference, velocity only as input (the frames' p column is not read):
// the over-pressure impulse by route (a) against the solver's exit pressure impulse
// (truth_exit_highres.csv) within 2% of the solver's total exit impulse int (M + P) dt, over
// the same interval; the peak over-pressure force of the acceleration phase within 10%
// (README: 8.615e-4 N at t = 0.129 s); route (b) within 10% of int (M + P) dt; the exit
// momentum-flux impulse within 3%. Tolerances are the product's acceptance figures.
func TestJetReferenceThrustSplit(t *testing.T) {
	hi := jetReadTable(t, filepath.Join(jetRefDir, "truth_exit_highres.csv"))
	dir := t.TempDir()
	code, stdout, stderr := runCapture("jet", filepath.Join(jetRefDir, "frames.csv"), "--axisymmetric", "--axis", "0",
		"--exit", "0", "--diameter", "0.025", "--lip", "0.01375", "--rest", "0", "--samples", "0", "-q", "--out", dir)
	if code != 0 {
		t.Fatalf("jet exit %d: %s", code, stderr)
	}
	if !strings.Contains(stdout, "formation number") {
		t.Errorf("summary table missing from stdout:\n%s", stdout)
	}
	js := readSummary(t, dir)
	var ht, hm, hp, hs []float64
	for _, r := range hi {
		ht = append(ht, r[0])
		hm = append(hm, r[2])
		hp = append(hp, r[3])
		hs = append(hs, r[2]+r[3])
	}
	a0 := math.Max(fig(t, js, "start"), 0.025) // integrals start at the first frame
	end := fig(t, js, "end")
	rec := 6.75
	for _, c := range []struct {
		name, key string
		to        float64
	}{{"pulse", "pressure_impulse_a", end}, {"record", "pressure_window_a", rec}} {
		tot := circulation.BudgetIntegral(ht, hs, a0, c.to)
		want := circulation.BudgetIntegral(ht, hp, a0, c.to)
		got := fig(t, js, c.key)
		t.Logf("route (a) %s: %.4e vs solver %.4e: %.2f%% of int(M+P)dt", c.name, got, want, 100*(got-want)/tot)
		if math.Abs(got-want) > 0.02*tot {
			t.Errorf("route (a) %s pressure impulse %g, solver %g: more than 2%% of %g", c.name, got, want, tot)
		}
	}
	tot := circulation.BudgetIntegral(ht, hs, a0, rec)
	for _, c := range []struct {
		key string
		to  float64
	}{{"pressure_impulse_b", end}, {"pressure_window_b", rec}} {
		want := circulation.BudgetIntegral(ht, hp, a0, c.to)
		got := fig(t, js, c.key)
		t.Logf("route (b) %s: %.4e vs solver %.4e: %.2f%%", c.key, got, want, 100*(got-want)/tot)
		if math.Abs(got-want) > 0.10*tot {
			t.Errorf("%s %g, solver %g: more than 10%% of %g", c.key, got, want, tot)
		}
	}
	peak := fig(t, js, "peak_pressure_a")
	t.Logf("peak over-pressure force (a) %.4e N, solver 8.615e-4 N", peak)
	if math.Abs(peak/8.615e-4-1) > 0.10 {
		t.Errorf("peak over-pressure force %g, solver 8.615e-4 N", peak)
	}
	m := fig(t, js, "momentum_impulse")
	mT := circulation.BudgetIntegral(ht, hm, a0, end)
	if math.Abs(m/mT-1) > 0.03 {
		t.Errorf("momentum-flux impulse %g, solver %g", m, mT)
	}
	for _, f := range []string{"summary.json", "timeseries.csv", "report.html", "exit_program.png", "circulation_budget.png", "thrust_split.png"} {
		if _, err := os.Stat(filepath.Join(dir, f)); err != nil {
			t.Error(err)
		}
	}
}

// Bad usage exits with status 2 and names the problem; bad data exits with 1.
func TestJetBadInput(t *testing.T) {
	dir := t.TempDir()
	for _, c := range []struct {
		args []string
		code int
		want string
	}{
		{[]string{"jet", "x.csv", "--diameter", "0.02"}, 2, "--axisymmetric"},
		{[]string{"jet", "x.csv", "--axisymmetric", "--slot", "--diameter", "0.02"}, 2, "exclude"},
		{[]string{"jet", "x.csv", "--axisymmetric"}, 2, "--diameter"},
		{[]string{"jet", "x.csv", "--axisymmetric", "--diameter", "0.02", "--param", "novalue"}, 2, "KEY=VALUE"},
		{[]string{"jet", filepath.Join(dir, "missing.csv"), "--axisymmetric", "--diameter", "0.02", "--out", dir}, 1, "missing.csv"},
	} {
		code, _, stderr := runCapture(c.args...)
		if code != c.code || !strings.Contains(stderr, c.want) {
			t.Errorf("%v: exit %d, stderr %q; want %d and %q", c.args, code, stderr, c.code, c.want)
		}
	}
	// A run that fails after reading the data leaves no output folder.
	index, err := demo.Extract(filepath.Join(dir, "frames"))
	if err != nil {
		t.Fatal(err)
	}
	out := filepath.Join(dir, "never")
	code, _, stderr := runCapture("jet", index, "--axisymmetric", "--diameter", "0.025", "--pulse", "5,4",
		"--no-pressure", "--samples", "0", "-q", "--out", out)
	if code != 2 || !strings.Contains(stderr, "--pulse") {
		t.Errorf("reversed pulse: exit %d, %q", code, stderr)
	}
	if _, err := os.Stat(out); !os.IsNotExist(err) {
		t.Errorf("failed run left %s behind", out)
	}
}

// Flag values that parse but make no sense are refused before anything is read or written:
// exit status 2 (bad usage, as for every command), a message naming the flag and saying what
// to give, and no output folder.
func TestJetNonsenseNumbers(t *testing.T) {
	base := t.TempDir()
	jet := []string{"jet", filepath.Join(base, "frames.csv"), "--axisymmetric", "--diameter", "0.025"}
	for n, c := range []struct {
		args []string
		want string
	}{
		{append(jet, "--noise", "NaN"), "--noise NaN: give"},
		{append(jet, "--noise", "Inf"), "--noise +Inf: give"},
		{append(jet, "--noise", "-0.5"), "--noise -0.5: give"},
		{append(jet, "--rho", "0"), "--rho 0: give"},
		{append(jet, "--rho", "-1000"), "--rho -1000: give"},
		{append(jet, "--rho", "NaN"), "--rho NaN: give"},
		{append(jet, "--nu", "0"), "--nu 0: give"},
		{append(jet, "--nu", "Inf"), "--nu +Inf: give"},
		{[]string{"jet", "x.csv", "--axisymmetric", "--diameter", "0"}, "--diameter 0: give"},
		{[]string{"jet", "x.csv", "--axisymmetric", "--diameter", "-1"}, "--diameter -1: give"},
		{[]string{"jet", "x.csv", "--axisymmetric", "--diameter", "NaN"}, "--diameter NaN: give"},
		{[]string{"jet", "x.csv", "--axisymmetric", "--diameter", "Inf"}, "--diameter +Inf: give"},
		{append(jet, "--exit", "NaN"), "--exit NaN: give"},
		{append(jet, "--exit", "-Inf"), "--exit -Inf: give"},
		{append(jet, "--samples", "-1"), "--samples -1: give"},
		{append(jet, "--samples", "1001"), "--samples 1001: give"},
		{append(jet, "--smooth", "0"), "--smooth 0: give"},
		{append(jet, "--smooth", "1"), "--smooth 1: give"},
		{append(jet, "--smooth", "-3"), "--smooth -3: give"},
		{append(jet, "--threshold", "0"), "--threshold 0: give"},
		{append(jet, "--threshold", "1"), "--threshold 1: give"},
		{append(jet, "--threshold", "NaN"), "--threshold NaN: give"},
		{append(jet, "--pulse", "2,1"), "T0 < T1"},
		{append(jet, "--pulse", "1,1"), "T0 < T1"},
		{append(jet, "--pulse", "0,NaN"), "not a finite time"},
		{append(jet, "--pulse", "Inf,5"), "not a finite time"},
		{append(jet, "--lip", "0.01"), "at least the inner radius D/2 = 0.0125 m"},
		{append(jet, "--lip", "0"), "at least the inner radius"},
		{append(jet, "--lip", "NaN"), "--lip NaN: give"},
		{append(jet, "--rest", "NaN"), "--rest NaN: give"},
		{append(jet, "--workers", "-2"), "--workers -2: give"},
		{[]string{"demo", "--samples", "-4"}, "--samples -4: give"},
		{[]string{"demo", "--workers", "-1"}, "--workers -1: give"},
		{[]string{"compare", "a", "b", "--by", "k", "--pulse", "0"}, "--pulse 0: give"},
	} {
		out := filepath.Join(base, fmt.Sprintf("out%d", n))
		code, stdout, stderr := runCapture(append(c.args, "--out", out)...)
		if code != 2 || !strings.Contains(stderr, c.want) {
			t.Errorf("%v: exit %d, stderr %q; want 2 and %q", c.args, code, stderr, c.want)
		}
		if stdout != "" {
			t.Errorf("%v: printed %q", c.args, stdout)
		}
		if _, err := os.Stat(out); !os.IsNotExist(err) {
			t.Errorf("%v: left %s behind", c.args, out)
		}
	}
	// The estimate sentinel -1 stays accepted as the default it is.
	if code, _, stderr := runCapture(append(jet, "--noise", "-1", "--out", filepath.Join(base, "sentinel"))...); code != 1 || !strings.Contains(stderr, "frames.csv") {
		t.Errorf("--noise -1: exit %d, %q; want the missing input reported", code, stderr)
	}
}

// lazyHillSeries is a series of n frames of nx x ny nodes of Hill's spherical vortex moving
// along +x through the view, generated when a frame is read, so that the series itself holds
// no frames in memory.
func lazyHillSeries(n, nx, ny int) (*piv.Series, error) {
	g := piv.Grid{NX: nx, NY: ny, X0: 0, Y0: 0, DX: 0.2 / float64(nx-1), DY: 0.1 / float64(ny-1)}
	hill := analytic.Hill{Radius: 0.02, Speed: 0.05, X0: -0.03, Rho: 1000}
	names := make([]string, n)
	times := make([]float64, n)
	for k := range names {
		names[k] = fmt.Sprintf("frame %d", k)
		times[k] = float64(k) * 4.0 / float64(n)
	}
	return piv.NewSeries(names, times, func(k int) (*piv.Field, error) {
		return analytic.Sample(hill, g, times[k]), nil
	})
}

// BenchmarkJet runs the jet analysis (exit program, budgets, pressure reconstruction and route
// (a), no Monte-Carlo replicas) on 250 and 1000 lazily generated frames of 256 x 128 and
// reports the time per frame, per node and the peak heap in use: the peak must not grow with
// the number of frames.
func BenchmarkJet(b *testing.B) {
	for _, n := range []int{250, 1000} {
		b.Run(fmt.Sprintf("frames=%d", n), func(b *testing.B) {
			var peak uint64
			for it := 0; it < b.N; it++ {
				series, err := lazyHillSeries(n, 256, 128)
				if err != nil {
					b.Fatal(err)
				}
				s := &jetSettings{exit: circulation.ExitConfig{X: 0, Diameter: 0.03, Rho: 1000, Nu: 1e-6},
					threshold: 0.05, noise: 0, samples: 0, seed: 1, smooth: 3, restTime: math.NaN()}
				runtime.GC()
				stop := make(chan struct{})
				done := make(chan uint64)
				go func() {
					var ms runtime.MemStats
					var p uint64
					tick := time.NewTicker(100 * time.Millisecond)
					defer tick.Stop()
					for {
						runtime.ReadMemStats(&ms)
						p = max(p, ms.HeapInuse)
						select {
						case <-stop:
							done <- p
							return
						case <-tick.C:
						}
					}
				}()
				var out, errb bytes.Buffer
				e := &env{stdout: &out, stderr: &errb}
				if _, err := runJet(context.Background(), e, series, s, &runFlags{workers: runtime.NumCPU(), quiet: true}, nil, func() (string, error) { return b.TempDir(), nil }); err != nil {
					b.Fatal(err)
				}
				close(stop)
				peak = max(peak, <-done)
			}
			b.ReportMetric(float64(b.Elapsed().Nanoseconds())/float64(b.N*n), "ns/frame")
			b.ReportMetric(float64(b.Elapsed().Nanoseconds())/float64(b.N*n*256*128), "ns/node")
			b.ReportMetric(float64(peak)/(1<<20), "peak-heap-MB")
		})
	}
}
