package piv

import (
	"fmt"
	"math"
)

// Vector validation: the global range filter, the normalized median test and the local
// standard-deviation filter. Each test looks at the vectors that are valid when it runs, marks
// the vectors it rejects with its rejection bit (RejectedRange, RejectedMedian, RejectedStd),
// turns them Missing with NaN velocities, and never looks at or changes Solid nodes. Filling
// (fill.go) later turns rejected vectors it can reconstruct into Replaced ones, keeping the bit.

// DefaultMedianThreshold is the normalized-residual threshold of the normalized median test,
// the value recommended by Westerweel & Scarano (2005).
const DefaultMedianThreshold = 2.0

// DefaultMedianEpsilonPx is the normalized median test's noise floor ε in pixels per frame,
// the value recommended by Westerweel & Scarano (2005) (0.1 px, the typical random error of a
// cross-correlation displacement estimate).
const DefaultMedianEpsilonPx = 0.1

// DefaultStdFactor is the local standard-deviation filter's multiple of the neighbourhood
// standard deviation (3, common practice).
const DefaultStdFactor = 3.0

// PixelVelocity converts a displacement in pixels per frame into m/s, given the pixel size
// [m/px] and the laser pulse separation [s]. It returns an error unless both are finite and
// positive.
func PixelVelocity(px, pixelSize, pulseSeparation float64) (float64, error) {
	if !(pixelSize > 0) || !(pulseSeparation > 0) || math.IsInf(pixelSize, 0) || math.IsInf(pulseSeparation, 0) {
		return 0, fmt.Errorf("converting %g px to a velocity needs a finite positive pixel size and pulse separation (got %g m/px, %g s)",
			px, pixelSize, pulseSeparation)
	}
	return px * pixelSize / pulseSeparation, nil
}

// RangeLimits is the global range (velocity limit) filter: a vector is rejected when a
// component lies outside [UMin, UMax] or [VMin, VMax], or when its speed exceeds MaxSpeed.
// Use ±Inf (or NoRangeLimits) for bounds that do not apply.
type RangeLimits struct {
	UMin, UMax, VMin, VMax float64 // component bounds [m/s]
	MaxSpeed               float64 // largest accepted |(u, v)| [m/s]
}

// NoRangeLimits returns limits that accept every finite vector.
func NoRangeLimits() RangeLimits {
	inf := math.Inf(1)
	return RangeLimits{UMin: -inf, UMax: inf, VMin: -inf, VMax: inf, MaxSpeed: inf}
}

// Check reports whether the limits are usable: no NaN, each minimum at most its maximum and
// a non-negative speed limit.
func (r RangeLimits) Check() error {
	for _, v := range []float64{r.UMin, r.UMax, r.VMin, r.VMax, r.MaxSpeed} {
		if math.IsNaN(v) {
			return fmt.Errorf("velocity limits must not be NaN")
		}
	}
	if r.UMin > r.UMax || r.VMin > r.VMax {
		return fmt.Errorf("velocity limits: minimum above maximum (u %g..%g, v %g..%g m/s)", r.UMin, r.UMax, r.VMin, r.VMax)
	}
	if r.MaxSpeed < 0 {
		return fmt.Errorf("speed limit %g m/s is negative", r.MaxSpeed)
	}
	return nil
}

// RangeFilter rejects the valid vectors of f outside the limits and returns how many it
// rejected.
func RangeFilter(f *Field, lim RangeLimits) (int, error) {
	if err := lim.Check(); err != nil {
		return 0, err
	}
	if err := f.Check(); err != nil {
		return 0, err
	}
	n := 0
	ms2 := lim.MaxSpeed * lim.MaxSpeed
	for k := range f.Status {
		if !f.Valid(k) {
			continue
		}
		u, v := f.U[k], f.V[k]
		if u < lim.UMin || u > lim.UMax || v < lim.VMin || v > lim.VMax || u*u+v*v > ms2 {
			reject(f, k, RejectedRange)
			n++
		}
	}
	return n, nil
}

// MedianOptions configures the normalized median test.
type MedianOptions struct {
	// Radius is the neighbourhood half-width: 1 for 3×3, 2 for 5×5 (0 means 1).
	Radius int
	// Threshold is the largest accepted normalized residual (0 means DefaultMedianThreshold).
	Threshold float64
	// Epsilon [m/s] is the noise floor ε added to the median residual, usually
	// DefaultMedianEpsilonPx converted with PixelVelocity. It must be positive.
	Epsilon float64
	// MinNeighbours is the least number of valid neighbours needed to judge a vector (0 means
	// 3); vectors with fewer are left as they are.
	MinNeighbours int
	// PerComponent tests u and v separately instead of the vector (see MedianTest).
	PerComponent bool
}

// Check reports whether the options are usable.
func (o MedianOptions) Check() error {
	_, err := o.resolved()
	return err
}

func (o MedianOptions) resolved() (MedianOptions, error) {
	if o.Radius == 0 {
		o.Radius = 1
	}
	if o.Threshold == 0 {
		o.Threshold = DefaultMedianThreshold
	}
	if o.MinNeighbours == 0 {
		o.MinNeighbours = 3
	}
	switch {
	case o.Radius != 1 && o.Radius != 2:
		return o, fmt.Errorf("median test neighbourhood radius %d: use 1 (3x3) or 2 (5x5)", o.Radius)
	case !(o.Threshold > 0) || math.IsInf(o.Threshold, 0):
		return o, fmt.Errorf("median test threshold %g must be finite and positive", o.Threshold)
	case !(o.Epsilon > 0) || math.IsInf(o.Epsilon, 0):
		return o, fmt.Errorf("median test epsilon %g m/s must be finite and positive", o.Epsilon)
	case o.MinNeighbours < 1 || o.MinNeighbours > (2*o.Radius+1)*(2*o.Radius+1)-1:
		return o, fmt.Errorf("median test needs between 1 and %d neighbours, not %d", (2*o.Radius+1)*(2*o.Radius+1)-1, o.MinNeighbours)
	}
	return o, nil
}

// MedianTest applies the normalized median test of Westerweel & Scarano (2005, Exp. Fluids
// 39:1096) to every valid vector of f and returns how many it rejected. With u_m the median of
// the valid neighbours in the (2R+1)×(2R+1) neighbourhood (the centre excluded) and r_m the
// median of their residuals |u_i − u_m|, the normalized residual is r = |u_0 − u_m| / (r_m + ε),
// and a vector is rejected when r exceeds the threshold. By default the test is applied to the
// vector: u_m is the component-wise median and the residuals are the lengths of the difference
// vectors. With PerComponent it is applied to u and v separately and a vector is rejected when
// either component fails; that variant is stricter on noisy data (at a noise of 0.16 px with
// ε = 0.1 px it rejects about 4% of good vectors in a 3×3 neighbourhood, against under 1% for
// the vector form; see the tests). All residuals are computed on the field as it was before the
// test, so the result does not depend on the order of the nodes.
//
// It allocates one flag per node and a few rows of work space per call and nothing per node
// (beyond the list of rejected nodes). Interior 3×3 neighbourhoods with eight valid neighbours
// take a row kernel of their own: one fused pass per row reads the next row's velocities and
// validity, converts them to order keys and sorts every column of three, a branch-free pass
// forms every node's two medians by merge networks on the sorted columns, and the kernel then
// judges the nodes. Edges, radius 2 and nodes next to invalid ones take the general path; the
// tests check the decisions of both against a plain transcription of the test.
func MedianTest(f *Field, opt MedianOptions) (int, error) {
	o, err := opt.resolved()
	if err != nil {
		return 0, err
	}
	if err := f.Check(); err != nil {
		return 0, err
	}
	g := f.Grid
	nx := g.NX
	ok := make([]bool, g.N())
	var bad []int // nodes that fail, applied after every node is judged
	if o.Radius != 1 || g.NX < 3 || g.NY < 3 {
		for k := range ok {
			ok[k] = f.Valid(k)
		}
		for j := 0; j < g.NY; j++ {
			for i := 0; i < nx; i++ {
				if medianGeneral(f, ok, o, i, j) {
					bad = append(bad, j*nx+i)
				}
			}
		}
	} else {
		w := newMedianRows(f, ok)
		w.prepare(0)
		for j := 0; j < g.NY; j++ {
			if j+1 < g.NY {
				w.prepare(j + 1)
			}
			if j == 0 || j == g.NY-1 {
				for i := 0; i < nx; i++ {
					if medianGeneral(f, ok, o, i, j) {
						bad = append(bad, j*nx+i)
					}
				}
				continue
			}
			if medianGeneral(f, ok, o, 0, j) {
				bad = append(bad, j*nx)
			}
			for i := 1; ; i++ {
				if o.PerComponent {
					i, bad = w.runComponents(j, i, o.Threshold, o.Epsilon, bad)
				} else {
					i, bad = w.runVector(j, i, o.Threshold, o.Epsilon, bad)
				}
				if i >= nx-1 {
					break
				}
				if medianGeneral(f, ok, o, i, j) {
					bad = append(bad, j*nx+i)
				}
			}
			if medianGeneral(f, ok, o, nx-1, j) {
				bad = append(bad, j*nx+nx-1)
			}
		}
	}
	for _, k := range bad {
		reject(f, k, RejectedMedian)
	}
	return len(bad), nil
}

// medianGeneral judges node (i, j) with the neighbours that are valid in ok, in any
// neighbourhood and next to edges, and reports whether it fails. Nodes that are not valid, or
// have fewer than o.MinNeighbours valid neighbours, pass.
func medianGeneral(f *Field, ok []bool, o MedianOptions, i, j int) bool {
	g := f.Grid
	k := j*g.NX + i
	if !ok[k] {
		return false
	}
	var nu, nv [24]float64
	n := 0
	for jj := max(j-o.Radius, 0); jj <= min(j+o.Radius, g.NY-1); jj++ {
		for ii := max(i-o.Radius, 0); ii <= min(i+o.Radius, g.NX-1); ii++ {
			q := jj*g.NX + ii
			if q == k || !ok[q] {
				continue
			}
			nu[n], nv[n] = f.U[q], f.V[q]
			n++
		}
	}
	if n < o.MinNeighbours {
		return false
	}
	u0, v0, thr, eps := f.U[k], f.V[k], o.Threshold, o.Epsilon
	if o.PerComponent {
		return residualN(u0, nu[:n], eps) > thr || residualN(v0, nv[:n], eps) > thr
	}
	return vectorResidualN(u0, v0, nu[:n], nv[:n], eps) > thr
}

// medianRows is the work space of the 3×3 row kernel: the validity and order keys of three
// grid rows in a ring, and for the row being judged the sorted columns of its 3×3
// neighbourhoods and whether all three nodes of each column are valid.
type medianRows struct {
	f      *Field
	ok     []bool // validity of every node, filled row by row by prepare
	ku, kv [3][]uint64
	cu, cv []colKeys
	cok    []bool
	mu, mv []float64 // medians of the eight neighbours, by rowMedians
}

func newMedianRows(f *Field, ok []bool) *medianRows {
	nx := f.Grid.NX
	w := &medianRows{f: f, ok: ok, cu: make([]colKeys, nx), cv: make([]colKeys, nx), cok: make([]bool, nx),
		mu: make([]float64, nx), mv: make([]float64, nx)}
	for r := range w.ku {
		w.ku[r], w.kv[r] = make([]uint64, nx), make([]uint64, nx)
	}
	return w
}

// prepare reads row j in one pass: its validity into ok, its order keys into the ring, and,
// when j ≥ 2, the sorted columns, column validity and neighbour medians of the neighbourhoods
// of row j−1. The keys and medians that involve invalid nodes are never used.
func (w *medianRows) prepare(j int) {
	f := w.f
	nx := f.Grid.NX
	U, V, S := f.U[j*nx:(j+1)*nx], f.V[j*nx:(j+1)*nx], f.Status[j*nx:(j+1)*nx]
	oc, kuC, kvC := w.ok[j*nx:(j+1)*nx], w.ku[j%3][:nx], w.kv[j%3][:nx]
	if j < 2 {
		for i := range oc {
			u, v := U[i], V[i]
			oc[i] = S[i].Valid() && u == u && v == v
			kuC[i], kvC[i] = key(u), key(v)
		}
		return
	}
	oa, ob := w.ok[(j-2)*nx:(j-1)*nx], w.ok[(j-1)*nx:j*nx]
	kuA, kuB, kvA, kvB := w.ku[(j-2)%3][:nx], w.ku[(j-1)%3][:nx], w.kv[(j-2)%3][:nx], w.kv[(j-1)%3][:nx]
	cu, cv, cok := w.cu[:nx], w.cv[:nx], w.cok[:nx]
	for i := range oc {
		u, v := U[i], V[i]
		o := S[i].Valid() && u == u && v == v
		a, b := key(u), key(v)
		oc[i], kuC[i], kvC[i] = o, a, b
		cok[i] = oa[i] && ob[i] && o
		cu[i] = sortColumn(kuA[i], kuB[i], a)
		cv[i] = sortColumn(kvA[i], kvB[i], b)
	}
	rowMedians(w.mu[:nx], cu, kuA, kuC)
	rowMedians(w.mv[:nx], cv, kvA, kvC)
}

// runVector judges, by the vector form, the nodes of interior row j from column i0 on, up to
// column NX−2, appending those that fail to bad. It stops at the first valid node with an
// invalid neighbour, for the general path, and returns its column (NX−1 when there is none).
// thr and eps are the test's threshold and ε.
func (w *medianRows) runVector(j, i0 int, thr, eps float64, bad []int) (int, []int) {
	f := w.f
	nx := f.Grid.NX
	oa, ob, oc := w.ok[(j-1)*nx:j*nx], w.ok[j*nx:(j+1)*nx], w.ok[(j+1)*nx:(j+2)*nx]
	mu, mv, cok := w.mu[:nx], w.mv[:nx], w.cok[:nx]
	ua, ub, uc := f.U[(j-1)*nx:j*nx], f.U[j*nx:(j+1)*nx], f.U[(j+1)*nx:(j+2)*nx]
	va, vb, vc := f.V[(j-1)*nx:j*nx], f.V[j*nx:(j+1)*nx], f.V[(j+1)*nx:(j+2)*nx]
	pass := thr * thr * eps * eps
	for i := i0; i < nx-1; i++ {
		if !ob[i] {
			continue
		}
		if !(cok[i-1] && cok[i+1] && oa[i] && oc[i]) {
			return i, bad
		}
		um, vm := mu[i], mv[i]
		du0, dv0 := ub[i]-um, vb[i]-vm
		d0 := du0*du0 + dv0*dv0
		if d0 <= pass {
			continue // |Δ0| ≤ thr·ε ≤ thr·(r_m + ε): passes whatever the residuals
		}
		d := func(u, v float64) uint64 {
			du, dv := u-um, v-vm
			return math.Float64bits(du*du + dv*dv)
		}
		lo, hi := mid8(d(ua[i-1], va[i-1]), d(ua[i], va[i]), d(ua[i+1], va[i+1]), d(ub[i-1], vb[i-1]),
			d(ub[i+1], vb[i+1]), d(uc[i-1], vc[i-1]), d(uc[i], vc[i]), d(uc[i+1], vc[i+1]))
		// Since r_m ≥ √lo, (r_m + ε)² ≥ lo + ε²: a vector within thr²·(lo + ε²) passes
		// without the square roots, which most good vectors do.
		lo, hi = min(lo, hi), max(lo, hi) // mid8 leaves the pair unordered
		lo2 := math.Float64frombits(lo)
		if d0 <= thr*thr*(lo2+eps*eps) {
			continue
		}
		rm := 0.5 * (math.Sqrt(lo2) + math.Sqrt(math.Float64frombits(hi)))
		lim := thr * (rm + eps)
		if d0 > lim*lim {
			bad = append(bad, j*nx+i)
		}
	}
	return nx - 1, bad
}

// runComponents is runVector for the per-component test.
func (w *medianRows) runComponents(j, i0 int, thr, eps float64, bad []int) (int, []int) {
	f := w.f
	nx := f.Grid.NX
	oa, ob, oc := w.ok[(j-1)*nx:j*nx], w.ok[j*nx:(j+1)*nx], w.ok[(j+1)*nx:(j+2)*nx]
	mu, mv, cok := w.mu[:nx], w.mv[:nx], w.cok[:nx]
	ua, ub, uc := f.U[(j-1)*nx:j*nx], f.U[j*nx:(j+1)*nx], f.U[(j+1)*nx:(j+2)*nx]
	va, vb, vc := f.V[(j-1)*nx:j*nx], f.V[j*nx:(j+1)*nx], f.V[(j+1)*nx:(j+2)*nx]
	for i := i0; i < nx-1; i++ {
		if !ob[i] {
			continue
		}
		if !(cok[i-1] && cok[i+1] && oa[i] && oc[i]) {
			return i, bad
		}
		um, vm := mu[i], mv[i]
		if residualAbout8(ub[i], um, ua[i-1], ua[i], ua[i+1], ub[i-1], ub[i+1], uc[i-1], uc[i], uc[i+1], eps) > thr ||
			residualAbout8(vb[i], vm, va[i-1], va[i], va[i+1], vb[i-1], vb[i+1], vc[i-1], vc[i], vc[i+1], eps) > thr {
			bad = append(bad, j*nx+i)
		}
	}
	return nx - 1, bad
}

// colKeys holds, for one grid column and one velocity component, the order keys of the three
// values in rows j−1, j and j+1, sorted.
type colKeys struct {
	t0, t1, t2 uint64
}

// sortColumn sorts the three keys of one column.
func sortColumn(a, b, c uint64) colKeys {
	p0, p1 := min(a, c), max(a, c)
	t0, t2 := min(p0, b), max(p1, b)
	t1 := max(p0, min(p1, b))
	return colKeys{t0, t1, t2}
}

// rowMedians writes into m[i], for every interior column i of a row, the median of the
// eight neighbours of node i: the sorted columns c[i−1] and c[i+1] and the keys above
// (top[i]) and below (bot[i]) it in its own column. The two columns are merged by Batcher's
// odd–even merge (Batcher 1968; Knuth, The Art of Computer Programming vol. 3, §5.3.4) with the
// comparators for the smallest and largest of the six left out (ten operations for s1..s4),
// and the 4th and 5th of eight follow from the order statistics of a union of sorted lists,
// X∪Y[k] = max over a+b = k of min(X[a], Y[b]), with the pair. The tests check it on every
// sorted 0-1 input, which by the 0-1 principle proves it for every input. The loop has no
// branch: columns with invalid nodes give values that are not used.
func rowMedians(m []float64, c []colKeys, top, bot []uint64) {
	n := len(m)
	c, top, bot = c[:n], top[:n], bot[:n]
	for i := 1; i < n-1; i++ {
		l, r := &c[i-1], &c[i+1]
		p0, p1 := min(top[i], bot[i]), max(top[i], bot[i])
		// Even-indexed elements (a0, a2 with c0, c2), without their outer two outputs, and the
		// odd ones (a1 with c1); then the final comparators of the merge.
		x, y := max(l.t0, r.t0), min(l.t2, r.t2)
		e1, e2 := min(x, y), max(x, y)
		o0, o1 := min(l.t1, r.t1), max(l.t1, r.t1)
		s1, s2, s3, s4 := min(e1, o0), max(e1, o0), min(e2, o1), max(e2, o1)
		m3 := max(min(s3, p0), min(s2, p1), s1)
		m4 := max(min(s4, p0), min(s3, p1), s2)
		m[i] = 0.5 * (unkey(m3) + unkey(m4))
	}
}

// residualAbout8 is the normalized residual of x0 against eight neighbours whose median m is
// known.
func residualAbout8(x0, m, a0, a1, a2, a3, a4, a5, a6, a7, eps float64) float64 {
	// Non-negative floats order like their bit patterns.
	d := func(x float64) uint64 { return math.Float64bits(math.Abs(x - m)) }
	lo, hi := mid8(d(a0), d(a1), d(a2), d(a3), d(a4), d(a5), d(a6), d(a7))
	rm := 0.5 * (math.Float64frombits(lo) + math.Float64frombits(hi))
	return math.Abs(x0-m) / (rm + eps)
}

// vectorResidualN is the normalized vector residual of (u0, v0) against the neighbours
// (nu, nv), which it overwrites.
func vectorResidualN(u0, v0 float64, nu, nv []float64, eps float64) float64 {
	var d [24]float64
	copy(d[:], nu)
	um := median(d[:len(nu)])
	copy(d[:], nv)
	vm := median(d[:len(nv)])
	n := len(nu)
	for q := range nu {
		du, dv := nu[q]-um, nv[q]-vm
		d[q] = du*du + dv*dv // squared: same order, square roots only for the middle pair
	}
	hi := selectK(d[:n], n/2)
	rm := math.Sqrt(hi)
	if n%2 == 0 {
		lo := d[0]
		for _, v := range d[1 : n/2] {
			lo = max(lo, v)
		}
		rm = 0.5 * (math.Sqrt(lo) + rm)
	}
	du0, dv0 := u0-um, v0-vm
	return math.Sqrt(du0*du0+dv0*dv0) / (rm + eps)
}

// residualN is the normalized residual of x0 against the neighbours in a (which it reorders).
func residualN(x0 float64, a []float64, eps float64) float64 {
	m := median(a)
	for q := range a {
		a[q] = math.Abs(a[q] - m)
	}
	rm := median(a)
	return math.Abs(x0-m) / (rm + eps)
}

// median returns the median of a (small, NaN-free), reordering it: Hoare's selection
// algorithm (FIND, Hoare 1961) places the upper middle element, with every smaller element
// before it, so the lower middle of an even count is the largest of those.
func median(a []float64) float64 {
	n := len(a)
	m := selectK(a, n/2)
	if n%2 == 1 {
		return m
	}
	lo := a[0]
	for _, v := range a[1 : n/2] {
		lo = max(lo, v)
	}
	return 0.5 * (lo + m)
}

// selectK reorders a so that a[k] is its k-th smallest element (from 0), every element before
// it no larger and every element after it no smaller, and returns a[k].
func selectK(a []float64, k int) float64 {
	lo, hi := 0, len(a)-1
	for lo < hi {
		mid := (lo + hi) / 2
		// Median-of-three pivot.
		if a[mid] < a[lo] {
			a[mid], a[lo] = a[lo], a[mid]
		}
		if a[hi] < a[lo] {
			a[hi], a[lo] = a[lo], a[hi]
		}
		if a[hi] < a[mid] {
			a[hi], a[mid] = a[mid], a[hi]
		}
		p := a[mid]
		i, j := lo, hi
		for i <= j {
			for a[i] < p {
				i++
			}
			for a[j] > p {
				j--
			}
			if i <= j {
				a[i], a[j] = a[j], a[i]
				i++
				j--
			}
		}
		switch {
		case k <= j:
			hi = j
		case k >= i:
			lo = i
		default:
			return a[k]
		}
	}
	return a[k]
}

// mid8 returns the two middle values (4th and 5th smallest, in either order) of eight keys. It
// is the 19-comparator sorting network for eight inputs (Knuth, The Art of Computer Programming
// vol. 3, §5.3.4) with the three comparators that cannot move the middle pair removed; the
// tests check it on every 0-1 input, which by the 0-1 principle proves it for every input.
// Integer keys make each comparator two conditional moves, with no branch to mispredict.
func mid8(a0, a1, a2, a3, a4, a5, a6, a7 uint64) (uint64, uint64) {
	a0, a2 = min(a0, a2), max(a0, a2)
	a1, a3 = min(a1, a3), max(a1, a3)
	a4, a6 = min(a4, a6), max(a4, a6)
	a5, a7 = min(a5, a7), max(a5, a7)
	a0, a4 = min(a0, a4), max(a0, a4)
	a1, a5 = min(a1, a5), max(a1, a5)
	a2, a6 = min(a2, a6), max(a2, a6)
	a3, a7 = min(a3, a7), max(a3, a7)
	a0, a1 = min(a0, a1), max(a0, a1)
	a2, a3 = min(a2, a3), max(a2, a3)
	a4, a5 = min(a4, a5), max(a4, a5)
	a6, a7 = min(a6, a7), max(a6, a7)
	a2, a4 = min(a2, a4), max(a2, a4)
	a3, a5 = min(a3, a5), max(a3, a5)
	a1, a4 = min(a1, a4), max(a1, a4)
	a3, a6 = min(a3, a6), max(a3, a6)
	return a3, a4
}

// key maps a NaN-free float64 to a uint64 with the same order (negative values have all bits
// flipped, others only the sign bit), so that float comparisons become integer ones.
func key(x float64) uint64 {
	b := math.Float64bits(x)
	return b ^ (uint64(int64(b)>>63) | 1<<63)
}

// unkey inverts key.
func unkey(k uint64) float64 {
	// Top bit set (a non-negative value): clear it; otherwise flip every bit. Branch-free.
	return math.Float64frombits(k ^ ((k>>63 - 1) | 1<<63))
}

// StdOptions configures the local standard-deviation filter.
type StdOptions struct {
	// Radius is the neighbourhood half-width (0 means 1, a 3×3 neighbourhood).
	Radius int
	// Factor k: a component is rejected when |u_0 − mean| > k·(std + ε) (0 means
	// DefaultStdFactor).
	Factor float64
	// Epsilon [m/s] is a noise floor that keeps uniform regions, where the neighbours' spread
	// is zero, from rejecting round-off; it must not be negative.
	Epsilon float64
	// MinNeighbours is the least number of valid neighbours needed to judge a vector (0 means 3).
	MinNeighbours int
}

// StdFilter applies the local standard-deviation filter (common practice): for each valid
// vector and each component, the mean and standard deviation of the valid neighbours in the
// (2R+1)×(2R+1) neighbourhood (centre excluded) are computed on the field as it was before the
// filter, and the vector is rejected when either component deviates from the mean by more than
// k·(std + ε). It returns how many vectors it rejected. The neighbours' spread is inflated by
// outliers among them, so the filter is best run after the normalized median test.
func StdFilter(f *Field, opt StdOptions) (int, error) {
	if opt.Radius == 0 {
		opt.Radius = 1
	}
	if opt.Factor == 0 {
		opt.Factor = DefaultStdFactor
	}
	if opt.MinNeighbours == 0 {
		opt.MinNeighbours = 3
	}
	switch {
	case opt.Radius < 1 || opt.Radius > 10:
		return 0, fmt.Errorf("standard-deviation filter radius %d: use 1 to 10", opt.Radius)
	case !(opt.Factor > 0) || math.IsInf(opt.Factor, 0):
		return 0, fmt.Errorf("standard-deviation filter factor %g must be finite and positive", opt.Factor)
	case !(opt.Epsilon >= 0) || math.IsInf(opt.Epsilon, 0):
		return 0, fmt.Errorf("standard-deviation filter epsilon %g m/s must be finite and not negative", opt.Epsilon)
	case opt.MinNeighbours < 1:
		return 0, fmt.Errorf("standard-deviation filter needs at least one neighbour, not %d", opt.MinNeighbours)
	}
	if err := f.Check(); err != nil {
		return 0, err
	}
	g := f.Grid
	ok := make([]bool, g.N())
	for k := range ok {
		ok[k] = f.Valid(k)
	}
	bad := make([]bool, g.N())
	R := opt.Radius
	for j := 0; j < g.NY; j++ {
		for i := 0; i < g.NX; i++ {
			k := j*g.NX + i
			if !ok[k] {
				continue
			}
			// Shifted sums about the centre value keep the variance free of cancellation.
			u0, v0 := f.U[k], f.V[k]
			var n, su, sv, suu, svv float64
			for jj := max(j-R, 0); jj <= min(j+R, g.NY-1); jj++ {
				for ii := max(i-R, 0); ii <= min(i+R, g.NX-1); ii++ {
					q := jj*g.NX + ii
					if q == k || !ok[q] {
						continue
					}
					du, dv := f.U[q]-u0, f.V[q]-v0
					n++
					su += du
					sv += dv
					suu += du * du
					svv += dv * dv
				}
			}
			if int(n) < opt.MinNeighbours {
				continue
			}
			mu, mv := su/n, sv/n
			sdu := math.Sqrt(math.Max(suu/n-mu*mu, 0))
			sdv := math.Sqrt(math.Max(svv/n-mv*mv, 0))
			// |u_0 − mean| is |mu| in shifted variables.
			bad[k] = math.Abs(mu) > opt.Factor*(sdu+opt.Epsilon) || math.Abs(mv) > opt.Factor*(sdv+opt.Epsilon)
		}
	}
	count := 0
	for k, b := range bad {
		if b {
			reject(f, k, RejectedStd)
			count++
		}
	}
	return count, nil
}

// ValidateOptions chooses the validation tests to run; a nil entry skips that test. They run
// in the order range filter, normalized median test, standard-deviation filter, each on the
// vectors the previous ones kept.
type ValidateOptions struct {
	Range  *RangeLimits
	Median *MedianOptions
	Std    *StdOptions
}

// ValidationCounts reports how many vectors each test rejected.
type ValidationCounts struct {
	Checked int `json:"checked"` // valid vectors before validation
	Range   int `json:"range"`
	Median  int `json:"median"`
	Std     int `json:"std"`
}

// Rejected returns the total number of rejected vectors.
func (c ValidationCounts) Rejected() int { return c.Range + c.Median + c.Std }

// Validate runs the chosen tests on f in place.
func Validate(f *Field, opt ValidateOptions) (ValidationCounts, error) {
	var c ValidationCounts
	if err := f.Check(); err != nil {
		return c, err
	}
	for k := range f.Status {
		if f.Valid(k) {
			c.Checked++
		}
	}
	var err error
	if opt.Range != nil {
		if c.Range, err = RangeFilter(f, *opt.Range); err != nil {
			return c, err
		}
	}
	if opt.Median != nil {
		if c.Median, err = MedianTest(f, *opt.Median); err != nil {
			return c, err
		}
	}
	if opt.Std != nil {
		if c.Std, err = StdFilter(f, *opt.Std); err != nil {
			return c, err
		}
	}
	return c, nil
}

// reject marks node k as rejected by the test with the given bit.
func reject(f *Field, k int, bit Status) {
	nan := math.NaN()
	f.Status[k] = (f.Status[k] | bit).WithKind(Missing)
	f.U[k], f.V[k] = nan, nan
}
