package piv

import (
	"bufio"
	"bytes"
	"encoding/binary"
	"encoding/json"
	"io"
	"math"
	"math/rand/v2"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"testing"
)

// randomField has velocities of full float64 precision (17 significant digits), a few missing,
// replaced and solid nodes, and an extra scalar.
func randomField(nx, ny int) (*Field, Column) {
	rng := rand.New(rand.NewPCG(7, 9))
	g := Grid{NX: nx, NY: ny, X0: -0.0123, Y0: 0.004, DX: 1.5625e-3, DY: 7.8125e-4}
	f := NewField(g)
	omega := Column{Name: "omega", Unit: "1/s", Values: make([]float64, g.N())}
	for k := range f.U {
		f.Set(k, rng.NormFloat64()*math.Pow(10, float64(rng.IntN(12)-6)), -rng.Float64()/3)
		omega.Values[k] = rng.NormFloat64() * 1e3
		switch rng.IntN(20) {
		case 0:
			f.Status[k] = Missing
		case 1:
			f.Status[k] = Replaced | RejectedMedian
		case 2:
			f.Status[k] = Solid
			omega.Values[k] = math.NaN()
		}
	}
	f.Normalize()
	return f, omega
}

func sameBits(a, b float64) bool {
	return math.Float64bits(a) == math.Float64bits(b) || math.IsNaN(a) && math.IsNaN(b)
}

// CSV -> Field -> CSV keeps every value to the last bit: strconv 'g' -1 writes the shortest
// decimal that reads back to the same float64 (Go strconv documentation), and the reader must
// honour it.
func TestRoundTripCSV(t *testing.T) {
	f, omega := randomField(37, 23)
	dir := t.TempDir()
	p1 := filepath.Join(dir, "a.csv")
	if err := WriteCSV(p1, f, omega); err != nil {
		t.Fatal(err)
	}
	g, info, err := ReadFileInfo(p1, ReadOptions{})
	if err != nil {
		t.Fatal(err)
	}
	if len(info.Columns) != 5 || info.Columns[4] != "status" || info.LengthUnit != "m" {
		t.Errorf("info %+v", info)
	}
	if !g.Grid.Same(f.Grid) {
		t.Fatalf("grid %v became %v", f.Grid, g.Grid)
	}
	for k := range f.U {
		if !sameBits(f.U[k], g.U[k]) || !sameBits(f.V[k], g.V[k]) || f.Status[k] != g.Status[k] {
			t.Fatalf("node %d: %v %v %v became %v %v %v", k, f.U[k], f.V[k], f.Status[k], g.U[k], g.V[k], g.Status[k])
		}
	}
	// Writing the re-read field gives the same velocity text (coordinates are regenerated from
	// the grid and may differ in the last digit).
	p2 := filepath.Join(dir, "b.csv")
	if err := WriteCSV(p2, g); err != nil {
		t.Fatal(err)
	}
	a, _ := os.ReadFile(p1)
	b, _ := os.ReadFile(p2)
	la, lb := strings.Split(string(a), "\n"), strings.Split(string(b), "\n")
	if len(la) != len(lb) || la[0] != "x [m],y [m],u [m/s],v [m/s],status,omega [1/s]" {
		t.Fatalf("header %q, %d vs %d lines", la[0], len(la), len(lb))
	}
	for n := 1; n < len(la)-1; n++ {
		ca, cb := strings.Split(la[n], ","), strings.Split(lb[n], ",")
		if strings.Join(ca[2:5], ",") != strings.Join(cb[2:5], ",") {
			t.Fatalf("line %d: %q became %q", n+1, la[n], lb[n])
		}
		wx, _ := strconv.ParseFloat(ca[0], 64)
		gx, _ := strconv.ParseFloat(cb[0], 64)
		// Coordinates: the lattice inferred from printed coordinates matches to round-off.
		if math.Abs(wx-gx) > 1e-12 {
			t.Fatalf("line %d: x %v became %v", n+1, wx, gx)
		}
	}
}

// readVTK parses a legacy VTK STRUCTURED_POINTS file in binary encoding, following the file
// format description (VTK File Formats, Kitware): a header of keyword lines, then big-endian
// arrays after VECTORS and SCALARS/LOOKUP_TABLE lines.
func readVTK(t *testing.T, data []byte) (dims [3]int, origin, spacing [3]float64, arrays map[string][]float64) {
	t.Helper()
	r := bufio.NewReader(bytes.NewReader(data))
	line := func() string {
		s, err := r.ReadString('\n')
		if err != nil && s == "" {
			return ""
		}
		return strings.TrimRight(s, "\n")
	}
	if l := line(); l != "# vtk DataFile Version 3.0" {
		t.Fatalf("first line %q", l)
	}
	line()
	if l := line(); l != "BINARY" {
		t.Fatalf("encoding %q", l)
	}
	arrays = map[string][]float64{}
	n := 0
	for {
		l := line()
		if l == "" {
			if _, err := r.Peek(1); err == io.EOF {
				break
			}
			continue
		}
		fs := strings.Fields(l)
		switch fs[0] {
		case "DATASET":
			if fs[1] != "STRUCTURED_POINTS" {
				t.Fatalf("dataset %q", l)
			}
		case "DIMENSIONS":
			for k := range 3 {
				dims[k], _ = strconv.Atoi(fs[k+1])
			}
		case "ORIGIN", "SPACING":
			for k := range 3 {
				v, _ := strconv.ParseFloat(fs[k+1], 64)
				if fs[0] == "ORIGIN" {
					origin[k] = v
				} else {
					spacing[k] = v
				}
			}
		case "POINT_DATA":
			n, _ = strconv.Atoi(fs[1])
		case "VECTORS":
			vals := make([]float64, 3*n)
			binary.Read(r, binary.BigEndian, vals)
			arrays[fs[1]] = vals
		case "SCALARS":
			line() // LOOKUP_TABLE default
			vals := make([]float64, n)
			if fs[2] == "unsigned_char" {
				raw := make([]byte, n)
				io.ReadFull(r, raw)
				for k, b := range raw {
					vals[k] = float64(b)
				}
			} else {
				binary.Read(r, binary.BigEndian, vals)
			}
			arrays[fs[1]] = vals
		default:
			t.Fatalf("unexpected line %q", l)
		}
	}
	return
}

func TestRoundTripVTK(t *testing.T) {
	f, omega := randomField(19, 11)
	var buf bytes.Buffer
	if err := EncodeVTK(&buf, f, omega); err != nil {
		t.Fatal(err)
	}
	dims, origin, spacing, arrays := readVTK(t, buf.Bytes())
	g := f.Grid
	if dims != [3]int{g.NX, g.NY, 1} || origin != [3]float64{g.X0, g.Y0, 0} || spacing != [3]float64{g.DX, g.DY, g.DX} {
		t.Fatalf("header %v %v %v for %v", dims, origin, spacing, g)
	}
	vel, st, om := arrays["velocity"], arrays["status"], arrays["omega"]
	for k := range f.U {
		if !sameBits(vel[3*k], f.U[k]) || !sameBits(vel[3*k+1], f.V[k]) || vel[3*k+2] != 0 ||
			st[k] != float64(f.Status[k].Kind()) || !sameBits(om[k], omega.Values[k]) {
			t.Fatalf("node %d differs", k)
		}
	}
	// CSV -> Field -> VTK: the VTK arrays hold exactly the numbers of the CSV text, as the Go
	// standard library's strconv reads them.
	var text bytes.Buffer
	if err := EncodeCSV(&text, f); err != nil {
		t.Fatal(err)
	}
	fromCSV, _, err := ReadCSV(bytes.NewReader(text.Bytes()), "f.csv", 0, ReadOptions{})
	if err != nil {
		t.Fatal(err)
	}
	var buf2 bytes.Buffer
	if err := EncodeVTK(&buf2, fromCSV); err != nil {
		t.Fatal(err)
	}
	_, _, _, arrays2 := readVTK(t, buf2.Bytes())
	rows := strings.Split(strings.TrimSpace(text.String()), "\n")[1:]
	for k, row := range rows {
		cells := strings.Split(row, ",")
		u, _ := strconv.ParseFloat(cells[2], 64)
		v, _ := strconv.ParseFloat(cells[3], 64)
		if !sameBits(arrays2["velocity"][3*k], u) || !sameBits(arrays2["velocity"][3*k+1], v) {
			t.Fatalf("row %d: VTK %v %v, CSV text %q %q", k, arrays2["velocity"][3*k], arrays2["velocity"][3*k+1], cells[2], cells[3])
		}
	}
	// The file on disk is the same bytes.
	p := filepath.Join(t.TempDir(), "f.vtk")
	if err := WriteVTK(p, f, omega); err != nil {
		t.Fatal(err)
	}
	if disk, _ := os.ReadFile(p); !bytes.Equal(disk, buf.Bytes()) {
		t.Error("WriteVTK and EncodeVTK differ")
	}
}

func TestWritersRefuseInputsAndBadColumns(t *testing.T) {
	dir := t.TempDir()
	f, _ := randomField(4, 3)
	in := filepath.Join(dir, "in.csv")
	if err := WriteCSV(in, f); err != nil {
		t.Fatal(err)
	}
	before, _ := os.ReadFile(in)
	if _, err := ReadFile(in, ReadOptions{}); err != nil {
		t.Fatal(err)
	}
	if err := WriteCSV(in, f); err == nil || !strings.Contains(err.Error(), "input") {
		t.Errorf("overwrote an input: %v", err)
	}
	if err := WriteVTK(in, f); err == nil {
		t.Error("VTK overwrote an input")
	}
	if after, _ := os.ReadFile(in); !bytes.Equal(before, after) {
		t.Error("input changed")
	}
	out := filepath.Join(dir, "out.csv")
	for _, c := range []Column{{Name: "bad name", Values: make([]float64, 12)}, {Name: "short", Values: make([]float64, 3)}} {
		if err := WriteCSV(out, f, c); err == nil {
			t.Errorf("column %q accepted", c.Name)
		}
	}
	if ents, _ := os.ReadDir(dir); len(ents) != 1 {
		t.Errorf("failed writes left files: %v", ents)
	}
}

func TestWriteJSON(t *testing.T) {
	p := filepath.Join(t.TempDir(), "s.json")
	type summary struct {
		Frames int
		Peak   JSONFloat
		Gone   JSONFloat
	}
	if err := WriteJSON(p, summary{3, 0.1, JSONFloat(math.NaN())}); err != nil {
		t.Fatal(err)
	}
	b, _ := os.ReadFile(p)
	var back summary
	if err := json.Unmarshal(b, &back); err != nil {
		t.Fatalf("%v in %s", err, b)
	}
	if back.Frames != 3 || back.Peak != 0.1 || !math.IsNaN(float64(back.Gone)) || !strings.Contains(string(b), `"Gone": null`) {
		t.Errorf("JSON round trip: %s -> %+v", b, back)
	}
	if err := WriteJSON(p, math.Inf(1)); err == nil {
		t.Error("plain infinity accepted")
	}
}

func BenchmarkWriteCSV(b *testing.B) {
	f, _ := randomField(512, 512)
	b.ReportAllocs()
	var n int64
	for b.Loop() {
		var w countWriter
		if err := EncodeCSV(&w, f); err != nil {
			b.Fatal(err)
		}
		n = int64(w)
	}
	b.SetBytes(n)
	b.ReportMetric(float64(b.Elapsed().Nanoseconds())/float64(b.N)/float64(f.Grid.N()), "ns/node")
}

type countWriter int64

func (c *countWriter) Write(p []byte) (int, error) { *c += countWriter(len(p)); return len(p), nil }
