package main

import (
	"encoding/json"
	"fmt"
	"io"
	"math"
	"os"
	"path/filepath"
	"sort"
	"strconv"
	"strings"

	"github.com/spf13/pflag"
	"github.com/wakekit/wakekit/internal/report"
	"github.com/wakekit/wakekit/piv"
)

func init() {
	register(&command{
		name:    "compare",
		summary: "puts several analysed runs side by side (e.g. thrust versus nozzle spacing)",
		usage:   "wakekit compare DIR... --by KEY [--reference DIR] [flags]",
		help: `Reads the summary.json that "wakekit jet" wrote into each DIR and tabulates, for each run, the
total impulse of the pulse (wake impulse at the end of the pulse's window), the peak thrust
(largest dI/dt), the over-pressure share of the exit impulse, the leading ring's circulation and
the formation number, each also as a ratio to the reference run (--reference, default the
first DIR). Runs are ordered by the run parameter KEY (given to jet as --param KEY=VALUE; use
--by label to order by --label). Figures of pulse --pulse (default 1) are compared.

Prints a plain-text table and writes compare.csv and compare.png (ratios versus KEY when KEY
is numeric) into --out.

Examples:
  wakekit compare runs/s1.0 runs/s1.5 runs/s2.0 --by s_over_D --out spacing
  wakekit compare single pairA pairB --reference single --by label`,
		setup: setupCompare,
	})
}

// compareFigures are the compared figures: summary key, column title.
// The table gives each column the display unit of the reference run's value (the summaries
// record the SI unit of every figure).
var compareFigures = []struct{ key, title string }{
	{"impulse_final", "impulse"},
	{"peak_force", "peak thrust"},
	{"overpressure_share", "over-pressure share"},
	{"ring_circulation", "ring circulation"},
	{"formation_number", "formation number"},
}

type compareRun struct {
	dir, label, by string
	byNum          float64
	values         []float64
	uncs           []float64 // one-sigma uncertainties (NaN: none)
	units          []string  // SI units as the summary records them
	ratios         []float64
	geometry       string
}

func setupCompare(fs *pflag.FlagSet) func(e *env, args []string) error {
	var by, ref, out string
	var pulse int
	var quiet bool
	fs.StringVar(&by, "by", "", "run parameter (from jet --param KEY=VALUE) or \"label\" to order and plot the runs by")
	fs.StringVar(&ref, "reference", "", "folder of the reference run (default: the first)")
	fs.IntVar(&pulse, "pulse", 1, "pulse number to compare")
	fs.StringVarP(&out, "out", "o", "", "output folder (default: wakekit-compare beside the first run)")
	fs.BoolVarP(&quiet, "quiet", "q", false, "no diagnostics on stderr")
	return func(e *env, args []string) error {
		if len(args) < 2 {
			return usagef("give at least two analysed run folders")
		}
		if by == "" {
			return usagef("--by KEY is required (a --param key recorded by jet, or label)")
		}
		if pulse < 1 {
			return usagef("--pulse %d: give the number of the pulse to compare, 1 or more", pulse)
		}
		dirs := append([]string(nil), args...)
		if ref != "" {
			found := false
			for _, d := range dirs {
				if filepath.Clean(d) == filepath.Clean(ref) {
					found = true
				}
			}
			if !found {
				dirs = append(dirs, ref)
			}
		} else {
			ref = dirs[0]
		}
		runs, err := loadCompareRuns(dirs, by, pulse)
		if err != nil {
			return err
		}
		var refRun *compareRun
		for k := range runs {
			if filepath.Clean(runs[k].dir) == filepath.Clean(ref) {
				c := runs[k] // a copy: sorting below moves the runs
				refRun = &c
			}
		}
		compareRatios(runs, refRun)
		sortCompare(runs)
		rf := &runFlags{out: out}
		dir, err := rf.outDir("compare", args)
		if err != nil {
			return err
		}
		if err := writeCompare(dir, runs, by, refRun); err != nil {
			return err
		}
		printCompare(e.stdout, runs, by, refRun)
		fmt.Fprintf(e.stdout, "\nWritten: %s, %s\n", filepath.Join(dir, "compare.csv"), filepath.Join(dir, "compare.png"))
		return nil
	}
}

// loadCompareRuns reads and checks each run's summary.
func loadCompareRuns(dirs []string, by string, pulse int) ([]compareRun, error) {
	var runs []compareRun
	for _, d := range dirs {
		path := filepath.Join(d, "summary.json")
		b, err := os.ReadFile(path)
		if err != nil {
			return nil, fmt.Errorf("%s: %v (is %s a folder written by wakekit jet?)", path, err, d)
		}
		piv.MarkInput(path)
		var js jsonSummary
		if err := json.Unmarshal(b, &js); err != nil {
			return nil, fmt.Errorf("%s: not a wakekit jet summary: %v", path, err)
		}
		if js.Format != summaryFormat {
			return nil, fmt.Errorf("%s: format %q is not %q (not a wakekit jet summary)", path, js.Format, summaryFormat)
		}
		if js.Version != summaryVersion {
			return nil, fmt.Errorf("%s: summary version %d; this wakekit reads version %d (re-run wakekit jet on that run)", path, js.Version, summaryVersion)
		}
		r := compareRun{dir: d, label: js.Label, geometry: js.Geometry, byNum: math.NaN()}
		if by == "label" {
			r.by = js.Label
		} else {
			v, ok := js.Params[by]
			if !ok {
				keys := make([]string, 0, len(js.Params))
				for k := range js.Params {
					keys = append(keys, k)
				}
				sort.Strings(keys)
				return nil, fmt.Errorf("%s: run parameter %q not recorded (recorded: %s); give it to jet with --param %s=VALUE",
					path, by, strings.Join(keys, ", "), by)
			}
			r.by = v
		}
		if x, err := strconv.ParseFloat(r.by, 64); err == nil {
			r.byNum = x
		}
		if pulse > len(js.Pulses) {
			return nil, fmt.Errorf("%s: has %d pulses, no pulse %d", path, len(js.Pulses), pulse)
		}
		figs := js.Pulses[pulse-1].Figures
		for _, cf := range compareFigures {
			f, ok := figs[cf.key]
			if !ok {
				return nil, fmt.Errorf("%s: pulse %d lacks the figure %q", path, pulse, cf.key)
			}
			v, u := math.NaN(), math.NaN()
			if f.Value != nil {
				v = *f.Value
			}
			if f.Uncertainty != nil {
				u = *f.Uncertainty
			}
			r.values = append(r.values, v)
			r.uncs = append(r.uncs, u)
			r.units = append(r.units, f.Unit)
		}
		if len(runs) > 0 && runs[0].geometry != r.geometry {
			return nil, fmt.Errorf("%s: geometry %s, but %s is %s; runs of different geometries cannot be compared",
				path, r.geometry, filepath.Join(runs[0].dir, "summary.json"), runs[0].geometry)
		}
		runs = append(runs, r)
	}
	return runs, nil
}

func compareRatios(runs []compareRun, ref *compareRun) {
	for k := range runs {
		runs[k].ratios = make([]float64, len(compareFigures))
		for q := range compareFigures {
			runs[k].ratios[q] = runs[k].values[q] / ref.values[q]
		}
	}
}

func sortCompare(runs []compareRun) {
	sort.SliceStable(runs, func(a, b int) bool {
		x, y := runs[a].byNum, runs[b].byNum
		if !math.IsNaN(x) && !math.IsNaN(y) {
			return x < y
		}
		return runs[a].by < runs[b].by
	})
}

func printCompare(w io.Writer, runs []compareRun, by string, ref *compareRun) {
	fmt.Fprintf(w, "Reference run: %s; ratios in parentheses\n\n", ref.dir)
	fmt.Fprintf(w, "%-14s %-24s", by, "run")
	scales := make([]report.Scale, len(compareFigures))
	for q, cf := range compareFigures {
		scales[q] = report.ChooseScale(ref.values[q], ref.uncs[q], ref.units[q])
		title := cf.title
		if scales[q].Unit != "" {
			title += " [" + scales[q].Unit + "]"
		}
		fmt.Fprintf(w, " %26s", title)
	}
	fmt.Fprintln(w)
	for _, r := range runs {
		name := r.label
		if name == "" {
			name = filepath.Base(r.dir)
		}
		fmt.Fprintf(w, "%-14s %-24s", r.by, name)
		for q := range compareFigures {
			fq := scales[q].Format(r.values[q], r.uncs[q])
			cell := fq.Value
			if fq.Uncertainty != "" {
				cell += " ± " + fq.Uncertainty
			}
			fmt.Fprintf(w, " %26s", fmt.Sprintf("%s (%s)", cell, fmtRatio(r.ratios[q])))
		}
		fmt.Fprintln(w)
	}
}

func fmtRatio(x float64) string {
	if math.IsNaN(x) || math.IsInf(x, 0) {
		return "-"
	}
	return fmt.Sprintf("%.3f", x)
}

func writeCompare(dir string, runs []compareRun, by string, ref *compareRun) error {
	err := piv.WriteFileAtomic(filepath.Join(dir, "compare.csv"), func(w io.Writer) error {
		fmt.Fprintf(w, "%s,run,label", csvField(by))
		for _, cf := range compareFigures {
			fmt.Fprintf(w, ",%s,%s_ratio", cf.key, cf.key)
		}
		fmt.Fprintln(w)
		for _, r := range runs {
			fmt.Fprintf(w, "%s,%s,%s", csvField(r.by), csvField(r.dir), csvField(r.label))
			for q := range compareFigures {
				fmt.Fprintf(w, ",%s,%s", csvNum(r.values[q]), csvNum(r.ratios[q]))
			}
			if _, err := fmt.Fprintln(w); err != nil {
				return err
			}
		}
		return nil
	})
	if err != nil {
		return err
	}
	lp := report.LinePlot{Title: "Ratios to " + filepath.Base(ref.dir), XLabel: by, YLabel: "ratio to reference"}
	numeric := true
	for _, r := range runs {
		numeric = numeric && !math.IsNaN(r.byNum)
	}
	for q, cf := range compareFigures {
		l := report.Line{Label: cf.title, Points: true}
		for k, r := range runs {
			x := float64(k + 1)
			if numeric {
				x = r.byNum
			}
			l.X = append(l.X, x)
			l.Y = append(l.Y, r.ratios[q])
		}
		lp.Lines = append(lp.Lines, l)
	}
	if !numeric {
		lp.XLabel = "run (in table order)"
		for _, r := range runs {
			name := r.by
			if name == "" {
				name = filepath.Base(r.dir)
			}
			lp.XCategories = append(lp.XCategories, name)
		}
	}
	var missing []string
	for q, cf := range compareFigures {
		finite := false
		for _, r := range runs {
			finite = finite || !math.IsNaN(r.ratios[q]) && !math.IsInf(r.ratios[q], 0)
		}
		if !finite {
			missing = append(missing, cf.title)
		}
	}
	if len(missing) > 0 {
		lp.Title += " (no ratio: " + strings.Join(missing, ", ") + ")"
	}
	img, err := lp.PNG()
	if err != nil {
		return err
	}
	return piv.WriteFileAtomic(filepath.Join(dir, "compare.png"), func(w io.Writer) error { _, err := w.Write(img); return err })
}

func csvNum(x float64) string {
	if math.IsNaN(x) || math.IsInf(x, 0) {
		return ""
	}
	return strconv.FormatFloat(x, 'g', 8, 64)
}

func csvField(s string) string {
	if strings.ContainsAny(s, ",\"\n") {
		return `"` + strings.ReplaceAll(s, `"`, `""`) + `"`
	}
	return s
}
