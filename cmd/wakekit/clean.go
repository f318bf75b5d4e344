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
	"github.com/wakekit/wakekit/piv"
)

func init() {
	register(&command{
		name:    "clean",
		summary: "flags outliers, fills gaps, smooths; writes cleaned fields with per-node status",
		usage:   "wakekit clean FILES... [flags]",
		help: `Each frame goes through three steps, each optional:

  1. validation: the global range filter (--u-range, --v-range, --max-speed), then the
     normalized median test (Westerweel & Scarano 2005; --median 3 or 5 for the
     neighbourhood, --threshold, --eps in m/s or --eps-px with --pixel-size and
     --pulse-separation; by default applied to the vector, --per-component for u and v
     separately), then the local standard-deviation filter (--std K rejects vectors more than
     K neighbourhood standard deviations from the neighbours' mean).
  2. filling: every gap (a 4-connected group of missing nodes, rejected or empty) of at most
     --max-gap nodes is filled by solving Laplace's equation with the surrounding vectors as
     boundary values (--fill laplace) or by neighbour medians (--fill median); larger gaps
     stay missing. --fill none keeps rejected vectors missing.
  3. smoothing: --smooth gaussian (--sigma in nodes; halves waves of about 5.3 sigma nodes)
     or --smooth sg (2-D Savitzky–Golay, --sg-window and --sg-order), both using only valid
     vectors and never across solid nodes.

Solid nodes are never validated, filled or smoothed. The status column of each cleaned
frame says what happened to every node: measured, replaced:median, missing:range, ...

The normalized median test needs its noise floor epsilon in velocity units: give --eps in
m/s, or --pixel-size and --pulse-separation so that --eps-px (default 0.1 px, the published
value) can be converted.

Output: one cleaned file per frame (the input's name, as CSV or with --format vtk as VTK),
frames.csv (the frame index of the cleaned series), clean_report.csv (per frame: vectors
checked, rejected by each test, filled, left missing) and clean.json (totals). The summary
gives the share of spurious vectors over the series.

Examples:
  wakekit clean run3/frames.csv --eps 0.002 --out run3-clean
  wakekit clean run3/ --pixel-size 2e-5 --pulse-separation 5e-4 --median 5 --max-gap 40
  wakekit clean "tank2/frame_*.csv" --eps 0.001 --std 3 --smooth gaussian --sigma 1 -o tank2-clean`,
		setup: setupClean,
	})
	pipeline.RegisterFinisher("clean", finishClean)
}

// cleanSettings are the flags the cleaned frames depend on (stored in the run's manifest).
type cleanSettings struct {
	Median       int     `json:"median"`
	Threshold    float64 `json:"threshold"`
	Eps          float64 `json:"eps"`
	PerComponent bool    `json:"per_component"`
	URange       string  `json:"u_range"`
	VRange       string  `json:"v_range"`
	MaxSpeed     float64 `json:"max_speed"`
	Std          float64 `json:"std"`
	Fill         string  `json:"fill"`
	MaxGap       int     `json:"max_gap"`
	Smooth       string  `json:"smooth"`
	Sigma        float64 `json:"sigma"`
	SGWindow     int     `json:"sg_window"`
	SGOrder      int     `json:"sg_order"`
	Format       string  `json:"format"`
}

type cleanFlags struct {
	cleanSettings
	epsPx float64
}

func setupClean(fs *pflag.FlagSet) func(e *env, args []string) error {
	o := &cleanFlags{}
	fs.IntVar(&o.Median, "median", 3, "normalized median test neighbourhood: 3 (3x3), 5 (5x5) or 0 (off)")
	fs.Float64Var(&o.Threshold, "threshold", piv.DefaultMedianThreshold, "normalized median test threshold")
	fs.Float64Var(&o.Eps, "eps", 0, "normalized median test noise floor epsilon [m/s]")
	fs.Float64Var(&o.epsPx, "eps-px", piv.DefaultMedianEpsilonPx, "epsilon in px, converted with --pixel-size and --pulse-separation when --eps is not given")
	fs.BoolVar(&o.PerComponent, "per-component", false, "apply the median test to u and v separately instead of to the vector")
	fs.StringVar(&o.URange, "u-range", "", "accepted u range MIN,MAX [m/s] (range filter)")
	fs.StringVar(&o.VRange, "v-range", "", "accepted v range MIN,MAX [m/s] (range filter)")
	fs.Float64Var(&o.MaxSpeed, "max-speed", 0, "largest accepted speed [m/s] (range filter; 0: none)")
	fs.Float64Var(&o.Std, "std", 0, "local standard-deviation filter factor K (0: off; 3 is usual)")
	fs.StringVar(&o.Fill, "fill", "laplace", "gap filling: laplace, median or none")
	fs.IntVar(&o.MaxGap, "max-gap", 25, "largest gap filled [nodes]; larger ones stay missing")
	fs.StringVar(&o.Smooth, "smooth", "none", "smoothing: none, gaussian or sg")
	fs.Float64Var(&o.Sigma, "sigma", 1, "Gaussian standard deviation [nodes]")
	fs.IntVar(&o.SGWindow, "sg-window", 5, "Savitzky–Golay window width [nodes, odd]")
	fs.IntVar(&o.SGOrder, "sg-order", 2, "Savitzky–Golay polynomial order")
	fs.StringVar(&o.Format, "format", "csv", "cleaned frame format: csv or vtk")
	rd := addReadFlags(fs)
	rf := addRunFlags(fs)
	return func(e *env, args []string) error { return o.run(e, fs, rd, rf, args) }
}

// options turns the flags into the cleaning options (and the settings as stored).
func (o *cleanFlags) options(fs *pflag.FlagSet, rd *readFlags) (piv.CleanOptions, error) {
	var opt piv.CleanOptions
	// Numbers that parse but make no sense are refused before anything is read, saying what
	// to give.
	for _, c := range []struct {
		flag string
		v    float64
		rule numberRule
		want string
	}{
		{"--threshold", o.Threshold, positive, fmt.Sprintf("the normalized median test threshold, e.g. %g (the published value)", piv.DefaultMedianThreshold)},
		{"--eps", o.Eps, nonNegative, "the median test's noise floor in m/s, e.g. 0.002 (or omit it and give --eps-px)"},
		{"--eps-px", o.epsPx, positive, fmt.Sprintf("the noise floor in px, e.g. %g (the published value)", piv.DefaultMedianEpsilonPx)},
		{"--max-speed", o.MaxSpeed, nonNegative, "the largest accepted speed in m/s, e.g. 2 (0: no limit)"},
		{"--std", o.Std, nonNegative, "the standard-deviation filter factor, e.g. 3 (0: off)"},
		{"--sigma", o.Sigma, positive, "the Gaussian standard deviation in nodes, e.g. 1"},
	} {
		if err := checkNumber(c.flag, c.v, c.rule, c.want); err != nil {
			return opt, err
		}
	}
	if fs.Changed("eps") && o.Median != 0 && o.Eps == 0 {
		return opt, usagef("--eps 0: give the median test a positive noise floor in m/s, e.g. 0.002")
	}
	switch o.Median {
	case 0:
	case 3, 5:
		if !fs.Changed("eps") {
			if rd.pixelSize <= 0 || rd.pulseSep <= 0 {
				return opt, usagef("the median test needs --eps in m/s, or --pixel-size and --pulse-separation to convert --eps-px")
			}
			eps, err := piv.PixelVelocity(o.epsPx, rd.pixelSize, rd.pulseSep)
			if err != nil {
				return opt, usagef("--eps-px: %v", err)
			}
			o.Eps = eps
		}
		opt.Validate.Median = &piv.MedianOptions{Radius: o.Median / 2, Threshold: o.Threshold, Epsilon: o.Eps, PerComponent: o.PerComponent}
		if err := opt.Validate.Median.Check(); err != nil {
			return opt, usagef("%v", err)
		}
	default:
		return opt, usagef("--median %d: use 3, 5 or 0", o.Median)
	}
	if o.URange != "" || o.VRange != "" || o.MaxSpeed > 0 {
		lim := piv.NoRangeLimits()
		for _, r := range []struct {
			flag, val string
			lo, hi    *float64
		}{{"--u-range", o.URange, &lim.UMin, &lim.UMax}, {"--v-range", o.VRange, &lim.VMin, &lim.VMax}} {
			if r.val == "" {
				continue
			}
			v, err := parseFloats(r.flag, r.val, 2, 2)
			if err != nil {
				return opt, err
			}
			if math.IsNaN(v[0]) || math.IsNaN(v[1]) || v[0] > v[1] {
				return opt, usagef("%s %q: give MIN,MAX in m/s with MIN below MAX, e.g. -0.5,1.5 (-Inf or Inf for no bound)", r.flag, r.val)
			}
			*r.lo, *r.hi = v[0], v[1]
		}
		if o.MaxSpeed > 0 {
			lim.MaxSpeed = o.MaxSpeed
		}
		if err := lim.Check(); err != nil {
			return opt, usagef("%v", err)
		}
		opt.Validate.Range = &lim
	}
	if o.Std != 0 {
		opt.Validate.Std = &piv.StdOptions{Factor: o.Std, Epsilon: o.Eps}
	}
	switch o.Fill {
	case "none":
	case "laplace", "median":
		m, _ := piv.ParseFillMethod(o.Fill)
		if o.MaxGap < 1 {
			return opt, usagef("--max-gap %d must be at least 1", o.MaxGap)
		}
		opt.Fill = &piv.FillOptions{Method: m, MaxGap: o.MaxGap}
	default:
		return opt, usagef("--fill %q: use laplace, median or none", o.Fill)
	}
	switch o.Smooth {
	case "none":
	case "gaussian":
		if o.Sigma > 50 {
			return opt, usagef("--sigma %g must lie in (0, 50] nodes", o.Sigma)
		}
		opt.Smooth, opt.Sigma = piv.SmoothGaussianFilter, o.Sigma
	case "sg":
		if o.SGWindow%2 != 1 {
			return opt, usagef("--sg-window %d must be odd", o.SGWindow)
		}
		if _, err := piv.SavitzkyGolayKernel(o.SGWindow/2, o.SGOrder); err != nil {
			return opt, usagef("%v", err)
		}
		opt.Smooth, opt.SGHalf, opt.SGOrder = piv.SmoothSGFilter, o.SGWindow/2, o.SGOrder
	default:
		return opt, usagef("--smooth %q: use none, gaussian or sg", o.Smooth)
	}
	if o.Format != "csv" && o.Format != "vtk" {
		return opt, usagef("--format %q: use csv or vtk", o.Format)
	}
	return opt, nil
}

// cleanRecord is one frame's entry in the run's manifest.
type cleanRecord struct {
	Time   float64         `json:"time"`
	File   string          `json:"file"`
	Report piv.CleanReport `json:"report"`
}

const cleanTable = "clean_report.csv"

func (o *cleanFlags) run(e *env, fs *pflag.FlagSet, rd *readFlags, rf *runFlags, args []string) error {
	opt, err := o.options(fs, rd)
	if err != nil {
		return err
	}
	popt, err := rf.pipelineOptions(e, "clean")
	if err != nil {
		return err
	}
	s, err := rd.open(args)
	if err != nil {
		return err
	}
	names := cleanNames(s, "."+o.Format)
	batch := pipeline.Batch{Command: "clean", Version: version, Settings: o.cleanSettings,
		Tables: []pipeline.Table{{Name: cleanTable,
			Header: "frame,time [s],file,checked,rejected_range,rejected_median,rejected_std,filled,missing,solid"}}}
	rep, dir, err := rf.runBatch("clean", args, s, popt, batch,
		func(ctx context.Context, k int, frames pipeline.Frames, out *pipeline.Output) error {
			f, err := frames.Frame(k)
			if err != nil {
				return err
			}
			f = f.Clone()
			r, err := piv.Clean(f, opt)
			if err != nil {
				return fmt.Errorf("%s: %v", s.Name(k), err)
			}
			if err := out.WriteFile(names[k], func(w io.Writer) error {
				if o.Format == "vtk" {
					return piv.EncodeVTK(w, f)
				}
				return piv.EncodeCSV(w, f)
			}); err != nil {
				return err
			}
			v := r.Validation
			row := fmt.Sprintf("%d,%s,%s,%d,%d,%d,%d,%d,%d,%d", k, strconv.FormatFloat(s.Time(k), 'g', -1, 64), names[k],
				v.Checked, v.Range, v.Median, v.Std, r.Filled, r.Missing, r.Solid)
			if err := out.AddRow(cleanTable, row); err != nil {
				return err
			}
			return out.SetRecord(cleanRecord{Time: s.Time(k), File: names[k], Report: r})
		})
	if err != nil {
		return err
	}
	m, err := pipeline.ReadManifest(dir)
	if err != nil {
		return err
	}
	total, _, err := cleanTotals(m)
	if err != nil {
		return err
	}
	v := total.Validation
	pct := func(n int) float64 { return 100 * float64(n) / float64(max(v.Checked, 1)) }
	fmt.Fprintf(e.stdout, "clean: %s\n", rep)
	fmt.Fprintf(e.stdout, "  vectors checked %d: rejected %d (%.3g%%) — range %d, median %d, std %d\n",
		v.Checked, v.Rejected(), pct(v.Rejected()), v.Range, v.Median, v.Std)
	fmt.Fprintf(e.stdout, "  filled %d, left missing %d, solid %d\n", total.Filled, total.Missing, total.Solid)
	fmt.Fprintf(e.stdout, "  share of spurious vectors over the series: %.3f%%\n", 100*total.SpuriousShare())
	fmt.Fprintf(e.stdout, "wrote %s (cleaned frames, frames.csv, %s, clean.json)\n", dir, cleanTable)
	return nil
}

// cleanNames gives each frame's output file name: the input's base name with its extensions
// replaced by ext, or clean_NNNN with ext when two inputs share a base name.
func cleanNames(s *piv.Series, ext string) []string {
	names := make([]string, s.Len())
	seen := map[string]bool{}
	for k := range names {
		b := filepath.Base(s.Name(k))
		b = strings.TrimSuffix(b, ".gz")
		b = strings.TrimSuffix(b, filepath.Ext(b))
		names[k] = b + ext
		if seen[names[k]] || b == "" || strings.HasPrefix(b, ".") || b == "frames" {
			for j := range names {
				names[j] = fmt.Sprintf("clean_%04d%s", j, ext)
			}
			return names
		}
		seen[names[k]] = true
	}
	return names
}

// cleanTotals sums the frames' reports of a run and returns them with the records.
func cleanTotals(m *pipeline.Manifest) (piv.CleanReport, []cleanRecord, error) {
	var total piv.CleanReport
	recs := make([]cleanRecord, 0, len(m.Entries))
	for _, en := range m.Entries {
		var r cleanRecord
		if err := json.Unmarshal(en.Record, &r); err != nil {
			return total, nil, fmt.Errorf("manifest entry of frame %d: %v", en.Frame, err)
		}
		total.Add(r.Report)
		recs = append(recs, r)
	}
	return total, recs, nil
}

// cleanSummary is clean.json.
type cleanSummary struct {
	Command       string          `json:"command"`
	Version       string          `json:"version"`
	Settings      json.RawMessage `json:"settings"`
	Frames        int             `json:"frames"`
	Totals        piv.CleanReport `json:"totals"`
	SpuriousShare piv.JSONFloat   `json:"spurious_share"`
}

// finishClean writes frames.csv and clean.json from the manifest.
func finishClean(dir string, m *pipeline.Manifest) error {
	total, recs, err := cleanTotals(m)
	if err != nil {
		return err
	}
	err = piv.WriteFileAtomic(filepath.Join(dir, "frames.csv"), func(w io.Writer) error {
		if _, err := io.WriteString(w, "file,time [s]\n"); err != nil {
			return err
		}
		for _, r := range recs {
			if _, err := fmt.Fprintf(w, "%s,%s\n", r.File, strconv.FormatFloat(r.Time, 'g', -1, 64)); err != nil {
				return err
			}
		}
		return nil
	})
	if err != nil {
		return err
	}
	return piv.WriteJSON(filepath.Join(dir, "clean.json"), cleanSummary{
		Command: "clean", Version: m.Header.Version, Settings: m.Header.Settings, Frames: len(recs),
		Totals: total, SpuriousShare: piv.JSONFloat(total.SpuriousShare()),
	})
}
