package piv

import (
	"errors"
	"io"
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

func TestGridIndexing(t *testing.T) {
	g := Grid{NX: 4, NY: 3, X0: 1, Y0: -2, DX: 0.5, DY: 0.25}
	if err := g.Validate(0); err != nil {
		t.Fatal(err)
	}
	for j := 0; j < g.NY; j++ {
		for i := 0; i < g.NX; i++ {
			k := g.Index(i, j)
			if ii, jj := g.IJ(k); ii != i || jj != j {
				t.Fatalf("IJ(Index(%d,%d)) = %d,%d", i, j, ii, jj)
			}
			fi, fj := g.Frac(g.X(i), g.Y(j))
			if math.Abs(fi-float64(i)) > 1e-12 || math.Abs(fj-float64(j)) > 1e-12 {
				t.Fatalf("Frac of node (%d,%d) = %g,%g", i, j, fi, fj)
			}
		}
	}
	bad := []Grid{
		{NX: 0, NY: 3, DX: 1, DY: 1},
		{NX: 3, NY: 3, DX: -1, DY: 1},
		{NX: 3, NY: 3, DX: math.NaN(), DY: 1},
		{NX: 3, NY: 3, DX: 1, DY: 1, X0: math.Inf(1)},
		{NX: 20000, NY: 20000, DX: 1, DY: 1},
	}
	for _, b := range bad {
		if err := b.Validate(1000); err == nil {
			t.Errorf("Validate(%+v) accepted a bad grid", b)
		}
	}
}

func TestStatusRoundTrip(t *testing.T) {
	for _, s := range []Status{Measured, Replaced, Missing, Solid, Replaced | RejectedMedian,
		Missing | RejectedRange | RejectedStd} {
		got, err := ParseStatus(s.String())
		if err != nil || got != s {
			t.Errorf("ParseStatus(%q) = %v, %v; want %v", s.String(), got, err, s)
		}
	}
	if _, err := ParseStatus("bogus"); err == nil {
		t.Error("ParseStatus accepted an unknown status")
	}
	if !(Replaced | RejectedMedian).Valid() || Solid.Valid() || (Measured | RejectedStd).WithKind(Missing).Valid() {
		t.Error("Valid disagrees with the status kind")
	}
}

func TestFieldNormalizeAndMask(t *testing.T) {
	g := Grid{NX: 5, NY: 5, DX: 1, DY: 1}
	f := NewField(g)
	for k := range f.U {
		f.Set(k, 1, 2)
	}
	f.U[3] = math.NaN()
	f.Normalize()
	if f.Status[3].Kind() != Missing || !math.IsNaN(f.V[3]) {
		t.Errorf("a NaN vector was not made missing: %v %g", f.Status[3], f.V[3])
	}
	n := f.MaskSolid(Rect{X0: 1, Y0: 1, X1: 2, Y1: 3})
	if n != 6 {
		t.Errorf("rectangle masked %d nodes, want 6 (2 columns x 3 rows)", n)
	}
	if got, want := f.ValidShare(), float64(25-1-6)/25; got != want {
		t.Errorf("ValidShare = %g, want %g", got, want)
	}
	c := f.Clone()
	c.U[0] = 99
	if f.U[0] == 99 {
		t.Error("Clone shares its slices")
	}
}

func TestShapes(t *testing.T) {
	// A unit square as a polygon, counter-clockwise: area 1 (shoelace formula).
	sq := Polygon{X: []float64{0, 1, 1, 0}, Y: []float64{0, 0, 1, 1}}
	if err := sq.Validate(); err != nil {
		t.Fatal(err)
	}
	if a := sq.Area(); a != 1 {
		t.Errorf("area %g, want 1", a)
	}
	if !sq.Contains(0.5, 0.5) || sq.Contains(1.5, 0.5) || sq.Contains(0.5, -0.1) {
		t.Error("polygon containment is wrong")
	}
	// An L-shaped (concave) polygon.
	l := Polygon{X: []float64{0, 2, 2, 1, 1, 0}, Y: []float64{0, 0, 1, 1, 2, 2}}
	if l.Contains(1.5, 1.5) || !l.Contains(0.5, 1.5) || !l.Contains(1.5, 0.5) {
		t.Error("concave polygon containment is wrong")
	}
	if math.Abs(l.Area()-3) > 1e-15 {
		t.Errorf("L area %g, want 3", l.Area())
	}
	if err := (Polygon{X: []float64{0, 1}, Y: []float64{0, 1}}).Validate(); err == nil {
		t.Error("a two-vertex polygon was accepted")
	}
	c := Circle{X: 1, Y: 1, R: 0.5}
	if !c.Contains(1.3, 1.3) || c.Contains(1.4, 1.4) {
		t.Error("circle containment is wrong")
	}
}

func TestSeriesAndWindow(t *testing.T) {
	g := Grid{NX: 2, NY: 2, DX: 1, DY: 1}
	loads := 0
	names := []string{"a", "b", "c", "d"}
	times := []float64{0, 0.1, 0.25, 0.3}
	s, err := NewSeries(names, times, func(k int) (*Field, error) {
		loads++
		return NewField(g), nil
	})
	if err != nil {
		t.Fatal(err)
	}
	if dt := s.MeanDT(); math.Abs(dt-0.1) > 1e-15 {
		t.Errorf("MeanDT = %g, want 0.1", dt)
	}
	w := NewWindow(s, 2)
	for _, k := range []int{0, 1, 0, 2, 1} {
		f, err := w.Frame(k)
		if err != nil {
			t.Fatal(err)
		}
		if f.Time != times[k] {
			t.Errorf("frame %d time %g, want %g", k, f.Time, times[k])
		}
		if w.Held() > 2 {
			t.Fatalf("window holds %d frames, capacity 2", w.Held())
		}
	}
	// 0 and 1 loaded, 0 reused, 2 evicts 1 (least recently used), 1 reloaded: 4 loads.
	if loads != 4 {
		t.Errorf("%d loads, want 4", loads)
	}
	if _, err := NewSeries([]string{"a", "b"}, []float64{1, 1}, nil); err == nil ||
		!strings.Contains(err.Error(), "time order") {
		t.Errorf("equal frame times were accepted or badly explained: %v", err)
	}
	sub, err := s.Sub(1, 3)
	if err != nil || sub.Len() != 2 || sub.Time(0) != 0.1 {
		t.Errorf("Sub(1,3) = %v, %v", sub, err)
	}
}

func TestWriteFileAtomic(t *testing.T) {
	dir := t.TempDir()
	path := filepath.Join(dir, "out.txt")
	if err := WriteFileAtomic(path, func(w io.Writer) error { _, err := w.Write([]byte("ok")); return err }); err != nil {
		t.Fatal(err)
	}
	failing := errors.New("disk full")
	if err := WriteFileAtomic(path, func(w io.Writer) error {
		w.Write([]byte("partial"))
		return failing
	}); !errors.Is(err, failing) {
		t.Fatalf("error %v, want the writer's error", err)
	}
	b, _ := os.ReadFile(path)
	if string(b) != "ok" {
		t.Errorf("a failed write changed the file to %q", b)
	}
	entries, _ := os.ReadDir(dir)
	if len(entries) != 1 {
		t.Errorf("temporary files left behind: %v", entries)
	}
	in := filepath.Join(dir, "input.csv")
	os.WriteFile(in, []byte("x"), 0o644)
	MarkInput(in)
	if err := WriteFileAtomic(in, func(w io.Writer) error { return nil }); err == nil {
		t.Error("WriteFileAtomic wrote over an input file")
	}
	// A missing folder is named in the error, not the temporary file's name.
	missing := filepath.Join(dir, "no-such-folder", "out.json")
	err := WriteFileAtomic(missing, func(w io.Writer) error { return nil })
	if err == nil || !strings.Contains(err.Error(), missing+": cannot write: the folder "+filepath.Dir(missing)+" does not exist") || strings.Contains(err.Error(), ".tmp") {
		t.Errorf("write into a missing folder: error %v", err)
	}
}
