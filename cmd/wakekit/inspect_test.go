package main

import (
	"bytes"
	"encoding/json"
	"fmt"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// The small test file holds u = 0.1*i m/s and v = 0.05*j m/s on a 5x4 grid at 1 mm, with node
// (2,1) NaN and node (4,3) absent. Hand values: 18 of 20 nodes valid (90.0%); mean u =
// (4.0 - 0.2 - 0.4)/18 = 0.18889 m/s; mean v = (1.5 - 0.05 - 0.15)/18 = 0.072222 m/s; largest
// speed at (4,2): hypot(0.4, 0.1) = 0.41231 m/s. The field is linear, so every difference
// scheme gives its divergence exactly: du/dx + dv/dy = 0.1/1e-3 + 0.05/1e-3 = 150 1/s; the RMS
// speed is sqrt((1.0 + 0.15)/18) = 0.25276 m/s (sums of u^2 and v^2 over the valid nodes), so
// the continuity residual is 150 * 1e-3 / 0.25276 = 0.59345.
func TestInspectSmallFile(t *testing.T) {
	in := filepath.Join("..", "..", "testdata", "inspect", "tank2-run3-frame_0001.csv")
	out := filepath.Join(t.TempDir(), "summary.json")
	code, stdout, stderr := runCapture("inspect", "--json", out, in)
	if code != 0 {
		t.Fatalf("status %d: %s", code, stderr)
	}
	for _, want := range []string{
		"semicolon-separated, header", `"x [mm]"`, "length mm, velocity m/s",
		"5 x 4 nodes, spacing 0.001 x 0.001 m", "x 0 .. 0.004 m, y 0 .. 0.003 m", "planar",
		"90.0% of 20 nodes (18 measured, 0 replaced, 2 missing, 0 solid)",
		"0 .. 0.4 m/s, mean 0.1889 m/s", "0 .. 0.15 m/s, mean 0.07222 m/s", "max 0.4123 m/s", "frames       1",
		"RMS divergence 150 1/s = 0.593 of RMS speed / spacing",
	} {
		if !strings.Contains(stdout, want) {
			t.Errorf("output lacks %q:\n%s", want, stdout)
		}
	}
	b, err := os.ReadFile(out)
	if err != nil {
		t.Fatal(err)
	}
	var rep inspectReport
	if err := json.Unmarshal(b, &rep); err != nil {
		t.Fatal(err)
	}
	if rep.NX != 5 || rep.NY != 4 || rep.Missing != 2 || float64(rep.ValidShare) != 0.9 || rep.LengthUnit != "mm" {
		t.Errorf("JSON summary %+v", rep)
	}
}

// Solid-body rotation u = -W y, v = W x is divergence-free (and linear, so central differences
// are exact): the residual must vanish to round-off.
func TestInspectContinuityOfRotation(t *testing.T) {
	var b strings.Builder
	b.WriteString("x [m],y [m],u [m/s],v [m/s]\n")
	const w = 3.0
	for j := 0; j < 12; j++ {
		for i := 0; i < 15; i++ {
			x, y := float64(i)*0.002-0.01, float64(j)*0.002-0.01
			fmt.Fprintf(&b, "%g,%g,%g,%g\n", x, y, -w*y, w*x)
		}
	}
	in := filepath.Join(t.TempDir(), "rotation.csv")
	os.WriteFile(in, []byte(b.String()), 0o644)
	out := filepath.Join(t.TempDir(), "s.json")
	if code, _, stderr := runCapture("inspect", "--json", out, in); code != 0 {
		t.Fatalf("status %d: %s", code, stderr)
	}
	data, _ := os.ReadFile(out)
	var rep inspectReport
	json.Unmarshal(data, &rep)
	// Round-off: coordinates and velocities carry 1e-16 relative error, differences divide by
	// 2e-3 m, so the divergence is of order 1e-13 1/s against a gradient scale of about 3 1/s.
	if rep.DivergenceNodes != 180 || !(float64(rep.ContinuityResidual) < 1e-12) {
		t.Errorf("rotation: residual %v over %d nodes", rep.ContinuityResidual, rep.DivergenceNodes)
	}
}

func TestInspectSeries(t *testing.T) {
	dir := t.TempDir()
	frame := "x,y,u,v\n0,0,1,0\n1,0,1,0\n0,1,1,0\n1,1,1,0\n"
	for _, n := range []string{"f_1.csv", "f_2.csv", "f_10.csv"} {
		os.WriteFile(filepath.Join(dir, n), []byte(frame), 0o644)
	}
	code, stdout, stderr := runCapture("inspect", "--all", "--dt", "0.002", "--axisymmetric", "--axis", "0.5", dir)
	if code != 0 {
		t.Fatalf("status %d: %s", code, stderr)
	}
	for _, want := range []string{"f_1.csv", "3, dt 0.002 s, t 0 .. 0.004 s", "axisymmetric about y = 0.5 m", "one grid; valid share 100.0% .. 100.0%; continuity residual 0 .. 0"} {
		if !strings.Contains(stdout, want) {
			t.Errorf("output lacks %q:\n%s", want, stdout)
		}
	}
	idx := filepath.Join(dir, "index.csv")
	os.WriteFile(idx, []byte("file,time [ms]\nf_1.csv,0\nf_2.csv,1\nf_10.csv,3\n"), 0o644)
	code, stdout, _ = runCapture("inspect", idx)
	if code != 0 || !strings.Contains(stdout, "mean dt 0.0015 s (from 0.001 to 0.002 s)") {
		t.Errorf("index series: status %d\n%s", code, stdout)
	}
	if code, _, stderr := runCapture("inspect", filepath.Join(dir, "f_*.csv")); code != 1 || !strings.Contains(stderr, "--dt") {
		t.Errorf("series without times: status %d, %s", code, stderr)
	}
	if code, _, _ := runCapture("inspect"); code != 2 {
		t.Errorf("no files: status %d, want 2", code)
	}
}

// Malformed inputs: each must end with status 1 and an error naming the file and, where they
// apply, the line and column; no output file may be left and no input may change.
func TestInspectMalformedInputs(t *testing.T) {
	gz := []byte{0x1f, 0x8b, 8, 0, 0, 0, 0, 0, 0, 3, 'g', 'a', 'r', 'b'}
	grid := "x,y,u,v\n0,0,1,1\n1,0,1,1\n0,1,1,1\n1,1,1,1\n"
	cases := []struct {
		name  string
		files map[string]string // file name -> content; the first argument is "in"
		args  []string          // extra arguments before the inputs
		in    []string          // inputs (default: f.csv)
		want  string            // expected in stderr; FILE is replaced by the input path
	}{
		{"ragged row", map[string]string{"f.csv": "x,y,u,v\n0,0,1,1\n1,0,1\n"}, nil, nil, "FILE:3:3: row has 3 columns"},
		{"extra cells", map[string]string{"f.csv": "x,y,u,v\n0,0,1,1\n1,0,1,1,7\n"}, nil, nil, "FILE:3:5: row has more"},
		{"text in number", map[string]string{"f.csv": "x,y,u,v\n0,0,1,1\n1,0,1.2.3,1\n"}, nil, nil, `FILE:3:3: column "u": cannot read "1.2.3" as a number`},
		{"text in coordinate", map[string]string{"f.csv": "x,y,u,v\n0,0,1,1\n1,zero,1,1\n"}, nil, nil, `FILE:3:2: column "y"`},
		{"duplicate point", map[string]string{"f.csv": grid + "1,1,5,5\n"}, nil, nil, "FILE:6:1: duplicate point: x = 1 m, y = 1 m is also on line 5"},
		{"irregular spacing", map[string]string{"f.csv": "x,y,u,v\n0,0,1,1\n1,0,1,1\n2.5,0,1,1\n0,1,1,1\n"}, nil, nil, "FILE:4:1: x spacing is not uniform"},
		{"empty file", map[string]string{"f.csv": ""}, nil, nil, "FILE: empty file"},
		{"comments only", map[string]string{"f.csv": "# nothing\n\n"}, nil, nil, "FILE: empty file"},
		{"header only", map[string]string{"f.csv": "x,y,u,v\n"}, nil, nil, "FILE: has a header but no data rows"},
		{"binary garbage", map[string]string{"f.csv": "\x89PNG\r\n\x1a\n\x00\x00\x00\rIHDR"}, nil, nil, "FILE: holds binary data"},
		{"single node", map[string]string{"f.csv": "x,y,u,v\n0,0,1,1\n"}, nil, nil, "FILE: all 1 points have x = 0 m"},
		{"single line of points", map[string]string{"f.csv": "x,y,u,v\n0,0,1,1\n1,0,1,1\n"}, nil, nil, "FILE: all 2 points have y = 0 m"},
		{"infinite coordinate", map[string]string{"f.csv": "x,y,u,v\n0,0,1,1\n1,+Inf,1,1\n"}, nil, nil, `FILE:3:2: column "y": coordinate "+Inf" is not a finite number`},
		{"missing coordinate", map[string]string{"f.csv": "x,y,u,v\n0,0,1,1\n,1,1,1\n"}, nil, nil, `FILE:3:1: column "x": the coordinate is missing`},
		{"infinite velocity", map[string]string{"f.csv": "x,y,u,v\n0,0,1,1\n1,0,1,inf\n"}, nil, nil, `FILE:3:4: column "v": velocity "inf" is not finite`},
		{"unknown length unit", map[string]string{"f.csv": "x [in],y [in],u,v\n0,0,1,1\n"}, nil, nil, `FILE:1:1: column "x [in]": unknown length unit "in"`},
		{"unknown velocity unit", map[string]string{"f.csv": "x,y,u [knots],v [knots]\n0,0,1,1\n"}, nil, nil, `FILE:1:3: column "u [knots]": unknown velocity unit`},
		{"mixed length units", map[string]string{"f.csv": "x [mm],y [m],u,v\n0,0,1,1\n"}, nil, nil, "FILE:1:2: column \"y [m]\" is in m but \"x [mm]\" is in mm"},
		{"px without pixel size", map[string]string{"f.csv": "x [px],y [px],u,v\n0,0,1,1\n"}, nil, nil, "FILE:1:1: column \"x [px]\": lengths in px need a pixel size"},
		{"px/frame without pulse separation", map[string]string{"f.csv": "x [px],y [px],u [px/frame],v [px/frame]\n0,0,1,1\n"},
			[]string{"--pixel-size", "1e-5"}, nil, "FILE:1:3: column \"u [px/frame]\": velocities in px/frame need a pulse separation"},
		{"no velocity column", map[string]string{"f.csv": "x,y,speed,angle\n0,0,1,1\n"}, nil, nil, "FILE:1: no column for u in the header"},
		{"too few columns", map[string]string{"f.csv": "0,0,1\n1,0,1\n"}, nil, nil, "FILE:1: has 3 columns and no header"},
		{"grid over the node limit", map[string]string{"f.csv": grid}, []string{"--max-nodes", "3"}, nil, "FILE:5: has more than 3 data rows"},
		{"sparse points imply a huge grid", map[string]string{"f.csv": "x,y,u,v\n0,0,1,1\n1e-6,1e-6,1,1\n1,1,1,1\n"}, []string{"--max-nodes", "1000000"}, nil, "limit"},
		{"file over the size limit", map[string]string{"f.csv": grid}, []string{"--max-file-bytes", "20"}, nil, "FILE: file of 40 bytes is larger than the limit of 20 bytes"},
		{"corrupt gzip", map[string]string{"f.csv.gz": string(gz)}, nil, []string{"f.csv.gz"}, "FILE:1: cannot read the data: flate: corrupt input"},
		{"column number out of range", map[string]string{"f.csv": grid}, []string{"--columns", "1,2,3,9"}, nil, "FILE:1: --columns: column 9 does not exist"},
		{"frame index with a bad time", map[string]string{"idx.csv": "file,time\na.csv,0\nb.csv,soon\n", "a.csv": grid, "b.csv": grid}, nil, []string{"idx.csv"}, "FILE:3:2: column time"},
		{"frame index naming a missing file", map[string]string{"idx.csv": "file,time\nnone.csv,0\n"}, nil, []string{"idx.csv"}, "none.csv: cannot open"},
		{"frames on different grids", map[string]string{"a.csv": grid, "b.csv": "x,y,u,v\n0,0,1,1\n2,0,1,1\n0,2,1,1\n2,2,1,1\n"},
			[]string{"--all", "--dt", "1"}, []string{"a.csv", "b.csv"}, "b.csv: grid (2x2 nodes, spacing 2 x 2 m"},
		{"plain grid with negative spacing", map[string]string{"u.txt": "1 2\n3 4\n", "v.txt": "1 2\n3 4\n"},
			[]string{"--plain", "--grid-spacing", "-0.5"}, []string{"u.txt", "v.txt"}, "u.txt: plain grid: the spacing (-0.5, -0.5) must be finite and positive"},
		{"plain grid ragged matrix", map[string]string{"u.txt": "1 2\n3\n", "v.txt": "1 2\n3 4\n"},
			[]string{"--plain", "--grid-spacing", "1"}, []string{"u.txt", "v.txt"}, "u.txt:2:1: row has 1 values but the first row has 2"},
		{"plain grids of different sizes", map[string]string{"u.txt": "1 2\n3 4\n", "v.txt": "1 2 3\n3 4 5\n"},
			[]string{"--plain", "--grid-spacing", "1"}, []string{"u.txt", "v.txt"}, "v.txt: matrix is 3 columns by 2 rows"},
		{"plain grid with text", map[string]string{"u.txt": "1 2\n3 four\n", "v.txt": "1 2\n3 4\n"},
			[]string{"--plain", "--grid-spacing", "1"}, []string{"u.txt", "v.txt"}, `u.txt:2:2: cannot read "four"`},
	}
	if len(cases) < 20 {
		t.Fatalf("only %d malformed inputs", len(cases))
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			dir := t.TempDir()
			for n, text := range c.files {
				if err := os.WriteFile(filepath.Join(dir, n), []byte(text), 0o644); err != nil {
					t.Fatal(err)
				}
			}
			in := c.in
			if in == nil {
				in = []string{"f.csv"}
			}
			outDir := t.TempDir()
			out := filepath.Join(outDir, "summary.json")
			args := append([]string{"inspect", "--json", out}, c.args...)
			for _, n := range in {
				args = append(args, filepath.Join(dir, n))
			}
			code, stdout, stderr := runCapture(args...)
			if code != 1 {
				t.Fatalf("status %d, want 1; stderr %q", code, stderr)
			}
			want := strings.ReplaceAll(c.want, "FILE", filepath.Join(dir, in[0]))
			if !strings.Contains(stderr, want) {
				t.Errorf("stderr %q lacks %q", stderr, want)
			}
			if stdout != "" {
				t.Errorf("printed a summary for bad input: %q", stdout)
			}
			if ents, _ := os.ReadDir(outDir); len(ents) != 0 {
				t.Errorf("output left behind: %v", ents)
			}
			for n, text := range c.files {
				if b, _ := os.ReadFile(filepath.Join(dir, n)); !bytes.Equal(b, []byte(text)) {
					t.Errorf("input %s changed", n)
				}
			}
		})
	}
}

// A table whose second coordinate is named r, read as planar, gets a hint to add
// --axisymmetric; read with it, or with a y column, it does not. A negative --workers is a
// usage error.
func TestInspectAxisymmetricHint(t *testing.T) {
	dir := t.TempDir()
	grid := "0,0,1,0\n1,0,1,0\n0,1,1,0\n1,1,1,0\n"
	rfile, yfile := filepath.Join(dir, "r.csv"), filepath.Join(dir, "y.csv")
	os.WriteFile(rfile, []byte("x [mm],r [mm],u,v\n"+grid), 0o644)
	os.WriteFile(yfile, []byte("x,y,u,v\n"+grid), 0o644)
	for _, c := range []struct {
		args []string
		hint bool
	}{
		{[]string{rfile}, true},
		{[]string{"--axisymmetric", rfile}, false},
		{[]string{yfile}, false},
	} {
		code, stdout, stderr := runCapture(append([]string{"inspect"}, c.args...)...)
		if code != 0 {
			t.Fatalf("%v: status %d: %s", c.args, code, stderr)
		}
		if got := strings.Contains(stdout, `hint         the second coordinate is named "r [mm]"`) && strings.Contains(stdout, "--axisymmetric"); got != c.hint {
			t.Errorf("%v: hint shown %v, want %v:\n%s", c.args, got, c.hint, stdout)
		}
	}
	if code, _, stderr := runCapture("inspect", "--all", "--workers", "-1", yfile); code != 2 || !strings.Contains(stderr, "--workers -1") {
		t.Errorf("negative --workers: status %d, %s", code, stderr)
	}
}
