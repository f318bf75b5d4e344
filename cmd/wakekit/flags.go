package main

import (
	"context"
	"errors"
	"fmt"
	"math"
	"os"
	"path/filepath"
	"runtime"
	"strconv"
	"strings"

	"github.com/spf13/pflag"
	"github.com/wakekit/wakekit/internal/pipeline"
	"github.com/wakekit/wakekit/piv"
)

// readFlags are the input flags every command that reads velocity files shares.
type readFlags struct {
	lengthUnit, velocityUnit string
	pixelSize, pulseSep      float64
	columns                  string
	dt                       float64
	axisymmetric             bool
	axis                     float64
	imageYDown               bool
	maxNodes                 int
	maxFileBytes             int64
	// plain-grid matrix input
	plain           bool
	origin, spacing string
	rowsTopDown     bool
}

func addReadFlags(fs *pflag.FlagSet) *readFlags {
	r := &readFlags{}
	fs.StringVar(&r.lengthUnit, "length-unit", "", "unit of x and y where the header names none: m, mm, cm or px")
	fs.StringVar(&r.velocityUnit, "velocity-unit", "", "unit of u and v where the header names none: m/s, mm/s, cm/s or px/frame")
	fs.Float64Var(&r.pixelSize, "pixel-size", 0, "pixel size [m/px] for data in px")
	fs.Float64Var(&r.pulseSep, "pulse-separation", 0, "laser pulse separation [s] for velocities in px/frame")
	fs.StringVar(&r.columns, "columns", "", "columns to use as x,y,u,v[,status] (names or 1-based numbers)")
	fs.Float64Var(&r.dt, "dt", 0, "time between frames [s] when the files give no times")
	fs.BoolVar(&r.axisymmetric, "axisymmetric", false, "the plane is the meridional plane of an axisymmetric flow (x axial, y radial)")
	fs.Float64Var(&r.axis, "axis", 0, "y coordinate of the symmetry axis [m] with --axisymmetric")
	fs.BoolVar(&r.imageYDown, "y-down", false, "the file's y axis points down (image coordinates); flip it on reading")
	fs.IntVar(&r.maxNodes, "max-nodes", piv.DefaultMaxNodes, "refuse grids with more nodes than this")
	fs.Int64Var(&r.maxFileBytes, "max-file-bytes", 0, "refuse input files larger than this many bytes (0: no limit)")
	fs.BoolVar(&r.plain, "plain", false, "the inputs are plain matrices: a u file (or glob) and a v file (or glob), rows = y")
	fs.StringVar(&r.origin, "grid-origin", "0,0", "with --plain: x,y of the first matrix value (in --length-unit)")
	fs.StringVar(&r.spacing, "grid-spacing", "", "with --plain: grid spacing DX[,DY] (in --length-unit)")
	fs.BoolVar(&r.rowsTopDown, "rows-top-down", false, "with --plain: the first matrix row is the top (largest y)")
	return r
}

func (r *readFlags) options() (piv.ReadOptions, error) {
	if r.pixelSize < 0 || r.pulseSep < 0 || r.dt < 0 {
		return piv.ReadOptions{}, usagef("--pixel-size, --pulse-separation and --dt must not be negative")
	}
	// Values that parse but make no sense ("NaN", "Inf") are refused here, saying what to give.
	for _, f := range []struct {
		flag, want string
		v          float64
	}{
		{"--pixel-size", "the size of one pixel in m/px, e.g. 2.4e-5", r.pixelSize},
		{"--pulse-separation", "the time between the two laser pulses in s, e.g. 5e-4", r.pulseSep},
		{"--dt", "the time between frames in s, e.g. 0.01", r.dt},
		{"--axis", "the y coordinate of the symmetry axis in m, e.g. 0", r.axis},
	} {
		if math.IsNaN(f.v) || math.IsInf(f.v, 0) {
			return piv.ReadOptions{}, usagef("%s %g is not a finite number: give %s", f.flag, f.v, f.want)
		}
	}
	if r.maxNodes < 1 {
		return piv.ReadOptions{}, usagef("--max-nodes %d: give the largest number of grid nodes to accept (at least 1)", r.maxNodes)
	}
	if r.maxFileBytes < 0 {
		return piv.ReadOptions{}, usagef("--max-file-bytes %d: give the largest input file size in bytes to accept (0: no limit)", r.maxFileBytes)
	}
	var x0, y0, dx, dy float64
	if r.plain {
		o, err := parseFloats("--grid-origin", r.origin, 2, 2)
		if err != nil {
			return piv.ReadOptions{}, err
		}
		if r.spacing == "" {
			return piv.ReadOptions{}, usagef("--plain needs the grid spacing: --grid-spacing DX[,DY]")
		}
		sp, err := parseFloats("--grid-spacing", r.spacing, 1, 2)
		if err != nil {
			return piv.ReadOptions{}, err
		}
		x0, y0, dx, dy = o[0], o[1], sp[0], sp[len(sp)-1]
	}
	return piv.ReadOptions{
		PlainGrid: r.plain, X0: x0, Y0: y0, DX: dx, DY: dy, RowsTopDown: r.rowsTopDown,
		LengthUnit: r.lengthUnit, VelocityUnit: r.velocityUnit,
		PixelSize: r.pixelSize, PulseSeparation: r.pulseSep,
		Columns:      r.columns,
		ImageYDown:   r.imageYDown,
		Geometry:     piv.Geometry{Axisymmetric: r.axisymmetric, AxisY: r.axis},
		DT:           r.dt,
		MaxNodes:     r.maxNodes,
		MaxFileBytes: r.maxFileBytes,
	}, nil
}

// open opens the series named by the command's arguments.
func (r *readFlags) open(args []string) (*piv.Series, error) {
	if len(args) == 0 {
		return nil, usagef("no input files given")
	}
	opt, err := r.options()
	if err != nil {
		return nil, err
	}
	return piv.OpenSeries(args, opt)
}

// runFlags are the output and execution flags series commands share.
type runFlags struct {
	out     string
	quiet   bool
	workers int
	resume  bool
	shard   string
}

func addRunFlags(fs *pflag.FlagSet) *runFlags {
	r := &runFlags{}
	fs.StringVarP(&r.out, "out", "o", "", "output folder (default: a new folder beside the first input, named after the command)")
	fs.BoolVarP(&r.quiet, "quiet", "q", false, "no progress or diagnostics on stderr")
	fs.IntVar(&r.workers, "workers", runtime.NumCPU(), "frames processed at once")
	fs.BoolVar(&r.resume, "resume", false, "continue an interrupted run in the same --out folder, skipping frames already done with the same inputs and settings")
	fs.StringVar(&r.shard, "shard", "", "process only share K of N of the frames (K/N, e.g. 3/8), for cluster job arrays; join the shares with \"wakekit merge\"")
	return r
}

// pipelineOptions builds the engine options from the run flags: workers, shard and resume,
// and the progress line on stderr when stderr is a terminal and --quiet is not given. label
// starts the progress line (the command name).
func (r *runFlags) pipelineOptions(e *env, label string) (pipeline.Options, error) {
	if r.workers < 0 {
		return pipeline.Options{}, usagef("--workers %d: give the number of frames to process at once (0 or omitted: all cores)", r.workers)
	}
	sh, err := pipeline.ParseShard(r.shard)
	if err != nil {
		return pipeline.Options{}, usagef("--shard: %v", err)
	}
	opt := pipeline.Options{Workers: r.workers, Shard: sh, Resume: r.resume, Label: label}
	if e.stderrTTY && !r.quiet {
		opt.Progress = e.stderr
	}
	return opt, nil
}

// batchError explains a batch run that stopped early (SIGINT or SIGTERM): how far it got, and
// that --resume finishes it. Other errors are returned as they are.
func batchError(err error, rep pipeline.Report) error {
	var se *pipeline.StoppedError
	if !errors.As(err, &se) {
		return err
	}
	why := "interrupted"
	if !errors.Is(se.Err, context.Canceled) {
		why = se.Err.Error()
	}
	return fmt.Errorf("stopped after %d of %d frames (%s); the finished frames are kept: run the same command again with --resume to finish",
		rep.Reused+rep.Computed, rep.Total, why)
}

// outDir returns the output folder for a command, creating it. With no --out it is a folder
// named after the command beside the first input (wakekit-NAME, or wakekit-NAME-2, ... when
// that exists; with --resume the existing wakekit-NAME, and with --shard K/N
// wakekit-NAME-shard-K-of-N).
func (r *runFlags) outDir(name string, inputs []string) (string, error) {
	dir, _, err := r.newOutDir(name, inputs)
	return dir, err
}

// newOutDir is outDir that also reports whether the folder is new, made by this run; a command
// that then fails before writing anything worth keeping removes it again (removeNew), so bad
// input leaves no output behind.
func (r *runFlags) newOutDir(name string, inputs []string) (dir string, created bool, err error) {
	dir = r.outDirName(name, inputs)
	if _, err := os.Stat(dir); os.IsNotExist(err) {
		created = true
	}
	if err := os.MkdirAll(dir, 0o755); err != nil {
		return "", false, err
	}
	return dir, created, nil
}

// removeNew removes an output folder this run created, with what the run wrote into it.
func removeNew(dir string, created bool) {
	if created && dir != "" {
		os.RemoveAll(dir)
	}
}

// runBatch creates the command's output folder (newOutDir), runs the batch b in it through the
// streaming engine, stopping after the frames in progress on SIGINT or SIGTERM, and returns the
// folder with the engine's report. A run that fails before any frame is finished removes a
// folder it created, so bad input leaves no output behind; a stopped run keeps its finished
// frames and says that --resume completes it (batchError).
func (r *runFlags) runBatch(name string, args []string, s *piv.Series, opt pipeline.Options, b pipeline.Batch,
	proc func(ctx context.Context, k int, frames pipeline.Frames, out *pipeline.Output) error) (pipeline.Report, string, error) {
	dir, created, err := r.newOutDir(name, args)
	if err != nil {
		return pipeline.Report{}, "", err
	}
	b.Dir = dir
	ctx, stop := pipeline.SignalContext(context.Background())
	defer stop()
	rep, err := pipeline.RunBatch(ctx, s, opt, b, proc)
	if err != nil {
		if rep.Computed == 0 && rep.Reused == 0 {
			removeNew(dir, created)
		}
		return rep, dir, batchError(err, rep)
	}
	return rep, dir, nil
}

func (r *runFlags) outDirName(name string, inputs []string) string {
	if r.out != "" {
		return r.out
	}
	base := "."
	if len(inputs) > 0 {
		if st, err := os.Stat(inputs[0]); err == nil && st.IsDir() {
			base = filepath.Dir(filepath.Clean(inputs[0]))
		} else {
			base = filepath.Dir(inputs[0])
		}
	}
	dir := filepath.Join(base, "wakekit-"+name)
	if sh, err := pipeline.ParseShard(r.shard); err == nil && !sh.IsAll() {
		// Every shard of a job array gets its own fixed folder, found again by --resume.
		dir = filepath.Join(base, fmt.Sprintf("wakekit-%s-shard-%d-of-%d", name, sh.K, sh.N))
	}
	for n := 2; !r.resume && r.shard == ""; n++ {
		if _, err := os.Stat(dir); os.IsNotExist(err) {
			break
		}
		dir = filepath.Join(base, fmt.Sprintf("wakekit-%s-%d", name, n))
	}
	return dir
}

// checkNumber refuses a flag value that parses as a number but makes no sense: NaN or ±Inf
// always, and values outside what the flag accepts (see numberRule). want says what to give,
// e.g. "the pulsing period in s, e.g. 0.05".
func checkNumber(flag string, v float64, rule numberRule, want string) error {
	bad := ""
	switch {
	case math.IsNaN(v) || math.IsInf(v, 0):
		bad = "is not a finite number"
	case rule == positive && !(v > 0):
		bad = "must be positive"
	case rule == nonNegative && v < 0:
		bad = "must not be negative"
	}
	if bad == "" {
		return nil
	}
	return usagef("%s %g %s: give %s", flag, v, bad, want)
}

// numberRule is what checkNumber accepts besides finiteness.
type numberRule int

const (
	anyFinite numberRule = iota
	positive
	nonNegative
)

// splitList splits a comma-separated flag value, dropping empty items.
func splitList(s string) []string {
	var out []string
	for _, p := range strings.Split(s, ",") {
		if p = strings.TrimSpace(p); p != "" {
			out = append(out, p)
		}
	}
	return out
}

// parseFloats reads a comma-separated list of between lo and hi numbers for a flag.
func parseFloats(flag, s string, lo, hi int) ([]float64, error) {
	items := splitList(s)
	if len(items) < lo || len(items) > hi {
		return nil, usagef("%s %q: expected %d to %d comma-separated numbers", flag, s, lo, hi)
	}
	out := make([]float64, len(items))
	for k, it := range items {
		v, err := strconv.ParseFloat(it, 64)
		if err != nil {
			return nil, usagef("%s: cannot read %q as a number", flag, it)
		}
		out[k] = v
	}
	return out, nil
}
