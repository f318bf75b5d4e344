package piv

import (
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

func TestParsePolygonsLayouts(t *testing.T) {
	// Two squares of side 2 mm and 1 mm; the area of a square is its side squared
	// (elementary geometry), so the areas in m^2 check the unit conversion.
	withID := "# nozzle wall of the invented thruster T-3\nshape, x [mm], y [mm]\nwall,0,0\nwall,2,0\nwall,2,2\nwall,0,2\nlip;5;5\nlip,6,5\nlip,6,6\nlip,5,6\n"
	withID = strings.Replace(withID, "lip;5;5", "lip,5,5", 1)
	blank := "0 0\n2 0\n2 2\n0 2\n\n\n5 5\t# comment\n6 5\n6 6\n5 6\n"
	for name, c := range map[string]struct {
		text string
		opt  ReadOptions
	}{
		"id column": {withID, ReadOptions{}},
		"blank":     {blank, ReadOptions{LengthUnit: "mm"}},
		"pixels":    {blank, ReadOptions{LengthUnit: "px", PixelSize: 1e-3}},
	} {
		ps, err := ParsePolygons(strings.NewReader(c.text), "walls.csv", c.opt)
		if err != nil {
			t.Fatalf("%s: %v", name, err)
		}
		if len(ps) != 2 {
			t.Fatalf("%s: %d polygons, want 2", name, len(ps))
		}
		for k, want := range []float64{4e-6, 1e-6} {
			if a := math.Abs(ps[k].Area()); math.Abs(a-want) > 1e-15 {
				t.Errorf("%s: polygon %d area %g m^2, want %g", name, k, a, want)
			}
		}
		if !ps[0].Contains(1e-3, 1e-3) || ps[0].Contains(3e-3, 1e-3) {
			t.Errorf("%s: containment of the first square is wrong", name)
		}
	}
}

func TestParsePolygonsErrors(t *testing.T) {
	for _, c := range []struct{ text, want string }{
		{"0 0\n1 0\n", "walls.csv:1: polygon starting here: polygon has 2 vertices; at least 3 are needed"},
		{"0 0\n1 1\n2 2\n", "encloses no area"},
		{"x,y\n0,0\n1,zero\n", "walls.csv:3:2: y: cannot read \"zero\" as a finite number"},
		{"x,y\n0,0\nNaN,1\n", "walls.csv:3:1: x: cannot read \"NaN\""},
		{"x,y\n0,0\n1\n", "walls.csv:3:2: expected 2 values on the line, found 1"},
		{"a,b\n0,0\n", "names no x and y columns"},
		{"x [px],y [px]\n0,0\n1,0\n0,1\n", "need a pixel size"},
		{"# only a comment\n", "no polygon vertices found"},
		{"x [furlong],y\n", "unknown length unit"},
	} {
		_, err := ParsePolygons(strings.NewReader(c.text), "walls.csv", ReadOptions{})
		if err == nil || !strings.Contains(err.Error(), c.want) {
			t.Errorf("%q: err = %v, want %q", c.text, err, c.want)
		}
	}
}

func TestReadPolygonsLimitsAndInput(t *testing.T) {
	dir := t.TempDir()
	path := filepath.Join(dir, "big.txt")
	f, err := os.Create(path)
	if err != nil {
		t.Fatal(err)
	}
	// A sparse file larger than the limit is refused from its size, before reading.
	if err := f.Truncate(MaxPolygonFileBytes + 1); err != nil {
		t.Fatal(err)
	}
	f.Close()
	if _, err := ReadPolygons(path, ReadOptions{}); err == nil || !strings.Contains(err.Error(), "larger than the limit") {
		t.Errorf("oversized file: %v", err)
	}
	ok := filepath.Join(dir, "tri.txt")
	os.WriteFile(ok, []byte("0 0\n1 0\n0 1\n"), 0o644)
	if ps, err := ReadPolygons(ok, ReadOptions{}); err != nil || len(ps) != 1 {
		t.Fatalf("ReadPolygons = %v, %v", ps, err)
	}
	if !IsInput(ok) {
		t.Error("a polygon file read is not protected from being written over")
	}
}

// FuzzParsePolygons: the reader never panics, and every polygon it returns is valid.
func FuzzParsePolygons(f *testing.F) {
	f.Add([]byte("shape,x [mm],y [mm]\na,0,0\na,1,0\na,0,1\nb,5,5\nb,6,5\nb,6,6\n"))
	f.Add([]byte("0 0\n1 0\n0 1\n\n2 2\n3 2\n2 3\n"))
	f.Add([]byte("x;y\n0;0\n1e300;0\n0;1e-300\n"))
	f.Fuzz(func(t *testing.T, data []byte) {
		ps, err := ParsePolygons(strings.NewReader(string(data)), "fuzz", ReadOptions{PixelSize: 1e-4})
		if err != nil {
			return
		}
		for _, p := range ps {
			if err := p.Validate(); err != nil {
				t.Fatalf("accepted an invalid polygon: %v", err)
			}
		}
	})
}
