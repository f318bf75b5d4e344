package piv

import (
	"fmt"
	"math"
)

// Shape is a closed region of the plane, used for solid masks, contours and regions.
type Shape interface {
	// Contains reports whether the point (x, y) is inside the region (boundary included).
	Contains(x, y float64) bool
}

// Rect is the axis-aligned rectangle X0 <= x <= X1, Y0 <= y <= Y1.
type Rect struct{ X0, Y0, X1, Y1 float64 }

// Contains implements Shape.
func (r Rect) Contains(x, y float64) bool {
	return x >= r.X0 && x <= r.X1 && y >= r.Y0 && y <= r.Y1
}

// Circle is the disc of radius R about (X, Y).
type Circle struct{ X, Y, R float64 }

// Contains implements Shape.
func (c Circle) Contains(x, y float64) bool {
	dx, dy := x-c.X, y-c.Y
	return dx*dx+dy*dy <= c.R*c.R
}

// Polygon is a simple closed polygon given by its vertices in order (the last vertex joins the
// first). Either orientation is accepted for containment.
type Polygon struct{ X, Y []float64 }

// Contains implements Shape by the even-odd crossing rule.
func (p Polygon) Contains(x, y float64) bool {
	n := len(p.X)
	in := false
	for a, b := 0, n-1; a < n; b, a = a, a+1 {
		ya, yb := p.Y[a], p.Y[b]
		if (ya > y) != (yb > y) {
			xc := p.X[a] + (y-ya)*(p.X[b]-p.X[a])/(yb-ya)
			if x < xc {
				in = !in
			}
		}
	}
	return in
}

// Area returns the signed area of the polygon (positive when counter-clockwise).
func (p Polygon) Area() float64 {
	n := len(p.X)
	s := 0.0
	for a, b := 0, n-1; a < n; b, a = a, a+1 {
		s += p.X[b]*p.Y[a] - p.X[a]*p.Y[b]
	}
	return s / 2
}

// Validate checks that the polygon has at least three vertices, finite coordinates and a
// non-zero area.
func (p Polygon) Validate() error {
	if len(p.X) != len(p.Y) {
		return fmt.Errorf("polygon has %d x and %d y coordinates", len(p.X), len(p.Y))
	}
	if len(p.X) < 3 {
		return fmt.Errorf("polygon has %d vertices; at least 3 are needed", len(p.X))
	}
	for k := range p.X {
		if !isFinite(p.X[k]) || !isFinite(p.Y[k]) {
			return fmt.Errorf("polygon vertex %d (%g, %g) is not finite", k+1, p.X[k], p.Y[k])
		}
	}
	if math.Abs(p.Area()) == 0 {
		return fmt.Errorf("polygon encloses no area")
	}
	return nil
}

// Mask returns, for every node of g, whether the node lies inside s.
func Mask(g Grid, s Shape) []bool {
	m := make([]bool, g.N())
	for j := 0; j < g.NY; j++ {
		y := g.Y(j)
		for i := 0; i < g.NX; i++ {
			m[j*g.NX+i] = s.Contains(g.X(i), y)
		}
	}
	return m
}

// MaskSolid marks every node of f inside s as Solid (with NaN velocities) and returns how many
// nodes it marked.
func (f *Field) MaskSolid(s Shape) int {
	n := 0
	nan := math.NaN()
	for k, in := range Mask(f.Grid, s) {
		if in {
			f.Status[k] = Solid
			f.U[k], f.V[k] = nan, nan
			n++
		}
	}
	return n
}
