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
// It allocates one flag per node per call and nothing per node (beyond the list of rejected
// nodes); interior 3×3 neighbourhoods with eight valid neighbours take branch-free median
// networks on columns sorted once per row.
func MedianTest(f *Field, opt MedianOptions) (int, error) {
	o, err := opt.resolved()
	if err != nil {
		return 0, err
	}
	if err := f.Check(); err != nil {
		return 0, err
	}
	g := f.Grid
	ok := make([]bool, g.N())
	for k := range ok {
		ok[k] = f.Valid(k)
	}
	var bad []int // nodes that fail, applied after every node is judged
	thr, eps := o.Threshold, o.Epsilon
	var nu, nv [24]float64
	nx := g.NX
	// The 3×3 fast path keeps the order keys of three rows (j−1, j, j+1) in a ring, and the
	// sorted columns left of, at and right of the current node in registers as it moves along
	// the row, so each column is sorted once.
	threeByThree := o.Radius == 1 && g.NX >= 3 && g.NY >= 3
	var ku, kv [3][]uint64
	if threeByThree {
		for r := range ku {
			ku[r], kv[r] = make([]uint64, nx), make([]uint64, nx)
		}
		keyRow(f, 0, ku[0], kv[0])
		keyRow(f, 1, ku[1], kv[1])
	}
	for j := 0; j < g.NY; j++ {
		fast := threeByThree && j > 0 && j < g.NY-1
		var kuA, kuB, kuC, kvA, kvB, kvC []uint64 // keys of the rows above, at and below
		var oa, ob, oc []bool
		var uL, uC, uR, vL, vC, vR colKeys
		var okL, okC, okR bool
		if fast {
			keyRow(f, j+1, ku[(j+1)%3], kv[(j+1)%3])
			kuA, kuB, kuC = ku[(j-1)%3], ku[j%3], ku[(j+1)%3]
			kvA, kvB, kvC = kv[(j-1)%3], kv[j%3], kv[(j+1)%3]
			oa, ob, oc = ok[(j-1)*nx:j*nx], ok[j*nx:(j+1)*nx], ok[(j+1)*nx:(j+2)*nx]
			if okC = oa[0] && ob[0] && oc[0]; okC {
				uC, vC = sortColumn(kuA[0], kuB[0], kuC[0]), sortColumn(kvA[0], kvB[0], kvC[0])
			}
			if okR = oa[1] && ob[1] && oc[1]; okR {
				uR, vR = sortColumn(kuA[1], kuB[1], kuC[1]), sortColumn(kvA[1], kvB[1], kvC[1])
			}
		}
		for i := 0; i < g.NX; i++ {
			if fast && i > 0 {
				uL, vL, okL = uC, vC, okC
				uC, vC, okC = uR, vR, okR
				if n := i + 1; n < nx {
					if okR = oa[n] && ob[n] && oc[n]; okR {
						uR, vR = sortColumn(kuA[n], kuB[n], kuC[n]), sortColumn(kvA[n], kvB[n], kvC[n])
					}
				}
			}
			k := j*nx + i
			if !ok[k] {
				continue
			}
			u0, v0 := f.U[k], f.V[k]
			if fast && i > 0 && i < nx-1 && okL && okR && ok[k-nx] && ok[k+nx] {
				um := middle8(&uL, &uR, kuA[i], kuC[i])
				vm := middle8(&vL, &vR, kvA[i], kvC[i])
				du0, dv0 := u0-um, v0-vm
				d0 := du0*du0 + dv0*dv0
				if !o.PerComponent && d0 <= thr*thr*eps*eps {
					continue // |Δ0| ≤ thr·ε ≤ thr·(r_m + ε): passes whatever the residuals
				}
				a, b, c := k-nx-1, k-1, k+nx-1
				U, V := f.U[a:c+3:c+3], f.V[a:c+3:c+3]
				b -= a
				c -= a
				if o.PerComponent {
					if residualAbout8(u0, um, U[0], U[1], U[2], U[b], U[b+2], U[c], U[c+1], U[c+2], eps) > thr ||
						residualAbout8(v0, vm, V[0], V[1], V[2], V[b], V[b+2], V[c], V[c+1], V[c+2], eps) > thr {
						bad = append(bad, k)
					}
					continue
				}
				d := func(q int) uint64 {
					du, dv := U[q]-um, V[q]-vm
					return math.Float64bits(du*du + dv*dv)
				}
				lo, hi := mid8(d(0), d(1), d(2), d(b), d(b+2), d(c), d(c+1), d(c+2))
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
					bad = append(bad, k)
				}
				continue
			}
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
				continue
			}
			if o.PerComponent {
				if residualN(u0, nu[:n], eps) > thr || residualN(v0, nv[:n], eps) > thr {
					bad = append(bad, k)
				}
			} else {
				if vectorResidualN(u0, v0, nu[:n], nv[:n], eps) > thr {
					bad = append(bad, k)
				}
			}
		}
	}
	for _, k := range bad {
		reject(f, k, RejectedMedian)
	}
	return len(bad), nil
}

// colKeys holds, for one grid column and one velocity component, the order keys of the three
// values in rows j−1, j and j+1, sorted.
type colKeys struct {
	t0, t1, t2 uint64
}

// keyRow stores the order keys of row j's velocities (NaN-free only where valid; the keys of
// invalid nodes are never used).
func keyRow(f *Field, j int, ku, kv []uint64) {
	nx := f.Grid.NX
	U, V := f.U[j*nx:(j+1)*nx], f.V[j*nx:(j+1)*nx]
	for i := range ku {
		ku[i], kv[i] = key(U[i]), key(V[i])
	}
}

func sortColumn(a, b, c uint64) colKeys {
	p0, p1 := min(a, c), max(a, c)
	t0, t2 := min(p0, b), max(p1, b)
	t1 := max(p0, min(p1, b))
	return colKeys{t0, t1, t2}
}

// middle8 is the median of the eight neighbours of a node: the sorted columns left (l) and
// right (r) of it and the keys above (top) and below (bot) it in its own column. It uses the order statistics of a
// union of sorted lists, X∪Y[k] = max over a+b = k of min(X[a], Y[b]) (with X[len X] = +∞),
// first for the six column values (s1..s4) and then with the pair for the 4th and 5th of eight.
func middle8(l, r *colKeys, top, bot uint64) float64 {
	p0, p1 := min(top, bot), max(top, bot)
	a0, a1, a2 := l.t0, l.t1, l.t2
	c0, c1, c2 := r.t0, r.t1, r.t2
	s1 := max(min(a1, c0), min(a0, c1))
	s2 := max(min(a2, c0), min(a1, c1), min(a0, c2))
	s3 := max(c0, min(a2, c1), min(a1, c2), a0)
	s4 := max(c1, min(a2, c2), a1)
	m3 := max(min(s3, p0), min(s2, p1), s1)
	m4 := max(min(s4, p0), min(s3, p1), s2)
	return 0.5 * (unkey(m3) + unkey(m4))
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
