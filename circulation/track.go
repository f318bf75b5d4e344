package circulation

import (
	"fmt"
	"math"
	"sort"

	"gonum.org/v1/gonum/stat"
)

// TrackOptions configures vortex tracking.
type TrackOptions struct {
	// Gate is the largest distance [m] between a track's predicted position and a core it is
	// joined to; 0 means 1.5 times the equivalent radius of the track's last core.
	Gate float64
	// MaxGap is how many frames in a row a track may go unseen before it ends (default 0: a
	// track ends in the first frame it is not found).
	MaxGap int
	// Smooth is the number of points of the local least-squares line that gives the smoothed
	// convection velocity (0 means 5; at least 2).
	Smooth int
}

// TrackPoint is one observation of a tracked vortex.
type TrackPoint struct {
	Frame int
	Time  float64
	// Core is the core's index in its frame's list.
	Core int
	// X, Y is the core centre [m] (Core.Centre: fitted if available); Gamma its circulation [m²/s]; EqRadius and CoreRadius
	// its equivalent and fitted core radius [m].
	X, Y, Gamma, EqRadius, CoreRadius float64
	// U, V is the smoothed convection velocity [m/s] (NaN for a single-point track).
	U, V float64
}

// Track is the history of one vortex through a series.
type Track struct {
	// ID numbers tracks from 1 in order of birth.
	ID int
	// Sign is the sense of rotation (+1 counter-clockwise).
	Sign   int
	Points []TrackPoint
	// Birth and Death are the first and last frames the vortex was seen in; Born says it
	// appeared after the first frame of the series and Died that it vanished before the last.
	Birth, Death int
	Born, Died   bool
}

// Speed returns the mean convection speed of the track [m/s]: the magnitude of the slope of the
// least-squares line through all its positions (NaN for fewer than 2 points).
func (t *Track) Speed() float64 {
	u, v := lineVelocity(t.Points)
	return math.Hypot(u, v)
}

// Tracker associates cores frame by frame. Call Add for each frame in time order, then Tracks.
type Tracker struct {
	opt      TrackOptions
	active   []*trackState
	done     []*trackState
	nextID   int
	lastTime float64
	frames   int
}

type trackState struct {
	Track
	missed int
}

// NewTracker returns a tracker with the given options.
func NewTracker(opt TrackOptions) *Tracker {
	if opt.Smooth <= 0 {
		opt.Smooth = 5
	}
	opt.Smooth = max(opt.Smooth, 2)
	return &Tracker{opt: opt}
}

// Add records the cores of one frame. Frames must come in increasing time.
//
// Each active track predicts its position at time t from its last two points (constant
// velocity; the last position for a one-point track). Candidate links join a track to a core
// of the same sign within the gate of the prediction; links are made in order of increasing
// distance, each track and core used once (greedy nearest-neighbour assignment). Cores left
// over start new tracks; tracks left over count a missed frame and end after MaxGap misses.
func (tr *Tracker) Add(frame int, t float64, cores []Core) error {
	if tr.frames > 0 && !(t > tr.lastTime) {
		return fmt.Errorf("frame %d at t = %g s is not after the previous frame (t = %g s)", frame, t, tr.lastTime)
	}
	tr.frames++
	tr.lastTime = t
	type link struct {
		d    float64
		a, c int
	}
	var links []link
	for a, st := range tr.active {
		px, py := st.predict(t)
		last := st.Points[len(st.Points)-1]
		gate := tr.opt.Gate
		if gate <= 0 {
			gate = 1.5 * last.EqRadius
		}
		for c := range cores {
			co := &cores[c]
			if co.Sign != st.Sign || math.IsNaN(co.X) {
				continue
			}
			cx, cy := co.Centre()
			if d := math.Hypot(cx-px, cy-py); d <= gate {
				links = append(links, link{d, a, c})
			}
		}
	}
	sort.Slice(links, func(p, q int) bool {
		if links[p].d != links[q].d {
			return links[p].d < links[q].d
		}
		if links[p].a != links[q].a {
			return links[p].a < links[q].a
		}
		return links[p].c < links[q].c
	})
	usedT := make([]bool, len(tr.active))
	usedC := make([]bool, len(cores))
	for _, l := range links {
		if usedT[l.a] || usedC[l.c] {
			continue
		}
		usedT[l.a], usedC[l.c] = true, true
		st := tr.active[l.a]
		st.Points = append(st.Points, pointOf(frame, t, l.c, &cores[l.c]))
		st.Death = frame
		st.missed = 0
	}
	keep := tr.active[:0]
	for a, st := range tr.active {
		if !usedT[a] {
			st.missed++
			if st.missed > tr.opt.MaxGap {
				st.Died = true
				tr.done = append(tr.done, st)
				continue
			}
		}
		keep = append(keep, st)
	}
	tr.active = keep
	for c := range cores {
		if usedC[c] || math.IsNaN(cores[c].X) {
			continue
		}
		tr.nextID++
		st := &trackState{Track: Track{ID: tr.nextID, Sign: cores[c].Sign, Birth: frame, Death: frame,
			Born: tr.frames > 1}}
		st.Points = []TrackPoint{pointOf(frame, t, c, &cores[c])}
		tr.active = append(tr.active, st)
	}
	return nil
}

func pointOf(frame int, t float64, c int, co *Core) TrackPoint {
	x, y := co.Centre()
	return TrackPoint{Frame: frame, Time: t, Core: c, X: x, Y: y, Gamma: co.Gamma,
		EqRadius: co.EqRadius, CoreRadius: co.CoreRadius, U: math.NaN(), V: math.NaN()}
}

// predict extrapolates the track to time t at the velocity of its last two points.
func (st *trackState) predict(t float64) (x, y float64) {
	n := len(st.Points)
	p := st.Points[n-1]
	if n < 2 {
		return p.X, p.Y
	}
	q := st.Points[n-2]
	dt := p.Time - q.Time
	if dt <= 0 {
		return p.X, p.Y
	}
	return p.X + (p.X-q.X)/dt*(t-p.Time), p.Y + (p.Y-q.Y)/dt*(t-p.Time)
}

// Active returns the tracks still open after the last Add, without smoothed velocities (for
// drawing the paths so far). The point slices are shared with the tracker: read only.
func (tr *Tracker) Active() []Track {
	out := make([]Track, len(tr.active))
	for a, st := range tr.active {
		out[a] = st.Track
	}
	return out
}

// Tracks ends tracking and returns every track in order of ID, with smoothed velocities: at
// each point the slope of the least-squares line (gonum stat.LinearRegression) through the
// Smooth points centred on it (shifted inwards at the track ends).
func (tr *Tracker) Tracks() []Track {
	all := append(append([]*trackState(nil), tr.done...), tr.active...)
	sort.Slice(all, func(p, q int) bool { return all[p].ID < all[q].ID })
	out := make([]Track, len(all))
	for a, st := range all {
		tk := st.Track
		tk.Points = append([]TrackPoint(nil), st.Points...)
		n := len(tk.Points)
		w := min(tr.opt.Smooth, n)
		if w >= 2 {
			for k := range tk.Points {
				lo := min(max(0, k-w/2), n-w)
				tk.Points[k].U, tk.Points[k].V = lineVelocity(tk.Points[lo : lo+w])
			}
		}
		out[a] = tk
	}
	return out
}

// lineVelocity returns the slopes of least-squares lines x(t) and y(t) through the points.
func lineVelocity(p []TrackPoint) (u, v float64) {
	if len(p) < 2 {
		return math.NaN(), math.NaN()
	}
	t := make([]float64, len(p))
	x := make([]float64, len(p))
	y := make([]float64, len(p))
	for k := range p {
		// Times relative to the first point keep the regression well conditioned.
		t[k], x[k], y[k] = p[k].Time-p[0].Time, p[k].X, p[k].Y
	}
	_, u = stat.LinearRegression(t, x, nil, false)
	_, v = stat.LinearRegression(t, y, nil, false)
	return u, v
}
