package piv

import (
	"bytes"
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// A 3x2 matrix pair with hand values: the first file row is y = Y0 unless rows run top-down.
func TestReadPlainGrid(t *testing.T) {
	dir := t.TempDir()
	up, vp := filepath.Join(dir, "u.txt"), filepath.Join(dir, "v.txt")
	os.WriteFile(up, []byte("# u in mm/s\n1 2 3\n4 NaN 6\n"), 0o644)
	os.WriteFile(vp, []byte("10,20,30\n40,50,\n"), 0o644)
	opt := ReadOptions{PlainGrid: true, X0: 5, Y0: 10, DX: 0.5, LengthUnit: "mm", VelocityUnit: "mm/s"}
	f, info, err := ReadPlainGridInfo(up, vp, opt)
	if err != nil {
		t.Fatal(err)
	}
	g := f.Grid
	// 5 mm = 5e-3 m, 0.5 mm = 5e-4 m, 1 mm/s = 1e-3 m/s (SI Brochure).
	if g.NX != 3 || g.NY != 2 || g.X0 != 5e-3 || g.Y0 != 10e-3 || g.DX != 5e-4 || g.DY != 5e-4 {
		t.Fatalf("grid %v", g)
	}
	if f.U[g.Index(0, 0)] != 1e-3 || f.U[g.Index(0, 1)] != 4e-3 || f.V[g.Index(2, 0)] != 30e-3 {
		t.Errorf("values %v %v", f.U, f.V)
	}
	if f.Valid(g.Index(1, 1)) || f.Valid(g.Index(2, 1)) || f.ValidShare() != 4.0/6 {
		t.Errorf("missing nodes not missing: %v", f.Status)
	}
	if info.Format != "plain grid" || info.LengthUnit != "mm" {
		t.Errorf("info %+v", info)
	}
	opt.RowsTopDown = true
	f, err = ReadPlainGrid(up, vp, opt)
	if err != nil || f.U[g.Index(0, 1)] != 1e-3 || f.U[g.Index(0, 0)] != 4e-3 {
		t.Errorf("rows top-down: %v %v", err, f.U)
	}
	s, err := OpenSeries([]string{up, vp}, opt)
	if err != nil || s.Len() != 1 {
		t.Fatalf("plain series: %v", err)
	}
	for _, c := range []struct {
		opt ReadOptions
		u   string
		msg string
	}{
		{ReadOptions{DX: -1}, "1 2\n3 4\n", "must be finite and positive"},
		{ReadOptions{DX: 1, LengthUnit: "px"}, "1 2\n3 4\n", "pixel size"},
		{ReadOptions{DX: 1}, "1 2\n3\n", "u.txt:2:1"},
		{ReadOptions{DX: 1}, "1 2\n3 x\n", "u.txt:2:2"},
		{ReadOptions{DX: 1}, "1 2 3\n", "at least 2 by 2"},
		{ReadOptions{DX: 1}, "1 2 3\n4 5 6\n7 8 9\n", "v.txt"},
		{ReadOptions{DX: 1}, "", "empty file"},
	} {
		os.WriteFile(up, []byte(c.u), 0o644)
		os.WriteFile(vp, []byte("1 2\n3 4\n"), 0o644)
		if _, err := ReadPlainGrid(up, vp, c.opt); err == nil || !strings.Contains(err.Error(), c.msg) {
			t.Errorf("u %q opt %+v: error %v, want %q", c.u, c.opt, err, c.msg)
		}
	}
}

func FuzzReadPlainGrid(f *testing.F) {
	f.Add([]byte("1 2 3\n4 5 6\n"))
	f.Add([]byte("1,2\n,NaN\n"))
	f.Fuzz(func(t *testing.T, data []byte) {
		vals, nx, ny, _, err := parseMatrix(bytes.NewReader(data), "m.txt", int64(len(data)), 1<<16)
		if err != nil {
			if !strings.HasPrefix(err.Error(), "m.txt") {
				t.Fatalf("error without the file name: %v", err)
			}
			return
		}
		if nx < 2 || ny < 2 || len(vals) != nx*ny {
			t.Fatalf("%d values for %dx%d", len(vals), nx, ny)
		}
		for _, v := range vals {
			if math.IsInf(v, 0) {
				t.Fatal("infinite value accepted")
			}
		}
	})
}
