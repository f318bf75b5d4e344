package main

import (
	"context"
	"fmt"
	"os"
	"path/filepath"

	"github.com/spf13/pflag"
	"github.com/wakekit/wakekit/circulation"
	"github.com/wakekit/wakekit/internal/demo"
	"github.com/wakekit/wakekit/piv"
)

func init() {
	register(&command{
		name:    "demo",
		summary: "runs the whole starting-jet analysis on the built-in example run and writes the report",
		usage:   "wakekit demo [--out DIR]",
		help: `Runs "wakekit jet" on the example run built into the program: ` + demo.Description + `

The frames (velocity only, with measurement noise) are written into DIR/frames so they can be
re-analysed with "wakekit jet" or opened with any other command; the analysis goes to DIR.

Examples:
  wakekit demo
  wakekit demo --out tt25-demo
  wakekit jet tt25-demo/frames/frames.csv --axisymmetric --axis 0 --exit 0 --diameter 0.025 --lip 0.01375 --out again`,
		setup: setupDemo,
	})
}

func setupDemo(fs *pflag.FlagSet) func(e *env, args []string) error {
	run := &runFlags{}
	fs.StringVarP(&run.out, "out", "o", "wakekit-demo", "output folder")
	fs.BoolVarP(&run.quiet, "quiet", "q", false, "no progress on stderr")
	fs.IntVar(&run.workers, "workers", 0, "frames processed at once (0: all cores)")
	samples := fs.Int("samples", 16, "Monte-Carlo replicas for the uncertainties")
	return func(e *env, args []string) error {
		if len(args) > 0 {
			return usagef("demo takes no files (got %q)", args[0])
		}
		if *samples < 0 || *samples > 1000 {
			return usagef("--samples %d: give the number of Monte-Carlo replicas, 0 (no uncertainties) to 1000", *samples)
		}
		if run.workers < 0 {
			return usagef("--workers %d: give the number of frames to process at once (0: all cores)", run.workers)
		}
		dir := run.out
		if err := os.MkdirAll(dir, 0o755); err != nil {
			return err
		}
		index, err := demo.Extract(filepath.Join(dir, "frames"))
		if err != nil {
			return err
		}
		series, err := piv.OpenSeries([]string{index}, piv.ReadOptions{Geometry: piv.Geometry{Axisymmetric: true, AxisY: demo.AxisY}})
		if err != nil {
			return err
		}
		s := &jetSettings{
			exit: circulation.ExitConfig{X: demo.ExitX, Diameter: demo.Diameter, LipOuter: demo.Diameter/2 + demo.LipThickness, AxisY: demo.AxisY, Rho: demo.Rho, Nu: demo.Nu}, threshold: 0.05, noise: -1, samples: *samples, seed: 7,
			smooth: circulation.BudgetSmooth, restTime: 0, label: demo.Name, params: map[string]string{"thruster": "TT-25", "tank": "B", "run": "07"},
			title: "Starting-jet budget: " + demo.Name, description: demo.Description,
		}
		out, err := runJet(context.Background(), e, series, s, run, []string{index}, func() (string, error) { return dir, nil })
		if err != nil {
			return err
		}
		fmt.Fprintf(e.stdout, "%s\n\n", demo.Name)
		printJetSummary(e.stdout, out)
		fmt.Fprintf(e.stdout, "\nReport: %s\nFrames: %s\n", filepath.Join(dir, "report.html"), filepath.Dir(index))
		return nil
	}
}
