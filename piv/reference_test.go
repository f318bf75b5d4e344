package piv

import (
	"encoding/json"
	"math"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"testing"
)

const referenceDir = "../../shared/reference/starting-jet-LD4"

// The CFD reference series (an axisymmetric starting jet sampled as 270 "PIV-like" frames with
// a frame,file,t index) must open with the grid its checks/grid.json states, the times of its
// index, and every value of a frame as Go's strconv reads the text.
func TestReadReferenceSeries(t *testing.T) {
	idx := filepath.Join(referenceDir, "frames.csv")
	if _, err := os.Stat(idx); err != nil {
		t.Skipf("reference data not present (%v)", err)
	}
	var grid struct {
		H, X0, R0 float64
		NX        int `json:"nx"`
		NR        int `json:"nr"`
	}
	b, err := os.ReadFile(filepath.Join(referenceDir, "checks", "grid.json"))
	if err != nil {
		t.Fatal(err)
	}
	if err := json.Unmarshal(b, &grid); err != nil {
		t.Fatal(err)
	}
	s, f, info, err := OpenSeriesInfo([]string{idx}, ReadOptions{Geometry: Geometry{Axisymmetric: true}})
	if err != nil {
		t.Fatal(err)
	}
	g := f.Grid
	// The coordinates are printed with 7 significant digits (x = 0.1492188 for 0.14921875), so
	// each carries up to 5e-8 m of rounding; the least-squares lattice through all 3840 rows
	// must still give the spacing to 1e-6 of itself and the origin to 1e-5 of the spacing.
	tol := 1e-5 * grid.H
	if s.Len() != 270 || g.NX != grid.NX || g.NY != grid.NR || math.Abs(g.DX-grid.H) > 1e-6*grid.H || math.Abs(g.DY-grid.H) > 1e-6*grid.H ||
		math.Abs(g.X0-grid.X0) > tol || math.Abs(g.Y0-grid.R0) > tol {
		t.Fatalf("series of %d frames on %v (%v %v %v %v); grid.json says %+v", s.Len(), g, g.DX, g.DY, g.X0, g.Y0, grid)
	}
	t.Logf("spacing error %.2g of h, origin error %.2g of h", (g.DX-grid.H)/grid.H, (g.X0-grid.X0)/grid.H)
	if info.Columns[1] != "r" || !f.Geometry.Axisymmetric || f.ValidShare() != 1 {
		t.Errorf("columns %v, geometry %v, valid share %v", info.Columns, f.Geometry, f.ValidShare())
	}
	// README: t_k = 0.025 + k*0.025 s.
	for _, k := range []int{0, 1, 100, 269} {
		if want := 0.025 + float64(k)*0.025; math.Abs(s.Time(k)-want) > 1e-12 {
			t.Errorf("frame %d at t = %v, want %v", k, s.Time(k), want)
		}
	}
	last, err := s.Frame(269)
	if err != nil {
		t.Fatal(err)
	}
	text, err := os.ReadFile(filepath.Join(referenceDir, "frames", "frame_269.csv"))
	if err != nil {
		t.Fatal(err)
	}
	rows := strings.Split(strings.TrimSpace(string(text)), "\n")[1:]
	if len(rows) != g.N() {
		t.Fatalf("%d rows for %d nodes", len(rows), g.N())
	}
	for k, row := range rows {
		c := strings.Split(row, ",")
		x, _ := strconv.ParseFloat(c[0], 64)
		r, _ := strconv.ParseFloat(c[1], 64)
		u, _ := strconv.ParseFloat(c[2], 64)
		v, _ := strconv.ParseFloat(c[3], 64)
		// README: row k is node i = k mod 96, j = k div 96 (x fastest).
		i, j := k%grid.NX, k/grid.NX
		n := g.Index(i, j)
		// The exact node is (x0 + i h, r0 + j h) by grid.json; the text rounds it by at most
		// 5e-8 m (3.2e-5 spacings), and the inferred grid must place the node as closely.
		ex, er := grid.X0+float64(i)*grid.H, grid.R0+float64(j)*grid.H
		if math.Abs(x-ex) > 5.01e-8 || math.Abs(r-er) > 5.01e-8 {
			t.Fatalf("row %d: the text (%v, %v) is not node (%d,%d) of grid.json", k, x, r, i, j)
		}
		if math.Abs(g.X(i)-ex) > 3.2e-5*grid.H || math.Abs(g.Y(j)-er) > 3.2e-5*grid.H || last.U[n] != u || last.V[n] != v {
			t.Fatalf("row %d: node (%d,%d) at (%v, %v) holds %v %v; the text says (%v, %v) %v %v",
				k, i, j, g.X(i), g.Y(j), last.U[n], last.V[n], x, r, u, v)
		}
	}
}
