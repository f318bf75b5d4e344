package pressure

import (
	"fmt"
	"math"
	"sort"

	"github.com/wakekit/wakekit/piv"
)

// Exit describes a nozzle exit plane: the plane x = X, the inner radius (slot half-width for a
// planar jet) Radius, and the axis (centre line) y = Axis.
type Exit struct {
	X, Radius, Axis float64
}

// Check verifies that the exit can be evaluated on grid g: a positive radius, the plane within
// one grid spacing of the field's x extent, and a side of the axis that the field covers from
// the axis to the radius.
func (e Exit) Check(g piv.Grid) error {
	if !(e.Radius > 0) || math.IsInf(e.Radius, 0) {
		return fmt.Errorf("nozzle radius %g m must be positive and finite", e.Radius)
	}
	if !isFinite(e.X) || !isFinite(e.Axis) {
		return fmt.Errorf("exit plane x = %g m, axis y = %g m must be finite", e.X, e.Axis)
	}
	if e.X < g.X0-g.DX*(1+1e-9) || e.X > g.XMax()+g.DX*(1+1e-9) {
		return fmt.Errorf("exit plane x = %g m is outside the field (x from %g to %g m, at most one spacing %g m beyond it)",
			e.X, g.X0, g.XMax(), g.DX)
	}
	if up, down := e.covered(g); !up && !down {
		return fmt.Errorf("the field (y from %g to %g m, cells %g m wide) does not cover the exit from the axis y = %g m to the nozzle radius %g m on either side",
			g.Y0, g.YMax(), g.DY, e.Axis, e.Radius)
	}
	return nil
}

// covered reports on which sides of the axis the cells of the grid's rows (one spacing wide,
// centred on the rows) reach out to the radius, starting at most one spacing from the axis
// (the row nearest the axis then stands for the gap, see ExitProfile).
func (e Exit) covered(g piv.Grid) (up, down bool) {
	tol := 1e-9 * g.DY
	lo, hi := g.Y0-g.DY/2, g.YMax()+g.DY/2
	up = lo <= e.Axis+g.DY+tol && hi >= e.Axis+e.Radius-tol
	down = hi >= e.Axis-g.DY-tol && lo <= e.Axis-e.Radius+tol
	return up, down
}

// innerRows returns the rows nearest the axis whose cells reach into each side (-1 if none):
// up is the lowest row with a cell above the axis, down the highest with a cell below it.
func (e Exit) innerRows(g piv.Grid) (up, down int) {
	up, down = -1, -1
	for j := 0; j < g.NY; j++ {
		r := g.Y(j) - e.Axis
		if up < 0 && r+g.DY/2 > 1e-9*g.DY {
			up = j
		}
		if r-g.DY/2 < -1e-9*g.DY {
			down = j
		}
	}
	return up, down
}

// ExitForces are the forces on the fluid at the nozzle exit for one frame.
type ExitForces struct {
	Time float64 // frame time [s]
	// M is the momentum flux 2πρ∫u² r dr [N] (planar: ρ∫u² dy per unit depth [N/m]).
	M float64
	// P is the pressure force 2π∫(p − p∞) r dr [N] (planar: ∫(p − p∞) dy [N/m]).
	P float64
	// Sum is M + P, the thrust contribution of the exit plane.
	Sum float64
	// Q is the volume flux 2π∫u r dr [m^3/s] (planar: ∫u dy [m^2/s]).
	Q float64
	// Column is the grid column the profiles come from and Carried the distance X − x_column
	// [m] over which they were carried to the exit plane with the known gradients.
	Column  int
	Carried float64
	// Y, PExit and UExit are the exit profiles at the rows inside the radius.
	Y, PExit, UExit []float64
	// Missing counts rows inside the radius without data; the forces are NaN when it is not 0.
	Missing int
}

// ExitProfile evaluates the exit-plane profiles and forces of field f with pressure p and
// pressure gradient x-component gx. The exit plane need not coincide with a grid column: the
// pressure of the nearest column is carried to X with that column's measured gradient,
// p(X) = p_i + (X − x_i) ∂p/∂x|_i (at most half a spacing, or one spacing outside the field);
// extrapolating the gradient itself would amplify the error of the one-sided differences at an
// edge of the data, in thin exit shear layers and with noise. The velocity is taken from the
// same column (the exit profile changes little over half a spacing, and extrapolating it has
// the same drawback). The radial integrals use each row's cell (one spacing wide, cut at the
// axis and at the radius) weighted by r in axisymmetric geometry; with rows on both sides of
// the axis the two halves are averaged. pInf is the reference pressure.
func ExitProfile(f *piv.Field, p, gx []float64, e Exit, rho, pInf float64) (*ExitForces, error) {
	g := f.Grid
	if err := e.Check(g); err != nil {
		return nil, err
	}
	i := int(math.Round((e.X - g.X0) / g.DX))
	if i < 0 {
		i = 0
	}
	if i > g.NX-1 {
		i = g.NX - 1
	}
	d := e.X - g.X(i)
	ex := &ExitForces{Time: f.Time, Column: i, Carried: d}
	axi := f.Geometry.Axisymmetric
	// Each side of the axis that the field covers out to the radius gives the whole exit on its
	// own (axisymmetry, or the mirror symmetry of a slot); with both, the two are averaged. A
	// side the field covers only in part is left out rather than mixed in. A row whose cell
	// straddles the axis (a row on the axis, or rows offset from it) gives each side the part
	// of its cell on that side.
	// When the field stops short of the axis (by less than a spacing), the row nearest the
	// axis is taken to hold down to it.
	up, down := e.covered(g)
	jUp, jDown := e.innerRows(g)
	var side [2]struct{ p, m, q float64 }
	for j := 0; j < g.NY; j++ {
		r := g.Y(j) - e.Axis
		if math.Abs(r) >= e.Radius+g.DY/2 {
			continue
		}
		wUp, wDown := 0.0, 0.0
		if up {
			wUp = rowWeight(r, g.DY, e.Radius, axi, j == jUp)
		}
		if down {
			wDown = rowWeight(-r, g.DY, e.Radius, axi, j == jDown)
		}
		if wUp == 0 && wDown == 0 {
			continue
		}
		k := g.Index(i, j)
		pe, ue := p[k], f.U[k]
		if !f.Valid(k) {
			ue = math.NaN()
		}
		if d != 0 {
			pe += d * gx[k]
		}
		if math.Abs(r) < e.Radius {
			ex.Y = append(ex.Y, g.Y(j))
			ex.PExit = append(ex.PExit, pe)
			ex.UExit = append(ex.UExit, ue)
		}
		if math.IsNaN(pe) || math.IsNaN(ue) {
			ex.Missing++
			continue
		}
		for s, w := range [2]float64{wUp, wDown} {
			side[s].p += w * (pe - pInf)
			side[s].m += w * rho * ue * ue
			side[s].q += w * ue
		}
	}
	sides := 0.0
	for s, ok := range [2]bool{up, down} {
		if ok {
			ex.P += side[s].p
			ex.M += side[s].m
			ex.Q += side[s].q
			sides++
		}
	}
	factor := 2 / sides // planar: the slot's two halves, each the mirror of a measured one
	if axi {
		factor = 2 * math.Pi / sides
	}
	ex.P *= factor
	ex.M *= factor
	ex.Q *= factor
	if ex.Missing > 0 {
		ex.P, ex.M, ex.Q = math.NaN(), math.NaN(), math.NaN()
	}
	ex.Sum = ex.M + ex.P
	return ex, nil
}

// rowWeight returns ∫ over [a − dy/2, a + dy/2] ∩ [0, R) of r dr (axisymmetric) or of dr
// (planar): the part of the cell of a row at signed distance a from the axis that lies on the
// side of positive a, within the radius. For the row nearest the axis (inner) the cell starts
// at the axis.
func rowWeight(a, dy, R float64, axi, inner bool) float64 {
	lo, hi := math.Max(a-dy/2, 0), math.Min(a+dy/2, R)
	if inner && hi > 0 {
		lo = 0
	}
	if hi <= lo {
		return 0
	}
	if axi {
		return absIntegral(lo, hi)
	}
	return hi - lo
}

// ExitFlux returns the volume flux through the exit of field f: 2π∫u r dr (planar ∫u dy) with
// the velocity of the column nearest to the exit plane, as in ExitProfile. It is the source strength of the
// far-field reference model.
func ExitFlux(f *piv.Field, e Exit) (float64, error) {
	zero := make([]float64, f.Grid.N())
	ex, err := ExitProfile(f, zero, zero, e, 1, 0)
	if err != nil {
		return 0, err
	}
	return ex.Q, nil
}

// TimeIntegral returns the trapezoidal integral of the samples (t_m, f_m) over [t0, t1],
// interpolating linearly at the ends; samples with NaN values are skipped. Times must increase.
func TimeIntegral(t, f []float64, t0, t1 float64) float64 {
	sum := 0.0
	prevT, prevF, have := 0.0, 0.0, false
	for m := range t {
		if math.IsNaN(f[m]) {
			continue
		}
		if have {
			a, b := math.Max(prevT, t0), math.Min(t[m], t1)
			if b > a {
				fa := prevF + (f[m]-prevF)*(a-prevT)/(t[m]-prevT)
				fb := prevF + (f[m]-prevF)*(b-prevT)/(t[m]-prevT)
				sum += (b - a) * (fa + fb) / 2
			}
		}
		prevT, prevF, have = t[m], f[m], true
	}
	return sum
}

// PhaseImpulse is the time integral of the exit forces over one phase of the record.
type PhaseImpulse struct {
	Name     string  // "record", "pulse 1", "pulse 1 acceleration", "pulse 1 hold", ...
	From, To float64 // time interval [s]
	M, P     float64 // ∫M dt and ∫P dt [N s] (planar: per unit depth)
	Sum      float64 // ∫(M + P) dt
}

// PulseImpulses integrates the momentum flux m and pressure force p over the whole record and
// over each pulse found in the exit flux q (see Pulses), split into its acceleration, hold and
// deceleration phases, followed by the time after the pulse up to the next pulse or the end of
// the record. A pulse starts where the flux starts rising before it crosses the threshold (a
// start from rest is counted from the rest) and ends where the falling flux crosses the
// threshold (linearly interpolated between frames). The flux that trails below the threshold
// after the nozzle has stopped is mostly the flow the departing vortex induces across the exit
// plane, not the nozzle's program; its momentum flux and pressure force, which can be large
// next to a starting vortex, are reported in the "after" phase, so that pulse and after phase
// together hold the whole record from the pulse's start.
func PulseImpulses(t, m, p, q []float64) []PhaseImpulse {
	if len(t) == 0 {
		return nil
	}
	one := func(name string, a, b float64) PhaseImpulse {
		pm, pp := TimeIntegral(t, m, a, b), TimeIntegral(t, p, a, b)
		return PhaseImpulse{Name: name, From: a, To: b, M: pm, P: pp, Sum: pm + pp}
	}
	out := []PhaseImpulse{one("record", t[0], t[len(t)-1])}
	at := func(tt float64) int {
		for k := range t {
			if t[k] >= tt {
				return k
			}
		}
		return len(t) - 1
	}
	level := PulseThreshold * peakOf(q)
	pulses := Pulses(t, q)
	starts := make([]float64, len(pulses))
	for n, pu := range pulses {
		// Extend the pulse back over the start of the rise (below the threshold the flux is
		// still rising monotonically from rest).
		a := at(pu.Start)
		for a > 0 && q[a-1] < q[a] {
			a--
		}
		starts[n] = t[a]
	}
	for n, pu := range pulses {
		end := pu.End
		if b := at(pu.End); b+1 < len(t) && !math.IsNaN(q[b+1]) && q[b] > q[b+1] {
			end = t[b] + (q[b]-level)/(q[b]-q[b+1])*(t[b+1]-t[b])
		}
		next := t[len(t)-1]
		if n+1 < len(pulses) {
			next = starts[n+1]
		}
		name := fmt.Sprintf("pulse %d", n+1)
		out = append(out, one(name, starts[n], end),
			one(name+" acceleration", starts[n], pu.AccelEnd),
			one(name+" hold", pu.AccelEnd, pu.DecelStart),
			one(name+" deceleration", pu.DecelStart, end))
		if next > end {
			out = append(out, one(name+" after", end, next))
		}
	}
	return out
}

// PulseThreshold is the share of the peak exit flux above which the exit is taken to be
// discharging a pulse (common practice for a start/stop threshold: a few per cent sits above
// measurement noise).
const PulseThreshold = 0.05

func peakOf(q []float64) float64 {
	peak := 0.0
	for _, v := range q {
		if !math.IsNaN(v) {
			peak = math.Max(peak, v)
		}
	}
	return peak
}

// Pulse is one pulse of the exit program, as frame times: the flux rises above a threshold at
// Start and falls below it at End; the acceleration phase ends at the first frame after which
// the flux stops rising markedly (AccelEnd) and the deceleration phase starts at DecelStart.
type Pulse struct {
	Start, AccelEnd, DecelStart, End float64
}

// Pulses finds the pulses of an exit-flux history Q(t): runs where Q exceeds PulseThreshold of
// its peak. Within a pulse the hold level is the median of Q; the acceleration phase lasts until
// Q first reaches 95% of it and the deceleration phase starts when Q last exceeds 95% of it.
func Pulses(t, q []float64) []Pulse {
	peak := peakOf(q)
	if peak <= 0 {
		return nil
	}
	var out []Pulse
	on := false
	start := 0
	for m := 0; m <= len(q); m++ {
		above := m < len(q) && q[m] > PulseThreshold*peak
		if above && !on {
			on, start = true, m
		}
		if !above && on {
			on = false
			end := m - 1
			// The hold level is the median flux of the pulse (robust to a start-up overshoot).
			vals := append([]float64(nil), q[start:end+1]...)
			sort.Float64s(vals)
			hold := vals[len(vals)/2]
			p := Pulse{Start: t[start], End: t[end], AccelEnd: t[start], DecelStart: t[end]}
			for a := start; a <= end; a++ {
				if q[a] >= 0.95*hold {
					p.AccelEnd = t[a]
					break
				}
			}
			for a := end; a >= start; a-- {
				if q[a] >= 0.95*hold {
					p.DecelStart = t[a]
					break
				}
			}
			out = append(out, p)
		}
	}
	return out
}
