package main

import (
	"context"
	"encoding/json"
	"fmt"
	"io"
	"math"
	"path/filepath"
	"strings"
	"sync"

	"github.com/spf13/pflag"
	"github.com/wakekit/wakekit/internal/pipeline"
	"github.com/wakekit/wakekit/internal/report"
	"github.com/wakekit/wakekit/piv"
	"github.com/wakekit/wakekit/vorticity"
)

func init() {
	register(&command{
		name:    "derive",
		summary: "writes vorticity, Q, lambda2, swirling strength, Gamma1/Gamma2, divergence, strain",
		usage:   "wakekit derive [flags] FILES...",
		help: `Computes derived kinematic fields of every frame and writes them beside the velocities:
CSV tables with one extra column per quantity (SI units in the header), legacy VTK files, or
one PNG map per quantity and frame (blue-white-red for signed quantities, light-to-dark for
positive ones, axes in mm, NaN nodes dark grey).

Quantities (--quantities, comma-separated):
  vorticity     dV/dx - dU/dy [1/s] (in the meridional plane: w_theta above the axis)
  divergence    du/dx + dv/dy [1/s], with the hoop term v/r for --axisymmetric
  strain        strain-rate magnitude sqrt(2 S:S) [1/s] (strain-xx, strain-yy, strain-xy
                and hoop-strain give the components)
  q             Q criterion [1/s^2], positive where rotation dominates strain
  lambda2       lambda2 criterion [1/s^2], negative inside vortices
  swirl         swirling strength lambda_ci [1/s] (signed-swirl: with the sign of vorticity)
  enstrophy     enstrophy density w^2/2 [1/s^2]
  gamma1        Gamma1 of the node's neighbourhood (--gamma-radius), |Gamma1| <= 1
  gamma2        Gamma2, Galilean invariant; |Gamma2| > 2/pi marks vortex cores
For --axisymmetric data Q, lambda2 and strain use the 3-D gradient tensor with the hoop
strain v/r.

Schemes (--scheme): central (2nd order), richardson (4th order), least-squares (2nd order,
lowest noise), circulation (local circulation around the 8 neighbours; the other quantities
use the same smoothed stencil). Next to edges and missing or solid nodes each derivative falls
back to a central, one-sided or first-order stencil; where none fits the value is NaN.
--stencils adds a column "stencil" with the worst stencil used per node: 4 full, 3 central,
2 one-sided, 1 first-order, 0 none.

--uncertainty SIGMA (the random error of each velocity component, m/s) prints the propagated
random error of the vorticity and adds the per-node field vorticity_sigma [1/s], which
accounts for the fallback stencils.

Outputs per frame are named after the input frame (frame_0001.csv, frame_0001.vtk,
frame_0001_vorticity.png, ...); derive.csv lists the range of every quantity per frame and
derive.json summarises the run. The summary on stdout gives the frames, the quantities and
their ranges over the whole series. A run stopped by a bad frame keeps the frames finished
before it; fix the file and run again with --resume to compute only the rest.

Examples:
  wakekit derive tank2/run3/frame_0001.csv
  wakekit derive --quantities vorticity,q,lambda2,swirl --scheme least-squares --out run3-derived 'tank2/run3/frame_*.csv'
  wakekit derive --format png --arrows --quantities vorticity,gamma2 tank2/run3/frames.csv
  wakekit derive --axisymmetric --axis 0 --quantities vorticity,divergence --uncertainty 0.002 ring/frames.csv`,
		setup: setupDerive,
	})
	pipeline.RegisterFinisher("derive", finishDerive)
}

// deriveSettings are everything besides the frames that derive's results depend on; they are
// stored in the manifest so that --resume refuses a run with other settings.
type deriveSettings struct {
	Scheme      string          `json:"scheme"`
	Quantities  []string        `json:"quantities"`
	Formats     []string        `json:"formats"`
	GammaRadius int             `json:"gamma_radius"`
	Sigma       piv.JSONFloat   `json:"uncertainty_m_s"`
	Stencils    bool            `json:"stencils"`
	Arrows      bool            `json:"arrows"`
	Width       int             `json:"png_width"`
	Height      int             `json:"png_height"`
	Read        piv.ReadOptions `json:"read"`
}

// deriveRange is the range of one quantity in one frame (or over the run).
type deriveRange struct {
	Name  string        `json:"name"`
	Unit  string        `json:"unit"`
	Min   piv.JSONFloat `json:"min"`
	Max   piv.JSONFloat `json:"max"`
	Nodes int           `json:"nodes"` // nodes with a finite value
}

// deriveRecord is what one frame contributes to the summary.
type deriveRecord struct {
	Time       piv.JSONFloat `json:"time_s"`
	NX         int           `json:"nx"`
	NY         int           `json:"ny"`
	DX         piv.JSONFloat `json:"dx_m"`
	DY         piv.JSONFloat `json:"dy_m"`
	Geometry   string        `json:"geometry"`
	Ranges     []deriveRange `json:"ranges"`
	SigmaOmega piv.JSONFloat `json:"vorticity_sigma_full_stencil,omitempty"`
}

// deriveQuantity is one requested output: a gradient quantity or Gamma1/Gamma2.
type deriveQuantity struct {
	name   string
	grad   vorticity.Quantity
	gamma  int // 0 for gradient quantities, 1 or 2
	unit   string
	signed bool
}

func parseDeriveQuantities(list string) ([]deriveQuantity, error) {
	var out []deriveQuantity
	seen := map[string]bool{}
	for _, name := range splitList(list) {
		var q deriveQuantity
		switch n := strings.ToLower(name); n {
		case "gamma1", "gamma2":
			q = deriveQuantity{name: n, gamma: int(n[5] - '0'), signed: true}
		default:
			g, err := vorticity.ParseQuantity(n)
			if err != nil {
				return nil, usagef("--quantities: %v, gamma1 or gamma2", err)
			}
			q = deriveQuantity{name: g.String(), grad: g, unit: g.Unit(), signed: g.Signed()}
		}
		if !seen[q.name] {
			seen[q.name] = true
			out = append(out, q)
		}
	}
	if len(out) == 0 {
		return nil, usagef("--quantities names no quantity")
	}
	return out, nil
}

func setupDerive(fs *pflag.FlagSet) func(e *env, args []string) error {
	rdf := addReadFlags(fs)
	quantities := fs.String("quantities", "vorticity", "quantities to compute, comma-separated (see above)")
	scheme := fs.String("scheme", "central", "difference scheme: central, richardson, least-squares or circulation")
	format := fs.String("format", "csv", "output formats, comma-separated: csv, vtk, png")
	gammaRadius := fs.Int("gamma-radius", 2, "Gamma1/Gamma2 neighbourhood: a square of (2N+1)^2 nodes")
	sigma := fs.Float64("uncertainty", 0, "random error of each velocity component [m/s]: print the propagated vorticity error and write vorticity_sigma")
	stencils := fs.Bool("stencils", false, "add the column stencil (worst stencil used per node: 4 full .. 0 none)")
	arrows := fs.Bool("arrows", false, "draw velocity arrows on PNG maps")
	size := fs.String("png-size", "900x640", "PNG map size in pixels, WxH")
	rf := addRunFlags(fs)
	return func(e *env, args []string) error {
		if len(args) == 0 {
			return usagef("no input files given")
		}
		sc, err := vorticity.ParseScheme(*scheme)
		if err != nil {
			return usagef("--scheme: %v", err)
		}
		qs, err := parseDeriveQuantities(*quantities)
		if err != nil {
			return err
		}
		formats := map[string]bool{}
		var formatList []string
		for _, f := range splitList(strings.ToLower(*format)) {
			if f != "csv" && f != "vtk" && f != "png" {
				return usagef("--format %q: expected csv, vtk or png (or several, comma-separated)", f)
			}
			if !formats[f] {
				formats[f] = true
				formatList = append(formatList, f)
			}
		}
		if len(formatList) == 0 {
			return usagef("--format names no format")
		}
		if *gammaRadius < 1 || *gammaRadius > 50 {
			return usagef("--gamma-radius %d must be between 1 and 50 nodes", *gammaRadius)
		}
		if !(*sigma >= 0) || math.IsInf(*sigma, 0) {
			return usagef("--uncertainty %g must be a non-negative number of m/s", *sigma)
		}
		w, h, err := parseGridSize(*size)
		if err != nil || w < 200 || h < 150 || w > 8000 || h > 8000 {
			return usagef("--png-size %q: give WxH between 200x150 and 8000x8000 pixels", *size)
		}
		opt, err := rdf.options()
		if err != nil {
			return err
		}
		series, err := piv.OpenSeries(args, opt)
		if err != nil {
			return err
		}
		popt, err := rf.pipelineOptions(e, "derive")
		if err != nil {
			return err
		}
		set := deriveSettings{Scheme: sc.String(), Formats: formatList, GammaRadius: *gammaRadius,
			Sigma: piv.JSONFloat(*sigma), Stencils: *stencils, Arrows: *arrows, Width: w, Height: h, Read: opt}
		for _, q := range qs {
			set.Quantities = append(set.Quantities, q.name)
		}
		d := &deriver{set: set, scheme: sc, qs: qs, names: frameBases(series),
			untimed: series.Len() == 1 && series.Time(0) == 0 && !(opt.DT > 0)}
		b := pipeline.Batch{Command: "derive", Version: version, Settings: set,
			Tables: []pipeline.Table{{Name: "derive.csv", Header: d.tableHeader()}}}
		rep, dir, err := rf.runBatch("derive", args, series, popt, b, d.frame)
		if err != nil {
			return err
		}
		man, err := pipeline.ReadManifest(dir)
		if err != nil {
			return err
		}
		sum, err := summarizeDerive(man)
		if err != nil {
			return err
		}
		sum.print(e.stdout, rep, dir)
		return nil
	}
}

// frameBases returns the output base name of every frame: the input's base name without its
// extensions, or frame_NNNNN for all frames when two inputs share a base name.
func frameBases(s *piv.Series) []string {
	names := make([]string, s.Len())
	seen := map[string]bool{}
	unique := true
	for k := range names {
		b := filepath.Base(s.Name(k))
		b = strings.TrimSuffix(b, ".gz")
		if ext := filepath.Ext(b); ext != "" && ext != b {
			b = strings.TrimSuffix(b, ext)
		}
		if b == "" || b == "." || seen[b] || b == "derive" {
			unique = false
		}
		seen[b] = true
		names[k] = b
	}
	if !unique {
		for k := range names {
			names[k] = fmt.Sprintf("frame_%05d", k)
		}
	}
	return names
}

// deriver computes and writes one frame; its work depends only on the frame and the settings.
type deriver struct {
	set    deriveSettings
	scheme vorticity.Scheme
	qs     []deriveQuantity
	names  []string
	pool   sync.Pool // of *vorticity.Gradient
	// untimed is set for a single frame read without a time (no --dt, no frame index time):
	// its maps then show no time rather than t = 0.
	untimed bool
}

func (d *deriver) tableHeader() string {
	cols := []string{"frame", "time [s]"}
	for _, q := range d.qs {
		unit := ""
		if q.unit != "" {
			unit = " [" + q.unit + "]"
		}
		cols = append(cols, q.name+"_min"+unit, q.name+"_max"+unit)
	}
	return strings.Join(cols, ",")
}

func (d *deriver) frame(ctx context.Context, k int, frames pipeline.Frames, out *pipeline.Output) error {
	f, err := frames.Frame(k)
	if err != nil {
		return err
	}
	// Gradients are reused between frames of one size (every output below is a fresh slice),
	// which saves allocating and clearing four grids per frame.
	grad, _ := d.pool.Get().(*vorticity.Gradient)
	if grad == nil {
		grad = new(vorticity.Gradient)
	}
	defer d.pool.Put(grad)
	grad.Compute(f, d.scheme)
	var cols []piv.Column
	rec := deriveRecord{Time: piv.JSONFloat(f.Time), NX: f.Grid.NX, NY: f.Grid.NY,
		DX: piv.JSONFloat(f.Grid.DX), DY: piv.JSONFloat(f.Grid.DY), Geometry: f.Geometry.String()}
	row := []string{fmt.Sprint(k), fmtNum(f.Time)}
	for _, q := range d.qs {
		var vals []float64
		switch q.gamma {
		case 1:
			vals = vorticity.Gamma1(f, d.set.GammaRadius)
		case 2:
			vals = vorticity.Gamma2(f, d.set.GammaRadius)
		default:
			vals = grad.Scalar(q.grad)
		}
		lo, hi, n := vorticity.Range(vals)
		rec.Ranges = append(rec.Ranges, deriveRange{Name: q.name, Unit: q.unit,
			Min: piv.JSONFloat(lo), Max: piv.JSONFloat(hi), Nodes: n})
		row = append(row, fmtNum(lo), fmtNum(hi))
		cols = append(cols, piv.Column{Name: q.name, Unit: q.unit, Values: vals})
	}
	if sigma := float64(d.set.Sigma); sigma > 0 {
		rec.SigmaOmega = piv.JSONFloat(vorticity.VorticityNoise(d.scheme, f.Grid, sigma))
		cols = append(cols, piv.Column{Name: "vorticity_sigma", Unit: "1/s", Values: grad.VorticityUncertainty(sigma)})
	}
	if d.set.Stencils {
		st := make([]float64, len(grad.Stencil))
		for n, s := range grad.Stencil {
			st[n] = float64(s.Worst())
		}
		cols = append(cols, piv.Column{Name: "stencil", Values: st})
	}
	base := d.names[k]
	for _, format := range d.set.Formats {
		switch format {
		case "csv":
			err = out.WriteFile(base+".csv", func(w io.Writer) error { return piv.EncodeCSV(w, f, cols...) })
		case "vtk":
			err = out.WriteFile(base+".vtk", func(w io.Writer) error { return piv.EncodeVTK(w, f, cols...) })
		case "png":
			err = d.maps(out, f, base, cols[:len(d.qs)])
		}
		if err != nil {
			return err
		}
	}
	if err := out.AddRow("derive.csv", strings.Join(row, ",")); err != nil {
		return err
	}
	return out.SetRecord(rec)
}

// maps writes one PNG map per quantity.
func (d *deriver) maps(out *pipeline.Output, f *piv.Field, base string, cols []piv.Column) error {
	yName := "y"
	if f.Geometry.Axisymmetric {
		yName = "r"
	}
	for m, q := range d.qs {
		title := fmt.Sprintf("%s, %s, t = %.6g s (%s)", q.name, base, f.Time, d.scheme)
		if d.untimed {
			title = fmt.Sprintf("%s, %s (%s)", q.name, base, d.scheme)
		}
		mp := report.MapPlot{Grid: f.Grid, Values: cols[m].Values, Unit: q.unit, Signed: q.signed, Title: title, YName: yName}
		if q.gamma != 0 {
			mp.Min, mp.Max = -1, 1
		}
		if d.set.Arrows {
			mp.Arrows = f
		}
		if _, _, n := vorticity.Range(mp.Values); n == 0 {
			// A frame without a single finite value gets no map; its range says so.
			continue
		}
		err := out.WriteFile(base+"_"+q.name+".png", func(w io.Writer) error {
			return mp.Encode(w, d.set.Width, d.set.Height)
		})
		if err != nil {
			return fmt.Errorf("%s: %w", f.Name(), err)
		}
	}
	return nil
}

// fmtNum writes a number in the shortest form that reads back the same, NaN as "NaN".
func fmtNum(v float64) string {
	b, _ := piv.JSONFloat(v).MarshalJSON()
	if string(b) == "null" {
		return "NaN"
	}
	return string(b)
}

// deriveSummary is derive.json: the run's settings and the range of each quantity over all
// frames.
type deriveSummary struct {
	Command    string         `json:"command"`
	Version    string         `json:"version"`
	Frames     int            `json:"frames"`
	Settings   deriveSettings `json:"settings"`
	NX         int            `json:"nx"`
	NY         int            `json:"ny"`
	DX         piv.JSONFloat  `json:"dx_m"`
	DY         piv.JSONFloat  `json:"dy_m"`
	Geometry   string         `json:"geometry"`
	Ranges     []deriveRange  `json:"ranges"`
	SigmaOmega piv.JSONFloat  `json:"vorticity_sigma_full_stencil,omitempty"`
	// VorticityNoiseFactor is k in sigma_w = k sigma_u / h for the scheme's full stencil on a
	// square grid.
	VorticityNoiseFactor piv.JSONFloat `json:"vorticity_noise_factor"`
	// DerivativeNoiseFactor is k in sigma_derivative = k sigma_u / h.
	DerivativeNoiseFactor piv.JSONFloat `json:"derivative_noise_factor"`
}

// summarizeDerive builds the summary from a manifest alone (so resumed and merged runs agree).
func summarizeDerive(m *pipeline.Manifest) (*deriveSummary, error) {
	s := &deriveSummary{Command: m.Header.Command, Version: m.Header.Version, Frames: len(m.Entries)}
	if err := json.Unmarshal(m.Header.Settings, &s.Settings); err != nil {
		return nil, fmt.Errorf("manifest settings: %v", err)
	}
	sc, err := vorticity.ParseScheme(s.Settings.Scheme)
	if err != nil {
		return nil, fmt.Errorf("manifest settings: %v", err)
	}
	s.VorticityNoiseFactor = piv.JSONFloat(vorticity.VorticityNoiseFactor(sc))
	s.DerivativeNoiseFactor = piv.JSONFloat(vorticity.NoiseFactor(sc))
	for n, e := range m.Entries {
		var r deriveRecord
		if err := json.Unmarshal(e.Record, &r); err != nil {
			return nil, fmt.Errorf("manifest record of frame %d: %v", e.Frame, err)
		}
		if n == 0 {
			s.NX, s.NY, s.DX, s.DY, s.Geometry, s.SigmaOmega = r.NX, r.NY, r.DX, r.DY, r.Geometry, r.SigmaOmega
			s.Ranges = make([]deriveRange, len(r.Ranges))
			for q := range r.Ranges {
				s.Ranges[q] = deriveRange{Name: r.Ranges[q].Name, Unit: r.Ranges[q].Unit,
					Min: piv.JSONFloat(math.NaN()), Max: piv.JSONFloat(math.NaN())}
			}
		}
		if len(r.Ranges) != len(s.Ranges) {
			return nil, fmt.Errorf("manifest record of frame %d has %d quantities, not %d", e.Frame, len(r.Ranges), len(s.Ranges))
		}
		for q, fr := range r.Ranges {
			acc := &s.Ranges[q]
			if fr.Nodes > 0 {
				if acc.Nodes == 0 || float64(fr.Min) < float64(acc.Min) {
					acc.Min = fr.Min
				}
				if acc.Nodes == 0 || float64(fr.Max) > float64(acc.Max) {
					acc.Max = fr.Max
				}
			}
			acc.Nodes += fr.Nodes
		}
	}
	return s, nil
}

// finishDerive writes derive.json from the manifest.
func finishDerive(dir string, m *pipeline.Manifest) error {
	s, err := summarizeDerive(m)
	if err != nil {
		return err
	}
	return piv.WriteJSON(filepath.Join(dir, "derive.json"), s)
}

func (s *deriveSummary) print(w io.Writer, rep pipeline.Report, dir string) {
	fmt.Fprintf(w, "derive: %s, scheme %s\n", rep, s.Settings.Scheme)
	fmt.Fprintf(w, "  grid %dx%d nodes, spacing %.6g x %.6g m, %s\n", s.NX, s.NY, float64(s.DX), float64(s.DY), s.Geometry)
	for _, r := range s.Ranges {
		unit := r.Unit
		if unit == "" {
			unit = "(dimensionless)"
		}
		if r.Nodes == 0 {
			fmt.Fprintf(w, "  %-14s no finite values\n", r.Name)
			continue
		}
		fmt.Fprintf(w, "  %-14s %12.5g .. %-12.5g %s\n", r.Name, float64(r.Min), float64(r.Max), unit)
	}
	if sig := float64(s.Settings.Sigma); sig > 0 {
		fmt.Fprintf(w, "  vorticity random error for sigma_u = %.4g m/s: %.5g 1/s with full stencils (%.3g sigma_u/h on a square grid); per node in vorticity_sigma\n",
			sig, float64(s.SigmaOmega), float64(s.VorticityNoiseFactor))
	}
	fmt.Fprintf(w, "wrote %s (derive.csv, derive.json)\n", dir)
}
