package piv

import "math"

// FieldSummary holds the node counts and the velocity statistics of one frame, over its valid
// nodes. Statistics are NaN when the frame has no valid node.
type FieldSummary struct {
	Nodes                              int
	Measured, Replaced, Missing, Solid int
	// ValidShare is the fraction of nodes with a usable vector.
	ValidShare float64
	// Ranges and means of u, v [m/s] and of the in-plane speed sqrt(u²+v²).
	UMin, UMax, UMean         float64
	VMin, VMax, VMean         float64
	SpeedMax, SpeedMean, URMS float64
}

// Summarize counts the nodes of f by status kind and computes the ranges and means of its
// valid velocities. URMS is the root mean square of the speed.
func Summarize(f *Field) FieldSummary {
	s := FieldSummary{Nodes: len(f.Status)}
	nan := math.NaN()
	umin, umax, vmin, vmax := math.Inf(1), math.Inf(-1), math.Inf(1), math.Inf(-1)
	var su, sv, ss, sq, smax float64
	n := 0
	for k, st := range f.Status {
		switch st.Kind() {
		case Measured:
			s.Measured++
		case Replaced:
			s.Replaced++
		case Missing:
			s.Missing++
		default:
			s.Solid++
		}
		if !f.Valid(k) {
			continue
		}
		u, v := f.U[k], f.V[k]
		n++
		umin, umax = math.Min(umin, u), math.Max(umax, u)
		vmin, vmax = math.Min(vmin, v), math.Max(vmax, v)
		su += u
		sv += v
		sp := math.Hypot(u, v)
		ss += sp
		sq += sp * sp
		smax = math.Max(smax, sp)
	}
	if s.Nodes > 0 {
		s.ValidShare = float64(n) / float64(s.Nodes)
	}
	if n == 0 {
		s.UMin, s.UMax, s.UMean, s.VMin, s.VMax, s.VMean = nan, nan, nan, nan, nan, nan
		s.SpeedMax, s.SpeedMean, s.URMS = nan, nan, nan
		return s
	}
	fn := float64(n)
	s.UMin, s.UMax, s.UMean = umin, umax, su/fn
	s.VMin, s.VMax, s.VMean = vmin, vmax, sv/fn
	s.SpeedMax, s.SpeedMean, s.URMS = smax, ss/fn, math.Sqrt(sq/fn)
	return s
}

// Timing returns the mean, smallest and largest interval between consecutive frames of s [s];
// all three are NaN for a single frame.
func Timing(s *Series) (mean, lo, hi float64) {
	if s.Len() < 2 {
		nan := math.NaN()
		return nan, nan, nan
	}
	lo, hi = math.Inf(1), math.Inf(-1)
	for k := 1; k < s.Len(); k++ {
		d := s.Time(k) - s.Time(k-1)
		lo, hi = math.Min(lo, d), math.Max(hi, d)
	}
	return s.MeanDT(), lo, hi
}

// ContinuityResidual is a quality hint for a frame: the root mean square of a divergence field
// div (one value per node, NaN where undefined; in-plane, or with the hoop term v/r for
// axisymmetric data) over the nodes where it is defined, divided by the velocity-gradient scale
// of the grid, URMS/h, with URMS the RMS speed of the valid nodes and h = min(DX, DY). The
// continuity equation makes the divergence vanish for incompressible planar or axisymmetric
// flow, so what remains is measurement noise, out-of-plane motion and truncation error: near 0
// is clean, near 1 means the vectors differ at grid scale by as much as they are large (common
// practice). rms is the RMS divergence [1/s] and nodes the number of nodes it was taken over.
// All three are NaN (nodes 0) when no node has a divergence or the field is at rest.
func ContinuityResidual(f *Field, div []float64) (residual, rms float64, nodes int) {
	var sq float64
	for _, d := range div {
		if !math.IsNaN(d) {
			sq += d * d
			nodes++
		}
	}
	s := Summarize(f)
	if nodes == 0 || !(s.URMS > 0) {
		return math.NaN(), math.NaN(), nodes
	}
	rms = math.Sqrt(sq / float64(nodes))
	h := math.Min(f.Grid.DX, f.Grid.DY)
	return rms / (s.URMS / h), rms, nodes
}
