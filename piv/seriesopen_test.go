package piv

import (
	"bytes"
	"errors"
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

func writeFrames(t *testing.T, dir string, names ...string) {
	t.Helper()
	for k, n := range names {
		text := "x,y,u,v\n0,0,1,0\n1,0,1,0\n0,1,1,0\n1,1," + string(rune('1'+k%9)) + ",0\n"
		if err := os.WriteFile(filepath.Join(dir, n), []byte(text), 0o644); err != nil {
			t.Fatal(err)
		}
	}
}

func TestNaturalOrder(t *testing.T) {
	names := []string{"frame_10.csv", "frame_2.csv", "frame_1.csv", "frame_002b.csv", "a.csv", "frame_100.csv"}
	SortNatural(names)
	want := "a.csv frame_1.csv frame_2.csv frame_002b.csv frame_10.csv frame_100.csv"
	if got := strings.Join(names, " "); got != want {
		t.Errorf("natural order %q, want %q", got, want)
	}
}

func TestOpenSeriesFolderGlobFiles(t *testing.T) {
	dir := t.TempDir()
	writeFrames(t, dir, "frame_10.csv", "frame_2.csv", "frame_1.csv")
	os.WriteFile(filepath.Join(dir, "notes.txt"), []byte("not a frame"), 0o644)
	want := []string{"frame_1.csv", "frame_2.csv", "frame_10.csv"}
	for _, args := range [][]string{{dir}, {filepath.Join(dir, "frame_*.csv")}} {
		s, err := OpenSeries(args, ReadOptions{DT: 0.002, T0: 1})
		if err != nil {
			t.Fatal(err)
		}
		if s.Len() != 3 {
			t.Fatalf("%v: %d frames", args, s.Len())
		}
		for k, w := range want {
			if filepath.Base(s.Name(k)) != w || math.Abs(s.Time(k)-(1+0.002*float64(k))) > 1e-15 {
				t.Errorf("%v frame %d: %s at %v", args, k, s.Name(k), s.Time(k))
			}
		}
		f, err := s.Frame(2)
		if err != nil || f.U[3] != 1 { // frame_10.csv was written first, with u = 1
			t.Errorf("frame 2 (frame_10.csv): %v %v", err, f)
		}
	}
	// Several files keep the order given.
	s, err := OpenSeries([]string{filepath.Join(dir, "frame_10.csv"), filepath.Join(dir, "frame_1.csv")}, ReadOptions{DT: 1})
	if err != nil || filepath.Base(s.Name(0)) != "frame_10.csv" {
		t.Errorf("explicit order: %v %v", err, s)
	}
	if _, err := OpenSeries([]string{dir}, ReadOptions{}); err == nil || !strings.Contains(err.Error(), "--dt") {
		t.Errorf("no times: %v", err)
	}
	one, err := OpenSeries([]string{filepath.Join(dir, "frame_1.csv")}, ReadOptions{})
	if err != nil || one.Time(0) != 0 {
		t.Errorf("single frame: %v", err)
	}
	if _, err := OpenSeries([]string{filepath.Join(dir, "nope_*.csv")}, ReadOptions{DT: 1}); err == nil || !strings.Contains(err.Error(), "no files match") {
		t.Errorf("empty glob: %v", err)
	}
}

func TestFrameIndex(t *testing.T) {
	dir := t.TempDir()
	writeFrames(t, dir, "a.csv", "b.csv", "c.csv")
	idx := filepath.Join(dir, "frames.csv")
	os.WriteFile(idx, []byte("frame,file,t [ms]\n0,a.csv,0\n1,c.csv,1.5\n2,b.csv,3\n"), 0o644)
	s, err := OpenSeries([]string{idx}, ReadOptions{DT: 99})
	if err != nil {
		t.Fatal(err)
	}
	// Times in ms converted to s: 1.5 ms = 1.5e-3 s.
	if s.Len() != 3 || filepath.Base(s.Name(1)) != "c.csv" || s.Time(1) != 1.5e-3 || s.Time(2) != 3e-3 {
		t.Fatalf("index series: %v %v", s.Times(), s.Name(1))
	}
	// A folder with one index uses it.
	s2, err := OpenSeries([]string{dir}, ReadOptions{})
	if err != nil || s2.Len() != 3 || filepath.Base(s2.Name(1)) != "c.csv" {
		t.Fatalf("folder with index: %v", err)
	}
	files, times, err := ReadFrameIndex(idx)
	if err != nil || len(files) != 3 || len(times) != 3 {
		t.Fatalf("ReadFrameIndex: %v", err)
	}
	for _, c := range []struct{ text, msg string }{
		{"file,time\na.csv,0\nb.csv,oops\n", "frames.csv:3:2"},
		{"file,time\na.csv,0\nb.csv\n", "frames.csv:3:1"},
		{"file,time\na.csv,1\nb.csv,1\n", "not after"},
		{"file,time [fortnight]\na.csv,1\n", "unknown time unit"},
		{"file,time\n", "lists no frames"},
	} {
		os.WriteFile(idx, []byte(c.text), 0o644)
		if _, err := OpenSeries([]string{idx}, ReadOptions{}); err == nil || !strings.Contains(err.Error(), c.msg) {
			t.Errorf("index %q: error %v, want %q", c.text, err, c.msg)
		}
	}
}

func TestSeriesGridMismatch(t *testing.T) {
	dir := t.TempDir()
	writeFrames(t, dir, "f1.csv")
	os.WriteFile(filepath.Join(dir, "f2.csv"), []byte("x,y,u,v\n0,0,1,0\n2,0,1,0\n0,2,1,0\n2,2,1,0\n"), 0o644)
	s, err := OpenSeries([]string{dir}, ReadOptions{DT: 1})
	if err != nil {
		t.Fatal(err)
	}
	// Loading frame 1 first still compares against frame 0.
	_, err = s.Frame(1)
	var ie *InputError
	if !errors.As(err, &ie) || !strings.HasSuffix(ie.File, "f2.csv") || !strings.Contains(ie.Msg, "differs") {
		t.Errorf("grid mismatch: %v", err)
	}
}

func FuzzReadFrameIndex(f *testing.F) {
	f.Add([]byte("frame,file,t\n0,a.csv,0\n1,b.csv,0.5\n"))
	f.Add([]byte("file;time [ms]\na.csv;1,5\n"))
	f.Fuzz(func(t *testing.T, data []byte) {
		files, times, err := readFrameIndex(bytes.NewReader(data), "idx.csv")
		if err != nil {
			if !strings.HasPrefix(err.Error(), "idx.csv") {
				t.Fatalf("error without the file name: %v", err)
			}
			return
		}
		if len(files) == 0 || (times != nil && len(times) != len(files)) {
			t.Fatalf("%d files, %d times", len(files), len(times))
		}
	})
}

// Frames are read only when asked for: a broken frame does not stop the series from opening,
// and its error names it when it is loaded.
func TestOpenSeriesIsLazy(t *testing.T) {
	dir := t.TempDir()
	writeFrames(t, dir, "f1.csv", "f2.csv")
	os.WriteFile(filepath.Join(dir, "f3.csv"), []byte("x,y,u,v\n0,0,oops,0\n"), 0o644)
	s, err := OpenSeries([]string{dir}, ReadOptions{DT: 1})
	if err != nil || s.Len() != 3 {
		t.Fatalf("open: %v", err)
	}
	if _, err := s.Frame(1); err != nil {
		t.Fatal(err)
	}
	if _, err := s.Frame(2); err == nil || !strings.Contains(err.Error(), "f3.csv:2:3") {
		t.Errorf("broken frame: %v", err)
	}
}

func TestOpenPlainSeriesGlobs(t *testing.T) {
	dir := t.TempDir()
	for _, n := range []string{"u_1.txt", "u_2.txt", "u_10.txt", "v_1.txt", "v_2.txt", "v_10.txt"} {
		os.WriteFile(filepath.Join(dir, n), []byte("1 2\n3 4\n"), 0o644)
	}
	opt := ReadOptions{DX: 1e-3, DT: 0.01}
	s, err := OpenPlainSeries([]string{filepath.Join(dir, "u_*.txt"), filepath.Join(dir, "v_*.txt")}, opt)
	if err != nil || s.Len() != 3 || filepath.Base(s.Name(2)) != "u_10.txt" || s.Time(2) != 0.02 {
		t.Fatalf("plain series: %v %v", err, s)
	}
	if f, err := s.Frame(2); err != nil || f.Grid.DX != 1e-3 {
		t.Errorf("frame: %v", err)
	}
	os.Remove(filepath.Join(dir, "v_10.txt"))
	if _, err := OpenPlainSeries([]string{filepath.Join(dir, "u_*.txt"), filepath.Join(dir, "v_*.txt")}, opt); err == nil || !strings.Contains(err.Error(), "pair up") {
		t.Errorf("unpaired: %v", err)
	}
}
