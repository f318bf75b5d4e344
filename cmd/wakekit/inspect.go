package main

import (
	"context"
	"fmt"
	"io"
	"math"
	"runtime"
	"strings"

	"github.com/spf13/pflag"
	"github.com/wakekit/wakekit/internal/pipeline"
	"github.com/wakekit/wakekit/piv"
	"github.com/wakekit/wakekit/vorticity"
)

func init() {
	register(&command{
		name:    "inspect",
		summary: "print what a velocity file or series holds: grid, spacing, units, extent, valid share, ranges",
		usage:   "wakekit inspect [flags] FILES...",
		help: `Reads a frame (a CSV table, or a u and a v matrix with --plain) or a series (several
files, a glob, a folder or a frame index CSV) and prints how it was read and what it holds:
columns and units found, grid size and spacing, extent, geometry, the share of valid nodes,
velocity ranges and means, the frame count and time step of a series, and the continuity
residual: the RMS divergence (central differences; with the hoop term v/r for --axisymmetric)
relative to the velocity-gradient scale RMS speed / spacing, a quality hint that is near 0 for
clean incompressible data and near 1 for vectors that are noise at grid scale. All values are
printed in SI units. Only the first frame is read unless --all is given, which reads every
frame and checks that they share one grid. Nothing is written unless --json names a file.

Examples:
  wakekit inspect tank2/run3/frame_0001.csv
  wakekit inspect --all --dt 0.002 'tank2/run3/frame_*.csv'
  wakekit inspect tank2/run3/frames.csv --json run3-inspect.json
  wakekit inspect --length-unit mm --velocity-unit px/frame --pixel-size 2e-5 --pulse-separation 5e-4 pulse.dat
  wakekit inspect --plain --grid-spacing 0.5 --length-unit mm u_0001.txt v_0001.txt`,
		setup: func(fs *pflag.FlagSet) func(e *env, args []string) error {
			rf := addReadFlags(fs)
			all := fs.Bool("all", false, "read every frame, check that all share one grid and report the ranges of valid share and continuity residual")
			workers := fs.Int("workers", runtime.NumCPU(), "with --all: frames read at once")
			jsonOut := fs.String("json", "", "also write the summary as JSON to this file")
			return func(e *env, args []string) error {
				if len(args) == 0 {
					return usagef("no input files given")
				}
				opt, err := rf.options()
				if err != nil {
					return err
				}
				if *workers < 0 {
					return usagef("--workers %d: give the number of frames to read at once (0: all cores)", *workers)
				}
				var progress io.Writer
				if e.stderrTTY {
					progress = e.stderr
				}
				rep, err := inspect(args, opt, *all, pipeline.Options{Workers: *workers, Progress: progress, Label: "inspect"})
				if err != nil {
					return err
				}
				if *jsonOut != "" {
					if err := piv.WriteJSON(*jsonOut, rep); err != nil {
						return err
					}
				}
				rep.print(e.stdout)
				return nil
			}
		},
	})
}

// inspectReport is what inspect prints, and writes with --json.
type inspectReport struct {
	Input        []string      `json:"input"`
	FirstFrame   string        `json:"first_frame"`
	Format       string        `json:"format"`
	Gzip         bool          `json:"gzip"`
	Delimiter    string        `json:"delimiter"`
	Header       bool          `json:"header"`
	Columns      []string      `json:"columns"`
	LengthUnit   string        `json:"length_unit_read"`
	VelocityUnit string        `json:"velocity_unit_read"`
	NX           int           `json:"nx"`
	NY           int           `json:"ny"`
	DX           piv.JSONFloat `json:"dx_m"`
	DY           piv.JSONFloat `json:"dy_m"`
	XMin         piv.JSONFloat `json:"x_min_m"`
	XMax         piv.JSONFloat `json:"x_max_m"`
	YMin         piv.JSONFloat `json:"y_min_m"`
	YMax         piv.JSONFloat `json:"y_max_m"`
	Geometry     string        `json:"geometry"`
	Nodes        int           `json:"nodes"`
	Measured     int           `json:"measured"`
	Replaced     int           `json:"replaced"`
	Missing      int           `json:"missing"`
	Solid        int           `json:"solid"`
	ValidShare   piv.JSONFloat `json:"valid_share"`
	UMin         piv.JSONFloat `json:"u_min_m_s"`
	UMax         piv.JSONFloat `json:"u_max_m_s"`
	UMean        piv.JSONFloat `json:"u_mean_m_s"`
	VMin         piv.JSONFloat `json:"v_min_m_s"`
	VMax         piv.JSONFloat `json:"v_max_m_s"`
	VMean        piv.JSONFloat `json:"v_mean_m_s"`
	SpeedMax     piv.JSONFloat `json:"speed_max_m_s"`
	SpeedMean    piv.JSONFloat `json:"speed_mean_m_s"`
	Frames       int           `json:"frames"`
	T0           piv.JSONFloat `json:"t_first_s"`
	T1           piv.JSONFloat `json:"t_last_s"`
	DT           piv.JSONFloat `json:"dt_mean_s"`
	DTMin        piv.JSONFloat `json:"dt_min_s"`
	DTMax        piv.JSONFloat `json:"dt_max_s"`
	// Continuity residual of the first frame: RMS divergence [1/s] and its ratio to URMS/h.
	DivergenceRMS      piv.JSONFloat `json:"divergence_rms_1_s"`
	ContinuityResidual piv.JSONFloat `json:"continuity_residual"`
	DivergenceNodes    int           `json:"divergence_nodes"`
	// With --all: valid share over all frames.
	AllFrames     bool          `json:"all_frames_read"`
	ValidShareMin piv.JSONFloat `json:"valid_share_min"`
	ValidShareMax piv.JSONFloat `json:"valid_share_max"`
	ResidualMin   piv.JSONFloat `json:"continuity_residual_min"`
	ResidualMax   piv.JSONFloat `json:"continuity_residual_max"`
}

func inspect(args []string, opt piv.ReadOptions, all bool, popt pipeline.Options) (*inspectReport, error) {
	s, f, info, err := piv.OpenSeriesInfo(args, opt)
	if err != nil {
		return nil, err
	}
	g := f.Grid
	sum := piv.Summarize(f)
	dt, dtMin, dtMax := piv.Timing(s)
	r := &inspectReport{
		Input: args, FirstFrame: s.Name(0),
		Format: info.Format, Gzip: info.Gzip, Delimiter: info.Delimiter, Header: info.Header, Columns: info.Columns,
		LengthUnit: info.LengthUnit, VelocityUnit: info.VelocityUnit,
		NX: g.NX, NY: g.NY, DX: jf(g.DX), DY: jf(g.DY),
		XMin: jf(g.X0), XMax: jf(g.XMax()), YMin: jf(g.Y0), YMax: jf(g.YMax()),
		Geometry: f.Geometry.String(),
		Nodes:    sum.Nodes, Measured: sum.Measured, Replaced: sum.Replaced, Missing: sum.Missing, Solid: sum.Solid,
		ValidShare: jf(sum.ValidShare),
		UMin:       jf(sum.UMin), UMax: jf(sum.UMax), UMean: jf(sum.UMean),
		VMin: jf(sum.VMin), VMax: jf(sum.VMax), VMean: jf(sum.VMean),
		SpeedMax: jf(sum.SpeedMax), SpeedMean: jf(sum.SpeedMean),
		Frames: s.Len(), T0: jf(s.Time(0)), T1: jf(s.Time(s.Len() - 1)),
		DT: jf(dt), DTMin: jf(dtMin), DTMax: jf(dtMax),
		ValidShareMin: jf(sum.ValidShare), ValidShareMax: jf(sum.ValidShare),
	}
	div := vorticity.NewGradient(f, vorticity.Central).Divergence()
	res, rms, nodes := piv.ContinuityResidual(f, div)
	r.ContinuityResidual, r.DivergenceRMS, r.DivergenceNodes = jf(res), jf(rms), nodes
	if all {
		type frameCheck struct{ valid, residual float64 }
		r.AllFrames = true
		lo, hi := sum.ValidShare, sum.ValidShare
		rlo, rhi := res, res
		_, err := pipeline.Run(context.Background(), s, popt,
			func(_ context.Context, k int, frames pipeline.Frames) (frameCheck, error) {
				fk, err := frames.Frame(k)
				if err != nil {
					return frameCheck{}, err
				}
				res, _, _ := piv.ContinuityResidual(fk, vorticity.NewGradient(fk, vorticity.Central).Divergence())
				return frameCheck{fk.ValidShare(), res}, nil
			},
			func(k int, c frameCheck) error {
				lo, hi = math.Min(lo, c.valid), math.Max(hi, c.valid)
				if !math.IsNaN(c.residual) {
					rlo, rhi = nanMin(rlo, c.residual), nanMax(rhi, c.residual)
				}
				return nil
			})
		if err != nil {
			return nil, err
		}
		r.ValidShareMin, r.ValidShareMax = jf(lo), jf(hi)
		r.ResidualMin, r.ResidualMax = jf(rlo), jf(rhi)
	}
	return r, nil
}

func jf(v float64) piv.JSONFloat { return piv.JSONFloat(v) }

// nanMin and nanMax ignore a NaN first argument (no value yet).
func nanMin(a, b float64) float64 {
	if math.IsNaN(a) {
		return b
	}
	return math.Min(a, b)
}

func nanMax(a, b float64) float64 {
	if math.IsNaN(a) {
		return b
	}
	return math.Max(a, b)
}

// geometryHint suggests --axisymmetric when the second coordinate column is named as a
// radius but the plane was read as planar (every cylindrical term would then be left out).
func (r *inspectReport) geometryHint() string {
	if len(r.Columns) < 2 || r.Geometry != (piv.Geometry{}).String() {
		return ""
	}
	name, _ := piv.SplitHeader(r.Columns[1])
	if strings.ToLower(strings.TrimSpace(name)) != "r" {
		return ""
	}
	return fmt.Sprintf("the second coordinate is named %q: if the plane is the meridional plane of an axisymmetric flow, add --axisymmetric (and --axis Y when the axis is not y = 0)", r.Columns[1])
}

func (r *inspectReport) print(w io.Writer) {
	line := func(label, format string, args ...any) {
		fmt.Fprintf(w, "%-12s %s\n", label, fmt.Sprintf(format, args...))
	}
	line("first frame", "%s", r.FirstFrame)
	how := r.Format
	if r.Gzip {
		how += " (gzip)"
	}
	delim := r.Delimiter
	if delim == "spaces" {
		delim = "whitespace"
	}
	if r.Format == "csv" {
		hdr := "no header"
		if r.Header {
			hdr = "header"
		}
		quoted := make([]string, len(r.Columns))
		for k, c := range r.Columns {
			quoted[k] = fmt.Sprintf("%q", c)
		}
		how += fmt.Sprintf(", %s-separated, %s; columns %s", delim, hdr, strings.Join(quoted, ", "))
	} else {
		how += fmt.Sprintf(", %s-separated", delim)
	}
	line("format", "%s", how)
	line("units read", "length %s, velocity %s (shown below in m and m/s)", r.LengthUnit, r.VelocityUnit)
	line("grid", "%d x %d nodes, spacing %.6g x %.6g m", r.NX, r.NY, r.DX, r.DY)
	line("extent", "x %.6g .. %.6g m, y %.6g .. %.6g m", r.XMin, r.XMax, r.YMin, r.YMax)
	line("geometry", "%s", r.Geometry)
	if h := r.geometryHint(); h != "" {
		line("hint", "%s", h)
	}
	line("valid", "%.1f%% of %d nodes (%d measured, %d replaced, %d missing, %d solid)",
		100*float64(r.ValidShare), r.Nodes, r.Measured, r.Replaced, r.Missing, r.Solid)
	if r.Measured+r.Replaced > 0 {
		line("u", "%.4g .. %.4g m/s, mean %.4g m/s", r.UMin, r.UMax, r.UMean)
		line("v", "%.4g .. %.4g m/s, mean %.4g m/s", r.VMin, r.VMax, r.VMean)
		line("speed", "max %.4g m/s, mean %.4g m/s", r.SpeedMax, r.SpeedMean)
	}
	if r.Frames == 1 {
		line("frames", "1, t = %.6g s", r.T0)
	} else {
		dt := fmt.Sprintf("dt %.6g s", r.DT)
		if rel := (float64(r.DTMax) - float64(r.DTMin)) / float64(r.DT); rel > 1e-6 {
			dt = fmt.Sprintf("mean dt %.6g s (from %.6g to %.6g s)", r.DT, r.DTMin, r.DTMax)
		}
		line("frames", "%d, %s, t %.6g .. %.6g s", r.Frames, dt, r.T0, r.T1)
	}
	if r.DivergenceNodes > 0 && !math.IsNaN(float64(r.ContinuityResidual)) {
		line("continuity", "RMS divergence %.4g 1/s = %.3g of RMS speed / spacing (central differences, %d nodes)",
			r.DivergenceRMS, r.ContinuityResidual, r.DivergenceNodes)
	} else {
		line("continuity", "not available (no node has the neighbours for a divergence, or the field is at rest)")
	}
	if r.AllFrames {
		line("all frames", "one grid; valid share %.1f%% .. %.1f%%; continuity residual %.3g .. %.3g",
			100*float64(r.ValidShareMin), 100*float64(r.ValidShareMax), r.ResidualMin, r.ResidualMax)
	}
}
