package pipeline

import (
	"context"
	"fmt"
	"io"
	"math"
	"os"
	"path/filepath"
	"testing"
	"time"

	"github.com/wakekit/wakekit/piv"
)

// benchSeries writes `files` distinct n x n CSV frames (a Lamb–Oseen-like swirl; the values do
// not matter here) and returns a series of `frames` frames that cycles through them, so a long
// series costs little disk while every frame is still parsed from CSV.
func benchSeries(b *testing.B, dir string, n, files, frames int) *piv.Series {
	b.Helper()
	g := piv.Grid{NX: n, NY: n, X0: -0.01, Y0: -0.01, DX: 0.02 / float64(n-1), DY: 0.02 / float64(n-1)}
	paths := make([]string, files)
	for a := range paths {
		f := piv.NewField(g)
		for j := 0; j < n; j++ {
			for i := 0; i < n; i++ {
				x, y := g.X(i), g.Y(j)
				r2 := x*x + y*y + 1e-12
				s := (1 - math.Exp(-r2/2.5e-5)) / r2 * (1 + 0.01*float64(a))
				f.Set(g.Index(i, j), -y*s*1e-3, x*s*1e-3)
			}
		}
		paths[a] = filepath.Join(dir, fmt.Sprintf("frame_%04d.csv", a))
		if err := piv.WriteCSV(paths[a], f); err != nil {
			b.Fatal(err)
		}
	}
	names := make([]string, frames)
	times := make([]float64, frames)
	for k := range names {
		names[k] = paths[k%files]
		times[k] = 0.01 * float64(k)
	}
	s, err := piv.NewSeries(names, times, func(k int) (*piv.Field, error) { return piv.ReadFile(names[k], piv.ReadOptions{}) })
	if err != nil {
		b.Fatal(err)
	}
	return s
}

// benchStage is a derive-like stage: read the frame, central-difference vorticity at the
// interior nodes, write the field with the vorticity column as CSV (then drop the file, to
// keep disk use flat during long benchmarks).
func benchStage(out string) func(ctx context.Context, k int, fr Frames) (int, error) {
	return func(ctx context.Context, k int, fr Frames) (int, error) {
		f, err := fr.Frame(k)
		if err != nil {
			return 0, err
		}
		g := f.Grid
		w := piv.NaNs(g.N())
		for j := 1; j < g.NY-1; j++ {
			for i := 1; i < g.NX-1; i++ {
				dv := (f.V[g.Index(i+1, j)] - f.V[g.Index(i-1, j)]) / (2 * g.DX)
				du := (f.U[g.Index(i, j+1)] - f.U[g.Index(i, j-1)]) / (2 * g.DY)
				w[g.Index(i, j)] = dv - du
			}
		}
		path := filepath.Join(out, fmt.Sprintf("omega_%04d.csv", k))
		err = piv.WriteFileAtomic(path, func(wr io.Writer) error {
			return piv.EncodeCSV(wr, f, piv.Column{Name: "omega", Unit: "1/s", Values: w})
		})
		os.Remove(path)
		return g.N(), err
	}
}

// BenchmarkRunScaling measures the engine's throughput on a derive-like stage over 512x512 CSV
// frames with 1 and 2 workers, and reports the speed-up. Each iteration processes the series
// (WAKEKIT_BENCH_FRAMES frames, default 8) with 1 worker and then with 2, three rounds
// alternating, and keeps each count's fastest round, so that load from other programs on the
// machine biases neither count. Run with
//
//	go test -run '^$' -bench RunScaling -benchtime 1x ./internal/pipeline/
//
// It also reports the process CPU time per node of each count and their ratio cpu-2v1 (near 1:
// running frames at once adds no work), and the one-minute load average before and after.
// On a machine shared with other work the wall-clock speed-up is lower than the cores allow.
func BenchmarkRunScaling(b *testing.B) {
	frames := 8
	if v := os.Getenv("WAKEKIT_BENCH_FRAMES"); v != "" {
		fmt.Sscan(v, &frames)
	}
	dir := b.TempDir()
	s := benchSeries(b, dir, 512, 4, frames)
	out := b.TempDir()
	nodes := 0
	best := map[int]time.Duration{}
	cpu := map[int]int64{}
	load0 := loadAverage()
	b.ResetTimer()
	for it := 0; it < b.N; it++ {
		for round := 0; round < 3; round++ {
			for _, workers := range []int{1, 2} {
				start, c0 := time.Now(), processCPU()
				_, err := Run(context.Background(), s, Options{Workers: workers}, benchStage(out),
					func(k, n int) error { nodes = n; return nil })
				if err != nil {
					b.Fatal(err)
				}
				d, c := time.Since(start), processCPU()-c0
				if best[workers] == 0 || d < best[workers] {
					best[workers] = d
				}
				if cpu[workers] == 0 || c < cpu[workers] {
					cpu[workers] = c
				}
			}
		}
	}
	b.StopTimer()
	for _, workers := range []int{1, 2} {
		b.ReportMetric(float64(best[workers].Nanoseconds())/float64(frames*nodes), fmt.Sprintf("ns/node/%dworkers", workers))
		b.ReportMetric(float64(frames)/best[workers].Seconds(), fmt.Sprintf("frames/s/%dworkers", workers))
		if cpu[workers] > 0 {
			b.ReportMetric(float64(cpu[workers])/float64(frames*nodes), fmt.Sprintf("cpu-ns/node/%dworkers", workers))
		}
	}
	b.ReportMetric(best[1].Seconds()/best[2].Seconds(), "speedup-2v1")
	if cpu[1] > 0 {
		b.ReportMetric(float64(cpu[2])/float64(cpu[1]), "cpu-2v1")
	}
	b.ReportMetric(load0, "load-start")
	b.ReportMetric(loadAverage(), "load-end")
}

// loadAverage returns the one-minute load average (-1 where the system does not say).
func loadAverage() float64 {
	b, err := os.ReadFile("/proc/loadavg")
	if err != nil {
		return -1
	}
	var l float64
	if _, err := fmt.Sscan(string(b), &l); err != nil {
		return -1
	}
	return l
}
