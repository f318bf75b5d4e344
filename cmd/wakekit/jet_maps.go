package main

import (
	"context"
	"os"
	"path/filepath"
	"strings"

	"github.com/wakekit/wakekit/internal/pipeline"
	"github.com/wakekit/wakekit/piv"
	"github.com/wakekit/wakekit/pressure"
	"github.com/wakekit/wakekit/vorticity"
)

// jetMapsDir is the folder inside jet's output folder that holds the per-frame maps.
const jetMapsDir = "maps"

// jetMaps are the per-frame maps jet writes when asked: the quantities of "wakekit derive"
// and the pressure of "wakekit pressure", through the same per-frame code, so a map of jet
// equals the file those commands write for the same frame and settings.
type jetMaps struct {
	derive   []deriveQuantity
	pressure bool
	formats  []string
}

// parseJetMaps reads --maps (derive's quantity names and "pressure") and --map-format.
func parseJetMaps(list, formats string) (*jetMaps, error) {
	m := &jetMaps{}
	var rest []string
	for _, q := range splitList(strings.ToLower(list)) {
		if q == "pressure" || q == "p" {
			m.pressure = true
			continue
		}
		rest = append(rest, q)
	}
	if len(rest) > 0 {
		qs, err := parseDeriveQuantities(strings.Join(rest, ","))
		if err != nil {
			return nil, usagef("--maps: %v", strings.TrimPrefix(err.Error(), "--quantities: "))
		}
		m.derive = qs
	}
	if len(m.derive) == 0 && !m.pressure {
		return nil, usagef("--maps %q names no map: give quantities of \"wakekit derive\" (vorticity, q, lambda2, swirl, ...) or pressure", list)
	}
	seen := map[string]bool{}
	for _, f := range splitList(strings.ToLower(formats)) {
		if f != "csv" && f != "vtk" && f != "png" {
			return nil, usagef("--map-format %q: expected csv, vtk or png (or several, comma-separated)", f)
		}
		if !seen[f] {
			seen[f] = true
			m.formats = append(m.formats, f)
		}
	}
	if len(m.formats) == 0 {
		return nil, usagef("--map-format names no format")
	}
	return m, nil
}

// jetMapSettings are everything besides the frames the maps depend on; the maps folder's
// manifest keeps them so that --resume refuses to mix maps of other settings.
type jetMapSettings struct {
	Derive   *deriveSettings   `json:"derive,omitempty"`
	Pressure *pressureSettings `json:"pressure,omitempty"`
	Solid    map[string]any    `json:"solid,omitempty"`
}

// writeJetMaps writes the maps of every frame of series (with the solid mask applied) into
// dir/maps through the batch engine: in frame order, each file atomically, with a manifest, so
// that an interrupted run keeps the finished frames and --resume computes only the rest. popt
// is the pressure reconstruction of route (a) (nil when it is not done).
func writeJetMaps(ctx context.Context, e *env, series *piv.Series, s *jetSettings, run *runFlags, dir string, popt *pressure.FrameOptions, geom piv.Geometry) (pipeline.Report, string, error) {
	m := s.maps
	mdir := filepath.Join(dir, jetMapsDir)
	if err := os.MkdirAll(mdir, 0o755); err != nil {
		return pipeline.Report{}, mdir, err
	}
	names := frameBases(series)
	set := jetMapSettings{}
	var tables []pipeline.Table
	var d *deriver
	if len(m.derive) > 0 {
		ds := deriveSettings{Scheme: vorticity.Central.String(), Formats: m.formats, GammaRadius: 2,
			Width: 900, Height: 640, Read: s.read}
		for _, q := range m.derive {
			ds.Quantities = append(ds.Quantities, q.name)
		}
		d = &deriver{set: ds, scheme: vorticity.Central, qs: m.derive, names: names}
		set.Derive = &ds
		tables = append(tables, pipeline.Table{Name: "derive.csv", Header: d.tableHeader()})
	}
	var pr *presser
	halo := 0
	if m.pressure {
		if popt == nil {
			return pipeline.Report{}, mdir, usagef("--maps pressure needs the pressure reconstruction: leave out --no-pressure")
		}
		o := *popt
		ps := pressureSettings{Method: o.Accel.Method.String(), Scheme: o.Accel.Scheme.String(), Solver: o.Solve.Solver.String(),
			Tolerance: piv.JSONFloat(1e-8), Rho: piv.JSONFloat(o.Fluid.Rho), Nu: piv.JSONFloat(o.Fluid.Nu),
			Edges: o.Solve.Dirichlet.String(), Reference: o.Reference.String(), Formats: m.formats, Read: s.read,
			Geometry: geom.String(), PlanarExit: o.Exit != nil && !geom.Axisymmetric}
		if o.Accel.Rest {
			ra := piv.JSONFloat(o.Accel.RestTime)
			ps.RestAt = &ra
		}
		if o.Exit != nil {
			ps.Exit = pressureJSONFloats([]float64{o.Exit.X, o.Exit.Radius, o.Exit.Axis})
		}
		// The pressure files carry "_pressure" after the frame's name, so that a frame's
		// derived quantities and its pressure each keep the file the other command writes.
		pn := make([]string, len(names))
		for k, b := range names {
			pn[k] = b + "_pressure"
		}
		pr = &presser{set: ps, opt: o, names: pn}
		set.Pressure = &ps
		tables = append(tables, pipeline.Table{Name: "pressure.csv", Header: pressureTableHeader})
		if o.Exit != nil {
			tables = append(tables, pipeline.Table{Name: "exit_forces.csv", Header: pressureExitHeader(ps.PlanarExit)})
		}
		halo = o.Accel.Halo()
	}
	if s.solid != nil {
		set.Solid = s.solid.settings()
	}
	opt := pipeline.Options{Workers: run.workers, Halo: halo, Resume: run.resume, Label: "jet maps"}
	if e.stderrTTY && !run.quiet {
		opt.Progress = e.stderr
	}
	b := pipeline.Batch{Dir: mdir, Command: "jet-maps", Version: version, Settings: set, Tables: tables}
	rep, err := pipeline.RunBatch(ctx, series, opt, b, func(ctx context.Context, k int, frames pipeline.Frames, out *pipeline.Output) error {
		if d != nil {
			if err := d.frame(ctx, k, frames, out); err != nil {
				return err
			}
		}
		if pr != nil {
			return pr.frame(ctx, k, frames, out)
		}
		return nil
	})
	if err != nil {
		return rep, mdir, batchError(err, rep)
	}
	return rep, mdir, nil
}
