package main

import (
	"context"
	"encoding/json"
	"fmt"
	"io"
	"math"
	"path/filepath"
	"strconv"
	"strings"

	"github.com/spf13/pflag"
	"github.com/wakekit/wakekit/internal/pipeline"
	"github.com/wakekit/wakekit/internal/report"
	"github.com/wakekit/wakekit/piv"
	"github.com/wakekit/wakekit/pressure"
	"github.com/wakekit/wakekit/vorticity"
)

func init() {
	register(&command{
		name:    "pressure",
		summary: "reconstructs pressure fields from a time-resolved series",
		usage:   "wakekit pressure [flags] FILES...",
		help: `Reconstructs the pressure of every frame from the velocities alone: the material acceleration
(--method eulerian: time differences plus the convective term; lagrangian: fluid parcels
tracked over --track frames each way; steady: convective term only, for single frames), the
pressure gradient from the momentum balance grad p = -rho Du/Dt + mu lap u (cylindrical terms
with --axisymmetric), and its integration by a finite-volume Poisson solve in which the
measured gradient is the flux (Neumann on every edge and around missing or solid nodes).

Reference pressure:
  --reference-edges right,top   prescribe the pressure on these edges (left, right, bottom, top)
  --reference zero              ... as --p-inf (default 0 Pa)
  --reference source            ... as the unsteady far field of the nozzle seen as a volume
                                source of the measured exit flux Q(t) (axisymmetric, needs
                                --exit and --nozzle-radius): p = p_inf + rho dQ/dt/(4 pi d)
                                - rho |u|^2/2, d the distance from the exit centre; the edges
                                must lie in irrotational fluid
  --reference-level             keep the measured gradient on those edges too and use the
                                prescribed values only to set the level (their mean)
  --reference-point X,Y         with no reference edge: p = p_inf at this point
  otherwise the mean pressure is p_inf.

Solvers (--solver): transform (direct cosine/sine transforms, full rectangles with the left
and right edges of one type, or, for planar data, the bottom and top edges of one type), multigrid (conjugate gradients with a multigrid preconditioner,
any mask, to --tolerance), paths (direct integration along many paths, a cross-check),
auto (transform when it applies, else multigrid).

Nozzle exit: --exit X and --nozzle-radius R give per-frame exit forces: momentum flux
2 pi rho int u^2 r dr, pressure force 2 pi int (p - p_inf) r dr and their sum (planar: per unit
depth, over the slot of half-width R). The exit plane need not be a grid column: the pressure
of the nearest column is carried to X with that column's measured gradient and the velocity is
taken from that column (the distance is reported). --nozzle X,R_IN,R_OUT marks the
nozzle wall (x <= X, R_IN <= |y - axis| <= R_OUT) as solid in every frame; --mask FILE does
the same for the nodes a file on the same grid marks solid in its status column. --rest-at T says the
fluid was at rest at time T before the first frame (a start from rest), so that the first
frame gets a central time difference.

Outputs: one file per frame and format (csv: velocities plus p [Pa], dpdx, dpdy [Pa/m],
ax, ay [m/s^2]; vtk; png: a map of p), pressure.csv (solver, iterations, residual and pressure
range per frame), exit_forces.csv (time, momentum flux, pressure force, sum, flux) and
pressure.json with the impulses of the record and of each pulse (acceleration, hold and
deceleration phases, and the time after the pulse: a pulse ends where the exit flux falls
below 5% of its peak). Numbers are estimates for research and design studies.

Water at 20 C is the default fluid (rho 998.2 kg/m^3, nu 1.004e-6 m^2/s).

Examples:
  wakekit pressure --dt 0.004 'tank2/run3/frame_*.csv' --reference-edges right,top
  wakekit pressure run07/frames.csv --axisymmetric --axis 0 --exit 0 --nozzle-radius 0.0125 --reference source --reference-edges right,top --rest-at 0 --out run07-p
  wakekit pressure steady/frame_0001.csv --method steady --solver multigrid --format csv,png
  wakekit pressure run07/frames.csv --axisymmetric --nozzle 0,0.0125,0.01375 --method lagrangian --track 3 --solver paths`,
		setup: setupPressure,
	})
	pipeline.RegisterFinisher("pressure", finishPressure)
}

// pressureSettings are everything besides the frames that the results depend on.
type pressureSettings struct {
	Method     string          `json:"method"`
	Track      int             `json:"track,omitempty"`
	Scheme     string          `json:"scheme"`
	Solver     string          `json:"solver"`
	Tolerance  piv.JSONFloat   `json:"tolerance"`
	Rho        piv.JSONFloat   `json:"rho_kg_m3"`
	Nu         piv.JSONFloat   `json:"nu_m2_s"`
	Edges      string          `json:"reference_edges"`
	Reference  string          `json:"reference"`
	Level      bool            `json:"reference_level,omitempty"`
	RefPoint   []piv.JSONFloat `json:"reference_point,omitempty"`
	PInf       piv.JSONFloat   `json:"p_inf_pa"`
	RestAt     *piv.JSONFloat  `json:"rest_at_s,omitempty"`
	Exit       []piv.JSONFloat `json:"exit,omitempty"`   // X, R, axis
	Nozzle     []piv.JSONFloat `json:"nozzle,omitempty"` // X, R_in, R_out
	Mask       string          `json:"mask_sha256,omitempty"`
	Formats    []string        `json:"formats"`
	Read       piv.ReadOptions `json:"read"`
	Geometry   string          `json:"geometry"`
	PlanarExit bool            `json:"planar_exit,omitempty"`
}

// pressureRecord is one frame's result in the manifest.
type pressureRecord struct {
	Time       piv.JSONFloat `json:"time_s"`
	Solver     string        `json:"solver"`
	Iterations int           `json:"iterations"`
	Residual   piv.JSONFloat `json:"residual"`
	PMin       piv.JSONFloat `json:"p_min_pa"`
	PMax       piv.JSONFloat `json:"p_max_pa"`
	Exit       *exitRecord   `json:"exit,omitempty"`
}

type exitRecord struct {
	M       piv.JSONFloat `json:"momentum_flux"`
	P       piv.JSONFloat `json:"pressure_force"`
	Sum     piv.JSONFloat `json:"sum"`
	Q       piv.JSONFloat `json:"flux"`
	Carried piv.JSONFloat `json:"carried_m"`
	Column  int           `json:"column"`
}

// pressureFloats reads a comma-separated list of exactly n numbers.
func pressureFloats(flag, s string, n int) ([]float64, error) {
	parts := splitList(s)
	if len(parts) != n {
		return nil, usagef("%s %q: give %d comma-separated numbers", flag, s, n)
	}
	out := make([]float64, n)
	for i, p := range parts {
		v, err := strconv.ParseFloat(p, 64)
		if err != nil || math.IsNaN(v) || math.IsInf(v, 0) {
			return nil, usagef("%s %q: %q is not a finite number", flag, s, p)
		}
		out[i] = v
	}
	return out, nil
}

func pressureJSONFloats(v []float64) []piv.JSONFloat {
	out := make([]piv.JSONFloat, len(v))
	for i, x := range v {
		out[i] = piv.JSONFloat(x)
	}
	return out
}

func setupPressure(fs *pflag.FlagSet) func(e *env, args []string) error {
	rdf := addReadFlags(fs)
	rho := fs.Float64("rho", pressure.Water20.Rho, "fluid density [kg/m^3] (default: water at 20 C)")
	nu := fs.Float64("nu", pressure.Water20.Nu, "kinematic viscosity [m^2/s] (default: water at 20 C)")
	method := fs.String("method", "eulerian", "material acceleration: eulerian, lagrangian or steady")
	track := fs.Int("track", 2, "lagrangian: frames a parcel is followed each way")
	scheme := fs.String("scheme", "central", "spatial difference scheme: central, richardson, least-squares or circulation")
	solver := fs.String("solver", "auto", "integrator: auto, transform, multigrid or paths")
	tol := fs.Float64("tolerance", 1e-8, "relative residual at which the multigrid solver stops")
	maxIter := fs.Int("max-iterations", 500, "most conjugate-gradient iterations")
	edges := fs.String("reference-edges", "", "edges with prescribed pressure, comma-separated: left, right, bottom, top")
	reference := fs.String("reference", "zero", "pressure model on the reference edges: zero (p_inf) or source")
	level := fs.Bool("reference-level", false, "use the reference edges only to set the pressure level")
	refPoint := fs.String("reference-point", "", "X,Y [m]: point where p = p_inf (with no reference edges)")
	pInf := fs.Float64("p-inf", 0, "reference (far-field) pressure [Pa]")
	restAt := fs.String("rest-at", "", "time [s] before the first frame at which the fluid was at rest")
	exitX := fs.String("exit", "", "x of the nozzle exit plane [m] (with --nozzle-radius)")
	radius := fs.Float64("nozzle-radius", 0, "nozzle inner radius (slot half-width) [m]")
	solidFlags := addSolidFlags(fs)
	format := fs.String("format", "csv", "output formats per frame, comma-separated: csv, vtk, png")
	rf := addRunFlags(fs)
	return func(e *env, args []string) error {
		if len(args) == 0 {
			return usagef("no input files given")
		}
		fo := pressure.FrameOptions{Fluid: pressure.Fluid{Rho: *rho, Nu: *nu}}
		if err := fo.Fluid.Validate(); err != nil {
			return usagef("--rho/--nu: %v", err)
		}
		var err error
		if fo.Accel.Method, err = pressure.ParseMethod(*method); err != nil {
			return usagef("--method: %v", err)
		}
		if *track < 1 || *track > 20 {
			return usagef("--track %d must be between 1 and 20 frames", *track)
		}
		fo.Accel.Track = *track
		if fo.Accel.Scheme, err = vorticity.ParseScheme(*scheme); err != nil {
			return usagef("--scheme: %v", err)
		}
		if fo.Solve.Solver, err = pressure.ParseSolver(*solver); err != nil {
			return usagef("--solver: %v", err)
		}
		if !(*tol > 0 && *tol < 1) {
			return usagef("--tolerance %g must be between 0 and 1", *tol)
		}
		if *maxIter < 1 {
			return usagef("--max-iterations %d must be positive", *maxIter)
		}
		fo.Solve.Tol, fo.Solve.MaxIter = *tol, *maxIter
		if fo.Solve.Dirichlet, err = pressure.ParseEdges(*edges); err != nil {
			return usagef("--reference-edges: %v", err)
		}
		if fo.Reference, err = pressure.ParseReference(*reference); err != nil {
			return usagef("--reference: %v", err)
		}
		if !pressureFinite(*pInf) {
			return usagef("--p-inf must be a finite number")
		}
		fo.Solve.PInf, fo.Solve.LevelOnly = *pInf, *level
		set := pressureSettings{Method: fo.Accel.Method.String(), Scheme: fo.Accel.Scheme.String(),
			Solver: fo.Solve.Solver.String(), Tolerance: piv.JSONFloat(*tol), Rho: piv.JSONFloat(*rho),
			Nu: piv.JSONFloat(*nu), Edges: fo.Solve.Dirichlet.String(), Reference: fo.Reference.String(),
			Level: *level, PInf: piv.JSONFloat(*pInf)}
		if fo.Accel.Method == pressure.Lagrangian {
			set.Track = *track
		}
		if *refPoint != "" {
			v, err := pressureFloats("--reference-point", *refPoint, 2)
			if err != nil {
				return err
			}
			if fo.Solve.Dirichlet != 0 {
				return usagef("--reference-point and --reference-edges exclude each other")
			}
			fo.Solve.RefPoint, fo.Solve.RefX, fo.Solve.RefY = true, v[0], v[1]
			set.RefPoint = pressureJSONFloats(v)
		}
		if *level && fo.Solve.Dirichlet == 0 {
			return usagef("--reference-level needs --reference-edges")
		}
		if *restAt != "" {
			v, err := pressureFloats("--rest-at", *restAt, 1)
			if err != nil {
				return err
			}
			fo.Accel.Rest, fo.Accel.RestTime = true, v[0]
			j := piv.JSONFloat(v[0])
			set.RestAt = &j
		}
		if *exitX != "" {
			v, err := pressureFloats("--exit", *exitX, 1)
			if err != nil {
				return err
			}
			if !(*radius > 0) || math.IsInf(*radius, 0) {
				return usagef("--exit needs --nozzle-radius R, a positive and finite radius (or slot half-width) in m; got %g", *radius)
			}
			fo.Exit = &pressure.Exit{X: v[0], Radius: *radius, Axis: rdf.axis}
			set.Exit = pressureJSONFloats([]float64{v[0], *radius, rdf.axis})
		} else if *radius != 0 {
			return usagef("--nozzle-radius needs --exit")
		}
		if fo.Reference == pressure.Source {
			if fo.Exit == nil {
				return usagef("--reference source needs the exit: --exit X --nozzle-radius R")
			}
			if !rdf.axisymmetric {
				return usagef("--reference source needs --axisymmetric (the planar source potential fixes no level)")
			}
			if fo.Solve.Dirichlet == 0 {
				return usagef("--reference source needs --reference-edges (for instance right,top)")
			}
		}
		solid, err := solidFlags.parse(rdf.axis)
		if err != nil {
			return err
		}
		for _, f := range splitList(strings.ToLower(*format)) {
			if f != "csv" && f != "vtk" && f != "png" {
				return usagef("--format %q: expected csv, vtk or png (or several, comma-separated)", f)
			}
			set.Formats = append(set.Formats, f)
		}
		if len(set.Formats) == 0 {
			return usagef("--format names no format")
		}
		opt, err := rdf.options()
		if err != nil {
			return err
		}
		set.Read = opt
		series, err := piv.OpenSeries(args, opt)
		if err != nil {
			return err
		}
		if err := pressure.CheckSeries(series, fo.Accel); err != nil {
			return err
		}
		first, err := series.Frame(0)
		if err != nil {
			return err
		}
		set.Geometry = first.Geometry.String()
		set.PlanarExit = fo.Exit != nil && !first.Geometry.Axisymmetric
		if fo.Exit != nil {
			if err := fo.Exit.Check(first.Grid); err != nil {
				return fmt.Errorf("%s: %v", first.Name(), err)
			}
		}
		if solid != nil {
			if err := solid.load(first, opt); err != nil {
				return err
			}
			fo.Solid = solid.shape
			if solid.nozzle != nil {
				set.Nozzle = pressureJSONFloats(solid.nozzle)
			}
			set.Mask = solid.digest
		}
		popt, err := rf.pipelineOptions(e, "pressure")
		if err != nil {
			return err
		}
		popt.Halo = fo.Accel.Halo()
		pr := &presser{set: set, opt: fo, names: frameBases(series)}
		tables := []pipeline.Table{{Name: "pressure.csv", Header: pressureTableHeader}}
		if fo.Exit != nil {
			tables = append(tables, pipeline.Table{Name: "exit_forces.csv", Header: pressureExitHeader(set.PlanarExit)})
		}
		b := pipeline.Batch{Command: "pressure", Version: version, Settings: set, Tables: tables}
		rep, dir, err := rf.runBatch("pressure", args, series, popt, b, pr.frame)
		if err != nil {
			return err
		}
		man, err := pipeline.ReadManifest(dir)
		if err != nil {
			return err
		}
		sum, err := summarizePressure(man)
		if err != nil {
			return err
		}
		sum.print(e.stdout, rep, dir)
		return nil
	}
}

func pressureFinite(v float64) bool { return !math.IsNaN(v) && !math.IsInf(v, 0) }

// pressureTableHeader heads pressure.csv, one row a frame.
const pressureTableHeader = "frame,time [s],solver,iterations,residual,p_min [Pa],p_max [Pa]"

// pressureExitHeader heads exit_forces.csv; planar exits give forces per unit depth.
func pressureExitHeader(planar bool) string {
	if planar {
		return "time [s],momentum flux [N/m],pressure force [N/m],sum [N/m],flux [m^2/s]"
	}
	return "time [s],momentum flux [N],pressure force [N],sum [N],flux [m^3/s]"
}

// presser computes and writes one frame.
type presser struct {
	set   pressureSettings
	opt   pressure.FrameOptions
	names []string
}

func (p *presser) frame(ctx context.Context, k int, frames pipeline.Frames, out *pipeline.Output) error {
	r, err := pressure.Reconstruct(frames, k, p.opt)
	if err != nil {
		return err
	}
	f := r.Field
	lo, hi, _ := vorticity.Range(r.P)
	rec := pressureRecord{Time: piv.JSONFloat(f.Time), Solver: r.Solver.String(), Iterations: r.Iterations,
		Residual: piv.JSONFloat(r.Residual), PMin: piv.JSONFloat(lo), PMax: piv.JSONFloat(hi)}
	row := strings.Join([]string{fmt.Sprint(k), fmtNum(f.Time), r.Solver.String(), fmt.Sprint(r.Iterations),
		fmtNum(r.Residual), fmtNum(lo), fmtNum(hi)}, ",")
	if err := out.AddRow("pressure.csv", row); err != nil {
		return err
	}
	if ex := r.Exit; ex != nil {
		rec.Exit = &exitRecord{M: piv.JSONFloat(ex.M), P: piv.JSONFloat(ex.P), Sum: piv.JSONFloat(ex.Sum),
			Q: piv.JSONFloat(ex.Q), Carried: piv.JSONFloat(ex.Carried), Column: ex.Column}
		row := strings.Join([]string{fmtNum(f.Time), fmtNum(ex.M), fmtNum(ex.P), fmtNum(ex.Sum), fmtNum(ex.Q)}, ",")
		if err := out.AddRow("exit_forces.csv", row); err != nil {
			return err
		}
	}
	cols := []piv.Column{
		{Name: "p", Unit: "Pa", Values: r.P},
		{Name: "dpdx", Unit: "Pa/m", Values: r.GX},
		{Name: "dpdy", Unit: "Pa/m", Values: r.GY},
		{Name: "ax", Unit: "m/s^2", Values: r.AX},
		{Name: "ay", Unit: "m/s^2", Values: r.AY},
	}
	base := p.names[k]
	for _, format := range p.set.Formats {
		switch format {
		case "csv":
			err = out.WriteFile(base+".csv", func(w io.Writer) error { return piv.EncodeCSV(w, f, cols...) })
		case "vtk":
			err = out.WriteFile(base+".vtk", func(w io.Writer) error { return piv.EncodeVTK(w, f, cols...) })
		case "png":
			yName := "y"
			if f.Geometry.Axisymmetric {
				yName = "r"
			}
			mp := report.MapPlot{Grid: f.Grid, Values: r.P, Unit: "Pa", Signed: true, YName: yName,
				Title: fmt.Sprintf("pressure, %s, t = %.6g s (%s, %s)", base, f.Time, p.set.Method, r.Solver)}
			err = out.WriteFile(base+"_p.png", func(w io.Writer) error { return mp.Encode(w, 900, 640) })
		}
		if err != nil {
			return err
		}
	}
	return out.SetRecord(rec)
}

// pressureSummary is pressure.json.
type pressureSummary struct {
	Command   string           `json:"command"`
	Version   string           `json:"version"`
	Frames    int              `json:"frames"`
	Settings  pressureSettings `json:"settings"`
	PMin      piv.JSONFloat    `json:"p_min_pa"`
	PMax      piv.JSONFloat    `json:"p_max_pa"`
	MaxIter   int              `json:"max_iterations_used"`
	MaxResid  piv.JSONFloat    `json:"max_residual"`
	Solvers   []string         `json:"solvers"`
	Carried   *piv.JSONFloat   `json:"exit_carried_m,omitempty"`
	Impulses  []impulseJSON    `json:"impulses,omitempty"`
	times     []float64
	m, p, sum []float64
}

type impulseJSON struct {
	Name string        `json:"name"`
	From piv.JSONFloat `json:"from_s"`
	To   piv.JSONFloat `json:"to_s"`
	M    piv.JSONFloat `json:"momentum_flux_impulse"`
	P    piv.JSONFloat `json:"pressure_impulse"`
	Sum  piv.JSONFloat `json:"sum"`
}

// summarizePressure builds the summary from a manifest alone.
func summarizePressure(man *pipeline.Manifest) (*pressureSummary, error) {
	s := &pressureSummary{Command: man.Header.Command, Version: man.Header.Version, Frames: len(man.Entries)}
	if err := json.Unmarshal(man.Header.Settings, &s.Settings); err != nil {
		return nil, fmt.Errorf("manifest settings: %v", err)
	}
	lo, hi := math.Inf(1), math.Inf(-1)
	seen := map[string]bool{}
	var q []float64
	for _, en := range man.Entries {
		var r pressureRecord
		if err := json.Unmarshal(en.Record, &r); err != nil {
			return nil, fmt.Errorf("manifest record of frame %d: %v", en.Frame, err)
		}
		if v := float64(r.PMin); !math.IsNaN(v) {
			lo = math.Min(lo, v)
		}
		if v := float64(r.PMax); !math.IsNaN(v) {
			hi = math.Max(hi, v)
		}
		s.MaxIter = max(s.MaxIter, r.Iterations)
		if v := float64(r.Residual); v > float64(s.MaxResid) {
			s.MaxResid = r.Residual
		}
		if !seen[r.Solver] {
			seen[r.Solver] = true
			s.Solvers = append(s.Solvers, r.Solver)
		}
		if r.Exit != nil {
			c := r.Exit.Carried
			s.Carried = &c
			s.times = append(s.times, float64(r.Time))
			s.m = append(s.m, float64(r.Exit.M))
			s.p = append(s.p, float64(r.Exit.P))
			s.sum = append(s.sum, float64(r.Exit.Sum))
			q = append(q, float64(r.Exit.Q))
		}
	}
	s.PMin, s.PMax = piv.JSONFloat(lo), piv.JSONFloat(hi)
	if len(s.times) > 0 {
		t, m, p, qq := s.times, s.m, s.p, q
		if ra := s.Settings.RestAt; ra != nil {
			// At rest the exit carries no momentum and the pressure is p_inf.
			t = append([]float64{float64(*ra)}, t...)
			m, p, qq = append([]float64{0}, m...), append([]float64{0}, p...), append([]float64{0}, qq...)
		}
		for _, ph := range pressure.PulseImpulses(t, m, p, qq) {
			s.Impulses = append(s.Impulses, impulseJSON{Name: ph.Name, From: piv.JSONFloat(ph.From), To: piv.JSONFloat(ph.To),
				M: piv.JSONFloat(ph.M), P: piv.JSONFloat(ph.P), Sum: piv.JSONFloat(ph.Sum)})
		}
	}
	return s, nil
}

// finishPressure writes pressure.json from the manifest.
func finishPressure(dir string, m *pipeline.Manifest) error {
	s, err := summarizePressure(m)
	if err != nil {
		return err
	}
	return piv.WriteJSON(filepath.Join(dir, "pressure.json"), s)
}

func (s *pressureSummary) print(w io.Writer, rep pipeline.Report, dir string) {
	st := s.Settings
	fmt.Fprintf(w, "pressure: %s, method %s, solver %s, %s\n", rep, st.Method, strings.Join(s.Solvers, "+"), st.Geometry)
	ref := "mean pressure p_inf"
	if st.Edges != "none" {
		ref = fmt.Sprintf("%s on %s", st.Reference, st.Edges)
		if st.Level {
			ref += " (level only)"
		}
	} else if len(st.RefPoint) == 2 {
		ref = fmt.Sprintf("p_inf at (%g, %g) m", float64(st.RefPoint[0]), float64(st.RefPoint[1]))
	}
	fmt.Fprintf(w, "  fluid rho %g kg/m^3, nu %g m^2/s; reference %s, p_inf %g Pa\n", float64(st.Rho), float64(st.Nu), ref, float64(st.PInf))
	fmt.Fprintf(w, "  pressure %.5g .. %.5g Pa", float64(s.PMin), float64(s.PMax))
	if s.MaxIter > 0 {
		fmt.Fprintf(w, "; up to %d iterations", s.MaxIter)
	}
	fmt.Fprintf(w, "; largest relative residual %.2g\n", float64(s.MaxResid))
	if len(s.times) > 0 {
		unit := "N"
		if st.PlanarExit {
			unit = "N/m"
		}
		fmt.Fprintf(w, "  exit forces at x = %g m, radius %g m", float64(st.Exit[0]), float64(st.Exit[1]))
		if s.Carried != nil && float64(*s.Carried) != 0 {
			// Carried is X_e minus the column's x: negative when the column lies downstream.
			c := float64(*s.Carried)
			way := "downstream"
			if c < 0 {
				way = "upstream"
			}
			fmt.Fprintf(w, " (pressure carried %.4g m %s from the nearest column, x = %g m, with its measured gradient; velocity from that column)",
				math.Abs(c), way, float64(st.Exit[0])-c)
		}
		fmt.Fprintf(w, ":\n  %12s %14s %14s %14s\n", "t [s]", "M ["+unit+"]", "P ["+unit+"]", "M+P ["+unit+"]")
		step := 1
		if len(s.times) > 40 {
			step = (len(s.times) + 39) / 40
		}
		for k := 0; k < len(s.times); k += step {
			fmt.Fprintf(w, "  %12.6g %14.5g %14.5g %14.5g\n", s.times[k], s.m[k], s.p[k], s.sum[k])
		}
		if step > 1 {
			fmt.Fprintf(w, "  (every %d-th frame shown; all in exit_forces.csv)\n", step)
		}
		for _, ph := range s.Impulses {
			fmt.Fprintf(w, "  %-24s %8.4g..%-8.4g s  int M dt %11.4g  int P dt %11.4g  sum %11.4g %s s\n",
				ph.Name, float64(ph.From), float64(ph.To), float64(ph.M), float64(ph.P), float64(ph.Sum), unit)
		}
	}
	files := "pressure.csv, pressure.json"
	if len(s.times) > 0 {
		files += ", exit_forces.csv"
	}
	fmt.Fprintf(w, "wrote %s (%s)\n", dir, files)
}
