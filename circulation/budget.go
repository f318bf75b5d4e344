package circulation

import (
	"fmt"
	"math"
	"sort"

	"github.com/wakekit/wakekit/piv"
	"gonum.org/v1/gonum/mat"
)

// BudgetView is the circulation and impulse content of one frame in the view downstream of the
// exit station, and its split into the leading ring and the trailing jet.
//
// All figures come from line integrals of the velocity (Stokes' theorem), which need no
// derivative of the measured field and so do not suffer from an under-resolved shear layer:
// the view is cut into axial strips between neighbouring columns and each strip's circulation
// is the circulation around it. For the axisymmetric impulse I = pi rho int int omega r^2 dx dr,
// integrating by parts over a box [xa, xb] x [0, rt] gives
//
//	I = pi rho ( int r^2 (v(xb) - v(xa)) dr - rt^2 int u(rt) dx + 2 int int u r dr dx ),
//
// and for a slot the impulse per unit depth of the symmetric pair, 2 rho int int omega r dx dr
// over the upper half, is 2 rho ( int r (v(xb) - v(xa)) dr - rt int u(rt) dx + int int u dr dx ).
// Integrals use the trapezoidal rule on the nodes, with the axis value of u from an even fit.
type BudgetView struct {
	// Gamma is the total circulation in view [m^2/s] (upper half of the plane).
	Gamma float64
	// Impulse is the hydrodynamic impulse in view [N s] (N s/m for a slot).
	Impulse float64
	// RingGamma and RingImpulse are the leading ring's share: the strips downstream of the
	// circulation minimum between the exit and the strip of largest circulation.
	RingGamma, RingImpulse float64
	// TrailGamma is the trailing-jet circulation, Gamma - RingGamma.
	TrailGamma float64
	// RingX is the axial position of the ring core, where the circulation per unit length peaks
	// [m]; RingR the ring's impulse radius, sqrt(I / (pi rho Gamma)) (slot: I / (2 rho Gamma)),
	// which equals the ring radius for a thin-cored ring [m].
	RingX, RingR float64
	// Split is the x where the ring region starts [m].
	Split float64
	// CoreR is the radial position of the vorticity peak in the core column [m], PeakVorticity
	// that peak [1/s] and CoreRadius the radius a of the Gaussian core with the ring's
	// circulation and that peak, a = sqrt(RingGamma / (pi PeakVorticity)) [m].
	CoreR, PeakVorticity, CoreRadius float64
}

// BudgetMeasure computes the circulation and impulse in view for one frame. Columns upstream of
// the exit station are left out. A strip with a missing vector on its edges makes the totals NaN.
func BudgetMeasure(f *piv.Field, c ExitConfig) (BudgetView, error) {
	nan := math.NaN()
	out := BudgetView{Gamma: nan, Impulse: nan, RingGamma: nan, RingImpulse: nan, TrailGamma: nan,
		RingX: nan, RingR: nan, Split: nan, CoreR: nan, PeakVorticity: nan, CoreRadius: nan}
	if err := c.Validate(); err != nil {
		return out, err
	}
	g := f.Grid
	i0, err := ExitStation(g, c)
	if err != nil {
		return out, fmt.Errorf("%s: %w", f.Name(), err)
	}
	j0, r := radial(f, c)
	if j0+1 >= g.NY {
		return out, fmt.Errorf("%s: the view has fewer than two rows above the axis", f.Name())
	}
	axi := f.Geometry.Axisymmetric
	rt := r(g.NY - 1)
	// Radial nodes: the axis (r = 0) when no row lies on it, then rows j0.. .
	onAxis := r(j0) < 1e-6*g.DY
	nc := g.NX - i0
	axisU := make([]float64, nc)
	topU := make([]float64, nc)
	vMom := make([]float64, nc) // int r^p v dr (p = 2 axisymmetric, 1 slot)
	uMom := make([]float64, nc) // int r^(p-1) u dr, times 2 for the axisymmetric impulse
	for a := 0; a < nc; a++ {
		i := i0 + a
		u := func(j int) float64 { return f.U[g.Index(i, j)] }
		ok := true
		for j := j0; j < g.NY; j++ {
			if !f.Valid(g.Index(i, j)) {
				ok = false
				break
			}
		}
		if !ok {
			axisU[a], topU[a], vMom[a], uMom[a] = nan, nan, nan, nan
			continue
		}
		axisU[a] = centreValue(u, j0, r, g.DY)
		topU[a] = u(g.NY - 1)
		var vm, um float64
		prevR, prevV, prevU := 0.0, 0.0, axisU[a]
		if onAxis {
			prevU = u(j0)
		}
		start := j0
		if onAxis {
			start = j0 + 1
		}
		for j := start; j < g.NY; j++ {
			rj := r(j)
			vj, uj := f.V[g.Index(i, j)], u(j)
			h := rj - prevR
			if axi {
				vm += 0.5 * h * (prevR*prevR*prevV + rj*rj*vj)
				um += h * (prevR*prevU + rj*uj) // 2 int u r dr by the trapezoidal rule
			} else {
				vm += 0.5 * h * (prevR*prevV + rj*vj)
				um += 0.5 * h * (prevU + uj)
			}
			prevR, prevV, prevU = rj, vj, uj
		}
		vMom[a], uMom[a] = vm, um
	}
	// Per strip: circulation and impulse.
	ns := nc - 1
	gs := make([]float64, ns)
	is := make([]float64, ns)
	dx := g.DX
	vLine := func(a int) float64 { // int v dr along column a (v = 0 on the axis)
		i := i0 + a
		s, pr, pv := 0.0, 0.0, 0.0
		start := j0
		if onAxis {
			start = j0 + 1
		}
		for j := start; j < g.NY; j++ {
			rj, vj := r(j), f.V[g.Index(i, j)]
			s += 0.5 * (rj - pr) * (pv + vj)
			pr, pv = rj, vj
		}
		return s
	}
	vl := make([]float64, nc)
	for a := range vl {
		if math.IsNaN(axisU[a]) {
			vl[a] = nan
			continue
		}
		vl[a] = vLine(a)
	}
	pw := rt // r_t^(p) factor of the top term
	if axi {
		pw = rt * rt
	}
	for s := 0; s < ns; s++ {
		gs[s] = vl[s+1] - vl[s] + 0.5*dx*(axisU[s]+axisU[s+1]) - 0.5*dx*(topU[s]+topU[s+1])
		moment := vMom[s+1] - vMom[s] - pw*0.5*dx*(topU[s]+topU[s+1]) + 0.5*dx*(uMom[s]+uMom[s+1])
		if axi {
			is[s] = math.Pi * c.Rho * moment
		} else {
			is[s] = 2 * c.Rho * moment
		}
	}
	var G, I float64
	for s := range gs {
		G += gs[s]
		I += is[s]
	}
	out.Gamma, out.Impulse = G, I
	if math.IsNaN(G) || ns < 3 {
		return out, nil
	}
	// Leading ring: the strip of largest (3-point averaged) circulation and, upstream of it, the
	// strip of least circulation, where the trailing jet meets the ring.
	sm := make([]float64, ns)
	for s := range gs {
		a, b := max(s-1, 0), min(s+1, ns-1)
		var sum float64
		for q := a; q <= b; q++ {
			sum += gs[q]
		}
		sm[s] = sum / float64(b-a+1)
	}
	core := 0
	for s := range sm {
		if sm[s] > sm[core] {
			core = s
		}
	}
	split := 0
	for s := 0; s <= core; s++ {
		if sm[s] < sm[split] {
			split = s
		}
	}
	var rg, ri float64
	for s := split; s < ns; s++ {
		rg += gs[s]
		ri += is[s]
	}
	out.RingGamma, out.RingImpulse, out.TrailGamma = rg, ri, G-rg
	out.Split = g.X(i0 + split)
	// The core sits where the strip circulation peaks; a parabola through the largest strip
	// and its neighbours places it between strips.
	pk := split
	for s := split; s < ns; s++ {
		if gs[s] > gs[pk] {
			pk = s
		}
	}
	off := 0.0
	if pk > 0 && pk < ns-1 {
		if d := gs[pk-1] - 2*gs[pk] + gs[pk+1]; d < 0 {
			off = 0.5 * (gs[pk-1] - gs[pk+1]) / d
		}
	}
	if rg > 0 {
		out.RingX = g.X(i0+pk) + dx/2 + off*dx
		ci := i0 + pk
		if off > 0 {
			ci++
		}
		out.CoreR, out.PeakVorticity = columnPeak(f, ci, j0, r)
		if out.PeakVorticity > 0 {
			out.CoreRadius = math.Sqrt(rg / (math.Pi * out.PeakVorticity))
		}
		if axi {
			if ri > 0 {
				out.RingR = math.Sqrt(ri / (math.Pi * c.Rho * rg))
			}
		} else {
			out.RingR = ri / (2 * c.Rho * rg)
		}
	}
	return out, nil
}

// BudgetDerivative returns dy/dt at every sample from a local least-squares quadratic over the
// window of half samples on each side (shifted inwards at the ends), the smoothing
// differentiator of Savitzky & Golay (1964) generalised to uneven times. NaN samples are left
// out of the fits; a sample whose window holds fewer than four valid points gives NaN.
func BudgetDerivative(t, y []float64, half int) []float64 {
	n := len(t)
	out := make([]float64, n)
	if half < 1 {
		half = 1
	}
	w := 2*half + 1
	for k := range out {
		a := k - half
		if a < 0 {
			a = 0
		}
		if a+w > n {
			a = n - w
		}
		if a < 0 {
			a = 0
		}
		b := min(a+w, n)
		out[k] = localSlope(t[a:b], y[a:b], t[k])
	}
	return out
}

// localSlope fits y = c0 + c1 s + c2 s^2 with s = t - t0 by least squares and returns c1. The
// normal equations are solved with gonum's LU.
func localSlope(t, y []float64, t0 float64) float64 {
	var ata [9]float64
	var aty [3]float64
	count := 0
	scale := 0.0
	for k := range t {
		scale = math.Max(scale, math.Abs(t[k]-t0))
	}
	if scale == 0 {
		return math.NaN()
	}
	for k := range t {
		if math.IsNaN(y[k]) {
			continue
		}
		count++
		s := (t[k] - t0) / scale
		row := [3]float64{1, s, s * s}
		for p := 0; p < 3; p++ {
			aty[p] += row[p] * y[k]
			for q := 0; q < 3; q++ {
				ata[3*p+q] += row[p] * row[q]
			}
		}
	}
	if count < 4 {
		return math.NaN()
	}
	var x mat.VecDense
	if err := x.SolveVec(mat.NewDense(3, 3, ata[:]), mat.NewVecDense(3, aty[:])); err != nil {
		return math.NaN()
	}
	return x.AtVec(1) / scale
}

// BudgetIntegral returns the trapezoidal integral of y over t from a to b, with y linearly
// interpolated at a and b. NaN samples are left out (the rule bridges them). Outside the
// sampled times the integrand counts as zero.
func BudgetIntegral(t, y []float64, a, b float64) float64 {
	if b < a {
		return -BudgetIntegral(t, y, b, a)
	}
	var ts, ys []float64
	for k := range t {
		if !math.IsNaN(y[k]) {
			ts = append(ts, t[k])
			ys = append(ys, y[k])
		}
	}
	if len(ts) < 2 {
		return math.NaN()
	}
	at := func(x float64) float64 {
		k := sort.SearchFloat64s(ts, x)
		switch {
		case k == 0:
			return ys[0]
		case k >= len(ts):
			return ys[len(ys)-1]
		}
		f := (x - ts[k-1]) / (ts[k] - ts[k-1])
		return ys[k-1] + f*(ys[k]-ys[k-1])
	}
	a = math.Max(a, ts[0])
	b = math.Min(b, ts[len(ts)-1])
	if b <= a {
		return 0
	}
	sum := 0.0
	prevT, prevY := a, at(a)
	for k := range ts {
		if ts[k] <= a || ts[k] >= b {
			continue
		}
		sum += 0.5 * (ts[k] - prevT) * (prevY + ys[k])
		prevT, prevY = ts[k], ys[k]
	}
	sum += 0.5 * (b - prevT) * (prevY + at(b))
	return sum
}

// BudgetCumulative returns the running trapezoidal integral of y over t from the first sample.
// NaN samples are bridged; the integral at a NaN sample is the integral up to that time.
func BudgetCumulative(t, y []float64) []float64 {
	out := make([]float64, len(t))
	sum := 0.0
	pk := -1
	for k := range t {
		if math.IsNaN(y[k]) {
			out[k] = math.NaN()
			continue
		}
		if pk >= 0 {
			sum += 0.5 * (t[k] - t[pk]) * (y[pk] + y[k])
		}
		out[k] = sum
		pk = k
	}
	if pk < 0 {
		return out
	}
	for k := range out {
		if math.IsNaN(out[k]) {
			out[k] = BudgetIntegral(t, y, t[0], t[k])
		}
	}
	return out
}

// BudgetNoiseEstimate estimates the random error of each velocity component from the
// small-scale residual of one frame: the difference between a vector and the mean of its four
// neighbours, e = u - (uE + uW + uN + uS)/4. For independent noise of standard deviation sigma,
// var(e) = sigma^2 (1 + 4/16) = 1.25 sigma^2, while a smooth flow contributes only
// (h^2/4) Laplacian(u). The robust spread 1.4826 * median|e - median e| (the normal-consistent
// median absolute deviation, common practice) keeps shear layers and outliers from dominating.
// It returns NaN when fewer than 16 interior nodes are usable.
func BudgetNoiseEstimate(f *piv.Field) float64 {
	g := f.Grid
	var res []float64
	for _, comp := range [][]float64{f.U, f.V} {
		for j := 1; j < g.NY-1; j++ {
			for i := 1; i < g.NX-1; i++ {
				if !f.ValidIJ(i, j) || !f.ValidIJ(i-1, j) || !f.ValidIJ(i+1, j) || !f.ValidIJ(i, j-1) || !f.ValidIJ(i, j+1) {
					continue
				}
				k := g.Index(i, j)
				e := comp[k] - (comp[k-1]+comp[k+1]+comp[k-g.NX]+comp[k+g.NX])/4
				res = append(res, e)
			}
		}
	}
	if len(res) < 16 {
		return math.NaN()
	}
	med := median(res)
	for k := range res {
		res[k] = math.Abs(res[k] - med)
	}
	return 1.4826 * median(res) / math.Sqrt(1.25)
}

func median(x []float64) float64 {
	sort.Float64s(x)
	n := len(x)
	if n%2 == 1 {
		return x[n/2]
	}
	return 0.5 * (x[n/2-1] + x[n/2])
}

// columnPeak returns the radial position and value of the largest azimuthal vorticity in
// column i, omega = dv/dx - du/dr by second-order central differences (only this one column is
// needed, so the vorticity package's full-field operators are not called), with a parabola
// through the peak and its neighbours for the position.
func columnPeak(f *piv.Field, i, j0 int, r func(int) float64) (float64, float64) {
	g := f.Grid
	nan := math.NaN()
	if i < 1 || i >= g.NX-1 {
		return nan, nan
	}
	w := make([]float64, g.NY)
	best := -1
	for j := range w {
		w[j] = nan
		if j < j0+1 || j >= g.NY-1 || !f.ValidIJ(i-1, j) || !f.ValidIJ(i+1, j) || !f.ValidIJ(i, j-1) || !f.ValidIJ(i, j+1) {
			continue
		}
		w[j] = (f.V[g.Index(i+1, j)]-f.V[g.Index(i-1, j)])/(2*g.DX) - (f.U[g.Index(i, j+1)]-f.U[g.Index(i, j-1)])/(2*g.DY)
		if best < 0 || w[j] > w[best] {
			best = j
		}
	}
	if best < 0 {
		return nan, nan
	}
	pos, peak := r(best), w[best]
	if best > 0 && best < g.NY-1 && !math.IsNaN(w[best-1]) && !math.IsNaN(w[best+1]) {
		if d := w[best-1] - 2*w[best] + w[best+1]; d < 0 {
			off := 0.5 * (w[best-1] - w[best+1]) / d
			pos += off * g.DY
			peak -= 0.25 * (w[best-1] - w[best+1]) * off
		}
	}
	return pos, peak
}
