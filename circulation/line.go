package circulation

import (
	"fmt"
	"math"

	"github.com/wakekit/wakekit/piv"
)

// Contour is a closed curve prepared for a line integral: sample points (X[k], Y[k]) and, at
// each, the tangent vector already multiplied by the quadrature weight (TX[k], TY[k]), so that
// the circulation is the sum of u·T over the points. Contours run counter-clockwise, so a
// counter-clockwise vortex has positive circulation.
type Contour struct {
	X, Y   []float64
	TX, TY []float64
	// W is the length of (TX, TY): the arc length each point stands for.
	W []float64
	// S is the arc length from the first point to point k [m]; Length is the whole perimeter.
	S      []float64
	Length float64
}

// Len returns the number of sample points.
func (c *Contour) Len() int { return len(c.X) }

// DefaultSpacing returns the default contour sampling spacing for grid g: a quarter of the
// smaller grid spacing.
func DefaultSpacing(g piv.Grid) float64 { return math.Min(g.DX, g.DY) / 4 }

// maxContourPoints bounds the number of points of one contour, checked before allocating.
const maxContourPoints = 10_000_000

// CircleContour samples the circle c at n equally spaced angles (n >= 8). The weights are those
// of the trapezoidal rule, which for a smooth periodic integrand converges faster than any power
// of 1/n (Trefethen & Weideman 2014, SIAM Review 56:385).
func CircleContour(c piv.Circle, n int) (*Contour, error) {
	if !(c.R > 0) || math.IsInf(c.R, 0) {
		return nil, fmt.Errorf("circle radius %g must be positive and finite", c.R)
	}
	if math.IsNaN(c.X) || math.IsNaN(c.Y) || math.IsInf(c.X, 0) || math.IsInf(c.Y, 0) {
		return nil, fmt.Errorf("circle centre (%g, %g) must be finite", c.X, c.Y)
	}
	if n < 8 {
		n = 8
	}
	if n > maxContourPoints {
		return nil, fmt.Errorf("circle of radius %g needs %d points, more than the limit of %d", c.R, n, maxContourPoints)
	}
	ct := &Contour{X: make([]float64, n), Y: make([]float64, n), TX: make([]float64, n),
		TY: make([]float64, n), W: make([]float64, n), S: make([]float64, n), Length: 2 * math.Pi * c.R}
	dth := 2 * math.Pi / float64(n)
	for k := 0; k < n; k++ {
		s, co := math.Sincos(float64(k) * dth)
		ct.X[k] = c.X + c.R*co
		ct.Y[k] = c.Y + c.R*s
		ct.TX[k] = -c.R * s * dth
		ct.TY[k] = c.R * co * dth
		ct.W[k] = c.R * dth
		ct.S[k] = c.R * float64(k) * dth
	}
	return ct, nil
}

// CircleSampled samples the circle c at the given spacing along its perimeter (spacing <= 0
// means DefaultSpacing of g), with at least 16 points.
func CircleSampled(g piv.Grid, c piv.Circle, spacing float64) (*Contour, error) {
	if spacing <= 0 {
		spacing = DefaultSpacing(g)
	}
	if !(c.R > 0) {
		return nil, fmt.Errorf("circle radius %g must be positive", c.R)
	}
	n := math.Ceil(2 * math.Pi * c.R / spacing)
	if n > maxContourPoints {
		return nil, fmt.Errorf("circle of radius %g at spacing %g needs more than %d points", c.R, spacing, maxContourPoints)
	}
	return CircleContour(c, max(16, int(n)))
}

// PolygonContour samples the closed polygon p with points no farther apart than spacing
// (spacing <= 0 means DefaultSpacing of g). Each edge is integrated by the composite
// trapezoidal rule, whose error on an edge of length L is L·ds²·max|d²f/ds²|/12 for a smooth
// integrand f (any numerical analysis text, e.g. Burden & Faires, Numerical Analysis §4.4).
// The vertices are kept as sample points, so corners are integrated exactly as far as the
// integrand allows. A clockwise polygon is reversed.
func PolygonContour(g piv.Grid, p piv.Polygon, spacing float64) (*Contour, error) {
	if err := p.Validate(); err != nil {
		return nil, err
	}
	if spacing <= 0 {
		spacing = DefaultSpacing(g)
	}
	nv := len(p.X)
	xs, ys := append([]float64(nil), p.X...), append([]float64(nil), p.Y...)
	if p.Area() < 0 {
		for a, b := 0, nv-1; a < b; a, b = a+1, b-1 {
			xs[a], xs[b] = xs[b], xs[a]
			ys[a], ys[b] = ys[b], ys[a]
		}
	}
	// Segments per edge, checked against the limit before allocation.
	segs := make([]int, nv)
	total := 0.0
	for a := 0; a < nv; a++ {
		b := (a + 1) % nv
		L := math.Hypot(xs[b]-xs[a], ys[b]-ys[a])
		m := math.Max(1, math.Ceil(L/spacing))
		total += m
		if total > maxContourPoints {
			return nil, fmt.Errorf("polygon at spacing %g needs more than %d points", spacing, maxContourPoints)
		}
		segs[a] = int(m)
	}
	n := int(total)
	ct := &Contour{X: make([]float64, 0, n), Y: make([]float64, 0, n), TX: make([]float64, 0, n),
		TY: make([]float64, 0, n), S: make([]float64, 0, n)}
	s := 0.0
	for a := 0; a < nv; a++ {
		b := (a + 1) % nv
		m := segs[a]
		ex, ey := (xs[b]-xs[a])/float64(m), (ys[b]-ys[a])/float64(m)
		for q := 0; q < m; q++ {
			ct.X = append(ct.X, xs[a]+float64(q)*ex)
			ct.Y = append(ct.Y, ys[a]+float64(q)*ey)
			ct.S = append(ct.S, s+float64(q)*math.Hypot(ex, ey))
			if q == 0 {
				// A vertex: half the weight of the incoming segment and half of the outgoing one.
				prev := (a + nv - 1) % nv
				pm := float64(segs[prev])
				px, py := (xs[a]-xs[prev])/pm, (ys[a]-ys[prev])/pm
				ct.TX = append(ct.TX, (px+ex)/2)
				ct.TY = append(ct.TY, (py+ey)/2)
			} else {
				ct.TX = append(ct.TX, ex)
				ct.TY = append(ct.TY, ey)
			}
		}
		s += math.Hypot(xs[b]-xs[a], ys[b]-ys[a])
	}
	ct.Length = s
	ct.W = make([]float64, len(ct.TX))
	for k := range ct.W {
		ct.W[k] = math.Hypot(ct.TX[k], ct.TY[k])
	}
	return ct, nil
}

// RectContour samples the rectangle r counter-clockwise (see PolygonContour).
func RectContour(g piv.Grid, r piv.Rect, spacing float64) (*Contour, error) {
	if !(r.X1 > r.X0) || !(r.Y1 > r.Y0) {
		return nil, fmt.Errorf("rectangle %g,%g,%g,%g must have X1 > X0 and Y1 > Y0", r.X0, r.Y0, r.X1, r.Y1)
	}
	return PolygonContour(g, piv.Polygon{X: []float64{r.X0, r.X1, r.X1, r.X0}, Y: []float64{r.Y0, r.Y0, r.Y1, r.Y1}}, spacing)
}

// LineOptions configures a line integral. The zero value is bilinear interpolation with a 5 %
// limit on the share of the contour next to non-measured nodes, refused with an error.
type LineOptions struct {
	// Interp is the velocity interpolation between nodes.
	Interp piv.Interp
	// MaxBadShare is the largest share of the contour length whose interpolation stencil touches
	// replaced, missing or solid nodes (0 means 0.05; a negative value allows no such share).
	MaxBadShare float64
	// NaNOnBad returns a NaN circulation with a Warning instead of an error when the share is
	// over MaxBadShare.
	NaNOnBad bool
}

// DefaultMaxBadShare is the default limit of LineOptions.MaxBadShare and AreaOptions.MaxMissingShare.
const DefaultMaxBadShare = 0.05

func (o LineOptions) maxBad() float64 {
	switch {
	case o.MaxBadShare == 0:
		return DefaultMaxBadShare
	case o.MaxBadShare < 0:
		return 0
	}
	return o.MaxBadShare
}

// LineResult is the outcome of a line integral.
type LineResult struct {
	// Gamma is the circulation ∮ u·dl [m²/s] (counter-clockwise positive), NaN when refused.
	Gamma float64
	// Length is the contour length [m] and Points the number of sample points.
	Length float64
	Points int
	// ReplacedShare is the share of the contour length whose interpolation stencil touches a
	// replaced node (the velocity there rests on filled-in vectors); GapShare the share where no
	// velocity could be interpolated (missing or solid nodes). BadShare is their sum.
	ReplacedShare, GapShare, BadShare float64
	// Warning explains a NaN result under NaNOnBad; empty otherwise.
	Warning string
}

// ErrQuality is returned (wrapped) when too much of a contour or region rests on
// non-measured data.
var ErrQuality = fmt.Errorf("too much of the integration path rests on non-measured data")

// Line computes the circulation of field f around the closed contour c by the quadrature rule
// the contour carries (trapezoidal), with the velocity interpolated at each sample point.
//
// Error: for a circle the trapezoidal rule converges spectrally in the number of points for a
// smooth velocity, and along a polygon edge as O(ds²); at the default spacing (a quarter of the
// grid spacing) the quadrature error is therefore small beside the interpolation error, which is
// O(h²) for bilinear and O(h³) for bicubic interpolation (h the grid spacing; Keys 1981 for the
// cubic rule). Both orders are checked in the tests.
//
// Points whose stencil touches missing or solid nodes carry no velocity. If the share of the
// contour next to replaced, missing or solid nodes is within opt.MaxBadShare, such gaps are
// bridged by linear interpolation of the tangential velocity along the arc length between the
// nearest points with data, and the shares are reported; above it Line returns an error
// wrapping ErrQuality (or NaN with a Warning under opt.NaNOnBad). A contour that leaves the
// grid is always an error.
func Line(f *piv.Field, c *Contour, opt LineOptions) (LineResult, error) {
	res := LineResult{Gamma: math.NaN(), Length: c.Length, Points: c.Len()}
	n := c.Len()
	if n == 0 {
		return res, fmt.Errorf("%s: empty contour", f.Name())
	}
	g := f.Grid
	if g.NX < 2 || g.NY < 2 {
		return res, fmt.Errorf("%s: a line integral needs a grid of at least 2x2 nodes", f.Name())
	}
	// The bounds of piv.Grid.Contains, formed once.
	const eps = 1e-9
	xlo, xhi := g.X0-eps*g.DX, g.XMax()+eps*g.DX
	ylo, yhi := g.Y0-eps*g.DY, g.YMax()+eps*g.DY
	X, Y, TX, TY, W := c.X[:n], c.Y[:n], c.TX[:n], c.TY[:n], c.W[:n]
	s := newSampler(f, opt.Interp)
	// First pass: sample and sum at once, which is all a contour without gaps needs; the
	// sum runs in the same order as the second pass's, so the result is the same.
	var wRep, wAll, sum float64
	gap := false
	for k := 0; k < n; k++ {
		x, y := X[k], Y[k]
		if !(x >= xlo && x <= xhi && y >= ylo && y <= yhi) {
			return res, outside(f, x, y)
		}
		w := W[k]
		wAll += w
		u, v, rep, ok := s.at(x, y)
		if !ok {
			gap = true
			break
		}
		if rep {
			wRep += w
		}
		q := 0.0
		if w > 0 {
			q = (u*TX[k] + v*TY[k]) / w
		}
		sum += q * w
	}
	if !gap {
		if wAll > 0 {
			res.ReplacedShare = wRep / wAll
		}
		res.BadShare = res.ReplacedShare + res.GapShare
		if res.BadShare > opt.maxBad() {
			return refuse(f, res, opt)
		}
		res.Gamma = sum
		return res, nil
	}
	// A gap: check the rest of the contour, then sample again keeping the tangential
	// velocity of every point for the bridging.
	for k := 0; k < n; k++ {
		if !(X[k] >= xlo && X[k] <= xhi && Y[k] >= ylo && Y[k] <= yhi) {
			return res, outside(f, X[k], Y[k])
		}
	}
	// q holds the tangential velocity u·T/|T| at each point (NaN in a gap).
	q := make([]float64, n)
	var wGap float64
	wRep, wAll = 0, 0
	for k := 0; k < n; k++ {
		w := W[k]
		wAll += w
		u, v, rep, ok := s.at(X[k], Y[k])
		if !ok {
			wGap += w
			q[k] = math.NaN()
			continue
		}
		if rep {
			wRep += w
		}
		if w > 0 {
			q[k] = (u*TX[k] + v*TY[k]) / w
		}
	}
	if wAll > 0 {
		res.ReplacedShare, res.GapShare = wRep/wAll, wGap/wAll
	}
	res.BadShare = res.ReplacedShare + res.GapShare
	if res.BadShare > opt.maxBad() || res.GapShare >= 1 {
		return refuse(f, res, opt)
	}
	bridge(q, c.S, c.Length)
	sum = 0
	for k := 0; k < n; k++ {
		sum += q[k] * W[k]
	}
	res.Gamma = sum
	return res, nil
}

// outside is the error for a contour point (x, y) that lies outside the field.
func outside(f *piv.Field, x, y float64) error {
	g := f.Grid
	return fmt.Errorf("%s: the contour leaves the field at (%.6g, %.6g) m; the field covers x %.6g..%.6g m, y %.6g..%.6g m",
		f.Name(), x, y, g.X0, g.XMax(), g.Y0, g.YMax())
}

// refuse returns res with the quality refusal: an error wrapping ErrQuality, or under
// opt.NaNOnBad a NaN circulation with the message as its Warning.
func refuse(f *piv.Field, res LineResult, opt LineOptions) (LineResult, error) {
	msg := fmt.Sprintf("%s: %.1f %% of the contour lies next to replaced, missing or solid nodes (limit %.1f %%)",
		f.Name(), 100*res.BadShare, 100*opt.maxBad())
	if opt.NaNOnBad {
		res.Warning = msg
		return res, nil
	}
	return res, fmt.Errorf("%s: %w", msg, ErrQuality)
}

// bridge fills NaN runs of the periodic sequence q (at arc positions s on a closed curve of
// the given length) by linear interpolation in arc length between the nearest defined values.
func bridge(q, s []float64, length float64) {
	n := len(q)
	var def []int
	for k, v := range q {
		if !math.IsNaN(v) {
			def = append(def, k)
		}
	}
	for a, k0 := range def {
		k1 := def[(a+1)%len(def)]
		gap := (k1 - k0 + n) % n
		if gap == 0 {
			gap = n // a single point with data
		}
		if gap <= 1 {
			continue
		}
		s0, s1 := s[k0], s[k1]
		if s1 <= s0 {
			s1 += length
		}
		for m := 1; m < gap; m++ {
			idx := (k0 + m) % n
			si := s[idx]
			if si < s0 {
				si += length
			}
			q[idx] = q[k0] + (si-s0)/(s1-s0)*(q[k1]-q[k0])
		}
	}
}

// sampleStatus interpolates the velocity of f at (x, y). rep says whether the stencil used
// touches a replaced node; ok is false when no velocity can be formed (missing or solid nodes).
// Bicubic falls back to bilinear where its 4x4 stencil holds non-valid nodes.
func sampleStatus(f *piv.Field, x, y float64, m piv.Interp) (u, v float64, rep, ok bool) {
	s := newSampler(f, m)
	return s.at(x, y)
}

// sampler interpolates the velocity of a field at a sequence of points, as sampleStatus does.
// Points along a contour fall many times into one grid cell in a row, so it keeps the status
// summary of the last cell's stencils and reads the statuses again only in a new cell.
type sampler struct {
	u, v       []float64
	st         []piv.Status
	x0, y0     float64
	dx, dy     float64
	nx, ny     int
	bicubic    bool
	cell       int        // index of the lower-left node of the cached cell, -1 for none
	or16, or4  piv.Status // OR of the statuses of its 4x4 (when interior) and 2x2 stencils
	interior16 bool       // the 4x4 stencil fits in the grid
}

func newSampler(f *piv.Field, m piv.Interp) sampler {
	g := f.Grid
	return sampler{u: f.U, v: f.V, st: f.Status, x0: g.X0, y0: g.Y0, dx: g.DX, dy: g.DY, nx: g.NX, ny: g.NY,
		bicubic: m == piv.Bicubic, cell: -1}
}

// at interpolates the velocity at (x, y); see sampleStatus.
func (s *sampler) at(x, y float64) (u, v float64, rep, ok bool) {
	nx, ny := s.nx, s.ny
	fi, fj := (x-s.x0)/s.dx, (y-s.y0)/s.dy // piv.Grid.Frac
	// The lower-left node of the cell, kept inside the grid. Truncation equals the floor for
	// fi ≥ 0, and every negative fi (or NaN) ends at 0 either way.
	i0 := min(max(int(fi), 0), nx-2)
	j0 := min(max(int(fj), 0), ny-2)
	tx, ty := fi-float64(i0), fj-float64(j0)
	k := j0*nx + i0
	if k != s.cell {
		// Kinds Missing (2) and Solid (3) have bit 1 set, Replaced (1) only bit 0: the OR of a
		// stencil's statuses says at once whether it is usable and touches a filled node.
		s.cell = k
		r0, r1 := s.st[k:k+2], s.st[k+nx:k+nx+2]
		s.or4 = r0[0] | r0[1] | r1[0] | r1[1]
		s.interior16 = i0 >= 1 && j0 >= 1 && i0+2 < nx && j0+2 < ny
		if s.bicubic && s.interior16 {
			var or piv.Status
			for b := 0; b < 4; b++ {
				row := (j0-1+b)*nx + i0 - 1
				st := s.st[row : row+4 : row+4]
				or |= st[0] | st[1] | st[2] | st[3]
			}
			s.or16 = or
		}
	}
	if s.bicubic && s.interior16 && s.or16&2 == 0 {
		// Keys' cubic convolution as in piv.Sample, with the weights shared by u and v.
		wx, wy := keys(tx), keys(ty)
		var su, sv float64
		for b := 0; b < 4; b++ {
			row := (j0-1+b)*nx + i0 - 1
			us, vs := s.u[row:row+4:row+4], s.v[row:row+4:row+4]
			su += wy[b] * (wx[0]*us[0] + wx[1]*us[1] + wx[2]*us[2] + wx[3]*us[3])
			sv += wy[b] * (wx[0]*vs[0] + wx[1]*vs[1] + wx[2]*vs[2] + wx[3]*vs[3])
		}
		if !math.IsNaN(su) && !math.IsNaN(sv) {
			return su, sv, s.or16&1 != 0, true
		}
	}
	or := s.or4
	if or&2 != 0 {
		return 0, 0, false, false
	}
	rep = or&1 != 0
	r0, r1 := k, k+nx
	w00, w10, w01, w11 := (1-tx)*(1-ty), tx*(1-ty), (1-tx)*ty, tx*ty
	u0, u1, v0, v1 := s.u[r0:r0+2], s.u[r1:r1+2], s.v[r0:r0+2], s.v[r1:r1+2]
	u = w00*u0[0] + w10*u0[1] + w01*u1[0] + w11*u1[1]
	v = w00*v0[0] + w10*v0[1] + w01*v1[0] + w11*v1[1]
	if math.IsNaN(u) || math.IsNaN(v) {
		return 0, 0, rep, false
	}
	return u, v, rep, true
}

// keys returns the four weights of Keys' cubic convolution kernel (a = -1/2; Keys 1981, IEEE
// Trans. ASSP 29:1153) at offset t in [0, 1], the kernel piv.Sample uses.
func keys(t float64) [4]float64 {
	t2, t3 := t*t, t*t*t
	return [4]float64{
		-0.5*t3 + t2 - 0.5*t,
		1.5*t3 - 2.5*t2 + 1,
		-1.5*t3 + 2*t2 + 0.5*t,
		0.5*t3 - 0.5*t2,
	}
}
