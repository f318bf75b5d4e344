package piv

import (
	"bytes"
	"compress/gzip"
	"errors"
	"fmt"
	"math"
	"math/rand/v2"
	"os"
	"path/filepath"
	"runtime"
	"strconv"
	"strings"
	"syscall"
	"testing"
)

func readString(t *testing.T, text string, opt ReadOptions) (*Field, *FileInfo) {
	t.Helper()
	f, info, err := ReadCSV(strings.NewReader(text), "t.csv", int64(len(text)), opt)
	if err != nil {
		t.Fatalf("reading %q: %v", text, err)
	}
	return f, info
}

// The same 3x2 field written in many layouts must read to the same grid and values. The
// expected values are written out by hand: nodes (i, j) at x = i mm, y = j mm, u = 1 + i + 10j,
// v = -u, with node (2, 1) absent (missing).
func TestReadCSVLayouts(t *testing.T) {
	layouts := map[string]string{
		"comma with units":                         "x [mm],y [mm],u [m/s],v [m/s]\n0,0,1,-1\n1,0,2,-2\n2,0,3,-3\n0,1,11,-11\n1,1,12,-12\n",
		"semicolon, decimal comma, parentheses":    "x (mm);y (mm);u (m/s);v (m/s)\n0;0;1;-1\n1;0;2,0;-2\n2;0;3;-3\n0;1;11;-11\n1;1;12;-12\n",
		"tab, vx vy, extra column":                 "x [mm]\ty [mm]\tp [Pa]\tvx [m/s]\tvy [m/s]\n0\t0\t9\t1\t-1\n1\t0\t9\t2\t-2\n2\t0\t9\t3\t-3\n0\t1\t9\t11\t-11\n1\t1\t9\t12\t-12\n",
		"spaces, comments, CRLF, shuffled":         "# exported by an invented tank rig\r\nx [mm]   y [mm]   U [m/s]  V [m/s]\r\n  1 1 12 -12\r\n\r\n# a comment\r\n0 0 1 -1\r\n2 0 3 -3\r\n1 0 2 -2\r\n0 1 11 -11\r\n",
		"underscore units, y fastest, missing row": "x_mm,y_mm,u,v\n0,0,1,-1\n0,1,11,-11\n1,0,2,-2\n1,1,12,-12\n2,0,3,-3\n2,1,NaN,NaN\n",
		"long names":            "Position x [mm],Position y [mm],Velocity u [m/s],Velocity v [m/s],u mean [m/s]\n0,0,1,-1,7\n1,0,2,-2,7\n2,0,3,-3,7\n0,1,11,-11,7\n1,1,12,-12,7\n",
		"quoted header, status": "\"x [mm]\",\"y [mm]\",\"u [m/s]\",\"v [m/s]\",\"status\"\n0,0,1,-1,measured\n1,0,2,-2,0\n2,0,3,-3,measured\n0,1,11,-11,measured\n1,1,12,-12,measured\n2,1,5,5,missing\n",
	}
	for name, text := range layouts {
		t.Run(name, func(t *testing.T) {
			f, _ := readString(t, text, ReadOptions{})
			checkSmallField(t, f)
		})
	}
	t.Run("no header, length unit option", func(t *testing.T) {
		f, info := readString(t, "0,0,1,-1\n1,0,2,-2\n2,0,3,-3\n0,1,11,-11\n1,1,12,-12\n", ReadOptions{LengthUnit: "mm"})
		checkSmallField(t, f)
		if info.Header || info.LengthUnit != "mm" || info.VelocityUnit != "m/s" || info.Delimiter != "comma" {
			t.Errorf("info %+v", info)
		}
	})
	t.Run("no header, decimal comma", func(t *testing.T) {
		f, _ := readString(t, "0;0;1,0;-1\n1;0;2;-2\n2;0;3;-3\n0;1;11;-11\n1;1;12;-12\n", ReadOptions{LengthUnit: "mm"})
		checkSmallField(t, f)
	})
	t.Run("columns by number", func(t *testing.T) {
		f, _ := readString(t, "9,-1,1,0,0\n9,-2,2,1,0\n9,-3,3,2,0\n9,-11,11,0,1\n9,-12,12,1,1\n", ReadOptions{LengthUnit: "mm", Columns: "4,5,3,2"})
		checkSmallField(t, f)
	})
	t.Run("columns by name", func(t *testing.T) {
		f, _ := readString(t, "a,b,c,d\n0,0,1,-1\n1,0,2,-2\n2,0,3,-3\n0,1,11,-11\n1,1,12,-12\n", ReadOptions{LengthUnit: "mm", Columns: "a,b,c,d"})
		checkSmallField(t, f)
	})
}

// A complete grid in column-major order (y fastest) and in a scrambled order must land on the
// same nodes: u = i + 100 j, v = j - i by construction.
func TestReadCSVRowOrders(t *testing.T) {
	const nx, ny = 7, 5
	type pt struct{ i, j int }
	var colMajor, scrambled []pt
	for i := 0; i < nx; i++ {
		for j := 0; j < ny; j++ {
			colMajor = append(colMajor, pt{i, j})
		}
	}
	rng := rand.New(rand.NewPCG(3, 4))
	scrambled = append(scrambled, colMajor...)
	rng.Shuffle(len(scrambled), func(a, b int) { scrambled[a], scrambled[b] = scrambled[b], scrambled[a] })
	for name, order := range map[string][]pt{"column-major": colMajor, "scrambled": scrambled} {
		var b strings.Builder
		b.WriteString("x,y,u,v,status\n")
		for _, p := range order {
			st := "measured"
			if p.i == 3 && p.j == 2 {
				st = "replaced:median"
			}
			fmt.Fprintf(&b, "%g,%g,%d,%d,%s\n", 0.5*float64(p.i), 0.25*float64(p.j), p.i+100*p.j, p.j-p.i, st)
		}
		f, _ := readString(t, b.String(), ReadOptions{})
		if f.Grid.NX != nx || f.Grid.NY != ny {
			t.Fatalf("%s: grid %v", name, f.Grid)
		}
		for j := 0; j < ny; j++ {
			for i := 0; i < nx; i++ {
				k := f.Grid.Index(i, j)
				want := Measured
				if i == 3 && j == 2 {
					want = Replaced | RejectedMedian
				}
				if f.U[k] != float64(i+100*j) || f.V[k] != float64(j-i) || f.Status[k] != want {
					t.Fatalf("%s node (%d,%d): %v %v %v", name, i, j, f.U[k], f.V[k], f.Status[k])
				}
			}
		}
	}
}

func checkSmallField(t *testing.T, f *Field) {
	t.Helper()
	g := f.Grid
	if g.NX != 3 || g.NY != 2 || math.Abs(g.DX-1e-3) > 1e-15 || math.Abs(g.DY-1e-3) > 1e-15 || g.X0 != 0 || g.Y0 != 0 {
		t.Fatalf("grid %v, want 3x2 nodes at 1 mm from the origin", g)
	}
	for j := 0; j < 2; j++ {
		for i := 0; i < 3; i++ {
			k := g.Index(i, j)
			if i == 2 && j == 1 {
				if f.Valid(k) || f.Status[k] != Missing || !math.IsNaN(f.U[k]) {
					t.Errorf("node (2,1) should be missing: %v %v", f.Status[k], f.U[k])
				}
				continue
			}
			want := float64(1 + i + 10*j)
			if f.U[k] != want || f.V[k] != -want || f.Status[k] != Measured {
				t.Errorf("node (%d,%d): u %v v %v %v, want %v", i, j, f.U[k], f.V[k], f.Status[k], want)
			}
		}
	}
}

// Unit conversion against hand values: 1 mm = 1e-3 m and 1 cm = 1e-2 m by definition (SI
// Brochure, BIPM 2019); a displacement of d px over a pulse separation dt at pixel size s m/px
// is a velocity d*s/dt (Raffel et al., Particle Image Velocimetry, ch. 1).
func TestReadCSVUnits(t *testing.T) {
	cases := []struct {
		name, text string
		opt        ReadOptions
		dx, u      float64 // spacing [m] and u at node (1, 0) [m/s]
	}{
		{"mm and mm/s", "x [mm],y [mm],u [mm/s],v [mm/s]\n0,0,0,0\n2,0,250,0\n0,2,0,0\n2,2,0,0\n", ReadOptions{}, 2e-3, 0.25},
		{"cm and cm/s", "x [cm],y [cm],u [cm/s],v [cm/s]\n0,0,0,0\n2,0,250,0\n0,2,0,0\n2,2,0,0\n", ReadOptions{}, 2e-2, 2.5},
		{"um", "x [um],y [um],u,v\n0,0,0,0\n500,0,1.5,0\n0,500,0,0\n500,500,0,0\n", ReadOptions{}, 5e-4, 1.5},
		// 16 px at 6.25e-5 m/px is 1e-3 m; 4 px/frame * 6.25e-5 m/px / 1e-4 s = 2.5 m/s.
		{"px and px/frame", "x [px],y [px],u [px/frame],v [px/frame]\n0,0,0,0\n16,0,4,0\n0,16,0,0\n16,16,0,0\n",
			ReadOptions{PixelSize: 6.25e-5, PulseSeparation: 1e-4}, 1e-3, 2.5},
		{"px from options", "0,0,0,0\n16,0,4,0\n0,16,0,0\n16,16,0,0\n",
			ReadOptions{LengthUnit: "px", VelocityUnit: "px/frame", PixelSize: 6.25e-5, PulseSeparation: 1e-4}, 1e-3, 2.5},
		{"header unit wins over option", "x [mm],y [mm],u [m/s],v [m/s]\n0,0,0,0\n2,0,3,0\n0,2,0,0\n2,2,0,0\n",
			ReadOptions{LengthUnit: "cm", VelocityUnit: "mm/s"}, 2e-3, 3},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			f, _ := readString(t, c.text, c.opt)
			// Tolerance: one multiplication by the unit factor, a few ulps.
			if math.Abs(f.Grid.DX-c.dx) > 1e-15*c.dx || math.Abs(f.U[1]-c.u) > 1e-15*c.u {
				t.Errorf("dx %v u %v, want %v %v", f.Grid.DX, f.U[1], c.dx, c.u)
			}
		})
	}
	if _, err := LengthScale("furlong", ReadOptions{}); err == nil {
		t.Error("unknown length unit accepted")
	}
	if _, err := VelocityScale("px/frame", ReadOptions{PixelSize: 1e-5}); err == nil {
		t.Error("px/frame without pulse separation accepted")
	}
	if s, err := TimeScale("ms"); err != nil || s != 1e-3 {
		t.Errorf("ms: %v %v", s, err)
	}
}

func TestSplitHeader(t *testing.T) {
	for in, want := range map[string][2]string{
		"x [mm]": {"x", "mm"}, "u (m/s)": {"u", "m/s"}, "x_mm": {"x", "mm"}, "vel_x": {"vel_x", ""},
		" \"V [px/frame]\" ": {"V", "px/frame"}, "status": {"status", ""}, "time_ms": {"time", "ms"},
	} {
		n, u := SplitHeader(in)
		if n != want[0] || u != want[1] {
			t.Errorf("SplitHeader(%q) = %q, %q; want %q", in, n, u, want)
		}
	}
}

// Image coordinates: y points down, so the file's top row (y = 0) becomes the largest y and v
// changes sign.
func TestReadCSVImageYDown(t *testing.T) {
	f, _ := readString(t, "x,y,u,v\n0,0,1,5\n1,0,1,5\n0,1,2,7\n1,1,2,7\n", ReadOptions{ImageYDown: true})
	g := f.Grid
	if f.U[g.Index(0, 1)] != 1 || f.V[g.Index(0, 1)] != -5 || f.U[g.Index(0, 0)] != 2 || f.V[g.Index(0, 0)] != -7 {
		t.Errorf("flipped field %v %v", f.U, f.V)
	}
}

// Coordinates printed with two decimals on a 0.3125 mm grid of 400 columns: the smallest step
// (0.31 mm) is 0.8% off the spacing, which the node count must survive.
func TestReadCSVRoundedCoordinates(t *testing.T) {
	var b strings.Builder
	b.WriteString("x [mm],y [mm],u,v\n")
	for j := 0; j < 3; j++ {
		for i := 0; i < 400; i++ {
			fmt.Fprintf(&b, "%.2f,%.2f,%d,0\n", float64(i)*0.3125, float64(j)*0.3125, i)
		}
	}
	f, _ := readString(t, b.String(), ReadOptions{})
	if f.Grid.NX != 400 || f.Grid.NY != 3 || math.Abs(f.Grid.DX-0.3125e-3) > 1e-3*0.3125e-3 {
		t.Fatalf("grid %v", f.Grid)
	}
	for i := 0; i < 400; i++ {
		if f.U[i] != float64(i) {
			t.Fatalf("u[%d] = %v", i, f.U[i])
		}
	}
}

func TestReadCSVErrors(t *testing.T) {
	cases := []struct {
		name, text string
		opt        ReadOptions
		line, col  int
		msg        string
	}{
		{"text in number", "x,y,u,v\n0,0,1,1\n1,0,1.2.3,1\n", ReadOptions{}, 3, 3, `column "u": cannot read "1.2.3"`},
		{"ragged", "x,y,u,v\n0,0,1,1\n1,0,1\n", ReadOptions{}, 3, 3, "row has 3 columns"},
		{"duplicate", "x,y,u,v\n0,0,1,1\n1,0,1,1\n0,1,1,1\n1,1,1,1\n0,0,2,2\n", ReadOptions{}, 6, 1, "also on line 2"},
		{"irregular", "x,y,u,v\n0,0,1,1\n1,0,1,1\n3.5,0,1,1\n0,1,1,1\n", ReadOptions{}, 4, 1, "not uniform"},
		// Steps 1, 1, 1, 1.15: each within the step tolerance, but the coordinates are no
		// lattice. Least squares through (0,0) (1,1) (2,2) (3,3) (4,4.15) by hand: slope
		// Sxy/Sxx = 10.3/10 = 1.03, intercept 2.03 - 2*1.03 = -0.03; the largest residual is at
		// x = 4.15: 4.15 - 4.09 = 0.06 m = 0.058 spacings.
		{"off the lattice", "x,y,u,v\n0,0,1,1\n1,0,1,1\n2,0,1,1\n3,0,1,1\n4.15,0,1,1\n0,1,1,1\n", ReadOptions{}, 6, 1, "x = 4.15 m lies 0.06 spacings"},
		{"unknown unit", "x [furlong],y,u,v\n0,0,1,1\n", ReadOptions{}, 1, 1, `column "x [furlong]"`},
		{"px without size", "x [px],y [px],u,v\n0,0,1,1\n", ReadOptions{}, 1, 1, "pixel size"},
		{"nan coordinate", "x,y,u,v\n0,0,1,1\nNaN,0,1,1\n", ReadOptions{}, 3, 1, "coordinate is missing"},
		{"inf coordinate", "x,y,u,v\n0,0,1,1\n0,inf,1,1\n", ReadOptions{}, 3, 2, "not a finite number"},
		{"inf velocity", "x,y,u,v\n0,0,1,1\n1,0,1,-Inf\n", ReadOptions{}, 3, 4, "not finite"},
		{"single node", "x,y,u,v\n0,0,1,1\n", ReadOptions{}, 0, 0, "two distinct values of x"},
		{"no u column", "x,y,p,v\n0,0,1,1\n", ReadOptions{}, 1, 0, "no column for u"},
		{"empty", "", ReadOptions{}, 0, 0, "empty file"},
		{"header only", "x,y,u,v\n# nothing\n", ReadOptions{}, 0, 0, "no data rows"},
		{"binary", "\x00\x01\x02garbage", ReadOptions{}, 0, 0, "binary data"},
		{"utf-16", "\xff\xfex\x00,\x00y\x00", ReadOptions{}, 0, 0, "UTF-16"},
		{"too many nodes", "x,y,u,v\n0,0,1,1\n1,0,1,1\n0,1,1,1\n1,1,1,1\n", ReadOptions{MaxNodes: 3}, 5, 0, "limit"},
		{"sparse grid too big", "x,y,u,v\n0,0,1,1\n1e-3,0,1,1\n10,10,1,1\n", ReadOptions{MaxNodes: 1000}, 0, 0, "limit"},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			_, _, err := ReadCSV(strings.NewReader(c.text), "run3/frame_0042.csv", 0, c.opt)
			var ie *InputError
			if !errors.As(err, &ie) {
				t.Fatalf("want an InputError, got %v", err)
			}
			if ie.File != "run3/frame_0042.csv" || ie.Line != c.line || ie.Col != c.col || !strings.Contains(ie.Msg, c.msg) {
				t.Errorf("got %q (line %d col %d), want line %d col %d with %q", err, ie.Line, ie.Col, c.line, c.col, c.msg)
			}
		})
	}
}

// The fast number path must give exactly strconv's result (the Go standard library is the
// reference: it rounds correctly for every input) on random numbers in many spellings.
func TestParseFastMatchesStrconv(t *testing.T) {
	rng := rand.New(rand.NewPCG(1, 2))
	formats := []string{"%g", "%.3f", "%.6e", "%.15g", "%.17g", "%.1f", "%E", "%.0f", "%+.4f"}
	for n := 0; n < 200000; n++ {
		v := (rng.Float64() - 0.5) * math.Pow(10, float64(rng.IntN(40)-20))
		s := fmt.Sprintf(formats[n%len(formats)], v)
		if n%7 == 0 {
			s = strconv.FormatFloat(v, 'g', -1, 64)
		}
		want, err := strconv.ParseFloat(s, 64)
		if err != nil {
			t.Fatal(err)
		}
		got, ok := parseNumber([]byte(s))
		if !ok || math.Float64bits(got) != math.Float64bits(want) {
			t.Fatalf("parseNumber(%q) = %v, %v; strconv gives %v", s, got, ok, want)
		}
	}
	for _, s := range []string{"", "-", ".", "e5", "1e", "1.2.3", "0x", "1,5", "--1", "1e+", "abc"} {
		if _, ok := parseNumber([]byte(s)); ok {
			t.Errorf("parseNumber(%q) accepted", s)
		}
	}
	for _, s := range []string{"-0", "0.000", "1e-400", "00012", "5.", ".5", "1E3", "nan", "Inf"} {
		want, _ := strconv.ParseFloat(s, 64)
		got, ok := parseNumber([]byte(s))
		if !ok || math.Float64bits(got) != math.Float64bits(want) && !(math.IsNaN(got) && math.IsNaN(want)) {
			t.Errorf("parseNumber(%q) = %v, %v; want %v", s, got, ok, want)
		}
	}
}

func TestReadCSVAllocations(t *testing.T) {
	text := smallTable(64, 48)
	allocs := testing.AllocsPerRun(3, func() {
		if _, _, err := ReadCSV(strings.NewReader(text), "t.csv", int64(len(text)), ReadOptions{}); err != nil {
			t.Fatal(err)
		}
	})
	// A handful of allocations per file (reader, columns, grid arrays), none per row.
	if allocs > 60 {
		t.Errorf("%v allocations for %d rows; the row loop allocates", allocs, 64*48)
	}
}

func smallTable(nx, ny int) string {
	var b strings.Builder
	b.WriteString("x [m],y [m],u [m/s],v [m/s]\n")
	for j := 0; j < ny; j++ {
		for i := 0; i < nx; i++ {
			fmt.Fprintf(&b, "%g,%g,%.6g,%.6g\n", float64(i)*1e-3, float64(j)*1e-3, math.Sin(float64(i)), math.Cos(float64(j)))
		}
	}
	return b.String()
}

func TestReadFileGzipAndLimits(t *testing.T) {
	dir := t.TempDir()
	text := smallTable(8, 6)
	var zb bytes.Buffer
	zw := gzip.NewWriter(&zb)
	zw.Write([]byte(text))
	zw.Close()
	plain := filepath.Join(dir, "f.csv")
	gz := filepath.Join(dir, "f.csv.gz")
	os.WriteFile(plain, []byte(text), 0o644)
	os.WriteFile(gz, zb.Bytes(), 0o644)
	a, err := ReadFile(plain, ReadOptions{})
	if err != nil {
		t.Fatal(err)
	}
	b, info, err := ReadFileInfo(gz, ReadOptions{})
	if err != nil {
		t.Fatal(err)
	}
	if !info.Gzip || !a.Grid.Same(b.Grid) {
		t.Fatalf("gzip: %+v %v %v", info, a.Grid, b.Grid)
	}
	for k := range a.U {
		if a.U[k] != b.U[k] || a.V[k] != b.V[k] {
			t.Fatalf("gzip frame differs at %d", k)
		}
	}
	// The gzip trailer records the uncompressed size (RFC 1952), used to reserve memory.
	gf, _ := os.Open(gz)
	if got := gzipSize(gf, int64(zb.Len())); got != int64(len(text)) {
		t.Errorf("gzip size hint %d, want %d", got, len(text))
	}
	gf.Close()
	if !IsInput(plain) || !IsInput(gz) {
		t.Error("files read are not marked as inputs")
	}
	if _, err := ReadFile(plain, ReadOptions{MaxFileBytes: 100}); err == nil || !strings.Contains(err.Error(), "limit") {
		t.Errorf("file size limit: %v", err)
	}
	if _, err := ReadFile(gz, ReadOptions{MaxFileBytes: int64(zb.Len()) + 10}); err == nil || !strings.Contains(err.Error(), "limit") {
		t.Errorf("decompressed size limit: %v", err)
	}
	if _, err := ReadFile(filepath.Join(dir, "none.csv"), ReadOptions{}); err == nil || !strings.Contains(err.Error(), "none.csv") {
		t.Errorf("missing file: %v", err)
	}
}

// FuzzReadCSV: the reader never panics, a table it accepts is a consistent field, and writing
// that field and reading it back gives the same values bit for bit.
func FuzzReadCSV(f *testing.F) {
	f.Add([]byte("x,y,u,v\n0,0,1,2\n1,0,3,4\n0,1,5,6\n1,1,7,8\n"))
	f.Add([]byte("x [mm];y [mm];u;v;status\n0;0;1,5;2;measured\n1;0;;2;missing\n0;1;1;2;0\n1;1;1;2;replaced:median\n"))
	f.Add([]byte("# c\n0 0 1 1\n1 0 1 1\n0 2 1 1\n"))
	f.Fuzz(func(t *testing.T, data []byte) {
		fl, _, err := ReadCSV(bytes.NewReader(data), "fuzz.csv", int64(len(data)), ReadOptions{MaxNodes: 1 << 16})
		// The fused number path must agree with the cell-by-cell path in result and error.
		gr := newCSVReader(bytes.NewReader(data), "fuzz.csv", int64(len(data)), 0, ReadOptions{MaxNodes: 1 << 16})
		gr.generic = true
		gl, _, gerr := gr.run()
		if (err == nil) != (gerr == nil) || err != nil && err.Error() != gerr.Error() {
			t.Fatalf("fused path: %v; cell-by-cell path: %v", err, gerr)
		}
		if err == nil {
			for k := range fl.U {
				if !sameBits(fl.U[k], gl.U[k]) || !sameBits(fl.V[k], gl.V[k]) || fl.Status[k] != gl.Status[k] {
					t.Fatalf("node %d: fused %v %v, cell-by-cell %v %v", k, fl.U[k], fl.V[k], gl.U[k], gl.V[k])
				}
			}
		}
		if err != nil {
			var ie *InputError
			if !errors.As(err, &ie) || ie.File != "fuzz.csv" {
				t.Fatalf("error without the file name: %v", err)
			}
			return
		}
		if err := fl.Check(); err != nil {
			t.Fatal(err)
		}
		var out bytes.Buffer
		if err := EncodeCSV(&out, fl); err != nil {
			t.Fatal(err)
		}
		back, _, err := ReadCSV(bytes.NewReader(out.Bytes()), "back.csv", 0, ReadOptions{MaxNodes: 1 << 16})
		if err != nil {
			t.Fatalf("written table does not read back: %v\n%s", err, out.Bytes())
		}
		if back.Grid.NX != fl.Grid.NX || back.Grid.NY != fl.Grid.NY {
			t.Fatalf("grid %v became %v", fl.Grid, back.Grid)
		}
		for k := range fl.U {
			if math.Float64bits(back.U[k]) != math.Float64bits(fl.U[k]) && !(math.IsNaN(back.U[k]) && math.IsNaN(fl.U[k])) ||
				back.Status[k] != fl.Status[k] {
				t.Fatalf("node %d: %v %v became %v %v", k, fl.U[k], fl.Status[k], back.U[k], back.Status[k])
			}
		}
	})
}

// BenchmarkReadCSV2048 reads a 2048x2048 table (about 150 MB, coordinates in mm with four
// decimals and velocities with seven significant digits, as velocimetry exports print them).
// It reports MB/s through SetBytes, ns per node, and the bytes allocated per decoded byte (the
// decoded arrays are U, V and Status, 17 bytes per node); total allocation bounds peak memory.
func BenchmarkReadCSV2048(b *testing.B) { benchReadCSV(b, 2048, false, false) }

// BenchmarkReadCSVFullPrecision512 reads a 512x512 table as WriteCSV writes it (17 significant
// digits, where the exact fast path gives way to strconv).
func BenchmarkReadCSVFullPrecision512(b *testing.B) { benchReadCSV(b, 512, true, false) }

// BenchmarkReadCSVColumnMajor1024 reads a 1024x1024 table written with y fastest, which the
// reader permutes into grid order in place.
func BenchmarkReadCSVColumnMajor1024(b *testing.B) { benchReadCSV(b, 1024, false, true) }

func benchReadCSV(b *testing.B, n int, full, colMajor bool) {
	path := filepath.Join(b.TempDir(), "big.csv")
	fh, err := os.Create(path)
	if err != nil {
		b.Fatal(err)
	}
	buf := []byte("x [mm],y [mm],u [m/s],v [m/s]\n")
	digits := 7
	if full {
		digits = -1
	}
	for a := 0; a < n; a++ {
		for c := 0; c < n; c++ {
			i, j := c, a
			if colMajor {
				i, j = a, c
			}
			buf = strconv.AppendFloat(buf, float64(i)*0.3125, 'f', 4, 64)
			buf = append(buf, ',')
			buf = strconv.AppendFloat(buf, float64(j)*0.3125, 'f', 4, 64)
			buf = append(buf, ',')
			buf = strconv.AppendFloat(buf, 0.5+0.25*math.Sin(float64(i)*0.01)*math.Cos(float64(j)*0.013), 'g', digits, 64)
			buf = append(buf, ',')
			buf = strconv.AppendFloat(buf, -0.1*math.Sin(float64(j)*0.02+float64(i)*0.003), 'g', digits, 64)
			buf = append(buf, '\n')
		}
		fh.Write(buf)
		buf = buf[:0]
	}
	fh.Close()
	st, _ := os.Stat(path)
	b.SetBytes(st.Size())
	b.ReportAllocs()
	var m0, m1 runtime.MemStats
	var r0, r1 syscall.Rusage
	runtime.ReadMemStats(&m0)
	syscall.Getrusage(syscall.RUSAGE_SELF, &r0)
	for b.Loop() {
		f, err := ReadFile(path, ReadOptions{})
		if err != nil || f.Grid.NX != n || f.Grid.NY != n {
			b.Fatal(err)
		}
	}
	syscall.Getrusage(syscall.RUSAGE_SELF, &r1)
	runtime.ReadMemStats(&m1)
	// CPU time (user + system, all threads, garbage collector included) is less disturbed by
	// other processes on a shared machine than wall time: MB per CPU second is the one-core rate.
	cpu := float64(r1.Utime.Nano()-r0.Utime.Nano()+r1.Stime.Nano()-r0.Stime.Nano()) / 1e9
	b.ReportMetric(float64(st.Size())*float64(b.N)/1e6/cpu, "MB/cpu-s")
	b.ReportMetric(float64(m1.TotalAlloc-m0.TotalAlloc)/float64(b.N)/float64(17*n*n), "alloc/decoded")
	b.ReportMetric(float64(b.Elapsed().Nanoseconds())/float64(b.N)/float64(n*n), "ns/node")
}

func BenchmarkParseNumber(b *testing.B) {
	cells := [][]byte{[]byte("123.4375"), []byte("0.4987323"), []byte("-0.09812734"), []byte("1.5e-3"), []byte("0.12345678901234567")}
	b.SetBytes(int64(len(cells[0]) + len(cells[1]) + len(cells[2]) + len(cells[3]) + len(cells[4])))
	for b.Loop() {
		for _, c := range cells {
			parseNumber(c)
		}
	}
}
