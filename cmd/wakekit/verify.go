package main

import (
	"fmt"
	"io"
	"math"
	"math/rand/v2"
	"strings"

	"github.com/spf13/pflag"
	"github.com/wakekit/wakekit/circulation"
	"github.com/wakekit/wakekit/piv"
	"github.com/wakekit/wakekit/piv/analytic"
	"github.com/wakekit/wakekit/pressure"
	"github.com/wakekit/wakekit/vorticity"
	"gonum.org/v1/gonum/stat"
)

func init() {
	register(&command{
		name:    "verify",
		summary: "runs the built-in accuracy checks for a given grid spacing and noise level and prints errors",
		usage:   "wakekit verify [--spacing H --core-radius A --noise SIGMA --scheme LIST ...]",
		help: `verify samples exact flows on a grid, adds seeded random noise, runs the same code
that the analysis commands use, and compares the results with the exact values:

  peak vorticity             Lamb–Oseen vortex, Gamma / (pi r_c^2), per scheme
  circulation, line          Lamb–Oseen, circle of 3 r_c, Gamma (1 - exp(-9))
  circulation, area          the same circle, area integral of the vorticity, per scheme
  core radius, circulation   least-squares Lamb–Oseen fit within 3 r_c
  centre pressure            Lamb–Oseen, pressure from the steady momentum balance integrated
                             with the exact pressure on the edges, -rho Gamma^2 ln2 / (4 pi^2 r_c^2),
                             per scheme
  ring circulation, impulse  Hill's spherical vortex of radius --radius: 5 U a and
                             2 pi rho a^3 U (Lamb, Hydrodynamics, §165), per scheme

Each trial puts the vortices at a random position relative to the nodes (--on-node puts
them on a node) and draws new noise; the table gives the mean estimate, its bias relative
to the exact value (the systematic error of the spacing and scheme) and its scatter (the
standard deviation over trials, from noise and position), and the recommended scheme: the
one with the smallest summed RMS error of the scheme-dependent quantities. Under-resolution
makes peaks low; noise raises them again (the largest of noisy values is biased up), so at
high noise a small bias can hide a large scatter: read both columns.

With no settings verify runs the built-in validation suite (core radius 5 mm, spacing
0.5 mm, no noise) and prints pass or fail for every row against the published value, so an
installed binary can be checked; it exits with status 1 if any row fails.

Examples:
  wakekit verify
  wakekit verify --spacing 1e-3 --core-radius 4e-3 --noise 0.005
  wakekit verify --spacing 1e-3 --core-radius 4e-3 --window-size 2e-3 --noise 0.002
  wakekit verify --spacing 2.5e-3 --core-radius 5e-3 --scheme central,richardson --trials 50`,
		setup: setupVerify,
	})
}

// verifySettings are the settings of one verify run.
type verifySettings struct {
	Spacing, Core, Gamma float64 // grid spacing, Lamb–Oseen core radius and circulation
	Noise                analytic.Noise
	WindowSize           float64 // continuous interrogation-window average [m], 0 for none
	Radius, Speed        float64 // Hill's vortex
	Rho                  float64
	Schemes              []vorticity.Scheme
	Trials               int
	Seed                 uint64
	OnNode               bool // vortex centres on a node instead of random positions
	Suite                bool // attach the validation tolerances
}

// verifyRow is one quantity (and scheme) of the verify table.
type verifyRow struct {
	Quantity, Unit, Source string
	Scheme                 string // empty for quantities that do not depend on the scheme
	Exact                  float64
	Values                 []float64 // one estimate per trial, NaN where the code refused
	Failed                 int       // trials whose code path returned an error
	Mean, Bias, Scatter    float64   // mean estimate; (mean - exact)/|exact|; std/|exact|
	Tol                    float64   // validation tolerance on |Bias| (suite only)
}

// Pass reports whether the row meets its validation tolerance.
func (r *verifyRow) Pass() bool {
	return r.Failed == 0 && math.Abs(r.Bias) <= r.Tol && !math.IsNaN(r.Bias)
}

// maxVerifyNodes bounds the nodes across a verify grid, so a spacing far below the core radius
// is refused before memory is allocated.
const maxVerifyNodes = 801

func setupVerify(fs *pflag.FlagSet) func(e *env, args []string) error {
	s := &verifySettings{}
	var schemes string
	fs.Float64Var(&s.Spacing, "spacing", 0.5e-3, "vector spacing H [m]")
	fs.Float64Var(&s.Core, "core-radius", 5e-3, "vortex core radius r_c [m]")
	fs.Float64Var(&s.Noise.Sigma, "noise", 0, "random error per velocity component [m/s]")
	fs.IntVar(&s.Noise.Window, "window", 1, "interrogation-window box average over N x N nodes (odd N)")
	fs.Float64Var(&s.WindowSize, "window-size", 0, "interrogation-window average of the exact flow over an L x L square [m], instead of --window")
	fs.StringVar(&schemes, "scheme", "central,richardson,least-squares,circulation", "difference schemes to compare (comma-separated)")
	fs.Float64Var(&s.Gamma, "gamma", 0.01, "circulation of the Lamb–Oseen vortex [m^2/s]")
	fs.Float64Var(&s.Radius, "radius", 0, "radius of Hill's spherical vortex [m] (default 4 core radii)")
	fs.Float64Var(&s.Speed, "speed", 0.1, "speed of Hill's spherical vortex [m/s]")
	fs.Float64Var(&s.Rho, "rho", analytic.Water, "density [kg/m^3]")
	fs.IntVar(&s.Trials, "trials", 0, "Monte-Carlo trials (default 20, or 4 for the validation suite)")
	fs.Uint64Var(&s.Seed, "seed", 1, "seed of the noise and position draws")
	fs.BoolVar(&s.OnNode, "on-node", false, "centre the vortices on a node instead of random positions")
	return func(e *env, args []string) error {
		if len(args) > 0 {
			return usagef("verify takes no files (got %q)", args[0])
		}
		s.Suite = true
		for _, name := range []string{"spacing", "core-radius", "noise", "window", "window-size", "scheme", "gamma", "radius", "speed", "rho", "on-node"} {
			if fs.Changed(name) {
				s.Suite = false
			}
		}
		s.Schemes = nil
		for _, name := range splitList(schemes) {
			sch, err := vorticity.ParseScheme(name)
			if err != nil {
				return usagef("--scheme: %v", err)
			}
			s.Schemes = append(s.Schemes, sch)
		}
		if err := s.check(); err != nil {
			return err
		}
		rows, err := runVerify(s)
		if err != nil {
			return err
		}
		return printVerify(e.stdout, *s, rows)
	}
}

// check validates the settings and fills the defaults.
func (s *verifySettings) check() error {
	pos := func(name string, v float64) error {
		if !(v > 0) || math.IsInf(v, 0) {
			return usagef("--%s %g must be a positive number", name, v)
		}
		return nil
	}
	if s.Radius == 0 {
		s.Radius = 4 * s.Core
	}
	for _, c := range []struct {
		name string
		v    float64
	}{{"spacing", s.Spacing}, {"core-radius", s.Core}, {"radius", s.Radius}, {"speed", s.Speed}, {"rho", s.Rho}} {
		if err := pos(c.name, c.v); err != nil {
			return err
		}
	}
	if s.Gamma == 0 || math.IsNaN(s.Gamma) || math.IsInf(s.Gamma, 0) {
		return usagef("--gamma %g must be a non-zero number", s.Gamma)
	}
	if err := s.Noise.Validate(); err != nil {
		return usagef("%v", err)
	}
	if s.WindowSize != 0 && (!(s.WindowSize > 0) || math.IsInf(s.WindowSize, 0) || s.Noise.Window > 1) {
		return usagef("--window-size %g: give a positive size in m, and not together with --window", s.WindowSize)
	}
	if len(s.Schemes) == 0 {
		return usagef("--scheme: give at least one scheme")
	}
	if s.Trials == 0 {
		s.Trials = 20
		if s.Suite {
			s.Trials = 4
		}
	}
	if s.Trials < 1 || s.Trials > 10000 {
		return usagef("--trials %d must be between 1 and 10000", s.Trials)
	}
	if n := 2*int(math.Ceil(5*s.Core/s.Spacing)) + 1; n > maxVerifyNodes || 2*int(math.Ceil(1.5*s.Radius/s.Spacing))+1 > maxVerifyNodes {
		return usagef("spacing %g m is too fine for a core radius of %g m and a Hill radius of %g m: the grids would exceed %d nodes across",
			s.Spacing, s.Core, s.Radius, maxVerifyNodes)
	}
	if s.Spacing > s.Core*2.5 {
		return usagef("spacing %g m is more than 2.5 core radii (%g m): the vortex would fall between the nodes", s.Spacing, s.Core)
	}
	return nil
}

// verifyTable collects rows in the order they are first met.
type verifyTable struct {
	rows  []*verifyRow
	index map[string]*verifyRow
}

func (t *verifyTable) add(quantity, unit, source string, scheme string, exact, v float64, err error) {
	key := quantity + "\x00" + scheme
	r := t.index[key]
	if r == nil {
		r = &verifyRow{Quantity: quantity, Unit: unit, Source: source, Scheme: scheme, Exact: exact}
		t.index[key] = r
		t.rows = append(t.rows, r)
	}
	if err != nil {
		r.Failed++
		v = math.NaN()
	}
	r.Values = append(r.Values, v)
}

// runVerify runs the Monte-Carlo trials and returns the table rows with their statistics.
func runVerify(s *verifySettings) ([]*verifyRow, error) {
	if err := s.check(); err != nil {
		return nil, err
	}
	h := s.Spacing
	n := int(math.Ceil(5 * s.Core / h))
	gl := piv.Grid{NX: 2*n + 1, NY: 2*n + 1, X0: -float64(n) * h, Y0: -float64(n) * h, DX: h, DY: h}
	nh := int(math.Ceil(1.5 * s.Radius / h))
	gh := piv.Grid{NX: 2*nh + 1, NY: nh + 1, X0: -float64(nh) * h, Y0: 0, DX: h, DY: h}
	rng := rand.New(rand.NewPCG(s.Seed, 0x7e51f))
	t := &verifyTable{index: map[string]*verifyRow{}}
	const (
		saffman = "Saffman, Vortex Dynamics (1992) §2.1"
		lamb    = "Lamb, Hydrodynamics (1932) §165"
	)
	R := 3 * s.Core
	gammaR := s.Gamma * (1 - math.Exp(-9))
	for trial := 0; trial < s.Trials; trial++ {
		var ox, oy float64
		if !s.OnNode {
			ox, oy = (rng.Float64()-0.5)*h, (rng.Float64()-0.5)*h
		}
		lo := analytic.LambOseen{Gamma: s.Gamma, CoreRadius: s.Core, X: ox, Y: oy, Rho: s.Rho}
		f, err := sampleVerify(lo, gl, s.WindowSize)
		if err != nil {
			return nil, err
		}
		nz := s.Noise
		nz.Seed, nz.Stream = s.Seed, uint64(2*trial)
		if _, err := nz.Apply(f); err != nil {
			return nil, err
		}
		circle := piv.Circle{X: ox, Y: oy, R: R}
		if c, err := circulation.CircleSampled(gl, circle, 0); err == nil {
			res, err := circulation.Line(f, c, circulation.LineOptions{})
			t.add("circulation, line integral r=3r_c", "m^2/s", saffman, "", gammaR, res.Gamma, err)
		} else {
			return nil, err
		}
		// The fit starts from the node nearest the centre, as a detected peak would give.
		i0, j0 := int(math.Round(-gl.X0/h)), int(math.Round(-gl.Y0/h))
		fit, err := circulation.FitLambOseen(f, gl.X(i0), gl.Y(j0), R, circulation.FitOptions{})
		t.add("core radius, Lamb–Oseen fit", "m", saffman, "", s.Core, fit.Rc, err)
		t.add("circulation, Lamb–Oseen fit", "m^2/s", saffman, "", s.Gamma, fit.Gamma, err)
		region, err := circulation.ShapeRegion(gl, circle)
		if err != nil {
			return nil, err
		}
		series, err := piv.MemorySeries([]*piv.Field{f})
		if err != nil {
			return nil, err
		}
		for _, sch := range s.Schemes {
			w := vorticity.Vorticity(f, sch)
			t.add("peak vorticity", "1/s", saffman, sch.String(), lo.PeakVorticity(0),
				peakNear(w, gl, ox, oy, 2*s.Core, math.Copysign(1, s.Gamma)), nil)
			ar, err := circulation.Area(w, region, circulation.AreaOptions{})
			t.add("circulation, area integral r=3r_c", "m^2/s", saffman, sch.String(), gammaR, ar.Gamma, err)
			fr, err := pressure.Reconstruct(series, 0, pressure.FrameOptions{
				Accel: pressure.AccelOptions{Method: pressure.Steady, Scheme: sch},
				Fluid: pressure.Fluid{Rho: s.Rho},
				Solve: pressure.Options{
					Dirichlet: pressure.Left | pressure.Right | pressure.Bottom | pressure.Top,
					Boundary:  func(i, j int) float64 { return lo.Pressure(gl.X(i), gl.Y(j), 0) },
				},
			})
			pc := math.NaN()
			if err == nil {
				pc = peakNear(fr.P, gl, ox, oy, 2*s.Core, -1)
			}
			t.add("centre pressure", "Pa", "closed form of dp/dr = rho u^2/r", sch.String(), lo.Pressure(ox, oy, 0), pc, err)
		}
		hill := analytic.Hill{Radius: s.Radius, Speed: s.Speed, X0: ox, Rho: s.Rho}
		fh, err := sampleVerify(hill, gh, s.WindowSize)
		if err != nil {
			return nil, err
		}
		nz.Stream = uint64(2*trial + 1)
		if _, err := nz.Apply(fh); err != nil {
			return nil, err
		}
		all := circulation.AllNodes(gh)
		for _, sch := range s.Schemes {
			w := vorticity.Vorticity(fh, sch)
			ring, err := circulation.RingOf(fh, w, all, s.Rho)
			t.add("ring circulation, Hill", "m^2/s", lamb, sch.String(), hill.TotalCirculation(), ring.Gamma, err)
			t.add("ring impulse, Hill", "kg m/s", lamb, sch.String(), hill.Impulse(), ring.Impulse, err)
		}
	}
	for _, r := range t.rows {
		var ok []float64
		for _, v := range r.Values {
			if !math.IsNaN(v) {
				ok = append(ok, v)
			}
		}
		r.Mean, r.Scatter = math.NaN(), math.NaN()
		if len(ok) > 0 {
			r.Mean, r.Scatter = stat.MeanStdDev(ok, nil)
			if len(ok) == 1 {
				r.Scatter = 0
			}
		}
		r.Bias = (r.Mean - r.Exact) / math.Abs(r.Exact)
		r.Scatter /= math.Abs(r.Exact)
		if s.Suite {
			r.Tol = suiteTolerance(r.Quantity, h/s.Core, h/s.Radius)
		}
	}
	return t.rows, nil
}

// sampleVerify samples f at t = 0, averaged over the interrogation window when size > 0.
func sampleVerify(f analytic.Flow, g piv.Grid, size float64) (*piv.Field, error) {
	if size > 0 {
		return analytic.SampleWindowed(f, g, 0, size, 0)
	}
	return analytic.Sample(f, g, 0), nil
}

// peakNear returns the largest value of sign*s (times sign) among the nodes within radius of
// (x, y), NaN when none has a value.
func peakNear(s []float64, g piv.Grid, x, y, radius, sign float64) float64 {
	best := math.Inf(-1)
	for j := 0; j < g.NY; j++ {
		for i := 0; i < g.NX; i++ {
			dx, dy := g.X(i)-x, g.Y(j)-y
			if v := sign * s[g.Index(i, j)]; dx*dx+dy*dy <= radius*radius && v > best {
				best = v
			}
		}
	}
	if math.IsInf(best, -1) {
		return math.NaN()
	}
	return sign * best
}

// suiteTolerance is the validation tolerance on the relative bias of a quantity without noise,
// from the leading discretisation error at hc = h/r_c (Lamb–Oseen) and ha = h/a (Hill).
func suiteTolerance(quantity string, hc, ha float64) float64 {
	switch quantity {
	case "peak vorticity":
		// Second-order differences of the Gaussian core lose C (h/r_c)^2 at the peak, C = 1/2
		// for the central difference (from (r_c/h)^2 (1 - exp(-h^2/r_c^2)), its exact value on a
		// node) and up to 3.4 times that for the wider least-squares stencil; the peak node lies
		// up to h/sqrt(2) from the centre, losing up to (h/r_c)^2/2 more. Bound: 2.5 (h/r_c)^2.
		return 2.5 * hc * hc
	case "centre pressure":
		// The pressure gradient carries the same second-order difference error as the
		// vorticity, and the node nearest the centre misses the minimum by up to
		// (h/r_c)^2/2 relative (the pressure is quadratic there): bound 2.5 (h/r_c)^2.
		return 2.5 * hc * hc
	case "circulation, line integral r=3r_c":
		// Bilinear interpolation errs by h^2/8 |u''|, and at 3 r_c the flow is nearly the
		// potential vortex, |u''| = 2u/r^2: h^2/(36 r_c^2) relative; bound 3 times that.
		return hc * hc / 12
	case "circulation, area integral r=3r_c":
		// The vorticity at 3 r_c is exp(-9) of the peak, so the cut cells and the difference
		// error near the contour (which is all that remains of the difference error after
		// summation) contribute below 1e-4 · (r_c/h); bound (h/r_c)^2/10.
		return hc * hc / 10
	case "core radius, Lamb–Oseen fit", "circulation, Lamb–Oseen fit":
		// The model is exact and the data noise-free, so only the optimiser's stopping
		// criterion remains: 0.1 % (common practice for a least-squares fit's tolerance).
		return 1e-3
	case "ring circulation, Hill", "ring impulse, Hill":
		// The vorticity jumps at the sphere, so the cells cut by it make a first-order error:
		// bound h/a.
		return ha
	}
	return 0
}

func printVerify(w io.Writer, s verifySettings, rows []*verifyRow) error {
	mode := "accuracy estimate"
	if s.Suite {
		mode = "validation suite"
	}
	place := "random positions relative to the nodes"
	if s.OnNode {
		place = "centred on a node"
	}
	sigma, _ := s.Noise.SigmaSI()
	window := fmt.Sprintf("window %d node(s)", max(s.Noise.Window, 1))
	if s.WindowSize > 0 {
		window = fmt.Sprintf("window %.4g m", s.WindowSize)
	}
	fmt.Fprintf(w, "wakekit verify: %s; spacing %.4g m, core radius %.4g m (r_c/h = %.3g), Hill radius %.4g m, noise %.4g m/s, %s, %d trial(s), seed %d, vortices at %s\n\n",
		mode, s.Spacing, s.Core, s.Core/s.Spacing, s.Radius, sigma, window, s.Trials, s.Seed, place)
	fmt.Fprintf(w, "%-42s %-14s %12s %12s %9s %9s", "quantity", "scheme", "exact", "mean", "bias", "scatter")
	if s.Suite {
		fmt.Fprintf(w, "  %-6s %s", "check", "tolerance")
	}
	fmt.Fprintln(w)
	failed := 0
	for _, r := range rows {
		sch := r.Scheme
		if sch == "" {
			sch = "-"
		}
		fmt.Fprintf(w, "%-42s %-14s %12.5g %12.5g %8.3f%% %8.3f%%", r.Quantity+" ["+r.Unit+"]", sch, r.Exact, r.Mean, 100*r.Bias, 100*r.Scatter)
		if s.Suite {
			verdict := "pass"
			if !r.Pass() {
				verdict = "FAIL"
				failed++
			}
			fmt.Fprintf(w, "  %-6s |bias| <= %.3g%%", verdict, 100*r.Tol)
		}
		if r.Failed > 0 {
			fmt.Fprintf(w, "  (%d of %d trials refused)", r.Failed, len(r.Values))
		}
		fmt.Fprintln(w)
	}
	if best, ok := recommendScheme(rows); ok {
		fmt.Fprintf(w, "\nrecommended scheme: %s (smallest summed RMS error of the scheme-dependent quantities)\n", best)
	}
	fmt.Fprintln(w, "\nexact values: "+sources(rows))
	if failed > 0 {
		return fmt.Errorf("%d of %d validation rows failed", failed, len(rows))
	}
	return nil
}

// recommendScheme returns the scheme with the smallest sum over the scheme-dependent rows of
// sqrt(bias^2 + scatter^2).
func recommendScheme(rows []*verifyRow) (string, bool) {
	score := map[string]float64{}
	var order []string
	for _, r := range rows {
		if r.Scheme == "" {
			continue
		}
		if _, seen := score[r.Scheme]; !seen {
			order = append(order, r.Scheme)
		}
		e := math.Hypot(r.Bias, r.Scatter)
		if math.IsNaN(e) || r.Failed > 0 {
			e = math.Inf(1)
		}
		score[r.Scheme] += e
	}
	if len(order) == 0 {
		return "", false
	}
	best := order[0]
	for _, sch := range order[1:] {
		if score[sch] < score[best] {
			best = sch
		}
	}
	return best, true
}

func sources(rows []*verifyRow) string {
	var out []string
	seen := map[string]bool{}
	for _, r := range rows {
		if !seen[r.Source] {
			seen[r.Source] = true
			out = append(out, r.Source)
		}
	}
	return strings.Join(out, "; ")
}
