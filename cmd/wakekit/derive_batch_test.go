package main

import (
	"bytes"
	"errors"
	"fmt"
	"math/rand/v2"
	"os"
	"os/exec"
	"path/filepath"
	"runtime"
	"runtime/debug"
	"strconv"
	"strings"
	"sync"
	"syscall"
	"testing"
	"time"

	"github.com/wakekit/wakekit/internal/pipeline"
)

// These tests run "wakekit derive" through the batch engine: shards and merge, SIGINT and
// --resume in a real process, and memory on long series of large frames.

func requireDerive(t *testing.T) {
	t.Helper()
	if _, ok := commands["derive"]; !ok {
		t.Skip("this build has no derive command")
	}
}

// synthRun writes a synthetic drifting, noisy Lamb–Oseen series and returns its frame index.
func synthRun(t *testing.T, dir string, frames int, grid string) string {
	t.Helper()
	code, _, errs := runCapture("synth", "lamb-oseen", "--frames", fmt.Sprint(frames), "--grid", grid,
		"--spacing", "2e-4", "--core-radius", "2e-3", "--dt", "0.01", "--nu", "1e-6", "--drift", "0.01,0.002",
		"--noise", "0.0005", "--seed", "11", "--out", dir, "--quiet")
	if code != 0 {
		t.Fatalf("synth: %s", errs)
	}
	return filepath.Join(dir, "frames.csv")
}

// cycleIndex writes a frame index of n frames that cycles through the given files (distinct
// frame times), so long series cost little disk while every frame is still read from its file.
func cycleIndex(t *testing.T, path string, files []string, n int) {
	t.Helper()
	var b strings.Builder
	b.WriteString("file,time [s]\n")
	for k := 0; k < n; k++ {
		fmt.Fprintf(&b, "%s,%g\n", files[k%len(files)], 0.01*float64(k))
	}
	if err := os.WriteFile(path, []byte(b.String()), 0o644); err != nil {
		t.Fatal(err)
	}
}

// The merge of 4 shards equals the single-machine run byte for byte: frame files, the
// time-series table, the summary and the manifest.
func TestDeriveFourShardsMergeEqualsSingleRun(t *testing.T) {
	requireDerive(t)
	tmp := t.TempDir()
	index := synthRun(t, filepath.Join(tmp, "run"), 23, "48x40")
	args := []string{"derive", index, "--quantities", "vorticity,q,lambda2,gamma2", "--format", "csv,vtk", "--quiet"}
	single := filepath.Join(tmp, "single")
	if code, _, errs := runCapture(append(args, "--out", single)...); code != 0 {
		t.Fatalf("single run: %s", errs)
	}
	merge := []string{"merge"}
	for k := 1; k <= 4; k++ {
		d := filepath.Join(tmp, fmt.Sprintf("shard%d", k))
		if code, _, errs := runCapture(append(args, "--shard", fmt.Sprintf("%d/4", k), "--workers", "1", "--out", d)...); code != 0 {
			t.Fatalf("shard %d: %s", k, errs)
		}
		merge = append(merge, d)
	}
	merged := filepath.Join(tmp, "merged")
	code, out, errs := runCapture(append(merge, "--out", merged)...)
	if code != 0 {
		t.Fatalf("merge: %s", errs)
	}
	if !strings.Contains(out, "merged 4 folders") || !strings.Contains(out, "23 frames") {
		t.Errorf("merge summary: %q", out)
	}
	sameTrees(t, single, merged)
	// Merging an incomplete set is refused, exit status 1.
	if code, _, errs := runCapture("merge", merge[1], merge[2], "--out", filepath.Join(tmp, "m2")); code != 1 || !strings.Contains(errs, "in none of the folders") {
		t.Errorf("merge of shards 1 and 2 of 4: status %d, %q", code, errs)
	}
	if code, _, _ := runCapture("merge", merge[1]); code != 2 {
		t.Errorf("merge without --out: status %d, want 2", code)
	}
}

// A derive run killed with SIGINT at a random frame leaves only complete files and says how far
// it got; --resume then completes it with outputs identical to an uninterrupted run.
func TestDeriveSIGINTThenResume(t *testing.T) {
	requireDerive(t)
	bin := buildWakekit(t)
	tmp := t.TempDir()
	const frames = 48
	index := synthRun(t, filepath.Join(tmp, "run"), frames, "64x64")
	args := []string{"derive", index, "--quantities", "vorticity,q,swirl,gamma2", "--workers", "2", "--quiet"}
	ref := filepath.Join(tmp, "ref")
	if out, err := exec.Command(bin, append(args, "--out", ref)...).CombinedOutput(); err != nil {
		t.Fatalf("reference run: %v\n%s", err, out)
	}
	out := filepath.Join(tmp, "out")
	stopAt := 2 + rand.IntN(frames/2)
	cmd := exec.Command(bin, append(args, "--out", out)...)
	var stdout, stderr bytes.Buffer
	cmd.Stdout, cmd.Stderr = &stdout, &stderr
	if err := cmd.Start(); err != nil {
		t.Fatal(err)
	}
	manifest := filepath.Join(out, pipeline.ManifestName)
	deadline := time.Now().Add(60 * time.Second)
	for time.Now().Before(deadline) {
		b, _ := os.ReadFile(manifest)
		if bytes.Count(b, []byte{'\n'}) >= 1+stopAt {
			break
		}
		time.Sleep(time.Millisecond)
	}
	if err := cmd.Process.Signal(syscall.SIGINT); err != nil {
		t.Fatal(err)
	}
	err := cmd.Wait()
	var ee *exec.ExitError
	if !errors.As(err, &ee) || ee.ExitCode() != 1 {
		t.Fatalf("interrupted derive: %v, stdout %q, stderr %q; want exit status 1", err, stdout.String(), stderr.String())
	}
	if !strings.Contains(stderr.String(), "stopped after") || !strings.Contains(stderr.String(), "--resume") {
		t.Errorf("interrupted derive does not say how far it got and how to go on: %q", stderr.String())
	}
	t.Logf("SIGINT after frame %d: %s", stopAt, strings.TrimSpace(stderr.String()))
	want := treeFiles(t, ref)
	got := treeFiles(t, out)
	for name, b := range got {
		switch {
		case strings.HasPrefix(filepath.Base(name), "."):
			t.Errorf("%s: temporary file left behind", name)
		case name == pipeline.ManifestName:
		case string(want[name]) != string(b):
			t.Errorf("%s: not a complete output", name)
		}
	}
	if len(got) >= len(want) {
		t.Fatalf("the interrupted run wrote %d files, the complete one %d: the signal came too late", len(got), len(want))
	}
	res, err := exec.Command(bin, append(args, "--out", out, "--resume")...).CombinedOutput()
	if err != nil {
		t.Fatalf("resumed derive: %v\n%s", err, res)
	}
	sameTrees(t, ref, out)
}

// roundCSV rewrites the numbers of a CSV file with 7 significant digits, as velocimetry
// exports usually carry them (common practice), instead of the 17 of a full round trip.
func roundCSV(t *testing.T, path string) {
	t.Helper()
	b, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	lines := strings.Split(strings.TrimRight(string(b), "\n"), "\n")
	for n := 1; n < len(lines); n++ {
		cells := strings.Split(lines[n], ",")
		for c, cell := range cells {
			if v, err := strconv.ParseFloat(cell, 64); err == nil {
				cells[c] = strconv.FormatFloat(v, 'g', 7, 64)
			}
		}
		lines[n] = strings.Join(cells, ",")
	}
	if err := os.WriteFile(path, []byte(strings.Join(lines, "\n")+"\n"), 0o644); err != nil {
		t.Fatal(err)
	}
}

// memPeak runs f and returns two measures of the memory it needed, both from the process's
// own accounting: the peak of the Go heap and stacks in use above the start (runtime
// ReadMemStats, sampled every millisecond), and the high-water mark of the resident set
// (VmHWM of /proc/self/status, reset through /proc/self/clear_refs before f; -1 where the
// kernel offers neither). The resident peak includes the program itself and everything the
// runtime holds, so it bounds the heap peak from above and catches spikes between samples.
func memPeak(f func()) (heapPeak uint64, rssPeak int64) {
	runtime.GC()
	debug.FreeOSMemory()
	var ms runtime.MemStats
	runtime.ReadMemStats(&ms)
	base := ms.HeapInuse + ms.StackInuse
	rssPeak = -1
	if os.WriteFile("/proc/self/clear_refs", []byte("5"), 0) == nil {
		rssPeak = 0
	}
	stop := make(chan struct{})
	var wg sync.WaitGroup
	wg.Add(1)
	go func() {
		defer wg.Done()
		tick := time.NewTicker(time.Millisecond)
		defer tick.Stop()
		for {
			var m runtime.MemStats
			runtime.ReadMemStats(&m)
			if use := m.HeapInuse + m.StackInuse; use > base && use-base > heapPeak {
				heapPeak = use - base
			}
			select {
			case <-stop:
				return
			case <-tick.C:
			}
		}
	}()
	f()
	close(stop)
	wg.Wait()
	if rssPeak == 0 {
		rssPeak = -1
		if b, err := os.ReadFile("/proc/self/status"); err == nil {
			for _, line := range strings.Split(string(b), "\n") {
				if v, ok := strings.CutPrefix(line, "VmHWM:"); ok {
					var kb int64
					if _, err := fmt.Sscan(strings.TrimSuffix(strings.TrimSpace(v), " kB"), &kb); err == nil {
						rssPeak = kb << 10
					}
				}
			}
		}
	}
	return heapPeak, rssPeak
}

// Streaming: a series of 2000 frames of 256x256 nodes runs through derive with peak memory
// under 300 MB, the acceptance bound of the streaming engine, and every frame's output is the
// same, byte for byte, as the frame derived on its own.
//
// The series is 4 generated CSV files cycled by a frame index (so 2000 frames cost 22 MB of
// input while every frame is still read and parsed from its file), written as VTK, the
// cheapest writer (2 MB a frame, 4 GB in all; CSV would take 13 GB and twice the time), with
// the default quantity. This takes about a minute and a half on 2 cores, so it runs in CI
// (CI=true) and with WAKEKIT_LARGE=1; elsewhere "go test" runs 400 frames of 16x16 (memory
// independent of the count) and 8 of 256x256 (memory for the frame size) in seconds.
//
// Byte for byte: the VTK title line holds the frame time, so 6 frames (first, second, middle,
// last, two random) are derived alone through one-frame indexes with their own time and compared
// whole; every other frame is compared, past its title line, with the frame of the same source
// file derived alone.
func TestDeriveStreamingMemory(t *testing.T) {
	requireDerive(t)
	type size struct {
		frames int
		grid   string
	}
	cases := []size{{400, "16x16"}, {8, "256x256"}}
	if os.Getenv("WAKEKIT_LARGE") == "1" || os.Getenv("CI") == "true" {
		cases = []size{{2000, "256x256"}}
	}
	const limit = 300 << 20 // the acceptance bound of the streaming engine
	for _, c := range cases {
		tmp := t.TempDir()
		src := filepath.Join(tmp, "src")
		synthRun(t, src, 4, c.grid)
		files := []string{"frame_0000.csv", "frame_0001.csv", "frame_0002.csv", "frame_0003.csv"}
		for _, f := range files {
			roundCSV(t, filepath.Join(src, f))
		}
		index := filepath.Join(src, "long.csv")
		cycleIndex(t, index, files, c.frames)
		out := filepath.Join(tmp, "out")
		var code int
		var errs string
		start := time.Now()
		heap, rss := memPeak(func() {
			code, _, errs = runCapture("derive", index, "--format", "vtk", "--out", out, "--quiet", "--workers", "2")
		})
		if code != 0 {
			t.Fatalf("%d frames of %s: %s", c.frames, c.grid, errs)
		}
		t.Logf("%d frames of %s: peak heap %.1f MB above the start, peak resident set %.1f MB (-1: not available), %.1f s",
			c.frames, c.grid, float64(heap)/(1<<20), float64(rss)/(1<<20), time.Since(start).Seconds())
		if heap > limit {
			t.Errorf("%d frames of %s: peak heap %.1f MB exceeds %d MB", c.frames, c.grid, float64(heap)/(1<<20), limit>>20)
		}
		if rss > limit {
			t.Errorf("%d frames of %s: peak resident set %.1f MB exceeds %d MB", c.frames, c.grid, float64(rss)/(1<<20), limit>>20)
		}
		// Each source file derived alone (time 0, from a one-frame index): the reference for
		// everything past the title line.
		body := func(b []byte) []byte {
			for n := 0; n < 2; n++ {
				i := bytes.IndexByte(b, '\n')
				if i < 0 {
					return nil
				}
				b = b[i+1:]
			}
			return b
		}
		alone := func(k int, tm string) []byte {
			t.Helper()
			dir := filepath.Join(tmp, fmt.Sprintf("one-%d-%s", k, tm))
			idx := filepath.Join(src, fmt.Sprintf("one-%d-%s.csv", k, tm))
			if err := os.WriteFile(idx, []byte("file,time [s]\n"+files[k%4]+","+tm+"\n"), 0o644); err != nil {
				t.Fatal(err)
			}
			if code, _, errs := runCapture("derive", idx, "--format", "vtk", "--out", dir, "--quiet", "--workers", "1"); code != 0 {
				t.Fatalf("frame %d alone: %s", k, errs)
			}
			b, err := os.ReadFile(filepath.Join(dir, strings.TrimSuffix(files[k%4], ".csv")+".vtk"))
			if err != nil {
				t.Fatal(err)
			}
			return b
		}
		var ref [4][]byte
		for k := range ref {
			ref[k] = body(alone(k, "0"))
		}
		whole := map[int]bool{0: true, 1: true, c.frames / 2: true, c.frames - 1: true, rand.IntN(c.frames): true, rand.IntN(c.frames): true}
		bad := 0
		for k := 0; k < c.frames && bad < 5; k++ {
			inRun, err := os.ReadFile(filepath.Join(out, fmt.Sprintf("frame_%05d.vtk", k)))
			if err != nil {
				t.Fatal(err)
			}
			if whole[k] {
				if want := alone(k, fmt.Sprintf("%g", 0.01*float64(k))); !bytes.Equal(want, inRun) {
					t.Errorf("%d frames of %s: frame %d differs from the same frame derived alone", c.frames, c.grid, k)
					bad++
				}
			}
			if b := body(inRun); len(b) == 0 || !bytes.Equal(b, ref[k%4]) {
				t.Errorf("%d frames of %s: frame %d differs, past its title line, from %s derived alone", c.frames, c.grid, k, files[k%4])
				bad++
			}
		}
	}
}

// BenchmarkDeriveScaling measures "wakekit derive" throughput on 512x512 CSV frames with 1 and
// 2 workers and reports the speed-up. The series has WAKEKIT_BENCH_FRAMES frames (default 8;
// the acceptance figure uses 1000, which needs about 25 GB of scratch space for one run's
// outputs, removed after each run) cycling through 4 synthetic files. WAKEKIT_BENCH_ROUNDS
// alternating rounds (default 3), fastest of each count kept, so that load from other programs
// biases neither count:
//
//	WAKEKIT_BENCH_FRAMES=1000 WAKEKIT_BENCH_ROUNDS=1 go test -run '^$' -bench DeriveScaling -benchtime 1x ./cmd/wakekit/
//
// Besides wall-clock figures it reports the process CPU time per node of each count
// (cpu-ns/node/Nworkers) and their ratio cpu-2v1: a ratio near 1 means that running two
// frames at once adds no work, so a wall-clock speed-up below 2 comes from cores that other
// programs took (load-start and load-end give the one-minute load average around the run).
func BenchmarkDeriveScaling(b *testing.B) {
	frames, rounds := benchEnv("WAKEKIT_BENCH_FRAMES", 8), benchEnv("WAKEKIT_BENCH_ROUNDS", 3)
	tmp := b.TempDir()
	src := filepath.Join(tmp, "src")
	if code, _, errs := runCapture("synth", "lamb-oseen", "--frames", "4", "--grid", "512x512", "--spacing", "1e-4",
		"--noise", "0.001", "--seed", "5", "--out", src, "--quiet"); code != 0 {
		b.Fatalf("synth: %s", errs)
	}
	var idx strings.Builder
	idx.WriteString("file,time [s]\n")
	for k := 0; k < frames; k++ {
		fmt.Fprintf(&idx, "frame_%04d.csv,%g\n", k%4, 0.01*float64(k))
	}
	index := filepath.Join(src, "long.csv")
	if err := os.WriteFile(index, []byte(idx.String()), 0o644); err != nil {
		b.Fatal(err)
	}
	best := map[int]time.Duration{}
	cpu := map[int]int64{}
	load0 := loadAverage()
	b.ResetTimer()
	for it := 0; it < b.N; it++ {
		for round := 0; round < rounds; round++ {
			for _, workers := range []int{1, 2} {
				out := filepath.Join(tmp, fmt.Sprintf("out-%d-%d-%d", it, round, workers))
				start, c0 := time.Now(), processCPU()
				if code, _, errs := runCapture("derive", index, "--out", out, "--quiet", "--workers", fmt.Sprint(workers)); code != 0 {
					b.Fatalf("derive: %s", errs)
				}
				d, c := time.Since(start), processCPU()-c0
				if best[workers] == 0 || d < best[workers] {
					best[workers] = d
				}
				if cpu[workers] == 0 || c < cpu[workers] {
					cpu[workers] = c
				}
				os.RemoveAll(out)
			}
		}
	}
	b.StopTimer()
	const nodes = 512 * 512
	reportScaling(b, frames, nodes, best, cpu, load0, loadAverage())
}

// benchEnv reads a positive whole number from the environment, or returns def.
func benchEnv(name string, def int) int {
	var v int
	if _, err := fmt.Sscan(os.Getenv(name), &v); err == nil && v > 0 {
		return v
	}
	return def
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

// reportScaling reports the wall-clock and CPU figures of a 1- versus 2-worker benchmark.
func reportScaling(b *testing.B, frames, nodes int, best map[int]time.Duration, cpu map[int]int64, load0, load1 float64) {
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
	b.ReportMetric(load1, "load-end")
}
