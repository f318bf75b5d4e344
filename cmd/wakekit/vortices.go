package main

import (
	"context"
	"fmt"
	"image/color"
	"io"
	"math"
	"os"
	"path/filepath"
	"strconv"

	"github.com/spf13/pflag"
	"github.com/wakekit/wakekit/circulation"
	"github.com/wakekit/wakekit/internal/pipeline"
	"github.com/wakekit/wakekit/internal/report"
	"github.com/wakekit/wakekit/piv"
	"github.com/wakekit/wakekit/pressure"
	"github.com/wakekit/wakekit/vorticity"
)

func init() {
	register(&command{
		name:    "vortices",
		summary: "detects vortex cores in each frame and tracks them through the series",
		usage:   "wakekit vortices [flags] FILES...",
		help: `Finds vortex cores in every frame as connected regions where the chosen criterion holds,
split by the sense of rotation:

  gamma2   |Gamma2| > 2/pi (Graftieaux, Michard & Grosjean 2001; default)
  q        Q > threshold (Hunt, Wray & Moin 1988)
  lambda2  lambda2 < -threshold (Jeong & Hussain 1995)
  swirl    swirling strength > threshold (Zhou et al. 1999)

For each core: vorticity-weighted centroid, peak vorticity, circulation (area integral over
the core's nodes), area, equivalent radius, mean vorticity, and the core radius and
circulation of a Lamb–Oseen fit. The criterion's region holds only the inner part of a
vortex (about half the circulation of a Lamb–Oseen vortex lies outside its Gamma2 core), so
the area integral is a lower bound of the vortex's circulation and the fit's a closer
estimate for a compact vortex. Cores are
then tracked frame to frame (constant-velocity prediction, same sense of rotation, gated
distance); each track has a birth and a death frame and a convection velocity smoothed by a
local least-squares line. With --axisymmetric, cores above the axis are read as vortex rings
and their circulation, ring radius, impulse radius, impulse and kinetic energy are written
with the speed from the track beside Saffman's (1970) viscous-core prediction, from the core
region's circulation and from the fit's (rings.csv).

For planar data, the strongest cores of each sign are read as a vortex pair: circulations,
centroids, separation b, impulse per unit depth rho int (y w, -x w) dA and the point-vortex
pair speed Gamma/(2 pi b). Every frame also gets the circulation and impulse of the whole
field of view (per unit depth for planar data; with --axisymmetric, of the half above the
axis when the view shows both).

Writes cores.csv, tracks.csv, track_summary.csv, frames.csv and rings.csv (--axisymmetric)
or pairs.csv (planar) in the output folder; with --format png also maps/vorticity_NNNN.png
with cores and track paths. Tracking needs at least 2 frames.

Examples:
  wakekit vortices tank2/run3/ --out run3-vortices
  wakekit vortices 'run3/frame_*.csv' --dt 0.002 --criterion q --format png -o run3-q
  wakekit vortices run3/frames.csv --axisymmetric --axis 0 --rho 998 --min-nodes 12`,
		setup: setupVortices,
	})
}

// vortexSettings are the parsed options of a vortices run.
type vortexSettings struct {
	crit        circulation.Criterion
	detect      circulation.DetectOptions
	scheme      vorticity.Scheme
	gammaRadius int
	track       circulation.TrackOptions
	rho         float64
	png         bool
}

func setupVortices(fs *pflag.FlagSet) func(e *env, args []string) error {
	rf := addReadFlags(fs)
	run := addRunFlags(fs)
	crit := fs.String("criterion", "gamma2", "vortex criterion: gamma2, q, lambda2 or swirl")
	thr := fs.Float64("threshold", math.NaN(), "criterion threshold (default 2/pi for gamma2, 0 for the others)")
	minNodes := fs.Int("min-nodes", 5, "smallest core kept [nodes]")
	gr := fs.Int("gamma-radius", circulation.DefaultGammaRadius, "half-width of the Gamma2 square [nodes]")
	noFit := fs.Bool("no-fit", false, "skip the Lamb–Oseen fit of each core")
	scheme := fs.String("scheme", "central", "difference scheme of the vorticity: central, richardson, least-squares or circulation")
	gate := fs.Float64("gate", 0, "largest jump [m] between a track's predicted position and its next core (default 1.5 equivalent radii)")
	maxGap := fs.Int("max-gap", 0, "frames a track may go unseen before it ends")
	smooth := fs.Int("smooth", 5, "points of the least-squares line that smooths the convection velocity")
	rho := fs.Float64("rho", pressure.Water20.Rho, "fluid density [kg/m^3] for ring impulse and energy (default: water at 20 C)")
	format := fs.String("format", "", "also draw maps: png")
	return func(e *env, args []string) error {
		if len(args) == 0 {
			return usagef("no input files given")
		}
		var st vortexSettings
		var err error
		if st.crit, err = circulation.ParseCriterion(*crit); err != nil {
			return usagef("--criterion: %v", err)
		}
		if st.scheme, err = vorticity.ParseScheme(*scheme); err != nil {
			return usagef("--scheme: %v", err)
		}
		if !math.IsNaN(*thr) {
			// Q > threshold, lambda2 < -threshold and swirl > threshold: a negative threshold
			// would take in strain-dominated fluid, which is not a core.
			if math.IsInf(*thr, 0) || *thr < 0 || (st.crit == circulation.Gamma2 && !(*thr > 0 && *thr < 1)) {
				return usagef("--threshold %g: give a finite value, between 0 and 1 for gamma2 and 0 or more for q, lambda2 and swirl", *thr)
			}
			st.detect.Threshold, st.detect.SetThreshold = *thr, true
		}
		switch {
		case *minNodes < 1:
			return usagef("--min-nodes %d: give the smallest core to keep as at least 1 node", *minNodes)
		case *gr < 1 || *gr > 50:
			return usagef("--gamma-radius %d must be between 1 and 50 nodes", *gr)
		case *maxGap < 0:
			return usagef("--max-gap %d: give the frames a track may go unseen as 0 or more", *maxGap)
		case *smooth < 2:
			return usagef("--smooth %d: the line that smooths the convection velocity needs at least 2 points", *smooth)
		case *gate < 0 || math.IsNaN(*gate) || math.IsInf(*gate, 0):
			return usagef("--gate %g: give the largest jump as a distance in m (0: 1.5 equivalent radii)", *gate)
		case !(*rho > 0) || math.IsInf(*rho, 0):
			return usagef("--rho %g: give the density as a positive number of kg/m^3, e.g. 998.2 for water at 20 C", *rho)
		}
		switch *format {
		case "":
		case "png":
			st.png = true
		default:
			return usagef("--format %q: expected png", *format)
		}
		st.detect.MinNodes, st.detect.NoFit = *minNodes, *noFit
		st.gammaRadius = *gr
		st.track = circulation.TrackOptions{Gate: *gate, MaxGap: *maxGap, Smooth: *smooth}
		st.rho = *rho
		series, err := rf.open(args)
		if err != nil {
			return err
		}
		if series.Len() < 2 {
			return fmt.Errorf("%s: tracking needs at least 2 frames; the series has 1", series.Name(0))
		}
		popt, err := run.pipelineOptions(e, "vortices")
		if err != nil {
			return err
		}
		if !popt.Shard.IsAll() || popt.Resume {
			return usagef("vortices tracks through the whole series and does not take --shard or --resume")
		}
		dir, created, err := run.newOutDir("vortices", args)
		if err != nil {
			return err
		}
		if err := runVortices(e, series, popt, st, dir); err != nil {
			removeNew(dir, created)
			return err
		}
		return nil
	}
}

// vortexFrame is the detection result of one frame.
type vortexFrame struct {
	field *piv.Field // kept only for drawing
	omega []float64  // kept only for drawing
	time  float64
	name  string
	cores []circulation.Core
	rings []*circulation.Ring // per core; nil below the axis or for planar data
	// window holds the circulation and impulse of the whole field of view; pair the pair
	// properties of the strongest cores of each sign (planar data with both signs only).
	window  circulation.AreaResult
	impulse circulation.ImpulseResult
	pair    *circulation.Pair
}

func runVortices(e *env, s *piv.Series, popt pipeline.Options, st vortexSettings, dir string) (err error) {
	var axisym bool
	// Maps are drawn while the frames stream through; a run that fails removes those it drew.
	var drawn []string
	defer func() {
		if err != nil {
			for _, p := range drawn {
				os.Remove(p)
			}
			os.Remove(filepath.Join(dir, "maps")) // only if empty
		}
	}()
	proc := func(ctx context.Context, k int, fr pipeline.Frames) (vortexFrame, error) {
		f, err := fr.Frame(k)
		if err != nil {
			return vortexFrame{}, err
		}
		crit, omega := circulation.CriterionField(f, st.crit, st.scheme, st.gammaRadius)
		cores, err := circulation.Detect(f, st.crit, crit, omega, st.detect)
		if err != nil {
			return vortexFrame{}, err
		}
		vf := vortexFrame{time: f.Time, name: f.Name(), cores: cores, rings: make([]*circulation.Ring, len(cores))}
		if f.Geometry.Axisymmetric {
			for c := range cores {
				if !(cores[c].Y > f.Geometry.AxisY) {
					continue
				}
				reg, err := circulation.NodeRegion(f.Grid, cores[c].Nodes)
				if err != nil {
					return vortexFrame{}, err
				}
				ring, err := circulation.RingOf(f, omega, reg, st.rho)
				if err != nil {
					return vortexFrame{}, err
				}
				vf.rings[c] = &ring
			}
		}
		all := circulation.AllNodes(f.Grid)
		if vf.window, err = circulation.Area(omega, windowRegion(f), circulation.AreaOptions{MaxMissingShare: 1}); err != nil {
			return vortexFrame{}, fmt.Errorf("%s: %v", f.Name(), err)
		}
		if vf.impulse, err = circulation.Impulse(omega, f.Grid, f.Geometry, st.rho, all); err != nil {
			return vortexFrame{}, fmt.Errorf("%s: %v", f.Name(), err)
		}
		if !f.Geometry.Axisymmetric {
			// Cores are sorted by decreasing |Γ|: the first of each sign are the strongest.
			pos, neg := -1, -1
			for c := range cores {
				if cores[c].Sign > 0 && pos < 0 {
					pos = c
				}
				if cores[c].Sign < 0 && neg < 0 {
					neg = c
				}
			}
			if pos >= 0 && neg >= 0 {
				reg, err := circulation.NodeRegion(f.Grid, append(append([]int(nil), cores[pos].Nodes...), cores[neg].Nodes...))
				if err != nil {
					return vortexFrame{}, err
				}
				p, err := circulation.PairOf(omega, reg, st.rho)
				if err != nil {
					return vortexFrame{}, err
				}
				vf.pair = &p
			}
		}
		if st.png {
			vf.field, vf.omega = f, omega
		}
		return vf, nil
	}
	tr := circulation.NewTracker(st.track)
	var frames []vortexFrame
	if st.png {
		if err := os.MkdirAll(filepath.Join(dir, "maps"), 0o755); err != nil {
			return err
		}
	}
	emit := func(k int, vf vortexFrame) error {
		if err := tr.Add(k, vf.time, vf.cores); err != nil {
			return fmt.Errorf("%s: %v", vf.name, err)
		}
		if vf.field != nil {
			axisym = vf.field.Geometry.Axisymmetric
			path := filepath.Join(dir, "maps", fmt.Sprintf("vorticity_%04d.png", k))
			if err := drawVortexMap(path, k, vf, tr.Active()); err != nil {
				return err
			}
			drawn = append(drawn, path)
		}
		vf.field, vf.omega = nil, nil
		for c := range vf.cores {
			vf.cores[c].Nodes = nil // not needed past detection; frees memory
		}
		frames = append(frames, vf)
		return nil
	}
	if _, err := pipeline.Run(context.Background(), s, popt, proc, emit); err != nil {
		return err
	}
	for _, vf := range frames {
		for _, r := range vf.rings {
			axisym = axisym || r != nil
		}
	}
	tracks := tr.Tracks()
	// Track ID and point of every (frame, core).
	type ref struct{ track, point int }
	refs := map[[2]int]ref{}
	for a, tk := range tracks {
		for p, pt := range tk.Points {
			refs[[2]int{pt.Frame, pt.Core}] = ref{a, p}
		}
	}
	ncores := 0
	err = piv.WriteFileAtomic(filepath.Join(dir, "cores.csv"), func(w io.Writer) error {
		if _, err := fmt.Fprintln(w, "frame,time [s],core,track,sign,x [m],y [m],peak_x [m],peak_y [m],peak_omega [1/s],gamma [m^2/s],area [m^2],eq_radius [m],core_radius [m],fit_gamma [m^2/s],mean_omega [1/s],missing_share"); err != nil {
			return err
		}
		for k, vf := range frames {
			for c, co := range vf.cores {
				ncores++
				id := 0
				if r, ok := refs[[2]int{k, c}]; ok {
					id = tracks[r.track].ID
				}
				if _, err := fmt.Fprintf(w, "%d,%s,%d,%d,%d,%s,%s,%s,%s,%s,%s,%s,%s,%s,%s,%s,%s\n", k, cnum(vf.time), c+1, id, co.Sign,
					cnum(co.X), cnum(co.Y), cnum(co.PeakX), cnum(co.PeakY), cnum(co.PeakOmega), cnum(co.Gamma), cnum(co.Area),
					cnum(co.EqRadius), cnum(co.CoreRadius), cnum(fitGamma(co)), cnum(co.MeanOmega), cnum(co.MissingShare)); err != nil {
					return err
				}
			}
		}
		return nil
	})
	if err != nil {
		return err
	}
	err = piv.WriteFileAtomic(filepath.Join(dir, "tracks.csv"), func(w io.Writer) error {
		if _, err := fmt.Fprintln(w, "track,frame,time [s],core,sign,x [m],y [m],u [m/s],v [m/s],gamma [m^2/s],eq_radius [m],core_radius [m]"); err != nil {
			return err
		}
		for _, tk := range tracks {
			for _, p := range tk.Points {
				if _, err := fmt.Fprintf(w, "%d,%d,%s,%d,%d,%s,%s,%s,%s,%s,%s,%s\n", tk.ID, p.Frame, cnum(p.Time), p.Core+1, tk.Sign,
					cnum(p.X), cnum(p.Y), cnum(p.U), cnum(p.V), cnum(p.Gamma), cnum(p.EqRadius), cnum(p.CoreRadius)); err != nil {
					return err
				}
			}
		}
		return nil
	})
	if err != nil {
		return err
	}
	err = piv.WriteFileAtomic(filepath.Join(dir, "track_summary.csv"), func(w io.Writer) error {
		if _, err := fmt.Fprintln(w, "track,sign,birth_frame,death_frame,born_in_view,died_in_view,points,mean_gamma [m^2/s],mean_speed [m/s]"); err != nil {
			return err
		}
		for _, tk := range tracks {
			if _, err := fmt.Fprintf(w, "%d,%d,%d,%d,%t,%t,%d,%s,%s\n", tk.ID, tk.Sign, tk.Birth, tk.Death, tk.Born, tk.Died,
				len(tk.Points), cnum(meanGamma(tk)), cnum(tk.Speed())); err != nil {
				return err
			}
		}
		return nil
	})
	if err != nil {
		return err
	}
	err = piv.WriteFileAtomic(filepath.Join(dir, "frames.csv"), func(w io.Writer) error {
		unit := "N s/m"
		if axisym {
			unit = "N s"
		}
		if _, err := fmt.Fprintf(w, "frame,time [s],cores,window_gamma [m^2/s],window_missing_share,window_impulse_x [%s],window_impulse_y [%s]\n", unit, unit); err != nil {
			return err
		}
		for k, vf := range frames {
			if _, err := fmt.Fprintf(w, "%d,%s,%d,%s,%s,%s,%s\n", k, cnum(vf.time), len(vf.cores), cnum(vf.window.Gamma),
				cnum(vf.window.MissingShare), cnum(vf.impulse.X), cnum(vf.impulse.Y)); err != nil {
				return err
			}
		}
		return nil
	})
	if err != nil {
		return err
	}
	if !axisym {
		err = piv.WriteFileAtomic(filepath.Join(dir, "pairs.csv"), func(w io.Writer) error {
			if _, err := fmt.Fprintln(w, "frame,time [s],gamma_pos [m^2/s],gamma_neg [m^2/s],x_pos [m],y_pos [m],x_neg [m],y_neg [m],separation [m],speed_point_pair [m/s],impulse_x [N s/m],impulse_y [N s/m]"); err != nil {
				return err
			}
			for k, vf := range frames {
				p := vf.pair
				if p == nil {
					continue
				}
				if _, err := fmt.Fprintf(w, "%d,%s,%s,%s,%s,%s,%s,%s,%s,%s,%s,%s\n", k, cnum(vf.time), cnum(p.GammaPos), cnum(p.GammaNeg),
					cnum(p.XPos), cnum(p.YPos), cnum(p.XNeg), cnum(p.YNeg), cnum(p.Separation), cnum(p.Speed),
					cnum(p.ImpulseX), cnum(p.ImpulseY)); err != nil {
					return err
				}
			}
			return nil
		})
		if err != nil {
			return err
		}
	}
	if axisym {
		err = piv.WriteFileAtomic(filepath.Join(dir, "rings.csv"), func(w io.Writer) error {
			if _, err := fmt.Fprintln(w, "frame,time [s],core,track,gamma [m^2/s],x [m],ring_radius [m],impulse_radius [m],impulse [N s],energy [J],core_radius [m],fit_gamma [m^2/s],speed_track [m/s],speed_saffman [m/s],speed_saffman_fit [m/s]"); err != nil {
				return err
			}
			for k, vf := range frames {
				for c, ring := range vf.rings {
					if ring == nil {
						continue
					}
					id, speed := 0, math.NaN()
					if r, ok := refs[[2]int{k, c}]; ok {
						id = tracks[r.track].ID
						speed = tracks[r.track].Points[r.point].U
					}
					a, gf := vf.cores[c].CoreRadius, fitGamma(vf.cores[c])
					if _, err := fmt.Fprintf(w, "%d,%s,%d,%d,%s,%s,%s,%s,%s,%s,%s,%s,%s,%s,%s\n", k, cnum(vf.time), c+1, id,
						cnum(ring.Gamma), cnum(ring.X), cnum(ring.R), cnum(ring.RI), cnum(ring.Impulse), cnum(ring.Energy),
						cnum(a), cnum(gf), cnum(speed), cnum(circulation.SaffmanSpeed(ring.Gamma, ring.R, a)),
						cnum(circulation.SaffmanSpeed(gf, ring.R, a))); err != nil {
						return err
					}
				}
			}
			return nil
		})
		if err != nil {
			return err
		}
	}
	fmt.Fprintf(e.stdout, "%d frames, %d cores (%s criterion), %d tracks\n", len(frames), ncores, st.crit, len(tracks))
	tw := newTextTable(e.stdout, "track", "sense", "frames", "mean Γ [m²/s]", "speed [m/s]", "born", "died")
	for _, tk := range tracks {
		sense := "ccw"
		if tk.Sign < 0 {
			sense = "cw"
		}
		tw.row(strconv.Itoa(tk.ID), sense, fmt.Sprintf("%d-%d", tk.Birth, tk.Death), fmt.Sprintf("%.4g", meanGamma(tk)),
			fmt.Sprintf("%.4g", tk.Speed()), yesNo(tk.Born), yesNo(tk.Died))
	}
	tw.flush()
	if axisym {
		printRings(e.stdout, frames, tracks, refsLast(tracks))
	}
	fmt.Fprintf(e.stdout, "wrote %s\n", dir)
	return nil
}

// refsLast returns, per track, its last point.
func refsLast(tracks []circulation.Track) []circulation.TrackPoint {
	out := make([]circulation.TrackPoint, len(tracks))
	for a, tk := range tracks {
		out[a] = tk.Points[len(tk.Points)-1]
	}
	return out
}

// printRings prints, for every track with ring properties, the ring at its last frame.
func printRings(w io.Writer, frames []vortexFrame, tracks []circulation.Track, last []circulation.TrackPoint) {
	tw := newTextTable(w, "ring (track)", "frame", "Γ core [m²/s]", "Γ fit [m²/s]", "R [m]", "impulse [N s]", "speed [m/s]", "Saffman core, fit [m/s]")
	n := 0
	for a, tk := range tracks {
		p := last[a]
		ring := frames[p.Frame].rings[p.Core]
		if ring == nil {
			continue
		}
		n++
		co := frames[p.Frame].cores[p.Core]
		tw.row(strconv.Itoa(tk.ID), strconv.Itoa(p.Frame), fmt.Sprintf("%.4g", ring.Gamma), fmt.Sprintf("%.4g", fitGamma(co)),
			fmt.Sprintf("%.4g", ring.R), fmt.Sprintf("%.4g", ring.Impulse), fmt.Sprintf("%.4g", p.U),
			fmt.Sprintf("%.4g, %.4g", circulation.SaffmanSpeed(ring.Gamma, ring.R, co.CoreRadius), circulation.SaffmanSpeed(fitGamma(co), ring.R, co.CoreRadius)))
	}
	if n > 0 {
		fmt.Fprintln(w)
		tw.flush()
	}
}

func meanGamma(tk circulation.Track) float64 {
	s := 0.0
	for _, p := range tk.Points {
		s += p.Gamma
	}
	return s / float64(len(tk.Points))
}

func yesNo(b bool) string {
	if b {
		return "yes"
	}
	return "no"
}

// drawVortexMap draws the vorticity of one frame with its cores and the tracks so far.
func drawVortexMap(path string, k int, vf vortexFrame, active []circulation.Track) error {
	g := vf.field.Grid
	m := report.MapPlot{Grid: g, Values: vf.omega, Title: fmt.Sprintf("vorticity, frame %d, t = %.4g s", k, vf.time),
		Unit: "1/s", Signed: true}
	if vf.field.Geometry.Axisymmetric {
		m.YName = "r"
	}
	ccw := report.Overlay{Label: "ccw core", Kind: report.Markers, Colour: color.RGBA{R: 0x80, A: 0xff}}
	cw := report.Overlay{Label: "cw core", Kind: report.Markers, Colour: color.RGBA{B: 0x80, A: 0xff}}
	for c := range vf.cores {
		x, y := vf.cores[c].Centre()
		if math.IsNaN(x) {
			continue
		}
		if vf.cores[c].Sign > 0 {
			ccw.X, ccw.Y = append(ccw.X, x), append(ccw.Y, y)
		} else {
			cw.X, cw.Y = append(cw.X, x), append(cw.Y, y)
		}
	}
	for _, o := range []report.Overlay{ccw, cw} {
		if len(o.X) > 0 {
			m.Overlays = append(m.Overlays, o)
		}
	}
	for _, tk := range active {
		if len(tk.Points) < 2 {
			continue
		}
		o := report.Overlay{Kind: report.Path}
		for _, p := range tk.Points {
			o.X, o.Y = append(o.X, p.X), append(o.Y, p.Y)
		}
		m.Overlays = append(m.Overlays, o)
	}
	wpx := 960
	hpx := min(1200, max(360, int(float64(wpx)*float64(g.NY)/float64(g.NX))+120))
	return m.WritePNG(path, wpx, hpx)
}

// fitGamma returns the circulation of a core's Lamb–Oseen fit, NaN without a fit.
func fitGamma(c circulation.Core) float64 {
	if c.Fit == nil {
		return math.NaN()
	}
	return c.Fit.Gamma
}

// windowRegion is the part of the field of view whose circulation frames.csv reports: all of
// it for planar data; for a meridional plane the half above the axis (the ring's section), as
// the half below is its mirror image with the opposite sign and would cancel it. Rows whose
// cells straddle the axis count with the share of the cell above it.
func windowRegion(f *piv.Field) circulation.Region {
	g := f.Grid
	all := circulation.AllNodes(g)
	if !f.Geometry.Axisymmetric || g.Y0-g.DY/2 >= f.Geometry.AxisY {
		return all
	}
	var r circulation.Region
	r.Grid = g
	for k := range all.K {
		_, j := g.IJ(k)
		w := math.Min(1, (g.Y(j)-f.Geometry.AxisY+g.DY/2)/g.DY)
		if w > 0 {
			r.K = append(r.K, k)
			r.W = append(r.W, w)
		}
	}
	return r
}
