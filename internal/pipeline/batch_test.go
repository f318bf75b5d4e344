package pipeline

import (
	"context"
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"io/fs"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"testing"

	"github.com/wakekit/wakekit/piv"
)

// The test stage below stands in for a series command: a centred time difference over a
// one-frame halo, one file per frame, a time-series table and a summary from the records.
const testCommand = "pipetest"

type testSettings struct {
	Scale float64 `json:"scale"`
	Mode  string  `json:"mode"`
}

type testRecord struct {
	Mean float64 `json:"mean"`
}

func init() {
	RegisterFinisher(testCommand, func(dir string, m *Manifest) error {
		var set testSettings
		if err := json.Unmarshal(m.Header.Settings, &set); err != nil {
			return err
		}
		sum := 0.0
		for _, e := range m.Entries {
			var r testRecord
			if err := json.Unmarshal(e.Record, &r); err != nil {
				return err
			}
			sum += r.Mean
		}
		return piv.WriteFileAtomic(filepath.Join(dir, "summary.json"), func(w io.Writer) error {
			return json.NewEncoder(w).Encode(map[string]any{
				"frames": len(m.Entries), "from": m.Header.From, "to": m.Header.To,
				"sum_of_means": sum, "scale": set.Scale})
		})
	})
}

var testTables = []Table{{Name: "series.csv", Header: "frame,t [s],mean du/dt [m/s^2]"}}

// writeInputs writes n frames of a tiny text format (one value of U per line) into dir and
// returns the series reading them.
func writeInputs(t testing.TB, dir string, n, nodes int) *piv.Series {
	t.Helper()
	names := make([]string, n)
	times := make([]float64, n)
	for k := range names {
		names[k] = filepath.Join(dir, fmt.Sprintf("in_%04d.txt", k))
		times[k] = 0.5 * float64(k)
		var b strings.Builder
		for i := 0; i < nodes; i++ {
			fmt.Fprintf(&b, "%g\n", float64(k*k)*0.25+float64(i))
		}
		if err := os.WriteFile(names[k], []byte(b.String()), 0o644); err != nil {
			t.Fatal(err)
		}
	}
	return openInputs(t, names, times, nodes)
}

func openInputs(t testing.TB, names []string, times []float64, nodes int) *piv.Series {
	t.Helper()
	s, err := loadInputs(names, times, nodes)
	if err != nil {
		t.Fatal(err)
	}
	return s
}

func loadInputs(names []string, times []float64, nodes int) (*piv.Series, error) {
	g := piv.Grid{NX: nodes, NY: 1, DX: 1, DY: 1}
	return piv.NewSeries(names, times, func(k int) (*piv.Field, error) {
		data, err := os.ReadFile(names[k])
		if err != nil {
			return nil, err
		}
		f := piv.NewField(g)
		for i, line := range strings.Fields(string(data)) {
			if i >= nodes {
				break
			}
			u, err := strconv.ParseFloat(line, 64)
			if err != nil {
				return nil, piv.Errorf(names[k], i+1, 1, "%v", err)
			}
			f.Set(i, u, 0)
		}
		return f, nil
	})
}

// testStage is the per-frame work: du/dt by central differences (one-sided at the ends).
func testStage(set testSettings, hook func(k int)) func(ctx context.Context, k int, fr Frames, out *Output) error {
	return func(ctx context.Context, k int, fr Frames, out *Output) error {
		if hook != nil {
			hook(k)
		}
		a, b := max(0, k-1), min(fr.Len()-1, k+1)
		fa, err := fr.Frame(a)
		if err != nil {
			return err
		}
		fb, err := fr.Frame(b)
		if err != nil {
			return err
		}
		dt := fr.Time(b) - fr.Time(a)
		mean := 0.0
		vals := make([]float64, len(fa.U))
		for i := range vals {
			vals[i] = set.Scale * (fb.U[i] - fa.U[i]) / dt
			mean += vals[i]
		}
		mean /= float64(len(vals))
		err = out.WriteFile(fmt.Sprintf("dudt_%04d.csv", k), func(w io.Writer) error {
			for i, v := range vals {
				if _, err := fmt.Fprintf(w, "%d,%s\n", i, strconv.FormatFloat(v, 'g', -1, 64)); err != nil {
					return err
				}
			}
			return nil
		})
		if err != nil {
			return err
		}
		if err := out.AddRow("series.csv", fmt.Sprintf("%d,%g,%s", k, fr.Time(k), strconv.FormatFloat(mean, 'g', -1, 64))); err != nil {
			return err
		}
		return out.SetRecord(testRecord{Mean: mean})
	}
}

func testBatch(dir string, set testSettings) Batch {
	return Batch{Dir: dir, Command: testCommand, Version: "test", Settings: set, Tables: testTables}
}

func runTest(t *testing.T, ctx context.Context, s *piv.Series, dir string, opt Options, set testSettings, hook func(int)) (Report, error) {
	t.Helper()
	if err := os.MkdirAll(dir, 0o755); err != nil {
		t.Fatal(err)
	}
	opt.Halo = 1
	return RunBatch(ctx, s, opt, testBatch(dir, set), testStage(set, hook))
}

// dirFiles returns the files of a folder (relative names) with their content.
func dirFiles(t testing.TB, dir string) map[string][]byte {
	t.Helper()
	files := map[string][]byte{}
	err := filepath.WalkDir(dir, func(path string, d fs.DirEntry, err error) error {
		if err != nil || d.IsDir() {
			return err
		}
		rel, _ := filepath.Rel(dir, path)
		b, err := os.ReadFile(path)
		files[rel] = b
		return err
	})
	if err != nil {
		t.Fatal(err)
	}
	return files
}

// sameDirs fails unless the two folders hold the same files with the same bytes.
func sameDirs(t testing.TB, want, got string) {
	t.Helper()
	a, b := dirFiles(t, want), dirFiles(t, got)
	for name, wa := range a {
		gb, ok := b[name]
		switch {
		case !ok:
			t.Errorf("%s: missing (present in %s)", filepath.Join(got, name), want)
		case string(wa) != string(gb):
			t.Errorf("%s differs from %s", filepath.Join(got, name), filepath.Join(want, name))
		}
	}
	for name := range b {
		if _, ok := a[name]; !ok {
			t.Errorf("%s: unexpected file", filepath.Join(got, name))
		}
	}
	if len(a) == 0 {
		t.Errorf("%s holds no files", want)
	}
}

var defaultSettings = testSettings{Scale: 2, Mode: "central"}

func TestBatchWritesFramesTablesSummary(t *testing.T) {
	tmp := t.TempDir()
	s := writeInputs(t, filepath.Join(tmp), 12, 5)
	out := filepath.Join(tmp, "out")
	rep, err := runTest(t, context.Background(), s, out, Options{Workers: 2}, defaultSettings, nil)
	if err != nil || !rep.Complete || rep.Computed != 12 {
		t.Fatalf("RunBatch = %+v, %v", rep, err)
	}
	table, err := os.ReadFile(filepath.Join(out, "series.csv"))
	if err != nil {
		t.Fatal(err)
	}
	lines := strings.Split(strings.TrimSpace(string(table)), "\n")
	if len(lines) != 13 || lines[0] != testTables[0].Header {
		t.Fatalf("series.csv has %d lines, header %q", len(lines), lines[0])
	}
	// U = k^2/4 + i at t = k/2, so du/dt = k by central differences (exact for a quadratic
	// in time) at interior frames, times the scale 2.
	for k := 1; k < 11; k++ {
		if want := fmt.Sprintf("%d,%g,%d", k, 0.5*float64(k), 2*k); lines[k+1] != want {
			t.Errorf("row %d = %q, want %q", k, lines[k+1], want)
		}
	}
	m, err := ReadManifest(out)
	if err != nil || !m.Complete() || len(m.Entries) != 12 {
		t.Fatalf("manifest: %v, %+v", err, m)
	}
	if _, err := os.Stat(filepath.Join(out, "summary.json")); err != nil {
		t.Errorf("no summary: %v", err)
	}
}

// A run cancelled part-way leaves only complete files; --resume then completes it with
// outputs identical to an uninterrupted run and reuses the finished frames.
func TestBatchResumeAfterCancel(t *testing.T) {
	tmp := t.TempDir()
	s := writeInputs(t, filepath.Join(tmp), 40, 7)
	ref := filepath.Join(tmp, "ref")
	if _, err := runTest(t, context.Background(), s, ref, Options{Workers: 3}, defaultSettings, nil); err != nil {
		t.Fatal(err)
	}
	out := filepath.Join(tmp, "out")
	ctx, cancel := context.WithCancel(context.Background())
	rep, err := runTest(t, ctx, s, out, Options{Workers: 3}, defaultSettings, func(k int) {
		if k == 17 {
			cancel()
		}
	})
	if err == nil || rep.Complete {
		t.Fatalf("cancelled run reports %+v, %v", rep, err)
	}
	checkOnlyCompleteFiles(t, ref, out)
	m, err := ReadManifest(out)
	if err != nil {
		t.Fatal(err)
	}
	if len(m.Entries) != rep.Computed || rep.Computed < 17 || rep.Computed >= 40 {
		t.Fatalf("manifest lists %d frames, report %+v", len(m.Entries), rep)
	}
	rep2, err := runTest(t, context.Background(), s, out, Options{Workers: 2, Resume: true}, defaultSettings, nil)
	if err != nil || !rep2.Complete || rep2.Reused != rep.Computed || rep2.Computed != 40-rep.Computed {
		t.Fatalf("resumed run = %+v, %v (first run %+v)", rep2, err, rep)
	}
	sameDirs(t, ref, out)
	// Resuming a complete run computes nothing and changes nothing.
	rep3, err := runTest(t, context.Background(), s, out, Options{Resume: true}, defaultSettings, nil)
	if err != nil || rep3.Computed != 0 || rep3.Reused != 40 {
		t.Fatalf("resume of a complete run = %+v, %v", rep3, err)
	}
	sameDirs(t, ref, out)
}

// checkOnlyCompleteFiles fails if dir holds a temporary file or a file whose bytes differ from
// the same file of the complete reference run (the manifest and run-level files excepted).
func checkOnlyCompleteFiles(t testing.TB, ref, dir string) {
	t.Helper()
	want := dirFiles(t, ref)
	for name, b := range dirFiles(t, dir) {
		if strings.HasPrefix(filepath.Base(name), ".") {
			t.Errorf("%s: temporary file left behind", name)
			continue
		}
		if name == ManifestName {
			continue
		}
		if w, ok := want[name]; !ok || string(w) != string(b) {
			t.Errorf("%s: not a complete output (%d bytes)", name, len(b))
		}
	}
}

func TestBatchResumeRefusesOtherSettings(t *testing.T) {
	tmp := t.TempDir()
	s := writeInputs(t, tmp, 6, 3)
	out := filepath.Join(tmp, "out")
	if _, err := runTest(t, context.Background(), s, out, Options{}, defaultSettings, nil); err != nil {
		t.Fatal(err)
	}
	other := defaultSettings
	other.Scale = 3
	_, err := runTest(t, context.Background(), s, out, Options{Resume: true}, other, nil)
	if err == nil || !strings.Contains(err.Error(), "scale was 2, now 3") || !strings.Contains(err.Error(), "without --resume") {
		t.Fatalf("resume with another scale: %v", err)
	}
	// Another shard of the same run is refused too.
	_, err = runTest(t, context.Background(), s, out, Options{Resume: true, Shard: Shard{1, 2}}, defaultSettings, nil)
	if err == nil || !strings.Contains(err.Error(), "another --shard") {
		t.Fatalf("resume as another shard: %v", err)
	}
}

// An input changed after the first run makes --resume recompute exactly the frames whose
// window holds it; a deleted output is recomputed too.
func TestBatchResumeRecomputesChanged(t *testing.T) {
	tmp := t.TempDir()
	s := writeInputs(t, tmp, 10, 4)
	out := filepath.Join(tmp, "out")
	if _, err := runTest(t, context.Background(), s, out, Options{Workers: 2}, defaultSettings, nil); err != nil {
		t.Fatal(err)
	}
	if err := os.WriteFile(s.Name(5), []byte("9\n9\n9\n9\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	if err := os.Remove(filepath.Join(out, "dudt_0008.csv")); err != nil {
		t.Fatal(err)
	}
	rep, err := runTest(t, context.Background(), s, out, Options{Resume: true}, defaultSettings, nil)
	// Frames 4, 5, 6 read frame 5; frame 8 lost its file.
	if err != nil || rep.Computed != 4 || rep.Reused != 6 {
		t.Fatalf("resume after a change = %+v, %v; want 4 frames recomputed", rep, err)
	}
	fresh := filepath.Join(tmp, "fresh")
	if _, err := runTest(t, context.Background(), s, fresh, Options{}, defaultSettings, nil); err != nil {
		t.Fatal(err)
	}
	sameDirs(t, fresh, out)
}

// The merge of 4 shards equals the single-machine run byte for byte, whatever order the
// folders are given in; shards have a halo, so they read frames outside their share.
func TestMergeFourShards(t *testing.T) {
	tmp := t.TempDir()
	s := writeInputs(t, tmp, 23, 5)
	single := filepath.Join(tmp, "single")
	if _, err := runTest(t, context.Background(), s, single, Options{Workers: 2}, defaultSettings, nil); err != nil {
		t.Fatal(err)
	}
	var dirs []string
	for k := 1; k <= 4; k++ {
		d := filepath.Join(tmp, fmt.Sprintf("shard%d", k))
		rep, err := runTest(t, context.Background(), s, d, Options{Workers: 2, Shard: Shard{k, 4}}, defaultSettings, nil)
		if err != nil || !rep.Complete {
			t.Fatalf("shard %d: %+v, %v", k, rep, err)
		}
		dirs = append(dirs, d)
	}
	merged := filepath.Join(tmp, "merged")
	rep, err := Merge(merged, []string{dirs[2], dirs[0], dirs[3], dirs[1]})
	if err != nil || rep.Frames != 23 || rep.Files != 23 || rep.Shards != 4 {
		t.Fatalf("Merge = %+v, %v", rep, err)
	}
	sameDirs(t, single, merged)
}

func TestMergeRefuses(t *testing.T) {
	tmp := t.TempDir()
	s := writeInputs(t, tmp, 9, 3)
	shard := func(name string, sh Shard, set testSettings, stopAt int) string {
		d := filepath.Join(tmp, name)
		ctx, cancel := context.WithCancel(context.Background())
		defer cancel()
		runTest(t, ctx, s, d, Options{Workers: 1, Shard: sh}, set, func(k int) {
			if k == stopAt {
				cancel()
			}
		})
		return d
	}
	a := shard("a", Shard{1, 3}, defaultSettings, -1)
	b := shard("b", Shard{2, 3}, defaultSettings, -1)
	c := shard("c", Shard{3, 3}, defaultSettings, -1)
	half := shard("half", Shard{3, 3}, defaultSettings, 7)
	other := shard("other", Shard{3, 3}, testSettings{Scale: 5}, -1)
	two := shard("two", Shard{2, 2}, defaultSettings, -1)
	for _, tc := range []struct {
		name string
		dirs []string
		out  string
		want string
	}{
		{"missing shard", []string{a, c}, "m1", "frames 3..5 are in none"},
		{"missing last", []string{a, b}, "m2", "frames 6..8 are in none"},
		{"incomplete", []string{a, b, half}, "m3", "not complete"},
		{"settings", []string{a, b, other}, "m4", "other settings"},
		{"overlap", []string{a, b, c, two}, "m5", "overlaps"},
		{"into a shard", []string{a, b, c}, "a", "must not be one of the shard folders"},
		{"not a run", []string{tmp}, "m6", "no " + ManifestName},
	} {
		_, err := Merge(filepath.Join(tmp, tc.out), tc.dirs)
		if err == nil || !strings.Contains(err.Error(), tc.want) {
			t.Errorf("%s: err = %v, want it to say %q", tc.name, err, tc.want)
		}
	}
	// A shard output changed after the run is caught by its recorded digest.
	if err := os.WriteFile(filepath.Join(b, "dudt_0004.csv"), []byte("0,12345\n1,1\n2,2\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	_, err := Merge(filepath.Join(tmp, "m7"), []string{a, b, c})
	if err == nil || !strings.Contains(err.Error(), "dudt_0004.csv") {
		t.Errorf("tampered shard output: err = %v", err)
	}
	if _, err := os.Stat(filepath.Join(tmp, "m7")); !os.IsNotExist(err) {
		t.Errorf("failed merge left its output folder behind (%v)", err)
	}
}

// A last line cut short by an interruption is not a finished frame; a broken full line is an
// error naming the line.
func TestParseManifestTornAndBroken(t *testing.T) {
	head := `{"format":"wakekit-manifest/1","command":"x","version":"1","settings":{},"settings_sha256":"","frames":3,"series_sha256":"","halo":0,"from":0,"to":3}` + "\n"
	e0 := `{"frame":0,"name":"a","input_sha256":"00"}` + "\n"
	m, err := ParseManifest("m", strings.NewReader(head+e0+`{"frame":1,"na`))
	if err != nil || len(m.Entries) != 1 || m.Complete() {
		t.Fatalf("torn manifest: %v, %+v", err, m)
	}
	if miss := m.Missing(); fmt.Sprint(miss) != "[1 2]" {
		t.Errorf("Missing = %v", miss)
	}
	_, err = ParseManifest("m", strings.NewReader(head+e0+"{\"frame\":1,\"na\n"))
	if err == nil || !strings.HasPrefix(err.Error(), "m:3:") {
		t.Errorf("broken line: %v", err)
	}
	_, err = ParseManifest("m", strings.NewReader(head+`{"frame":7,"name":"a","input_sha256":"00"}`+"\n"))
	if err == nil || !strings.Contains(err.Error(), "outside") {
		t.Errorf("frame out of range: %v", err)
	}
	_, err = ParseManifest("m", strings.NewReader(head+`{"frame":1,"name":"a","input_sha256":"00","files":[{"name":"../x","size":1,"sha256":""}]}`+"\n"))
	if err == nil || !strings.Contains(err.Error(), "inside the output folder") {
		t.Errorf("escaping file name: %v", err)
	}
}

// FuzzParseManifest: the manifest reader never panics, and whatever it accepts survives a
// write and a second read unchanged.
func FuzzParseManifest(f *testing.F) {
	head := `{"format":"wakekit-manifest/1","command":"x","version":"1","settings":{"a":1},"settings_sha256":"","frames":4,"series_sha256":"","halo":1,"tables":[{"name":"t.csv","header":"h"}],"shard":"1/2","from":0,"to":2}` + "\n"
	f.Add([]byte(head + `{"frame":0,"name":"a","input_sha256":"00","files":[{"name":"f0","size":3,"sha256":"ab"}],"rows":{"t.csv":["1,2"]},"record":{"m":1.5}}` + "\n"))
	f.Add([]byte(head))
	f.Add([]byte("{}\n"))
	f.Fuzz(func(t *testing.T, data []byte) {
		m, err := ParseManifest("fuzz", strings.NewReader(string(data)))
		if err != nil {
			return
		}
		var buf strings.Builder
		if err := m.encode(&buf); err != nil {
			t.Fatal(err)
		}
		again, err := ParseManifest("again", strings.NewReader(buf.String()))
		if err != nil {
			t.Fatalf("re-reading a written manifest: %v", err)
		}
		var buf2 strings.Builder
		again.encode(&buf2)
		if buf.String() != buf2.String() {
			t.Fatalf("manifest changed on a round trip")
		}
	})
}

// A batch stage may read only its declared window, so a frame's recorded input digest covers
// everything its result depends on; a broken manifest stops --resume with its file and line.
func TestBatchWindowAndBrokenManifest(t *testing.T) {
	tmp := t.TempDir()
	s := writeInputs(t, tmp, 5, 2)
	out := filepath.Join(tmp, "out")
	os.MkdirAll(out, 0o755)
	_, err := RunBatch(context.Background(), s, Options{Workers: 1}, testBatch(out, defaultSettings),
		func(ctx context.Context, k int, fr Frames, o *Output) error {
			_, err := fr.Frame(min(k+1, fr.Len()-1))
			if k == fr.Len()-1 {
				_, err = fr.Frame(k - 1)
			}
			return err
		})
	if !errors.Is(err, ErrOutsideWindow) {
		t.Fatalf("halo-0 batch reading a neighbour: %v", err)
	}
	if err := os.WriteFile(filepath.Join(out, ManifestName), []byte("{\"format\":\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	_, err = runTest(t, context.Background(), s, out, Options{Resume: true}, defaultSettings, nil)
	if err == nil || !strings.Contains(err.Error(), ManifestName+":1:") {
		t.Fatalf("resume over a broken manifest: %v", err)
	}
}
