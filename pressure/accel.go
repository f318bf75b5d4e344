package pressure

import (
	"errors"
	"fmt"
	"math"

	"github.com/wakekit/wakekit/piv"
	"github.com/wakekit/wakekit/vorticity"
)

// Method names a way of estimating the material acceleration Du/Dt.
type Method int

const (
	// Eulerian is ∂u/∂t by second-order differences in time (central on possibly non-uniform
	// frame times, one-sided at the series ends) plus the convective term u·∇u.
	Eulerian Method = iota
	// Lagrangian is pseudo-tracking (de Kat & van Oudheusden 2012, Exp. Fluids 52:1089): a fluid
	// parcel starting at each node is integrated forward and backward over ±Track frames
	// through the interpolated fields, and Du/Dt is the slope at the frame time of a quadratic
	// least-squares fit of the velocity along the path. Nodes whose parcel leaves the data
	// before three path points are known (inflow and outflow edges) use the Eulerian estimate.
	Lagrangian
	// Steady keeps only the convective term u·∇u, for single frames of a steady flow.
	Steady
)

// ParseMethod reads "eulerian", "lagrangian" or "steady".
func ParseMethod(s string) (Method, error) {
	switch s {
	case "eulerian", "":
		return Eulerian, nil
	case "lagrangian":
		return Lagrangian, nil
	case "steady":
		return Steady, nil
	}
	return 0, fmt.Errorf("unknown method %q (expected eulerian, lagrangian or steady)", s)
}

// String returns the method's name.
func (m Method) String() string {
	switch m {
	case Lagrangian:
		return "lagrangian"
	case Steady:
		return "steady"
	}
	return "eulerian"
}

// Frames gives access to the frames of a time-resolved series around the one being processed.
// The pipeline's frame window satisfies it, as does a *piv.Series.
type Frames interface {
	// Frame returns frame k (callers must not modify it).
	Frame(k int) (*piv.Field, error)
	// Len returns the number of frames.
	Len() int
	// Time returns the time of frame k [s].
	Time(k int) float64
}

// AccelOptions configures the material acceleration.
type AccelOptions struct {
	Method Method
	// Scheme is the spatial difference scheme (vorticity.Central by default).
	Scheme vorticity.Scheme
	// Track is the number of frames a Lagrangian parcel is followed each way (default 2).
	Track int
	// Rest says the fluid was at rest (u = 0 everywhere) at time RestTime, before the first
	// frame, as at the start of an impulsively or smoothly started flow from a tank at rest.
	// The rest state then serves as the frame before the first one, so that the first frame
	// gets a central rather than a one-sided time difference.
	Rest     bool
	RestTime float64
}

// Halo returns how many frames before and after frame k the method reads.
func (o AccelOptions) Halo() int {
	switch o.Method {
	case Steady:
		return 0
	case Lagrangian:
		// The Eulerian fallback at the series ends reads two frames on one side.
		return max(o.track(), 2)
	}
	return 2
}

func (o AccelOptions) track() int {
	if o.Track <= 0 {
		return 2
	}
	return o.Track
}

// MinFrames returns the fewest frames a series needs for the method.
func (o AccelOptions) MinFrames() int {
	switch o.Method {
	case Steady:
		return 1
	case Lagrangian:
		if o.Rest {
			return 2
		}
		return 3
	}
	return 2
}

// CheckSeries verifies that a series suits the method: enough frames and strictly increasing
// times (and the rest time, when given, before the first frame).
func CheckSeries(fr Frames, opt AccelOptions) error {
	n := fr.Len()
	if n < opt.MinFrames() {
		return fmt.Errorf("the %s method needs at least %d frames with times; the series has %d (use --method steady for a single frame of a steady flow)",
			opt.Method, opt.MinFrames(), n)
	}
	for k := 1; k < n; k++ {
		if !(fr.Time(k) > fr.Time(k-1)) {
			return fmt.Errorf("frame %d time %g s is not after frame %d time %g s; frame times must increase", k, fr.Time(k), k-1, fr.Time(k-1))
		}
	}
	if opt.Rest && opt.Method != Steady && n > 0 && !(opt.RestTime < fr.Time(0)) {
		return fmt.Errorf("the rest time %g s is not before the first frame (%g s)", opt.RestTime, fr.Time(0))
	}
	return nil
}

// timeStencil returns the frames (index, -1 for the rest state) and weights of the
// second-order derivative d/dt at frame k: central on the neighbours when both exist,
// one-sided three-point at the ends, two-point when only two frames exist.
func timeStencil(fr Frames, k int, opt AccelOptions) (idx []int, w []float64, err error) {
	n := fr.Len()
	tk := fr.Time(k)
	var ts []float64
	switch {
	case k > 0 && k < n-1:
		idx = []int{k - 1, k, k + 1}
	case k == 0 && opt.Rest:
		if n > 1 {
			idx = []int{-1, 0, 1}
		} else {
			idx = []int{-1, 0}
		}
	case n >= 3 && k == 0:
		idx = []int{0, 1, 2}
	case n >= 3:
		idx = []int{n - 3, n - 2, n - 1}
	case n == 2:
		idx = []int{0, 1}
	default:
		return nil, nil, errors.New("a time derivative needs at least two frames")
	}
	for _, m := range idx {
		if m < 0 {
			ts = append(ts, opt.RestTime)
		} else {
			ts = append(ts, fr.Time(m))
		}
	}
	return idx, lagrangeSlope(ts, tk), nil
}

// lagrangeSlope returns the weights w such that Σ w_m f(t_m) is the derivative at t0 of the
// polynomial interpolating the points (t_m, f_m).
func lagrangeSlope(ts []float64, t0 float64) []float64 {
	w := make([]float64, len(ts))
	for a := range ts {
		// L_a'(t0) = Σ_{b≠a} [Π_{c≠a,b} (t0 - t_c)] / Π_{c≠a} (t_a - t_c)
		den := 1.0
		for c := range ts {
			if c != a {
				den *= ts[a] - ts[c]
			}
		}
		num := 0.0
		for b := range ts {
			if b == a {
				continue
			}
			prod := 1.0
			for c := range ts {
				if c != a && c != b {
					prod *= t0 - ts[c]
				}
			}
			num += prod
		}
		w[a] = num / den
	}
	return w
}

// frameAt loads frame k and checks that its grid matches ref.
func frameAt(fr Frames, k int, ref *piv.Field) (*piv.Field, error) {
	f, err := fr.Frame(k)
	if err != nil {
		return nil, err
	}
	if ref != nil && !f.Grid.Same(ref.Grid) {
		return nil, fmt.Errorf("%s: grid %v differs from the grid of %s (%v); all frames of a series must share one grid",
			f.Name(), f.Grid, ref.Name(), ref.Grid)
	}
	return f, nil
}

// Acceleration returns the material acceleration Du/Dt [m/s^2] of frame k of fr, its x and y
// (axial and radial) components, NaN where it cannot be formed (no data at the node in a frame
// the stencil needs, or a parcel that leaves the data too soon). It also returns frame k.
//
// The convective term uses the spatial derivatives of the vorticity package (vorticity.Deriv);
// in axisymmetric geometry without swirl the material acceleration has the same form in
// cylindrical components (x, r): Du/Dt = ∂u/∂t + u ∂u/∂x + v ∂u/∂r, and likewise for v.
func Acceleration(fr Frames, k int, opt AccelOptions) (f *piv.Field, ax, ay []float64, err error) {
	if k < 0 || k >= fr.Len() {
		return nil, nil, nil, fmt.Errorf("frame %d is outside the series of %d frames", k, fr.Len())
	}
	if opt.Method != Steady && fr.Len() < opt.MinFrames() {
		return nil, nil, nil, fmt.Errorf("the %s method needs at least %d frames; the series has %d", opt.Method, opt.MinFrames(), fr.Len())
	}
	f, err = frameAt(fr, k, nil)
	if err != nil {
		return nil, nil, nil, err
	}
	if opt.Method == Lagrangian {
		ax, ay, err = lagrangian(fr, k, f, opt)
		if err != nil {
			return nil, nil, nil, err
		}
		// Parcels that leave the data within one frame (inflow and outflow edges) get the
		// Eulerian estimate instead.
		var ex, ey []float64
		for q := range ax {
			if f.Valid(q) && math.IsNaN(ax[q]) {
				if ex == nil {
					eo := opt
					eo.Method = Eulerian
					if _, ex, ey, err = Acceleration(fr, k, eo); err != nil {
						return nil, nil, nil, err
					}
				}
				ax[q], ay[q] = ex[q], ey[q]
			}
		}
		return f, ax, ay, nil
	}
	g := f.Grid
	n := g.N()
	ax = make([]float64, n)
	ay = make([]float64, n)
	convective(f, opt.Scheme, ax, ay)
	if opt.Method == Steady {
		return f, ax, ay, nil
	}
	idx, w, err := timeStencil(fr, k, opt)
	if err != nil {
		return nil, nil, nil, err
	}
	for a, m := range idx {
		if m < 0 {
			continue // the rest state contributes zero velocity
		}
		fm := f
		if m != k {
			if fm, err = frameAt(fr, m, f); err != nil {
				return nil, nil, nil, err
			}
		}
		for q := 0; q < n; q++ {
			if fm.Valid(q) {
				ax[q] += w[a] * fm.U[q]
				ay[q] += w[a] * fm.V[q]
			} else {
				ax[q], ay[q] = math.NaN(), math.NaN()
			}
		}
	}
	return f, ax, ay, nil
}

// convective writes u·∇u into ax, ay (NaN where a derivative is missing).
func convective(f *piv.Field, scheme vorticity.Scheme, ax, ay []float64) {
	gr := vorticity.NewGradient(f, scheme)
	for q := range ax {
		if !f.Valid(q) {
			ax[q], ay[q] = math.NaN(), math.NaN()
			continue
		}
		u, v := f.U[q], f.V[q]
		ax[q] = u*gr.DUDX[q] + v*gr.DUDY[q]
		ay[q] = u*gr.DVDX[q] + v*gr.DVDY[q]
	}
}

// lagrangian implements pseudo-tracking for frame k.
func lagrangian(fr Frames, k int, f *piv.Field, opt AccelOptions) ([]float64, []float64, error) {
	n := fr.Len()
	K := opt.track()
	lo, hi := k-K, k+K
	if lo < 0 {
		lo = 0
	}
	if hi > n-1 {
		hi = n - 1
	}
	frames := make([]*piv.Field, hi-lo+1)
	for m := lo; m <= hi; m++ {
		fm, err := frameAt(fr, m, f)
		if err != nil {
			return nil, nil, err
		}
		frames[m-lo] = fm
	}
	g := f.Grid
	N := g.N()
	ax, ay := piv.NaNs(N), piv.NaNs(N)
	tk := fr.Time(k)
	ts := make([]float64, 0, 2*K+2)
	us := make([]float64, 0, 2*K+2)
	vs := make([]float64, 0, 2*K+2)
	restUsable := opt.Rest && k-K < 0
	for q := 0; q < N; q++ {
		if !f.Valid(q) {
			continue
		}
		i, j := g.IJ(q)
		x0, y0 := g.X(i), g.Y(j)
		ts, us, vs = append(ts[:0], 0), append(us[:0], f.U[q]), append(vs[:0], f.V[q])
		for _, dir := range []int{1, -1} {
			x, y := x0, y0
			m := k
			for {
				next := m + dir
				if next < lo || next > hi {
					if dir < 0 && next < 0 && restUsable {
						ts = append(ts, opt.RestTime-tk)
						us = append(us, 0)
						vs = append(vs, 0)
					}
					break
				}
				var ok bool
				x, y, ok = rk4(frames[m-lo], frames[next-lo], fr.Time(m), fr.Time(next), x, y)
				if !ok {
					break
				}
				u, v, okv := frames[next-lo].At(x, y, piv.Bicubic)
				if !okv {
					break
				}
				ts = append(ts, fr.Time(next)-tk)
				us = append(us, u)
				vs = append(vs, v)
				m = next
			}
		}
		if len(ts) < 3 {
			continue
		}
		ax[q] = quadSlope(ts, us)
		ay[q] = quadSlope(ts, vs)
	}
	return ax, ay, nil
}

// rk4 advances a parcel from time t0 (field a) to t1 (field b) by one classical Runge–Kutta
// step, with the velocity interpolated bicubically in space and linearly in time.
func rk4(a, b *piv.Field, t0, t1, x, y float64) (float64, float64, bool) {
	h := t1 - t0
	vel := func(s, x, y float64) (float64, float64, bool) {
		ua, va, oka := a.At(x, y, piv.Bicubic)
		ub, vb, okb := b.At(x, y, piv.Bicubic)
		if !oka || !okb {
			return 0, 0, false
		}
		return (1-s)*ua + s*ub, (1-s)*va + s*vb, true
	}
	u1, v1, ok1 := vel(0, x, y)
	u2, v2, ok2 := vel(0.5, x+h/2*u1, y+h/2*v1)
	u3, v3, ok3 := vel(0.5, x+h/2*u2, y+h/2*v2)
	u4, v4, ok4 := vel(1, x+h*u3, y+h*v3)
	if !ok1 || !ok2 || !ok3 || !ok4 {
		return x, y, false
	}
	return x + h/6*(u1+2*u2+2*u3+u4), y + h/6*(v1+2*v2+2*v3+v4), true
}

// quadSlope returns the slope at τ = 0 of the least-squares quadratic through (τ_m, f_m), by
// the normal equations on τ scaled to unit range (at most 2K+2 points, so a 3x3 system).
func quadSlope(ts, fs []float64) float64 {
	scale := 0.0
	for _, t := range ts {
		scale = math.Max(scale, math.Abs(t))
	}
	var s [5]float64
	var r [3]float64
	for m, t := range ts {
		tau := t / scale
		p := 1.0
		for d := 0; d < 5; d++ {
			s[d] += p
			if d < 3 {
				r[d] += p * fs[m]
			}
			p *= tau
		}
	}
	// Solve [[s0 s1 s2][s1 s2 s3][s2 s3 s4]] c = r for c1 by Cramer's rule.
	det := func(a [3][3]float64) float64 {
		return a[0][0]*(a[1][1]*a[2][2]-a[1][2]*a[2][1]) -
			a[0][1]*(a[1][0]*a[2][2]-a[1][2]*a[2][0]) +
			a[0][2]*(a[1][0]*a[2][1]-a[1][1]*a[2][0])
	}
	A := [3][3]float64{{s[0], s[1], s[2]}, {s[1], s[2], s[3]}, {s[2], s[3], s[4]}}
	D := det(A)
	if D == 0 {
		return math.NaN()
	}
	A1 := A
	A1[0][1], A1[1][1], A1[2][1] = r[0], r[1], r[2]
	return det(A1) / D / scale
}
