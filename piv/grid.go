package piv

import (
	"fmt"
	"math"
)

// DefaultMaxNodes is the largest grid a reader accepts unless told otherwise (100 million nodes).
const DefaultMaxNodes = 100_000_000

// Grid is a uniform rectangular grid. Node (i, j), 0 <= i < NX, 0 <= j < NY, sits at
// (X0 + i*DX, Y0 + j*DY); DX and DY are positive. Slices on a grid are row-major with i
// fastest: the node (i, j) has index j*NX + i.
type Grid struct {
	NX, NY int
	X0, Y0 float64
	DX, DY float64
}

// N returns the number of nodes.
func (g Grid) N() int { return g.NX * g.NY }

// Index returns the slice index of node (i, j).
func (g Grid) Index(i, j int) int { return j*g.NX + i }

// IJ returns the node indices of slice index k.
func (g Grid) IJ(k int) (i, j int) { return k % g.NX, k / g.NX }

// X returns the x coordinate of column i.
func (g Grid) X(i int) float64 { return g.X0 + float64(i)*g.DX }

// Y returns the y coordinate of row j.
func (g Grid) Y(j int) float64 { return g.Y0 + float64(j)*g.DY }

// XMax returns the x coordinate of the last column.
func (g Grid) XMax() float64 { return g.X(g.NX - 1) }

// YMax returns the y coordinate of the last row.
func (g Grid) YMax() float64 { return g.Y(g.NY - 1) }

// In reports whether (i, j) is a node of the grid.
func (g Grid) In(i, j int) bool { return i >= 0 && j >= 0 && i < g.NX && j < g.NY }

// Contains reports whether the point (x, y) lies inside the grid's extent (edges included).
func (g Grid) Contains(x, y float64) bool {
	const eps = 1e-9
	return x >= g.X0-eps*g.DX && x <= g.XMax()+eps*g.DX && y >= g.Y0-eps*g.DY && y <= g.YMax()+eps*g.DY
}

// Frac returns the fractional node coordinates of the point (x, y): x = X0 + fi*DX.
func (g Grid) Frac(x, y float64) (fi, fj float64) {
	return (x - g.X0) / g.DX, (y - g.Y0) / g.DY
}

// Validate checks that the grid is usable: at least one node in each direction, finite origin,
// finite positive spacing, and no more than maxNodes nodes (maxNodes <= 0 means DefaultMaxNodes).
func (g Grid) Validate(maxNodes int) error {
	if maxNodes <= 0 {
		maxNodes = DefaultMaxNodes
	}
	switch {
	case g.NX < 1 || g.NY < 1:
		return fmt.Errorf("grid %dx%d has no nodes", g.NX, g.NY)
	case !(g.DX > 0) || !(g.DY > 0) || math.IsInf(g.DX, 0) || math.IsInf(g.DY, 0):
		return fmt.Errorf("grid spacing (%g, %g) must be finite and positive", g.DX, g.DY)
	case math.IsNaN(g.X0) || math.IsNaN(g.Y0) || math.IsInf(g.X0, 0) || math.IsInf(g.Y0, 0):
		return fmt.Errorf("grid origin (%g, %g) must be finite", g.X0, g.Y0)
	case float64(g.NX)*float64(g.NY) > float64(maxNodes):
		return fmt.Errorf("grid %dx%d has more than the limit of %d nodes", g.NX, g.NY, maxNodes)
	}
	return nil
}

// Same reports whether two grids have the same node count and their origins and spacings agree
// to a millionth of the spacing.
func (g Grid) Same(o Grid) bool {
	if g.NX != o.NX || g.NY != o.NY {
		return false
	}
	tx, ty := 1e-6*g.DX, 1e-6*g.DY
	return math.Abs(g.X0-o.X0) <= tx && math.Abs(g.Y0-o.Y0) <= ty &&
		math.Abs(g.DX-o.DX) <= tx && math.Abs(g.DY-o.DY) <= ty
}

// String describes the grid, e.g. "96x40 nodes, spacing 1.5625e-03 x 1.5625e-03 m".
func (g Grid) String() string {
	return fmt.Sprintf("%dx%d nodes, spacing %.6g x %.6g m, x %.6g..%.6g m, y %.6g..%.6g m",
		g.NX, g.NY, g.DX, g.DY, g.X0, g.XMax(), g.Y0, g.YMax())
}

// NaNs returns a slice of n NaN values, the "undefined everywhere" start of a derived scalar.
func NaNs(n int) []float64 {
	s := make([]float64, n)
	nan := math.NaN()
	for k := range s {
		s[k] = nan
	}
	return s
}
