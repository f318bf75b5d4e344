package main

import (
	"context"
	"fmt"
	"io"
	"math"
	"path/filepath"
	"slices"
	"sort"
	"strconv"
	"strings"

	"github.com/spf13/pflag"
	"github.com/wakekit/wakekit/internal/pipeline"
	"github.com/wakekit/wakekit/piv"
	"github.com/wakekit/wakekit/piv/analytic"
)

func init() {
	register(&command{
		name:    "synth",
		summary: "writes exact reference flows (optionally with a measurement-noise model) as input files",
		usage:   "wakekit synth FLOW [flags]",
		help: `FLOW is one of:
  lamb-oseen    Gaussian vortex (--gamma, --core-radius, --nu for viscous decay, --drift)
  rankine       solid-body core in a potential vortex (--gamma, --core-radius, --drift)
  pair          counter-rotating Lamb–Oseen pair, the cut through a ring moving to +x
                (--gamma, --core-radius, --separation, --nu)
  taylor-green  decaying Taylor–Green cells (--speed, --wavelength, --nu)
  hill          Hill's spherical vortex moving along +x (--speed, --radius, --co-moving)
  uniform       uniform stream (--speed along x, plus --drift)
  rotation      solid-body rotation (--omega)

Frames are written as frame_0000.csv, frame_0001.csv, ... (or .vtk with --format vtk) with
SI units in the header, together with a frame index frames.csv (columns file and time) that
every series command accepts, and synth.json with the settings and the exact reference
values (circulation, peak vorticity, impulse, ...). With --spurious, spurious.csv lists the
nodes made spurious in each frame (columns frame number, i, j, x, y: the ground truth for
outlier tests). With --exact the
frames carry the exact vorticity (omega_exact) and pressure (p_exact) as extra columns where
they are known.

The grid is centred on the flow's centre unless --origin is given (Taylor–Green starts at
0,0). Hill's vortex is written in the meridional plane with x axial and y radial: the grid
starts on the symmetry axis y = 0 (or the y of --center), so read it back with
"--axisymmetric --axis 0". Rows below the axis, if --origin puts any there, show the mirror
half of the section (radial velocity and vorticity change sign).

The noise model first averages each vector over a --window of N x N nodes (the interrogation
window; --window-size L instead averages the exact flow over an L x L square), then adds Gaussian noise of --noise m/s per component (or --noise-px pixels with
--pixel-size and --pulse-separation), then replaces a --spurious share of the vectors by
random ones. The same --seed gives the same files.

Examples:
  wakekit synth lamb-oseen --out vortex
  wakekit synth lamb-oseen --gamma 0.02 --core-radius 4e-3 --nu 1e-6 --frames 50 --dt 0.02 --drift 0.01,0 --out drifting
  wakekit synth hill --speed 0.1 --radius 0.02 --frames 20 --noise 0.002 --spurious 0.02 --seed 7 --out ring
  wakekit synth taylor-green --grid 64x64 --spacing 1e-3 --format vtk --out cells`,
		setup: setupSynth,
	})
}

// synthFlags are the settings of "wakekit synth".
type synthFlags struct {
	grid, spacing, origin, center, drift string
	frames                               int
	dt, t0                               float64
	gamma, core, nu, sep                 float64
	speed, radius, wavelength, omega     float64
	rho                                  float64
	coMoving, exact                      bool
	windowSize                           float64
	format                               string
	noise                                analytic.Noise
}

func setupSynth(fs *pflag.FlagSet) func(e *env, args []string) error {
	o := &synthFlags{}
	fs.StringVar(&o.grid, "grid", "128x96", "nodes in x and y, NXxNY")
	fs.StringVar(&o.spacing, "spacing", "1e-3", "node spacing [m], H or DX,DY")
	fs.StringVar(&o.origin, "origin", "", "position of the first node [m], X,Y (default: grid centred on the flow)")
	fs.StringVar(&o.center, "center", "0,0", "flow centre at the first frame [m], X,Y (for hill: start position and axis)")
	fs.StringVar(&o.drift, "drift", "0,0", "constant velocity added to the flow [m/s], U,V (lamb-oseen, rankine, uniform)")
	fs.IntVar(&o.frames, "frames", 1, "number of frames")
	fs.Float64Var(&o.dt, "dt", 0.01, "time between frames [s]")
	fs.Float64Var(&o.t0, "t0", 0, "time of the first frame [s]")
	fs.Float64Var(&o.gamma, "gamma", 0.01, "circulation [m^2/s] (lamb-oseen, rankine, pair)")
	fs.Float64Var(&o.core, "core-radius", 5e-3, "core radius at t = 0 [m] (lamb-oseen, rankine, pair)")
	fs.Float64Var(&o.nu, "nu", 0, "kinematic viscosity [m^2/s] for viscous decay (lamb-oseen, pair, taylor-green); 0 is steady")
	fs.Float64Var(&o.sep, "separation", 0.03, "distance between the vortices of a pair [m]")
	fs.Float64Var(&o.speed, "speed", 0.1, "speed [m/s]: Hill's vortex speed, Taylor–Green amplitude, uniform stream")
	fs.Float64Var(&o.radius, "radius", 0.02, "radius of Hill's vortex [m]")
	fs.Float64Var(&o.wavelength, "wavelength", 0.064, "Taylor–Green period [m] (2 cells)")
	fs.Float64Var(&o.omega, "omega", 1, "angular velocity of solid-body rotation [rad/s]")
	fs.Float64Var(&o.rho, "rho", analytic.Water, "density [kg/m^3] for the exact pressure")
	fs.BoolVar(&o.coMoving, "co-moving", false, "hill: velocities in the frame moving with the vortex")
	fs.BoolVar(&o.exact, "exact", false, "add the exact vorticity and pressure as columns omega_exact and p_exact")
	fs.StringVar(&o.format, "format", "csv", "frame file format: csv or vtk")
	fs.Float64Var(&o.noise.Sigma, "noise", 0, "Gaussian random error per component [m/s]")
	fs.Float64Var(&o.noise.SigmaPx, "noise-px", 0, "Gaussian random error per component [px], with --pixel-size and --pulse-separation")
	fs.Float64Var(&o.noise.PixelSize, "pixel-size", 0, "pixel size [m/px] for --noise-px")
	fs.Float64Var(&o.noise.PulseSeparation, "pulse-separation", 0, "pulse separation [s] for --noise-px")
	fs.Float64Var(&o.noise.SpuriousFraction, "spurious", 0, "share of vectors replaced by spurious ones, 0..1")
	fs.IntVar(&o.noise.Window, "window", 1, "interrogation-window box average over N x N nodes (odd N)")
	fs.Float64Var(&o.windowSize, "window-size", 0, "interrogation-window average of the exact flow over an L x L square [m], instead of --window")
	fs.Uint64Var(&o.noise.Seed, "seed", 1, "seed of the noise generator")
	rf := addRunFlags(fs)
	return func(e *env, args []string) error { return o.run(e, fs, rf, args) }
}

// synthFlow is a built flow with what synth reports about it.
type synthFlow struct {
	flow   analytic.Flow
	params []synthValue // settings, in order
	exact  []synthValue // exact reference values
	cx, cy float64      // centre the default grid is placed on
	corner bool         // default grid starts at the centre (Taylor–Green) instead of around it
	axisY  float64      // hill: the grid starts on the axis
	hill   bool
}

type synthValue struct {
	name, unit string
	v          float64
}

func (o *synthFlags) run(e *env, fs *pflag.FlagSet, rf *runFlags, args []string) error {
	if len(args) != 1 {
		return usagef("give exactly one FLOW (lamb-oseen, rankine, pair, taylor-green, hill, uniform or rotation)")
	}
	sf, g, times, err := o.setup(fs, args[0])
	if err != nil {
		return err
	}
	if err := o.noise.Validate(); err != nil {
		return usagef("%v", err)
	}
	if o.windowSize != 0 && (!(o.windowSize > 0) || math.IsInf(o.windowSize, 0) || o.noise.Window > 1) {
		return usagef("--window-size %g: give a positive size in m, and not together with --window", o.windowSize)
	}
	if rf.shard != "" || rf.resume {
		return usagef("--shard and --resume do not apply: synth writes every frame")
	}
	popt, err := rf.pipelineOptions(e, "synth")
	if err != nil {
		return err
	}
	ext := "." + o.format
	names := make([]string, len(times))
	for k := range names {
		names[k] = fmt.Sprintf("frame_%04d%s", k, ext)
	}
	dir, err := rf.outDir("synth", nil)
	if err != nil {
		return err
	}
	series, err := piv.NewSeries(names, times, func(k int) (*piv.Field, error) {
		if o.windowSize > 0 {
			return analytic.SampleWindowed(sf.flow, g, times[k], o.windowSize, 0)
		}
		return analytic.Sample(sf.flow, g, times[k]), nil
	})
	if err != nil {
		return err
	}
	spurious := make([][]int, len(times))
	_, err = pipeline.Run(context.Background(), series, popt,
		func(ctx context.Context, k int, frames pipeline.Frames) ([]int, error) {
			f, err := frames.Frame(k)
			if err != nil {
				return nil, err
			}
			f = f.Clone()
			f.Source = names[k]
			n := o.noise
			n.Stream = uint64(k)
			sp, err := n.Apply(f)
			if err != nil {
				return nil, err
			}
			var cols []piv.Column
			if o.exact {
				if w, err := analytic.SampleVorticity(sf.flow, g, f.Time); err == nil {
					cols = append(cols, piv.Column{Name: "omega_exact", Unit: "1/s", Values: w})
				}
				if p, err := analytic.SamplePressure(sf.flow, g, f.Time); err == nil {
					cols = append(cols, piv.Column{Name: "p_exact", Unit: "Pa", Values: p})
				}
			}
			path := filepath.Join(dir, names[k])
			if o.format == "vtk" {
				err = piv.WriteVTK(path, f, cols...)
			} else {
				err = piv.WriteCSV(path, f, cols...)
			}
			return sp, err
		},
		func(k int, sp []int) error { spurious[k] = sp; return nil })
	if err != nil {
		return err
	}
	if err := writeFrameIndex(filepath.Join(dir, "frames.csv"), names, times); err != nil {
		return err
	}
	nsp := 0
	for _, sp := range spurious {
		nsp += len(sp)
	}
	if nsp > 0 {
		if err := writeSpurious(filepath.Join(dir, "spurious.csv"), spurious, g); err != nil {
			return err
		}
	}
	if err := o.writeSummary(filepath.Join(dir, "synth.json"), args[0], sf, g, times, names, nsp); err != nil {
		return err
	}
	fmt.Fprintf(e.stdout, "%s: %d frame(s), %s, %s\n", args[0], len(times), g, analytic.GeometryOf(sf.flow))
	for _, p := range sf.params {
		fmt.Fprintf(e.stdout, "  %-36s %.6g %s\n", p.name, p.v, p.unit)
	}
	if o.windowSize > 0 {
		fmt.Fprintf(e.stdout, "  %-36s %.6g m\n", "interrogation window (continuous)", o.windowSize)
	}
	if !o.noise.Zero() {
		sigma, _ := o.noise.SigmaSI()
		fmt.Fprintf(e.stdout, "  noise: sigma %.6g m/s, window %d nodes, %d spurious vectors, seed %d\n",
			sigma, max(o.noise.Window, 1), nsp, o.noise.Seed)
	}
	for _, x := range sf.exact {
		fmt.Fprintf(e.stdout, "  %-36s %.6g %s\n", "exact "+x.name, x.v, x.unit)
	}
	if sf.hill {
		fmt.Fprintf(e.stdout, "  read back with --axisymmetric --axis %g\n", sf.axisY)
	}
	fmt.Fprintf(e.stdout, "wrote %s (frames.csv, synth.json%s)\n", dir, map[bool]string{true: ", spurious.csv"}[nsp > 0])
	return nil
}

// setup checks the flags and builds the flow, the grid and the frame times.
func (o *synthFlags) setup(fs *pflag.FlagSet, name string) (*synthFlow, piv.Grid, []float64, error) {
	var g piv.Grid
	nx, ny, err := parseGridSize(o.grid)
	if err != nil {
		return nil, g, nil, err
	}
	dx, dy, err := parsePair("--spacing", o.spacing, true)
	if err != nil {
		return nil, g, nil, err
	}
	if !(dx > 0) || !(dy > 0) || math.IsInf(dx, 0) || math.IsInf(dy, 0) {
		return nil, g, nil, usagef("--spacing %s must be positive", o.spacing)
	}
	g = piv.Grid{NX: nx, NY: ny, DX: dx, DY: dy}
	if err := g.Validate(0); err != nil {
		return nil, g, nil, usagef("--grid %s: %v", o.grid, err)
	}
	if o.frames < 1 || o.frames > 1_000_000 {
		return nil, g, nil, usagef("--frames %d must be between 1 and 1000000", o.frames)
	}
	if !(o.dt > 0) || !finite(o.dt) {
		return nil, g, nil, usagef("--dt %g: give the time between frames as a positive number of seconds, e.g. 0.01", o.dt)
	}
	if !finite(o.t0) {
		return nil, g, nil, usagef("--t0 %g: give the time of the first frame as a finite number of seconds", o.t0)
	}
	if !(o.rho > 0) || !finite(o.rho) {
		return nil, g, nil, usagef("--rho %g: give the density as a positive number of kg/m^3, e.g. 998.2 for water at 20 C", o.rho)
	}
	if !(o.nu >= 0) || !finite(o.nu) {
		return nil, g, nil, usagef("--nu %g: give the kinematic viscosity as zero (steady) or a positive number of m^2/s, e.g. 1e-6", o.nu)
	}
	if o.noise.Window < 1 {
		return nil, g, nil, usagef("--window %d: give the interrogation window as an odd number of nodes (1 for none, 3, 5, ...)", o.noise.Window)
	}
	if !fs.Changed("noise-px") && (fs.Changed("pixel-size") || fs.Changed("pulse-separation")) {
		return nil, g, nil, usagef("--pixel-size and --pulse-separation only convert --noise-px to m/s; give --noise-px too, or --noise in m/s instead")
	}
	if o.format != "csv" && o.format != "vtk" {
		return nil, g, nil, usagef("--format %q: expected csv or vtk", o.format)
	}
	times := make([]float64, o.frames)
	for k := range times {
		times[k] = o.t0 + float64(k)*o.dt
	}
	sf, err := o.flow(fs, name, times)
	if err != nil {
		return nil, g, nil, err
	}
	switch {
	case fs.Changed("origin"):
		if g.X0, g.Y0, err = parsePair("--origin", o.origin, false); err != nil {
			return nil, g, nil, err
		}
	case sf.corner:
		g.X0, g.Y0 = sf.cx, sf.cy
	case sf.hill:
		g.X0, g.Y0 = sf.cx-float64(nx-1)*dx/2, sf.axisY
	default:
		g.X0, g.Y0 = sf.cx-float64(nx-1)*dx/2, sf.cy-float64(ny-1)*dy/2
	}
	if err := g.Validate(0); err != nil {
		return nil, g, nil, usagef("%v", err)
	}
	return sf, g, times, nil
}

// synthFlowFlags names, for each flag that sets a parameter of some flows only, the flows it
// applies to; giving it for another flow is a usage error rather than silently ignored.
var synthFlowFlags = []struct {
	flag  string
	flows []string
}{
	{"gamma", []string{"lamb-oseen", "rankine", "pair"}},
	{"core-radius", []string{"lamb-oseen", "rankine", "pair"}},
	{"nu", []string{"lamb-oseen", "pair", "taylor-green"}},
	{"separation", []string{"pair"}},
	{"speed", []string{"taylor-green", "hill", "uniform"}},
	{"radius", []string{"hill"}},
	{"wavelength", []string{"taylor-green"}},
	{"omega", []string{"rotation"}},
	{"co-moving", []string{"hill"}},
	{"drift", []string{"lamb-oseen", "rankine", "uniform"}},
}

// checkFlowFlags refuses flow parameters given for a flow that does not take them.
func checkFlowFlags(fs *pflag.FlagSet, name string) error {
	known := false
	for _, f := range synthFlows {
		known = known || f == name
	}
	if !known {
		return nil // the caller reports the unknown flow
	}
	for _, ff := range synthFlowFlags {
		if !fs.Changed(ff.flag) || slices.Contains(ff.flows, name) {
			continue
		}
		return usagef("--%s does not apply to %s (it is a parameter of %s)", ff.flag, name, strings.Join(ff.flows, ", "))
	}
	return nil
}

// synthFlows are the flows synth writes.
var synthFlows = []string{"lamb-oseen", "rankine", "pair", "taylor-green", "hill", "uniform", "rotation"}

// flow builds the named flow from the flags.
func (o *synthFlags) flow(fs *pflag.FlagSet, name string, times []float64) (*synthFlow, error) {
	if err := checkFlowFlags(fs, name); err != nil {
		return nil, err
	}
	cx, cy, err := parsePair("--center", o.center, false)
	if err != nil {
		return nil, err
	}
	uc, vc, err := parsePair("--drift", o.drift, false)
	if err != nil {
		return nil, err
	}
	drifting := uc != 0 || vc != 0
	positive := func(flag string, v float64) error {
		if !(v > 0) || !finite(v) {
			return usagef("--%s %g must be positive", flag, v)
		}
		return nil
	}
	nonzero := func(flag string, v float64) error {
		if v == 0 || !finite(v) {
			return usagef("--%s %g must be a non-zero number", flag, v)
		}
		return nil
	}
	t0, t1 := times[0], times[len(times)-1]
	sf := &synthFlow{cx: cx, cy: cy}
	switch name {
	case "lamb-oseen", "rankine", "pair":
		if err := nonzero("gamma", o.gamma); err != nil {
			return nil, err
		}
		if err := positive("core-radius", o.core); err != nil {
			return nil, err
		}
		if name != "rankine" && !(o.core*o.core+4*o.nu*t0 > 0) {
			return nil, usagef("the core radius squared r0^2 + 4 nu t is not positive at --t0 %g", t0)
		}
		sf.params = []synthValue{{"circulation", "m^2/s", o.gamma}, {"core radius r0", "m", o.core}}
	}
	switch name {
	case "lamb-oseen":
		f := analytic.LambOseen{Gamma: o.gamma, CoreRadius: o.core, Nu: o.nu, X: cx, Y: cy, Uc: uc, Vc: vc, Rho: o.rho}
		sf.flow = f
		sf.params = append(sf.params, synthValue{"kinematic viscosity", "m^2/s", o.nu})
		sf.exact = []synthValue{
			{"core radius, first frame", "m", f.Core(t0)}, {"core radius, last frame", "m", f.Core(t1)},
			{"peak vorticity, first frame", "1/s", f.PeakVorticity(t0)},
			{"centre pressure, first frame", "Pa", f.Pressure(cx+uc*t0, cy+vc*t0, t0)},
		}
	case "rankine":
		f := analytic.Rankine{Gamma: o.gamma, A: o.core, X: cx, Y: cy, Uc: uc, Vc: vc, Rho: o.rho}
		sf.flow = f
		x, y := f.Centre(t0)
		sf.exact = []synthValue{{"core vorticity", "1/s", f.Vorticity(x, y, t0)}, {"centre pressure", "Pa", f.Pressure(x, y, t0)}}
	case "pair":
		if drifting {
			return nil, usagef("--drift does not apply to a pair, which moves at its own speed")
		}
		if err := positive("separation", o.sep); err != nil {
			return nil, err
		}
		f := analytic.VortexPair(o.gamma, o.core, o.sep, o.nu, cx, cy)
		sf.flow = f
		up := f[0].(analytic.LambOseen)
		x, y := up.Centre(t0)
		sf.params = append(sf.params, synthValue{"separation", "m", o.sep}, synthValue{"kinematic viscosity", "m^2/s", o.nu})
		sf.exact = []synthValue{{"pair speed", "m/s", up.Uc}, {"upper core vorticity, first frame", "1/s", f.Vorticity(x, y, t0)}}
	case "taylor-green":
		if err := nonzero("speed", o.speed); err != nil {
			return nil, err
		}
		if err := positive("wavelength", o.wavelength); err != nil {
			return nil, err
		}
		f := analytic.TaylorGreen{U: o.speed, K: 2 * math.Pi / o.wavelength, Nu: o.nu, Rho: o.rho}
		sf.flow, sf.corner = f, true
		q := o.wavelength / 4 // the centre of the first cell, where |vorticity| peaks
		sf.params = []synthValue{{"amplitude", "m/s", o.speed}, {"wavelength", "m", o.wavelength}, {"kinematic viscosity", "m^2/s", o.nu}}
		sf.exact = []synthValue{{"peak vorticity, first frame", "1/s", f.Vorticity(q, q, t0)}, {"cell circulation, first frame", "m^2/s", f.CellCirculation(t0)}}
	case "hill":
		if err := nonzero("speed", o.speed); err != nil {
			return nil, err
		}
		if err := positive("radius", o.radius); err != nil {
			return nil, err
		}
		f := analytic.Hill{Radius: o.radius, Speed: o.speed, X0: cx, AxisY: cy, CoMoving: o.coMoving, Rho: o.rho}
		sf.flow, sf.hill, sf.axisY = f, true, cy
		sf.cx = f.Centre(t0)
		sf.params = []synthValue{{"speed", "m/s", o.speed}, {"radius", "m", o.radius}}
		sf.exact = []synthValue{{"circulation", "m^2/s", f.TotalCirculation()}, {"impulse", "kg m/s", f.Impulse()},
			{"peak vorticity", "1/s", f.Vorticity(f.Centre(t0), cy+o.radius, t0)}}
	case "uniform":
		if !finite(o.speed) {
			return nil, usagef("--speed %g must be a finite number of m/s", o.speed)
		}
		sf.flow = analytic.Uniform{U: o.speed + uc, V: vc}
		sf.params = []synthValue{{"u", "m/s", o.speed + uc}, {"v", "m/s", vc}}
	case "rotation":
		if err := nonzero("omega", o.omega); err != nil {
			return nil, err
		}
		f := analytic.Rotation{Omega: o.omega, X: cx, Y: cy, Rho: o.rho}
		sf.flow = f
		sf.params = []synthValue{{"angular velocity", "rad/s", o.omega}}
		sf.exact = []synthValue{{"vorticity", "1/s", f.Vorticity(cx, cy, t0)}}
	default:
		return nil, usagef("unknown flow %q (expected lamb-oseen, rankine, pair, taylor-green, hill, uniform or rotation)", name)
	}
	if drifting && (name == "taylor-green" || name == "hill" || name == "rotation") {
		return nil, usagef("--drift does not apply to %s", name)
	}
	return sf, nil
}

func finite(x float64) bool { return !math.IsNaN(x) && !math.IsInf(x, 0) }

// parseGridSize reads "NXxNY".
func parseGridSize(s string) (int, int, error) {
	a, b, ok := strings.Cut(strings.ToLower(strings.TrimSpace(s)), "x")
	nx, err1 := strconv.Atoi(strings.TrimSpace(a))
	ny, err2 := strconv.Atoi(strings.TrimSpace(b))
	if !ok || err1 != nil || err2 != nil || nx < 2 || ny < 2 {
		return 0, 0, usagef("--grid %q: expected NXxNY with at least 2 nodes each way, e.g. 128x96", s)
	}
	return nx, ny, nil
}

// parsePair reads "A,B" (or "A" when single is allowed, giving A,A) as finite numbers.
func parsePair(flag, s string, single bool) (float64, float64, error) {
	parts := strings.Split(s, ",")
	if len(parts) == 1 && single {
		parts = append(parts, parts[0])
	}
	if len(parts) != 2 {
		return 0, 0, usagef("%s %q: expected two numbers separated by a comma", flag, s)
	}
	var v [2]float64
	for i, p := range parts {
		x, err := strconv.ParseFloat(strings.TrimSpace(p), 64)
		if err != nil || !finite(x) {
			return 0, 0, usagef("%s %q: cannot read %q as a finite number", flag, s, p)
		}
		v[i] = x
	}
	return v[0], v[1], nil
}

// writeFrameIndex writes the frame index: columns file and time [s].
func writeFrameIndex(path string, names []string, times []float64) error {
	return piv.WriteFileAtomic(path, func(w io.Writer) error {
		if _, err := io.WriteString(w, "file,time [s]\n"); err != nil {
			return err
		}
		for k, n := range names {
			if _, err := fmt.Fprintf(w, "%s,%s\n", n, strconv.FormatFloat(times[k], 'g', -1, 64)); err != nil {
				return err
			}
		}
		return nil
	})
}

// writeSpurious lists the nodes the noise model made spurious, frame by frame.
func writeSpurious(path string, spurious [][]int, g piv.Grid) error {
	return piv.WriteFileAtomic(path, func(w io.Writer) error {
		// The frame is given by its number, not its file name, so that the table is never
		// taken for a frame index when the folder is read as a series.
		if _, err := io.WriteString(w, "frame,i,j,x [m],y [m]\n"); err != nil {
			return err
		}
		for k, sp := range spurious {
			for _, n := range sp {
				i, j := g.IJ(n)
				if _, err := fmt.Fprintf(w, "%d,%d,%d,%s,%s\n", k, i, j,
					strconv.FormatFloat(g.X(i), 'g', -1, 64), strconv.FormatFloat(g.Y(j), 'g', -1, 64)); err != nil {
					return err
				}
			}
		}
		return nil
	})
}

// synthSummary is the content of synth.json.
type synthSummary struct {
	Flow       string                   `json:"flow"`
	Geometry   string                   `json:"geometry"`
	Parameters map[string]piv.JSONFloat `json:"parameters"`
	Grid       struct {
		NX int           `json:"nx"`
		NY int           `json:"ny"`
		X0 piv.JSONFloat `json:"x0_m"`
		Y0 piv.JSONFloat `json:"y0_m"`
		DX piv.JSONFloat `json:"dx_m"`
		DY piv.JSONFloat `json:"dy_m"`
	} `json:"grid"`
	Frames      int                      `json:"frames"`
	T0          piv.JSONFloat            `json:"t0"`
	DT          piv.JSONFloat            `json:"dt"`
	Noise       map[string]piv.JSONFloat `json:"noise"`
	Seed        uint64                   `json:"seed"`
	Spurious    int                      `json:"spurious_vectors"`
	Exact       map[string]piv.JSONFloat `json:"exact"`
	Files       []string                 `json:"files"`
	Version     string                   `json:"wakekit_version"`
	Description string                   `json:"description"`
}

func (o *synthFlags) writeSummary(path, name string, sf *synthFlow, g piv.Grid, times []float64, names []string, nsp int) error {
	s := synthSummary{Flow: name, Geometry: analytic.GeometryOf(sf.flow).String(), Frames: len(times),
		T0: piv.JSONFloat(times[0]), DT: piv.JSONFloat(o.dt), Seed: o.noise.Seed, Spurious: nsp,
		Files: names, Version: version,
		Description: "exact reference flow written by wakekit synth; values in SI units (key names carry the unit)"}
	key := func(v synthValue) string {
		k := strings.ReplaceAll(strings.ReplaceAll(v.name, ",", ""), " ", "_")
		if v.unit != "" {
			k += " [" + v.unit + "]"
		}
		return k
	}
	s.Parameters = map[string]piv.JSONFloat{}
	for _, p := range sf.params {
		s.Parameters[key(p)] = piv.JSONFloat(p.v)
	}
	s.Exact = map[string]piv.JSONFloat{}
	for _, x := range sf.exact {
		s.Exact[key(x)] = piv.JSONFloat(x.v)
	}
	sigma, _ := o.noise.SigmaSI()
	s.Noise = map[string]piv.JSONFloat{"sigma [m/s]": piv.JSONFloat(sigma),
		"spurious_fraction": piv.JSONFloat(o.noise.SpuriousFraction), "window [nodes]": piv.JSONFloat(max(o.noise.Window, 1)),
		"window_size [m]": piv.JSONFloat(o.windowSize)}
	s.Grid.NX, s.Grid.NY = g.NX, g.NY
	s.Grid.X0, s.Grid.Y0, s.Grid.DX, s.Grid.DY = piv.JSONFloat(g.X0), piv.JSONFloat(g.Y0), piv.JSONFloat(g.DX), piv.JSONFloat(g.DY)
	sort.Strings(s.Files)
	return piv.WriteJSON(path, s)
}
