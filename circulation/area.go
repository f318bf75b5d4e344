package circulation

import (
	"fmt"
	"math"

	"github.com/wakekit/wakekit/piv"
)

// Region is a set of grid cells for an area integral. Each node (i, j) stands for the cell of
// size DX x DY centred on it; W[k] is the share of the cell of node K[k] that lies inside the
// region (1 for an interior cell, between 0 and 1 on the boundary).
type Region struct {
	Grid piv.Grid
	K    []int
	W    []float64
}

// Len returns the number of cells in the region.
func (r Region) Len() int { return len(r.K) }

// Area returns the region's area [m²] (sum of the cell shares times the cell area).
func (r Region) Area() float64 {
	s := 0.0
	for _, w := range r.W {
		s += w
	}
	return s * r.Grid.DX * r.Grid.DY
}

// AllNodes returns the region of every cell of g.
func AllNodes(g piv.Grid) Region {
	n := g.N()
	r := Region{Grid: g, K: make([]int, n), W: make([]float64, n)}
	for k := range r.K {
		r.K[k], r.W[k] = k, 1
	}
	return r
}

// NodeRegion returns the region made of the whole cells of the given nodes (e.g. a detected
// core). Indices outside the grid are an error.
func NodeRegion(g piv.Grid, nodes []int) (Region, error) {
	r := Region{Grid: g, K: make([]int, len(nodes)), W: make([]float64, len(nodes))}
	for a, k := range nodes {
		if k < 0 || k >= g.N() {
			return Region{}, fmt.Errorf("node %d is outside the %dx%d grid", k, g.NX, g.NY)
		}
		r.K[a], r.W[a] = k, 1
	}
	return r, nil
}

// subCells is the number of sub-points per cell side used to estimate the share of a cell
// inside a circle. The share error is then about 1/subCells² of a cell per boundary cell, with
// signs that largely cancel round the boundary.
const subCells = 16

// ShapeRegion returns the cells of g that overlap the shape s, each with the share of its area
// inside s: exact for rectangles and polygons (the cell is clipped against the polygon with
// the Sutherland–Hodgman algorithm, Sutherland & Hodgman 1974, and the clipped area taken by the
// shoelace formula), and by 16x16 sub-point sampling for cells crossed by a circle boundary.
// Other shapes are sampled in the same way in every cell. It is an error when the shape
// covers no part of the grid.
func ShapeRegion(g piv.Grid, s piv.Shape) (Region, error) {
	hx, hy := g.DX/2, g.DY/2
	i0, i1, j0, j1 := 0, g.NX-1, 0, g.NY-1
	var bx0, by0, bx1, by1 float64
	bounded := true
	switch sh := s.(type) {
	case piv.Circle:
		if !(sh.R > 0) {
			return Region{}, fmt.Errorf("circle radius %g must be positive", sh.R)
		}
		bx0, by0, bx1, by1 = sh.X-sh.R, sh.Y-sh.R, sh.X+sh.R, sh.Y+sh.R
	case piv.Rect:
		if !(sh.X1 > sh.X0) || !(sh.Y1 > sh.Y0) {
			return Region{}, fmt.Errorf("rectangle %g,%g,%g,%g must have X1 > X0 and Y1 > Y0", sh.X0, sh.Y0, sh.X1, sh.Y1)
		}
		bx0, by0, bx1, by1 = sh.X0, sh.Y0, sh.X1, sh.Y1
	case piv.Polygon:
		if err := sh.Validate(); err != nil {
			return Region{}, err
		}
		bx0, by0, bx1, by1 = math.Inf(1), math.Inf(1), math.Inf(-1), math.Inf(-1)
		for k := range sh.X {
			bx0, bx1 = math.Min(bx0, sh.X[k]), math.Max(bx1, sh.X[k])
			by0, by1 = math.Min(by0, sh.Y[k]), math.Max(by1, sh.Y[k])
		}
	default:
		bounded = false
	}
	if bounded {
		fa, fb := g.Frac(bx0, by0)
		fc, fd := g.Frac(bx1, by1)
		i0, j0 = max(i0, int(math.Floor(fa-0.5))), max(j0, int(math.Floor(fb-0.5)))
		i1, j1 = min(i1, int(math.Ceil(fc+0.5))), min(j1, int(math.Ceil(fd+0.5)))
	}
	r := Region{Grid: g}
	var buf clipBuf
	for j := j0; j <= j1; j++ {
		yc := g.Y(j)
		for i := i0; i <= i1; i++ {
			xc := g.X(i)
			var w float64
			switch sh := s.(type) {
			case piv.Rect:
				ox := math.Min(sh.X1, xc+hx) - math.Max(sh.X0, xc-hx)
				oy := math.Min(sh.Y1, yc+hy) - math.Max(sh.Y0, yc-hy)
				if ox > 0 && oy > 0 {
					w = ox * oy / (g.DX * g.DY)
				}
			case piv.Polygon:
				w = buf.polygonCell(sh, xc-hx, yc-hy, xc+hx, yc+hy) / (g.DX * g.DY)
			case piv.Circle:
				d := math.Hypot(xc-sh.X, yc-sh.Y) - sh.R
				half := math.Hypot(hx, hy)
				switch {
				case d <= -half:
					w = 1
				case d >= half:
					w = 0
				default:
					w = sampledShare(s, xc, yc, hx, hy)
				}
			default:
				w = sampledShare(s, xc, yc, hx, hy)
			}
			if w > 1e-12 {
				r.K = append(r.K, g.Index(i, j))
				r.W = append(r.W, math.Min(w, 1))
			}
		}
	}
	if len(r.K) == 0 {
		return Region{}, fmt.Errorf("the region covers no part of the field (x %.6g..%.6g m, y %.6g..%.6g m)",
			g.X0, g.XMax(), g.Y0, g.YMax())
	}
	return r, nil
}

// sampledShare estimates the share of the cell centred on (xc, yc) with half sizes hx, hy that
// lies inside s by the midpoint rule on subCells x subCells sub-points.
func sampledShare(s piv.Shape, xc, yc, hx, hy float64) float64 {
	in := 0
	for b := 0; b < subCells; b++ {
		y := yc - hy + (float64(b)+0.5)*2*hy/subCells
		for a := 0; a < subCells; a++ {
			if s.Contains(xc-hx+(float64(a)+0.5)*2*hx/subCells, y) {
				in++
			}
		}
	}
	return float64(in) / (subCells * subCells)
}

// clipBuf holds the scratch vertex lists of polygon clipping, reused from cell to cell.
type clipBuf struct{ ax, ay, bx, by []float64 }

// polygonCell returns the area of the polygon p inside the rectangle [x0,x1]x[y0,y1] by
// clipping p against the rectangle's four half-planes (Sutherland & Hodgman 1974, Comm. ACM
// 17:32); the result is exact for any simple polygon, convex or not, since the clip window is
// convex.
func (c *clipBuf) polygonCell(p piv.Polygon, x0, y0, x1, y1 float64) float64 {
	c.ax = append(c.ax[:0], p.X...)
	c.ay = append(c.ay[:0], p.Y...)
	// Each pass keeps the side where the signed value is >= 0.
	for side := 0; side < 4; side++ {
		c.bx, c.by = c.bx[:0], c.by[:0]
		n := len(c.ax)
		if n == 0 {
			return 0
		}
		val := func(x, y float64) float64 {
			switch side {
			case 0:
				return x - x0
			case 1:
				return x1 - x
			case 2:
				return y - y0
			}
			return y1 - y
		}
		for a := 0; a < n; a++ {
			b := (a + 1) % n
			xa, ya, xb, yb := c.ax[a], c.ay[a], c.ax[b], c.ay[b]
			va, vb := val(xa, ya), val(xb, yb)
			if va >= 0 {
				c.bx, c.by = append(c.bx, xa), append(c.by, ya)
			}
			if (va >= 0) != (vb >= 0) {
				t := va / (va - vb)
				c.bx, c.by = append(c.bx, xa+t*(xb-xa)), append(c.by, ya+t*(yb-ya))
			}
		}
		c.ax, c.bx = c.bx, c.ax
		c.ay, c.by = c.by, c.ay
	}
	n := len(c.ax)
	s := 0.0
	for a, b := 0, n-1; a < n; b, a = a, a+1 {
		s += c.ax[b]*c.ay[a] - c.ax[a]*c.ay[b]
	}
	return math.Abs(s) / 2
}

// AreaOptions configures an area integral.
type AreaOptions struct {
	// MaxMissingShare is the largest share of the region's area whose vorticity is NaN (no
	// data) that is accepted (0 means DefaultMaxBadShare; negative allows none). NaN cells are
	// left out of the sum, never filled.
	MaxMissingShare float64
	// NaNOnBad returns NaN with a Warning instead of an error above the limit.
	NaNOnBad bool
}

func (o AreaOptions) maxMissing() float64 {
	switch {
	case o.MaxMissingShare == 0:
		return DefaultMaxBadShare
	case o.MaxMissingShare < 0:
		return 0
	}
	return o.MaxMissingShare
}

// AreaResult is the outcome of an area integral.
type AreaResult struct {
	// Gamma is ∫∫ ω dA over the region [m²/s], NaN when refused.
	Gamma float64
	// Area is the region's area [m²]; MissingShare the share of it with no vorticity.
	Area, MissingShare float64
	Warning            string
}

// Area computes the circulation in region r as the integral of the vorticity omega (on the
// region's grid): the sum over the region's cells of ω at the node times the cell's area inside
// the region. For a region made of whole cells this is the midpoint rule, with error O(h²) for a
// smooth vorticity; cells cut by a curved boundary add an error of the order of the vorticity
// there times the share error of ShapeRegion. The total error is usually dominated by the
// finite-difference error of ω itself.
func Area(omega []float64, r Region, opt AreaOptions) (AreaResult, error) {
	res := AreaResult{Gamma: math.NaN()}
	if len(omega) != r.Grid.N() {
		return res, fmt.Errorf("vorticity has %d values for a grid of %d nodes", len(omega), r.Grid.N())
	}
	cell := r.Grid.DX * r.Grid.DY
	var sum, wAll, wMiss float64
	for a, k := range r.K {
		w := r.W[a]
		wAll += w
		if math.IsNaN(omega[k]) {
			wMiss += w
			continue
		}
		sum += omega[k] * w
	}
	res.Area = wAll * cell
	if wAll > 0 {
		res.MissingShare = wMiss / wAll
	}
	if wAll == 0 || res.MissingShare > opt.maxMissing() {
		msg := fmt.Sprintf("%.1f %% of the region has no vorticity (limit %.1f %%)", 100*res.MissingShare, 100*opt.maxMissing())
		if opt.NaNOnBad {
			res.Warning = msg
			return res, nil
		}
		return res, fmt.Errorf("%s: %w", msg, ErrQuality)
	}
	res.Gamma = sum * cell
	return res, nil
}

// Stokes is the consistency figure between the two circulation estimates of one contour: by
// Stokes' theorem the line integral round a contour equals the area integral of vorticity
// inside it, so their difference measures discretisation and data error together.
type Stokes struct {
	Line, Area float64
	// Diff is Line - Area [m²/s]; Rel is Diff divided by the larger magnitude of the two.
	Diff, Rel float64
}

// StokesDifference compares a line-integral and an area-integral circulation.
func StokesDifference(line, area float64) Stokes {
	s := Stokes{Line: line, Area: area, Diff: line - area}
	if m := math.Max(math.Abs(line), math.Abs(area)); m > 0 {
		s.Rel = s.Diff / m
	}
	return s
}
