package main

import (
	"context"
	"encoding/json"
	"fmt"
	"io"
	"math"
	"path/filepath"
	"sort"
	"strconv"
	"strings"

	"github.com/spf13/pflag"
	"github.com/wakekit/wakekit/circulation"
	"github.com/wakekit/wakekit/internal/pipeline"
	"github.com/wakekit/wakekit/internal/report"
	"github.com/wakekit/wakekit/piv"
	"github.com/wakekit/wakekit/piv/analytic"
	"github.com/wakekit/wakekit/pressure"
	"github.com/wakekit/wakekit/vorticity"
)

func init() {
	register(&command{
		name:    "jet",
		summary: "the starting-jet budget: exit program, circulation and impulse budgets, thrust split, report",
		usage:   "wakekit jet FILES... --exit X --diameter D (--axisymmetric --axis Y | --slot) [flags]",
		help: `Analyses a time-resolved series of a starting or pulsed jet issuing along +x from a nozzle
whose exit plane is x = --exit. Per frame it measures the exit program at the first column at
or downstream of the exit (area-averaged and centreline velocity, momentum flux, vorticity flux
with its radial-velocity part), the circulation and impulse in view and their leading-ring
share, and (unless --no-pressure) the pressure field and the exit-plane pressure force. Per
pulse it gives the stroke ratio, Reynolds number, slug-model circulation and impulse, the
circulation budget and formation number, the impulse budget with the over-pressure impulse by
two routes, (a) the reconstructed exit pressure and (b) dI/dt minus the exit momentum flux
minus the measured exchange outside the lip, the over-pressure impulse of each phase
(acceleration, hold, deceleration), and the ring's position, radius, core and speed with the
Saffman check. Every figure carries a one-sigma uncertainty from Monte-Carlo resampling of the
series with velocity noise of --noise m/s (estimated from the data's small-scale residual when
not given), seeded by --seed.

Solid walls: --nozzle X,R_IN,R_OUT marks the nozzle wall (x <= X, R_IN <= |y - axis| <= R_OUT)
solid in every frame, and --mask FILE the nodes that a file on the frames' grid marks "solid"
in its status column, as in "wakekit pressure". Solid nodes are left out of every derivative,
integral, the noise estimate and the pressure solve, and drawn on the vorticity maps. When the
grid column at the exit plane lies on the wall's end face, the exit is measured at the next
column (the summary gives exit_station_x_m); a mask reaching beyond the exit station is refused.

Writes summary.json, timeseries.csv, PNG plots and report.html into the output folder, and
prints the summary table.

Per-frame maps (default none): --maps vorticity,q,lambda2,swirl,... takes the quantities of
"wakekit derive" (central differences) and --maps pressure the pressure of route (a); they are
written in --map-format (csv, vtk, png) into OUT/maps, one file per frame and format, by the
same code as those commands: FRAME.csv, FRAME.vtk and FRAME_QUANTITY.png for the derived
quantities (with derive.csv), FRAME_pressure.csv, FRAME_pressure.vtk and
FRAME_pressure_p.png for the pressure (with pressure.csv and exit_forces.csv). The maps
folder keeps a manifest: a run stopped while writing maps keeps the frames done, and the same
command with --resume writes only the rest.

Examples:
  wakekit jet run07/frames.csv --axisymmetric --axis 0 --exit 0 --diameter 0.025 --lip 0.01375 --out run07-jet
  wakekit jet 'slot/*.csv' --slot --axis 0.04 --exit 0.002 --diameter 0.01 --noise 0.002 --label "slot B" --param s_over_D=1.5
  wakekit jet frames/ --axisymmetric --exit 0 --diameter 0.02 --pulse 0.1,1.9 --no-pressure -q
  wakekit jet tank/run3/frames.csv --axisymmetric --exit 0.012 --diameter 0.025 --lip 0.0135 --nozzle 0.012,0.0125,0.0135
  wakekit jet run07/frames.csv --axisymmetric --exit 0 --diameter 0.025 --maps vorticity,lambda2,pressure --map-format png,csv --out run07-jet`,
		setup: setupJet,
	})
}

// jetSettings are the settings of one jet analysis.
type jetSettings struct {
	exit        circulation.ExitConfig
	slot        bool
	pulse       string     // "T0,T1" or empty for automatic detection
	pulseT      [2]float64 // the parsed pulse start and end [s]
	threshold   float64    // detection threshold as a share of the peak exit velocity
	noise       float64    // velocity noise [m/s]; < 0 means estimate
	samples     int        // Monte-Carlo replicas
	seed        uint64
	smooth      int
	noPressure  bool
	solid       *solidMask // solid nodes applied to every frame, or nil
	maps        *jetMaps   // per-frame maps to write, or nil
	read        piv.ReadOptions
	restTime    float64 // time the tank was at rest (NaN: unknown)
	label       string
	params      map[string]string
	title       string // report title
	description string // scenario text for the report
}

func setupJet(fs *pflag.FlagSet) func(e *env, args []string) error {
	rf := addReadFlags(fs)
	run := addRunFlags(fs)
	if f := fs.Lookup("shard"); f != nil {
		f.Usage = "not for jet: a pulse and its budget span the whole series (split per-frame maps with derive or pressure --shard)"
	}
	if f := fs.Lookup("resume"); f != nil {
		f.Usage = "continue writing the per-frame maps of an interrupted run in the same --out folder (maps done with the same inputs and settings are kept)"
	}
	s := &jetSettings{}
	var params []string
	var rest string
	var seed uint
	fs.Float64Var(&s.exit.X, "exit", 0, "x of the nozzle exit plane [m]")
	fs.Float64Var(&s.exit.Diameter, "diameter", 0, "nozzle inner diameter (slot width) D [m]")
	fs.Float64Var(&s.exit.LipOuter, "lip", 0, "outer radius of the nozzle lip [m] (default D/2)")
	fs.BoolVar(&s.slot, "slot", false, "planar slot jet about y = --axis (per unit depth)")
	fs.Float64Var(&s.exit.Rho, "rho", pressure.Water20.Rho, "fluid density [kg/m^3] (default: water at 20 C)")
	fs.Float64Var(&s.exit.Nu, "nu", pressure.Water20.Nu, "kinematic viscosity [m^2/s] (default: water at 20 C)")
	fs.StringVar(&s.pulse, "pulse", "", "pulse start and end T0,T1 [s] (default: detected)")
	fs.Float64Var(&s.threshold, "threshold", circulation.PulseThreshold, "pulse detection threshold as a share of the peak exit velocity")
	fs.Float64Var(&s.noise, "noise", -1, "velocity noise per component [m/s] for the uncertainties (default: estimated from the data)")
	fs.IntVar(&s.samples, "samples", 16, "Monte-Carlo replicas for the uncertainties (0: none, about 10 times faster); the first 8 repeat the pressure reconstruction")
	fs.UintVar(&seed, "seed", 1, "seed of the Monte-Carlo noise")
	fs.IntVar(&s.smooth, "smooth", circulation.BudgetSmooth, "half-width in frames of the smoothing differentiator for dI/dt (2 or more)")
	fs.BoolVar(&s.noPressure, "no-pressure", false, "skip the pressure reconstruction (route (a) is then not computed)")
	fs.StringVar(&rest, "rest", "", "time [s] at which the fluid was at rest, before the first frame (improves the first frames' acceleration)")
	fs.StringVar(&s.label, "label", "", "label of this run, recorded in the summary (for compare)")
	sf := addSolidFlags(fs)
	mapList := fs.String("maps", "", "write per-frame maps into OUT/maps: quantities of \"wakekit derive\" (vorticity, q, lambda2, swirl, ...) and/or pressure, comma-separated (default: none)")
	mapFormat := fs.String("map-format", "png", "formats of the per-frame maps, comma-separated: csv, vtk, png")
	fs.StringArrayVar(&params, "param", nil, "run parameter KEY=VALUE recorded in the summary (repeatable; for compare --by KEY)")
	return func(e *env, args []string) error {
		s.seed = uint64(seed)
		s.exit.AxisY = rf.axis
		if !rf.axisymmetric && !s.slot {
			return usagef("say how to read the plane: --axisymmetric (round nozzle) or --slot (planar slot)")
		}
		if rf.axisymmetric && s.slot {
			return usagef("--axisymmetric and --slot exclude each other")
		}
		if !fs.Changed("diameter") {
			return usagef("--diameter is required")
		}
		if err := s.checkValues(fs.Changed("lip")); err != nil {
			return err
		}
		var err error
		if s.solid, err = sf.parse(rf.axis); err != nil {
			return err
		}
		if run.workers < 0 {
			return usagef("--workers %d: give the number of frames to process at once (0: all cores)", run.workers)
		}
		if run.shard != "" {
			return usagef("--shard: jet analyses the whole series at once (a pulse and its budget span many frames), so it cannot be split into shares; split per-frame maps with \"wakekit derive --shard\" or \"wakekit pressure --shard\" instead")
		}
		s.restTime = math.NaN()
		if rest != "" {
			t, err := strconv.ParseFloat(strings.TrimSpace(rest), 64)
			if err != nil {
				return usagef("--rest %q is not a time in seconds", rest)
			}
			if math.IsNaN(t) || math.IsInf(t, 0) {
				return usagef("--rest %s: give the finite time in seconds at which the fluid was at rest, e.g. 0", rest)
			}
			s.restTime = t
		}
		if fs.Changed("maps") {
			if s.maps, err = parseJetMaps(*mapList, *mapFormat); err != nil {
				return err
			}
			if s.maps.pressure && s.noPressure {
				return usagef("--maps pressure needs the pressure reconstruction: leave out --no-pressure")
			}
		} else if fs.Changed("map-format") {
			return usagef("--map-format needs --maps (the quantities to map)")
		}
		if s.params, err = parseParams(params); err != nil {
			return err
		}
		if s.read, err = rf.options(); err != nil {
			return err
		}
		series, err := rf.open(args)
		if err != nil {
			return err
		}
		if s.solid != nil {
			first, err := series.Frame(0)
			if err != nil {
				return err
			}
			if err := s.solid.load(first, s.read); err != nil {
				return err
			}
		}
		var dir string
		// The output folder is made only once the analysis has succeeded, so a failed run
		// leaves nothing behind.
		dirFn := func() (string, error) {
			var err error
			dir, err = run.outDir("jet", args)
			return dir, err
		}
		s.title = "Starting-jet budget"
		if s.label != "" {
			s.title += ": " + s.label
		}
		// SIGINT or SIGTERM stops the run; maps already written are kept for --resume.
		ctx, stop := pipeline.SignalContext(context.Background())
		defer stop()
		out, err := runJet(ctx, e, series, s, run, args, dirFn)
		if err != nil {
			return err
		}
		printJetSummary(e.stdout, out)
		fmt.Fprintf(e.stdout, "\nReport: %s\n", filepath.Join(dir, "report.html"))
		if out.mapsDir != "" {
			fmt.Fprintf(e.stdout, "Maps: %s (%s)\n", out.mapsDir, out.mapsReport)
		}
		return nil
	}
}

// checkValues refuses flag values that parse as numbers but make no sense, saying what to
// give instead; lipGiven tells whether --lip was given (0 is its default, meaning D/2).
func (s *jetSettings) checkValues(lipGiven bool) error {
	finite := func(v float64) bool { return !math.IsNaN(v) && !math.IsInf(v, 0) }
	c := s.exit
	switch {
	case !finite(c.Diameter) || c.Diameter <= 0:
		return usagef("--diameter %g: give the nozzle inner diameter (slot width) in m, a positive number, e.g. 0.025", c.Diameter)
	case !finite(c.X):
		return usagef("--exit %g: give the x of the nozzle exit plane in m, a finite number, e.g. 0", c.X)
	case !finite(c.Rho) || c.Rho <= 0:
		return usagef("--rho %g: give the fluid density in kg/m^3, a positive number, e.g. 998.2 for water at 20 C", c.Rho)
	case !finite(c.Nu) || c.Nu <= 0:
		return usagef("--nu %g: give the kinematic viscosity in m^2/s, a positive number, e.g. 1.004e-6 for water at 20 C", c.Nu)
	case lipGiven && (!finite(c.LipOuter) || c.LipOuter < c.Diameter/2):
		return usagef("--lip %g: give the outer radius of the nozzle lip in m, at least the inner radius D/2 = %g m (or leave --lip out for a knife edge)", c.LipOuter, c.Diameter/2)
	case math.IsNaN(s.noise) || math.IsInf(s.noise, 0) || (s.noise < 0 && s.noise != -1):
		return usagef("--noise %g: give the velocity noise per component in m/s, zero or positive (e.g. 0.002), or leave --noise out to estimate it from the data", s.noise)
	case s.samples < 0 || s.samples > 1000:
		return usagef("--samples %d: give the number of Monte-Carlo replicas, 0 (no uncertainties) to 1000", s.samples)
	case s.smooth < 2:
		// The differentiator fits a quadratic to 2*smooth+1 frames and needs at least four.
		return usagef("--smooth %d: give the half-width of the dI/dt differentiator in frames, 2 or more (default %d): it fits a quadratic over 2*smooth+1 frames and needs at least four", s.smooth, circulation.BudgetSmooth)
	case !(s.threshold > 0 && s.threshold < 1):
		return usagef("--threshold %g: give the pulse detection threshold as a share of the peak exit velocity, strictly between 0 and 1 (default %g)", s.threshold, circulation.PulseThreshold)
	}
	if s.pulse != "" {
		parts := splitList(s.pulse)
		if len(parts) != 2 {
			return usagef("--pulse %q is not T0,T1 (two times in seconds)", s.pulse)
		}
		for n, p := range parts {
			v, err := strconv.ParseFloat(p, 64)
			if err != nil {
				return usagef("--pulse %q: cannot read %q as a time", s.pulse, p)
			}
			if !finite(v) {
				return usagef("--pulse %s: %q is not a finite time; give the pulse start and end in seconds, e.g. 0.1,1.9", s.pulse, p)
			}
			s.pulseT[n] = v
		}
		if !(s.pulseT[1] > s.pulseT[0]) {
			return usagef("--pulse %s: the end T1 must come after the start T0; give T0,T1 with T0 < T1, e.g. 0.1,1.9", s.pulse)
		}
	}
	return s.exit.Validate()
}

func parseParams(list []string) (map[string]string, error) {
	m := map[string]string{}
	for _, p := range list {
		k, v, ok := strings.Cut(p, "=")
		k = strings.TrimSpace(k)
		if !ok || k == "" {
			return nil, usagef("--param %q is not KEY=VALUE", p)
		}
		m[k] = strings.TrimSpace(v)
	}
	return m, nil
}

// jetFrame is what the pipeline stage returns for one frame: the measured record and the
// records of the Monte-Carlo replicas.
type jetFrame struct {
	rec  circulation.BudgetRecord
	reps []circulation.BudgetRecord
}

// jetOutcome is the result of a jet analysis.
type jetOutcome struct {
	settings   *jetSettings
	series     circulation.BudgetSeries
	pulses     []circulation.BudgetPulse
	figures    [][]circulation.BudgetFigure
	spread     [][]float64
	noise      float64
	noiseFrom  string
	notDone    []string
	files      []string
	axi        bool
	frameCount int
	seriesRef  *piv.Series            // for the snapshot maps (with the solid mask applied)
	measure    circulation.ExitConfig // the exit as measured: X moved off a wall's end face
	stationX   float64                // x of the exit station column [m]
	mapsDir    string                 // folder of the per-frame maps ("" for none)
	// bandForce, bandPB and bandPA are the per-frame Monte-Carlo spreads of dI/dt and of the
	// route (b) and (a) over-pressure forces (nil without replicas).
	bandForce, bandPB, bandPA []float64
	mapsReport                pipeline.Report
}

// runJet analyses the series and writes the outputs into the folder dirFn returns, which it
// calls only after the analysis succeeded.
func runJet(ctx context.Context, e *env, series *piv.Series, s *jetSettings, run *runFlags, inputs []string, dirFn func() (string, error)) (*jetOutcome, error) {
	if s.solid != nil {
		var err error
		if series, err = maskedSeries(series, s.solid.shape); err != nil {
			return nil, err
		}
	}
	first, err := series.Frame(0)
	if err != nil {
		return nil, err
	}
	axi := first.Geometry.Axisymmetric
	out := &jetOutcome{settings: s, axi: axi, frameCount: series.Len(), seriesRef: series, measure: s.exit}
	i0, err := circulation.ExitStation(first.Grid, s.exit)
	if err != nil {
		return nil, fmt.Errorf("%s: %w", first.Name(), err)
	}
	if s.solid != nil {
		g := first.Grid
		if solidColumns(first)[i0] {
			// The column at the exit plane lies on the end face of the wall: the exit is
			// measured at the next column, the first one wholly in the fluid.
			if i0+3 >= g.NX {
				return nil, fmt.Errorf("%s: the column x = %g m at the exit plane holds solid nodes and the view has too few columns downstream of it", first.Name(), g.X(i0))
			}
			i0++
			out.measure.X = g.X(i0)
			out.notDone = append(out.notDone, fmt.Sprintf("The grid column at the exit plane (x = %s) lies on the end face of the solid wall, so the exit program, the budgets in view and route (a) are measured at the next column, x = %s, one spacing downstream.",
				report.Format(g.X(i0-1), math.NaN(), "m"), report.Format(g.X(i0), math.NaN(), "m")))
		}
		if x, y, ok := firstSolidDownstream(first, i0); ok {
			return nil, fmt.Errorf("%s: the solid mask (%s) reaches the exit station or beyond it (a solid node at x = %g m, y = %g m, station x = %g m): the circulation and impulse in view are line integrals along every column from the station on, which must lie in the fluid; mask only the wall upstream of the exit plane",
				first.Name(), s.solid.describe, x, y, g.X(i0))
		}
	}
	out.stationX = first.Grid.X(i0)
	meas := out.measure
	// Noise level for the uncertainties.
	out.noise, out.noiseFrom = s.noise, "given (--noise)"
	if s.noise < 0 {
		var est []float64
		for _, k := range []int{0, series.Len() / 2, series.Len() - 1} {
			f, err := series.Frame(k)
			if err != nil {
				return nil, err
			}
			if v := circulation.BudgetNoiseEstimate(f); !math.IsNaN(v) {
				est = append(est, v)
			}
		}
		out.noise, out.noiseFrom = math.NaN(), "not estimated (too few usable nodes)"
		if len(est) > 0 {
			sort.Float64s(est)
			out.noise, out.noiseFrom = est[len(est)/2], "estimated from the small-scale residual of the data"
		}
	}
	samples := s.samples
	if math.IsNaN(out.noise) || out.noise == 0 {
		samples = 0
	}
	// The pressure solve dominates the cost of a replica; a few pressure replicas suffice for
	// the spread of the route (a) figures.
	pressureSamples := min(samples, maxPressureSamples)
	// Pressure reconstruction settings (route (a)).
	var popt *pressure.FrameOptions
	halo := 0
	if !s.noPressure {
		o := pressure.FrameOptions{
			Accel: pressure.AccelOptions{Method: pressure.Eulerian},
			Fluid: pressure.Fluid{Rho: meas.Rho, Nu: meas.Nu},
			Solve: pressure.Options{Dirichlet: pressure.Right | pressure.Top},
			Exit:  &pressure.Exit{X: meas.X, Radius: meas.Diameter / 2, Axis: meas.AxisY},
		}
		if axi {
			o.Reference = pressure.Source
			o.Exit.Axis = first.Geometry.AxisY
		}
		if !math.IsNaN(s.restTime) {
			o.Accel.Rest, o.Accel.RestTime = true, s.restTime
		}
		if err := pressure.CheckSeries(series, o.Accel); err != nil {
			return nil, err
		}
		popt = &o
		halo = o.Accel.Halo()
	} else {
		out.notDone = append(out.notDone, "Route (a), the over-pressure force from the reconstructed exit pressure, was not computed (--no-pressure).")
	}
	var progress io.Writer
	if e.stderrTTY && !run.quiet {
		progress = e.stderr
	}
	recs := make([]circulation.BudgetRecord, 0, series.Len())
	repRecs := make([][]circulation.BudgetRecord, samples)
	proc := func(ctx context.Context, k int, fr pipeline.Frames) (jetFrame, error) {
		f, err := fr.Frame(k)
		if err != nil {
			return jetFrame{}, err
		}
		var jf jetFrame
		if jf.rec, err = measureJetFrame(f, meas); err != nil {
			return jf, err
		}
		jf.rec.PressureA = math.NaN()
		if popt != nil {
			res, err := pressure.Reconstruct(fr, k, *popt)
			if err != nil {
				return jf, err
			}
			if res.Exit != nil {
				jf.rec.PressureA = res.Exit.P
			}
		}
		for r := 0; r < samples; r++ {
			nf := noisyFrames{Frames: fr, sigma: out.noise, seed: s.seed, replica: r, replicas: samples}
			c, err := nf.Frame(k)
			if err != nil {
				return jf, err
			}
			rr, err := measureJetFrame(c, meas)
			if err != nil {
				return jf, err
			}
			rr.PressureA = math.NaN()
			if popt != nil && r < pressureSamples {
				res, err := pressure.Reconstruct(nf, k, *popt)
				if err != nil {
					return jf, err
				}
				if res.Exit != nil {
					rr.PressureA = res.Exit.P
				}
			}
			jf.reps = append(jf.reps, rr)
		}
		return jf, nil
	}
	emit := func(k int, jf jetFrame) error {
		recs = append(recs, jf.rec)
		for r := range jf.reps {
			repRecs[r] = append(repRecs[r], jf.reps[r])
		}
		return nil
	}
	if _, err := pipeline.Run(ctx, series, pipeline.Options{Workers: run.workers, Halo: halo, Progress: progress, Label: "jet"}, proc, emit); err != nil {
		return nil, err
	}
	if progress != nil {
		fmt.Fprintln(progress)
	}
	if len(recs) < 4 {
		return nil, fmt.Errorf("the series has %d frames; the jet budget needs at least 4", len(recs))
	}
	out.series = circulation.BudgetHistories(recs, meas, s.smooth)
	var pulses []circulation.Pulse
	if s.pulse != "" {
		a, b := s.pulseT[0], s.pulseT[1]
		p, err := circulation.PulseGiven(out.series.T, out.series.U0, a, b)
		if err != nil {
			return nil, fmt.Errorf("--pulse %s: %v (the frames span %g..%g s)", s.pulse, err, out.series.T[0], out.series.T[len(out.series.T)-1])
		}
		pulses = []circulation.Pulse{p}
	} else {
		pulses = circulation.PulseDetect(out.series.T, out.series.U0, s.threshold)
		if len(pulses) == 0 {
			return nil, fmt.Errorf("no pulse found: the exit velocity at x = %g m never exceeds %g of its peak; check --exit, --axis and --diameter",
				meas.X, s.threshold)
		}
	}
	out.pulses = circulation.BudgetPulses(out.series, pulses, meas, axi)
	reps := make([][]circulation.BudgetPulse, samples)
	var repForce, repPB, repPA [][]float64
	for r := range reps {
		h := circulation.BudgetHistories(repRecs[r], meas, s.smooth)
		repForce, repPB = append(repForce, h.Force), append(repPB, h.PressureB)
		if r < pressureSamples {
			repPA = append(repPA, h.PressureA)
		}
		// Each replica finds its own pulses, so the detection's sensitivity to noise enters the
		// spread; a replica that splits the record differently keeps the measured pulses.
		rp := pulses
		if s.pulse == "" {
			if d := circulation.PulseDetect(h.T, h.U0, s.threshold); len(d) == len(pulses) {
				rp = d
			}
		}
		if r >= pressureSamples {
			// Replicas beyond the pressure replicas reuse the measured route (a) force, and
			// route (a) figures take their spread from the pressure replicas only.
			copy(h.PressureA, out.series.PressureA)
		}
		reps[r] = circulation.BudgetPulses(h, rp, meas, axi)
	}
	out.bandForce = circulation.BudgetSampleSpread(repForce)
	out.bandPB = circulation.BudgetSampleSpread(repPB)
	out.bandPA = circulation.BudgetSampleSpread(repPA)
	for q, p := range out.pulses {
		base := p.Figures()
		var rf, rfp [][]circulation.BudgetFigure
		for r := range reps {
			rf = append(rf, reps[r][q].Figures())
			if r < pressureSamples {
				rfp = append(rfp, rf[r])
			}
		}
		spread := circulation.BudgetSpread(base, rf)
		spreadP := circulation.BudgetSpread(base, rfp)
		for n, f := range base {
			if strings.HasSuffix(f.Key, "_a") || f.Key == "route_gap" || f.Key == "overpressure_share" {
				spread[n] = spreadP[n]
			}
		}
		for n, f := range base {
			if math.IsNaN(f.Value) {
				spread[n] = math.NaN() // no uncertainty for a figure that was not computed
			}
		}
		out.figures = append(out.figures, base)
		out.spread = append(out.spread, spread)
		if math.IsNaN(p.FormationNumber) {
			out.notDone = append(out.notDone, fmt.Sprintf("Pulse %d: no formation number, because the circulation in view never exceeded the formed ring's: the ring took all the circulation delivered (stroke ratio %.3g at or below the formation number).", q+1, p.StrokeRatio))
		}
	}
	out.notDone = append(out.notDone,
		"The pressure on the exit plane outside the lip (r > outer lip radius) and on the lip face is not measured; route (b) uses the quasi-steady Bernoulli estimate -rho|u|^2/2 there, which leaves out the unsteady term -rho dphi/dt.",
		"Momentum exchanged beyond the edges of the view (above the top row, downstream of the last column) is not seen by either route.",
		fmt.Sprintf("Route (a) uncertainties come from %d of the Monte-Carlo replicas (the pressure solve is the costly step).", min(samples, maxPressureSamples)))
	dir, err := dirFn()
	if err != nil {
		return nil, err
	}
	// The maps come first: a run stopped while writing them has written no summary yet, and
	// --resume finishes the maps and then writes it.
	if s.maps != nil {
		rep, mdir, err := writeJetMaps(ctx, e, series, s, run, dir, popt, first.Geometry)
		if err != nil {
			return nil, err
		}
		out.mapsDir, out.mapsReport = mdir, rep
	}
	if err := writeJetOutputs(dir, out, inputs); err != nil {
		return nil, err
	}
	return out, nil
}

// maxPressureSamples bounds the Monte-Carlo replicas that repeat the pressure reconstruction.
const maxPressureSamples = 8

// noisyFrames serves replica r of the series: every frame with its own seeded noise, the same
// whichever worker asks for it, so the time differences of the pressure stage see one
// consistent noisy series.
type noisyFrames struct {
	pipeline.Frames
	sigma             float64
	seed              uint64
	replica, replicas int
}

func (n noisyFrames) Frame(k int) (*piv.Field, error) {
	f, err := n.Frames.Frame(k)
	if err != nil {
		return nil, err
	}
	c := f.Clone()
	nz := analytic.Noise{Sigma: n.sigma, Seed: n.seed, Stream: uint64(k)*uint64(n.replicas+1) + uint64(n.replica)}
	if _, err := nz.Apply(c); err != nil {
		return nil, err
	}
	return c, nil
}

func measureJetFrame(f *piv.Field, c circulation.ExitConfig) (circulation.BudgetRecord, error) {
	ex, err := circulation.ExitMeasure(f, c)
	if err != nil {
		return circulation.BudgetRecord{}, err
	}
	v, err := circulation.BudgetMeasure(f, c)
	if err != nil {
		return circulation.BudgetRecord{}, err
	}
	return circulation.BudgetRecord{Exit: ex, View: v}, nil
}

// summaryFormat and summaryVersion identify the jet summary file for compare.
const (
	summaryFormat  = "wakekit-jet-summary"
	summaryVersion = 1
)

// jsonFigure is one figure in summary.json; null values were not computed.
type jsonFigure struct {
	Value       *float64 `json:"value"`
	Uncertainty *float64 `json:"uncertainty"`
	Unit        string   `json:"unit"`
	Name        string   `json:"name"`
}

type jsonPulse struct {
	Index   int                   `json:"index"`
	Figures map[string]jsonFigure `json:"figures"`
}

type jsonSummary struct {
	Format      string            `json:"format"`
	Version     int               `json:"version"`
	Program     string            `json:"program"`
	Label       string            `json:"label"`
	Params      map[string]string `json:"params"`
	Geometry    string            `json:"geometry"`
	Inputs      []string          `json:"inputs"`
	Frames      int               `json:"frames"`
	Settings    map[string]any    `json:"settings"`
	Noise       map[string]any    `json:"noise"`
	Pulses      []jsonPulse       `json:"pulses"`
	NotMeasured []string          `json:"not_measured"`
}

func num(x float64) *float64 {
	if math.IsNaN(x) || math.IsInf(x, 0) {
		return nil
	}
	return &x
}

func (o *jetOutcome) summary(inputs []string) jsonSummary {
	s := o.settings
	geom := "slot"
	if o.axi {
		geom = "axisymmetric"
	}
	js := jsonSummary{Format: summaryFormat, Version: summaryVersion, Program: "wakekit " + version,
		Label: s.label, Params: s.params, Geometry: geom, Inputs: inputs, Frames: o.frameCount,
		Settings: map[string]any{
			"exit_x_m": s.exit.X, "diameter_m": s.exit.Diameter, "lip_outer_m": s.exit.LipOuter,
			"axis_y_m": s.exit.AxisY, "rho_kg_m3": s.exit.Rho, "nu_m2_s": s.exit.Nu,
			"threshold": s.threshold, "pulse": s.pulse, "smooth_frames": s.smooth, "pressure": !s.noPressure,
			"exit_station_x_m": o.stationX,
		},
		Noise:       map[string]any{"sigma_m_s": num(o.noise), "source": o.noiseFrom, "samples": s.samples, "seed": s.seed},
		NotMeasured: o.notDone,
	}
	if m := s.maps; m != nil {
		var names []string
		for _, q := range m.derive {
			names = append(names, q.name)
		}
		if m.pressure {
			names = append(names, "pressure")
		}
		js.Settings["maps"] = names
		js.Settings["map_formats"] = m.formats
	}
	if s.solid != nil {
		for k, v := range s.solid.settings() {
			js.Settings[k] = v
		}
	}
	if js.Params == nil {
		js.Params = map[string]string{}
	}
	for q, figs := range o.figures {
		p := jsonPulse{Index: q + 1, Figures: map[string]jsonFigure{}}
		for n, f := range figs {
			p.Figures[f.Key] = jsonFigure{Value: num(f.Value), Uncertainty: num(o.spread[q][n]), Unit: f.Unit, Name: f.Name}
		}
		js.Pulses = append(js.Pulses, p)
	}
	return js
}

func writeJetOutputs(dir string, o *jetOutcome, inputs []string) error {
	js := o.summary(inputs)
	write := func(name string, fn func(w io.Writer) error) error {
		p := filepath.Join(dir, name)
		if err := piv.WriteFileAtomic(p, fn); err != nil {
			return err
		}
		o.files = append(o.files, p)
		return nil
	}
	if err := write("summary.json", func(w io.Writer) error {
		enc := json.NewEncoder(w)
		enc.SetIndent("", "  ")
		return enc.Encode(js)
	}); err != nil {
		return err
	}
	if err := write("timeseries.csv", func(w io.Writer) error { return writeTimeseries(w, o.series) }); err != nil {
		return err
	}
	plots, err := jetPlots(o)
	if err != nil {
		return err
	}
	for _, p := range plots {
		if err := write(p.file, func(w io.Writer) error { _, err := w.Write(p.img.PNG); return err }); err != nil {
			return err
		}
	}
	rep := jetReport(o, js, plots)
	return write("report.html", rep.Write)
}

func writeTimeseries(w io.Writer, s circulation.BudgetSeries) error {
	cols := []struct {
		name string
		v    []float64
	}{
		{"t [s]", s.T}, {"U0 [m/s]", s.U0}, {"u_centre [m/s]", s.Centre}, {"L [m]", s.Stroke}, {"t_star [1]", s.TStar},
		{"F_m [N]", s.Fm}, {"F_out [N]", s.Fout}, {"P_out_bernoulli [N]", s.Pout},
		{"vorticity_flux [m^2/s^2]", s.VortFlux}, {"radial_flux [m^2/s^2]", s.RadFlux},
		{"delivered [m^2/s]", s.Delivered}, {"slug_circulation [m^2/s]", s.Slug},
		{"Gamma [m^2/s]", s.Gamma}, {"ring_Gamma [m^2/s]", s.RingGamma}, {"I [N s]", s.Impulse}, {"dI_dt [N]", s.Force},
		{"P_a [N]", s.PressureA}, {"P_b [N]", s.PressureB},
		{"ring_x [m]", s.RingX}, {"ring_core_r [m]", s.CoreR}, {"ring_impulse_radius [m]", s.RingR}, {"core_size [m]", s.CoreRadius},
	}
	for c, col := range cols {
		if c > 0 {
			io.WriteString(w, ",")
		}
		io.WriteString(w, col.name)
	}
	io.WriteString(w, "\n")
	for k := range s.T {
		for c, col := range cols {
			if c > 0 {
				io.WriteString(w, ",")
			}
			if v := col.v[k]; !math.IsNaN(v) {
				fmt.Fprintf(w, "%.8g", v)
			}
		}
		if _, err := io.WriteString(w, "\n"); err != nil {
			return err
		}
	}
	return nil
}

// printJetSummary prints the main figures of each pulse with their uncertainties.
func printJetSummary(w io.Writer, o *jetOutcome) {
	keys := []string{"stroke_ratio", "reynolds", "duration", "slug_circulation", "flux_circulation", "gamma_final",
		"ring_circulation", "formation_number", "slug_impulse", "impulse_final", "momentum_window",
		"pressure_window_a", "pressure_window_b", "overpressure_share", "peak_force", "peak_pressure_a", "peak_ratio_a",
		"ring_speed", "saffman_speed"}
	fmt.Fprintf(w, "%d frames, %s; noise %s (%s), %d Monte-Carlo replicas\n",
		o.frameCount, map[bool]string{true: "axisymmetric", false: "slot"}[o.axi], report.Format(o.noise, math.NaN(), "m/s"), o.noiseFrom, o.settings.samples)
	for q, figs := range o.figures {
		fmt.Fprintf(w, "\nPulse %d\n", q+1)
		for _, key := range keys {
			for n, f := range figs {
				if f.Key != key {
					continue
				}
				fq := report.Format(f.Value, o.spread[q][n], f.Unit)
				unc := ""
				if fq.Uncertainty != "" {
					unc = "± " + fq.Uncertainty
				}
				line := fmt.Sprintf("  %-52s %12s %-9s %s", f.Name, fq.Value, unc, fq.Unit)
				fmt.Fprintln(w, strings.TrimRight(line, " "))
			}
		}
	}
}

type jetPlot struct {
	file string
	img  report.Image
}

// jetPlots draws the exit program, the circulation budget, the thrust split and the ring path.
func jetPlots(o *jetOutcome) ([]jetPlot, error) {
	s := o.series
	var markers []report.Marker
	for q, p := range o.pulses {
		markers = append(markers,
			report.Marker{X: p.Start, Label: fmt.Sprintf("start %d", q+1)},
			report.Marker{X: p.AccelEnd}, report.Marker{X: p.DecelStart},
			report.Marker{X: p.End, Label: fmt.Sprintf("end %d", q+1)})
	}
	unit := "N"
	if !o.axi {
		unit = "N/m"
	}
	specs := []struct {
		file, title, caption string
		plot                 report.LinePlot
	}{
		{"exit_program.png", "Exit velocity program",
			"Area-averaged exit velocity U0 and centreline velocity at the exit station, with the pulse start, the ends of acceleration and deceleration, and the pulse end.",
			report.LinePlot{Title: "Exit velocity program", XLabel: "t", XUnit: "s", YLabel: "velocity", YUnit: "m/s", Markers: markers,
				Lines: []report.Line{{Label: "U0 (area average)", X: s.T, Y: s.U0}, {Label: "centreline", X: s.T, Y: s.Centre, Dashed: true}}}},
		{"circulation_budget.png", "Circulation budget versus formation time",
			"Circulation in view, its leading-ring share, the slug-model circulation (1/2) int U0^2 dt and the circulation delivered by the vorticity flux through the exit station, against the formation time t* = L/D. After the pulse t* stays constant and the curves show the later evolution as vertical runs.",
			report.LinePlot{Title: "Circulation budget", XLabel: "formation time L/D", YLabel: "circulation", YUnit: "m^2/s",
				Lines: []report.Line{{Label: "in view", X: s.TStar, Y: s.Gamma}, {Label: "leading ring", X: s.TStar, Y: s.RingGamma, Dashed: true},
					{Label: "slug model", X: s.TStar, Y: s.Slug}, {Label: "delivered (flux)", X: s.TStar, Y: s.Delivered, Dashed: true}}}},
		{"thrust_split.png", "Thrust split versus time",
			"Exit momentum flux F_m, over-pressure force by route (a) (reconstructed exit pressure) and by route (b) (dI/dt - F_m - measured exchange outside the lip), and the wake's dI/dt, with the pulse start, the ends of acceleration and deceleration, and the pulse end. " +
				"The light bands are the one-sigma Monte-Carlo spread of each frame's value: dI/dt differentiates the impulse of the whole half-plane in view, so the velocity noise makes it, and route (b) with it, far noisier than the exit-plane forces. After the pulse F_m is nearly zero and route (b) follows dI/dt.",
			report.LinePlot{Title: "Thrust split", XLabel: "t", XUnit: "s", YLabel: "force", YUnit: unit, Markers: markers,
				Lines: []report.Line{{Label: "momentum flux F_m", X: s.T, Y: s.Fm}, {Label: "over-pressure (a)", X: s.T, Y: s.PressureA, Band: o.bandPA},
					{Label: "over-pressure (b)", X: s.T, Y: s.PressureB, Dashed: true, Thin: true, Band: o.bandPB},
					{Label: "dI/dt", X: s.T, Y: s.Force, Thin: true, Band: o.bandForce}}}},
		{"ring_path.png", "Leading ring",
			"Axial position of the ring core (peak of the circulation per unit length) and its radial position (peak vorticity), with the impulse radius.",
			report.LinePlot{Title: "Leading ring", XLabel: "t", XUnit: "s", YLabel: "position", YUnit: "m",
				Lines: []report.Line{{Label: "core x", X: s.T, Y: s.RingX}, {Label: "core r", X: s.T, Y: s.CoreR}, {Label: "impulse radius", X: s.T, Y: s.RingR, Dashed: true}}}},
	}
	var out []jetPlot
	snaps, err := jetSnapshots(o)
	if err != nil {
		return nil, err
	}
	out = append(out, snaps...)
	for _, sp := range specs {
		b, err := sp.plot.PNG()
		if err != nil {
			// A plot without data (e.g. no pressure) is left out and said so.
			o.notDone = append(o.notDone, fmt.Sprintf("The plot %q was not drawn: %v.", sp.title, err))
			continue
		}
		out = append(out, jetPlot{file: sp.file, img: report.Image{Title: sp.title, Caption: sp.caption, PNG: b}})
	}
	return out, nil
}

// jetSnapshots draws vorticity maps with velocity arrows, the nozzle lip and the tracked ring
// core at three moments of the first pulse: the end of acceleration, the pulse end and the end
// of its window.
func jetSnapshots(o *jetOutcome) ([]jetPlot, error) {
	if len(o.pulses) == 0 || o.seriesRef == nil {
		return nil, nil
	}
	p := o.pulses[0]
	t := o.series.T
	nearest := func(x float64) int {
		k := sort.SearchFloat64s(t, x)
		if k >= len(t) {
			return len(t) - 1
		}
		if k > 0 && x-t[k-1] < t[k]-x {
			return k - 1
		}
		return k
	}
	ks := []int{nearest(p.AccelEnd), nearest(0.5 * (p.AccelEnd + p.End)), nearest(p.End), nearest(p.WindowEnd)}
	// Shared colour range so the maps compare: the 99.5th percentile of |vorticity| over the
	// snapshots, so that the thin exit shear layer of the first frames does not wash out the ring.
	var fields []*piv.Field
	var omegas [][]float64
	var mags []float64
	for _, k := range ks {
		f, err := o.seriesRef.Frame(k)
		if err != nil {
			return nil, err
		}
		w := vorticity.Vorticity(f, vorticity.Central)
		for _, v := range w {
			if !math.IsNaN(v) {
				mags = append(mags, math.Abs(v))
			}
		}
		fields = append(fields, f)
		omegas = append(omegas, w)
	}
	lim := 0.0
	if len(mags) > 0 {
		sort.Float64s(mags)
		lim = mags[int(0.995*float64(len(mags)-1))]
	}
	if !(lim > 0) {
		return nil, nil
	}
	c := o.settings.exit
	axis := c.AxisY
	if o.axi {
		axis = fields[0].Geometry.AxisY
	}
	R, Rout := c.Diameter/2, c.LipOuter
	if Rout <= R {
		Rout = R * 1.05
	}
	var out []jetPlot
	yName, caption := "y", "Vorticity (central differences) with velocity arrows"
	if o.axi {
		yName, caption = "r", "Azimuthal vorticity (central differences) with velocity arrows"
	}
	wall := []report.Overlay{{Label: "nozzle lip", Kind: report.Path, X: []float64{c.X, c.X}, Y: []float64{axis + R, axis + Rout}}}
	caption += ", the nozzle lip at the exit plane"
	if sm := o.settings.solid; sm != nil {
		caption = strings.TrimSuffix(caption, ", the nozzle lip at the exit plane")
		g := fields[0].Grid
		if n, ok := sm.shape.(pressure.Nozzle); ok {
			x0 := math.Min(g.X0-g.DX/2, n.X)
			wall = []report.Overlay{report.RectOverlay("nozzle wall", x0, n.Axis+n.RIn, n.X, n.Axis+n.ROut)}
			if lo := n.Axis - n.ROut; lo >= g.Y0-g.DY/2 {
				w := report.RectOverlay("", x0, lo, n.X, n.Axis-n.RIn)
				wall = append(wall, w)
			}
			caption += ", the masked nozzle wall (outline; its nodes, solid, in grey)"
		} else {
			wall = nil
			caption += ", the solid nodes of the mask in grey"
		}
	}
	caption += " and the leading ring's core."
	for n, k := range ks {
		ov := append([]report.Overlay(nil), wall...)
		if x, r := o.series.RingX[k], o.series.CoreR[k]; !math.IsNaN(x) && !math.IsNaN(r) {
			ov = append(ov, report.Overlay{Label: "ring core", Kind: report.Markers, X: []float64{x}, Y: []float64{axis + r}})
		}
		m := report.MapPlot{Grid: fields[n].Grid, Values: omegas[n], Title: fmt.Sprintf("vorticity at t = %.3g s", t[k]),
			Unit: "1/s", Signed: true, Min: -lim, Max: lim, YName: yName, Arrows: fields[n], Overlays: ov}
		b, err := m.PNG(900, 450)
		if err != nil {
			o.notDone = append(o.notDone, fmt.Sprintf("The vorticity map at t = %.3g s was not drawn: %v.", t[k], err))
			continue
		}
		out = append(out, jetPlot{file: fmt.Sprintf("vorticity_%d.png", n+1), img: report.Image{
			Title:   fmt.Sprintf("Vorticity at t = %.3g s", t[k]),
			Caption: caption,
			PNG:     b}})
	}
	return out, nil
}

// jetReport assembles the HTML report from the summary.
func jetReport(o *jetOutcome, js jsonSummary, plots []jetPlot) *report.Report {
	s := o.settings
	r := &report.Report{Title: s.title, Subtitle: s.description}
	for q, figs := range o.figures {
		for n, f := range figs {
			fq := report.Format(f.Value, o.spread[q][n], f.Unit)
			r.Summary = append(r.Summary, report.Row{Group: fmt.Sprintf("Pulse %d: %s", q+1, f.Group), Name: f.Name,
				Value: fq.Value, Uncertainty: fq.Uncertainty, Unit: fq.Unit})
		}
	}
	for _, p := range plots {
		r.Images = append(r.Images, p.img)
	}
	r.Inputs = [][2]string{{"input", strings.Join(js.Inputs, " ")}, {"frames", fmt.Sprint(js.Frames)}, {"geometry", js.Geometry}}
	if s.label != "" {
		r.Inputs = append(r.Inputs, [2]string{"label", s.label})
	}
	keys := make([]string, 0, len(s.params))
	for k := range s.params {
		keys = append(keys, k)
	}
	sort.Strings(keys)
	for _, k := range keys {
		r.Inputs = append(r.Inputs, [2]string{"param " + k, s.params[k]})
	}
	skeys := make([]string, 0, len(js.Settings))
	for k := range js.Settings {
		skeys = append(skeys, k)
	}
	sort.Strings(skeys)
	for _, k := range skeys {
		r.Settings = append(r.Settings, [2]string{k, fmt.Sprint(js.Settings[k])})
	}
	r.Settings = append(r.Settings, [2]string{"noise sigma", report.Format(o.noise, math.NaN(), "m/s").String() + " (" + o.noiseFrom + ")"},
		[2]string{"Monte-Carlo replicas, seed", fmt.Sprintf("%d, %d", s.samples, s.seed)})
	if s.solid != nil {
		r.Settings = append(r.Settings, [2]string{"solid mask", fmt.Sprintf("%s: %d nodes in every frame", s.solid.describe, s.solid.nodes)})
	}
	r.Methods = jetMethods
	r.Unmeasured = o.notDone
	r.Cautions = report.DefaultCautions
	return r
}

var jetMethods = []report.Method{
	{Name: "Exit program", Text: "U0(t) is the area average of the axial velocity over the nozzle exit at the first grid column at or downstream of the exit plane (2 pi r weight for a round nozzle, per unit depth for a slot); the stroke L(t) is its time integral and t* = L/D the formation time. Pulses are the runs of U0 above a share of its peak; acceleration, hold and deceleration are split where U0 crosses 95% of the hold velocity.", Reference: ""},
	{Name: "Slug model", Text: "Circulation (1/2) int U0^2 dt and impulse rho A int U0^2 dt (rho A U0^2 T for a square pulse).", Reference: "Krueger & Gharib 2003; Didden 1979."},
	{Name: "Vorticity flux", Text: "The flux of azimuthal vorticity through the exit station, int u omega dr = u_c^2/2 - u_top^2/2 + int u dv/dx dr, needs no radial derivative of the thin shear layer; the radial-velocity term int u dv/dx dr carries the over-pressure contribution.", Reference: "Krueger 2005."},
	{Name: "Circulation and impulse in view", Text: "Line integrals of the velocity around axial strips of the view (Stokes' theorem) give the circulation; integrating pi rho int omega r^2 by parts gives the impulse from the velocity without derivatives. The leading ring is the part downstream of the circulation minimum behind the strongest strip.", Reference: "Lamb, Hydrodynamics, 1932, §165 (Hill's vortex check)."},
	{Name: "Formation number", Text: "The formation time at which the circulation delivered to the wake (found in view) reaches the circulation of the formed leading ring, its largest value after the pulse. When the stroke ratio is close to or below the formation number the ring takes nearly all the circulation and the figure approaches the stroke ratio or is not reached.", Reference: "Gharib, Rambod & Shariff 1998."},
	{Name: "Thrust split", Text: "Route (a): the exit-plane pressure force from the pressure reconstructed by integrating the momentum balance (Poisson integration, reviewed by van Oudheusden 2013). Route (b): dI/dt from a smoothing differentiator (Savitzky & Golay 1964) minus the exit momentum flux, minus the measured momentum flux and the Bernoulli pressure estimate on the exit plane outside the lip.", Reference: "Krueger & Gharib 2003; van Oudheusden 2013."},
	{Name: "Ring kinematics", Text: "Core position from the peak of the circulation per unit length and the peak vorticity in the core column; Gaussian core radius a = sqrt(Gamma/(pi omega_max)); speed from a straight-line fit over the second half of the time after the pulse, compared with the viscous-core speed Gamma/(4 pi R)(ln(8R/a) - 0.558).", Reference: "Saffman 1970."},
	{Name: "Uncertainties", Text: "Each figure's one-sigma spread over Monte-Carlo replicas of the whole series with independent Gaussian velocity noise of the stated level added to every vector; without a given level it is estimated from the residual between each vector and the mean of its four neighbours (median absolute deviation).", Reference: ""},
}
