package main

import (
	"context"
	"fmt"
	"io"
	"math"
	"path/filepath"
	"strconv"
	"strings"

	"github.com/spf13/pflag"
	"github.com/wakekit/wakekit/circulation"
	"github.com/wakekit/wakekit/internal/pipeline"
	"github.com/wakekit/wakekit/piv"
	"github.com/wakekit/wakekit/vorticity"
)

func init() {
	register(&command{
		name:    "circulation",
		summary: "circulation around circles, rectangles or polygons; circulation-versus-radius profiles and core fits",
		usage:   "wakekit circulation [flags] FILES... (--circle X,Y,R | --rect X0,Y0,X1,Y1 | --polygon FILE | --profile X,Y --rmax R)",
		help: `For every frame, computes the circulation around each contour given, twice: as the line
integral of the interpolated velocity (trapezoidal rule, points a quarter of the grid spacing
apart unless --spacing says otherwise) and as the area integral of the vorticity inside
(cells cut by the contour counted by the share inside). Their difference is Stokes' check of
discretisation and data error. --circle, --rect and --polygon may be repeated; a polygon
file holds x,y vertices, one per row (several polygons separated by a blank line or told
apart by a polygon column).

With --profile X,Y --rmax R, writes instead the circulation and the azimuthal means of the
tangential and radial velocity on circles about (X, Y) out to R, and fits a Lamb–Oseen vortex
(circulation, core radius, centre, and a background of uniform velocity plus uniform strain)
to the vectors within R, with one-standard-deviation uncertainties. A fit that does not
settle on a vortex inside R gives NaN and a warning.

Contour coordinates are in --coord-unit (m unless given). A contour that leaves the field, a
radius of zero or less, or an empty polygon is an error. When more than --max-bad of a
contour lies next to replaced, missing or solid nodes the frame fails, or gives NaN with a
warning under --nan-on-bad; smaller gaps are bridged along the contour and reported.

Writes circulation.csv (or profile.csv and fit.csv) in the output folder and prints a table.

Examples:
  wakekit circulation tank2/run3/ --circle 62,20,12 --coord-unit mm
  wakekit circulation 'run3/frame_*.csv' --dt 0.002 --rect 0.04,0,0.09,0.035 --rect 0.04,0,0.12,0.035
  wakekit circulation run3/frames.csv --polygon run3/wake-box.csv --interp bilinear -o run3-circ
  wakekit circulation run3/frame_0040.csv --profile 0.061,0.019 --rmax 0.012`,
		setup: setupCirculation,
	})
}

// circSettings are the parsed options of one circulation run.
type circSettings struct {
	contours []namedShape
	profile  bool
	px, py   float64
	rmax, dr float64
	line     circulation.LineOptions
	spacing  float64
	scheme   vorticity.Scheme
	area     circulation.AreaOptions
}

// namedShape is one contour of the command line.
type namedShape struct {
	name  string
	shape piv.Shape
}

func setupCirculation(fs *pflag.FlagSet) func(e *env, args []string) error {
	rf := addReadFlags(fs)
	run := addRunFlags(fs)
	circles := fs.StringArray("circle", nil, "circle X,Y,R (repeatable)")
	rects := fs.StringArray("rect", nil, "rectangle X0,Y0,X1,Y1 (repeatable)")
	polys := fs.StringArray("polygon", nil, "file of polygon vertices x,y (repeatable)")
	profile := fs.String("profile", "", "centre X,Y of a radial profile and Lamb–Oseen fit")
	rmax := fs.Float64("rmax", 0, "largest radius of the profile and fit (with --profile)")
	dr := fs.Float64("dr", 0, "radial step of the profile (default half the grid spacing)")
	unit := fs.String("coord-unit", "m", "unit of contour coordinates: m, mm, cm or um")
	interp := fs.String("interp", "bicubic", "velocity interpolation along contours: bicubic (error O(h^3)) or bilinear (O(h^2))")
	spacing := fs.Float64("spacing", 0, "distance between contour points (default a quarter of the grid spacing), in --coord-unit")
	maxBad := fs.Float64("max-bad", circulation.DefaultMaxBadShare, "largest share of a contour next to replaced, missing or solid nodes")
	nanOnBad := fs.Bool("nan-on-bad", false, "give NaN with a warning instead of failing when --max-bad is exceeded")
	scheme := fs.String("scheme", "central", "difference scheme of the vorticity: central, richardson, least-squares or circulation")
	return func(e *env, args []string) error {
		if len(args) == 0 {
			return usagef("no input files given")
		}
		var st circSettings
		scale, err := piv.LengthScale(*unit, piv.ReadOptions{})
		if err != nil || *unit == "px" {
			return usagef("--coord-unit %q: expected m, mm, cm or um", *unit)
		}
		if st.line.Interp, err = piv.ParseInterp(*interp); err != nil {
			return usagef("--interp: %v", err)
		}
		if st.scheme, err = vorticity.ParseScheme(*scheme); err != nil {
			return usagef("--scheme: %v", err)
		}
		if !(*maxBad >= 0 && *maxBad <= 1) {
			return usagef("--max-bad %g: give a share between 0 and 1", *maxBad)
		}
		st.line.MaxBadShare = *maxBad
		if *maxBad == 0 {
			st.line.MaxBadShare = -1
		}
		st.line.NaNOnBad = *nanOnBad
		st.area = circulation.AreaOptions{MaxMissingShare: st.line.MaxBadShare, NaNOnBad: *nanOnBad}
		if *spacing < 0 || math.IsNaN(*spacing) || math.IsInf(*spacing, 0) {
			return usagef("--spacing %g: give the distance between contour points as a positive number (0: a quarter of the grid spacing)", *spacing)
		}
		// finiteFlag refuses NaN and infinite numbers in a contour or profile flag.
		finiteFlag := func(flag, val string, v []float64) error {
			for _, x := range v {
				if math.IsNaN(x) || math.IsInf(x, 0) {
					return usagef("%s %s: %g is not a finite number", flag, val, x)
				}
			}
			return nil
		}
		st.spacing = *spacing * scale
		for _, c := range *circles {
			v, err := parseFloats("--circle", c, 3, 3)
			if err != nil {
				return err
			}
			if err := finiteFlag("--circle", c, v); err != nil {
				return err
			}
			if !(v[2] > 0) {
				return fmt.Errorf("--circle %s: radius %g must be greater than zero", c, v[2])
			}
			st.contours = append(st.contours, namedShape{"circle " + c, piv.Circle{X: v[0] * scale, Y: v[1] * scale, R: v[2] * scale}})
		}
		for _, r := range *rects {
			v, err := parseFloats("--rect", r, 4, 4)
			if err != nil {
				return err
			}
			if err := finiteFlag("--rect", r, v); err != nil {
				return err
			}
			if !(v[2] > v[0]) || !(v[3] > v[1]) {
				return fmt.Errorf("--rect %s: need X1 > X0 and Y1 > Y0", r)
			}
			st.contours = append(st.contours, namedShape{"rect " + r, piv.Rect{X0: v[0] * scale, Y0: v[1] * scale, X1: v[2] * scale, Y1: v[3] * scale}})
		}
		for _, p := range *polys {
			ps, err := piv.ReadPolygons(p, piv.ReadOptions{LengthUnit: *unit})
			if err != nil {
				return err
			}
			if len(ps) == 0 {
				return fmt.Errorf("%s: no polygon in the file", p)
			}
			for k, poly := range ps {
				name := "polygon " + filepath.Base(p)
				if len(ps) > 1 {
					name += "#" + strconv.Itoa(k+1)
				}
				st.contours = append(st.contours, namedShape{name, poly})
			}
		}
		if *profile != "" {
			v, err := parseFloats("--profile", *profile, 2, 2)
			if err != nil {
				return err
			}
			if err := finiteFlag("--profile", *profile, v); err != nil {
				return err
			}
			if !(*rmax > 0) || math.IsInf(*rmax, 0) {
				return fmt.Errorf("--profile needs --rmax greater than zero and finite (got %g)", *rmax)
			}
			if *dr < 0 || math.IsNaN(*dr) || math.IsInf(*dr, 0) {
				return usagef("--dr %g: give the radial step as a positive number (0: half the grid spacing)", *dr)
			}
			st.profile, st.px, st.py, st.rmax, st.dr = true, v[0]*scale, v[1]*scale, *rmax*scale, *dr*scale
		}
		switch {
		case st.profile && len(st.contours) > 0:
			return usagef("give either --profile or contours (--circle, --rect, --polygon), not both")
		case !st.profile && len(st.contours) == 0:
			return usagef("give a contour (--circle, --rect or --polygon) or --profile X,Y --rmax R")
		}
		series, err := rf.open(args)
		if err != nil {
			return err
		}
		popt, err := run.pipelineOptions(e, "circulation")
		if err != nil {
			return err
		}
		if !popt.Shard.IsAll() || popt.Resume {
			return usagef("circulation does not take --shard or --resume")
		}
		dir, created, err := run.newOutDir("circulation", args)
		if err != nil {
			return err
		}
		if st.profile {
			err = runProfile(e, series, popt, st, dir, run.quiet)
		} else {
			err = runContours(e, series, popt, st, dir, run.quiet)
		}
		if err != nil {
			removeNew(dir, created)
		}
		return err
	}
}

// circRow is the result of one contour in one frame.
type circRow struct {
	frame   int
	time    float64
	contour string
	line    circulation.LineResult
	area    circulation.AreaResult
	stokes  circulation.Stokes
}

func contourOf(g piv.Grid, s piv.Shape, spacing float64) (*circulation.Contour, error) {
	switch sh := s.(type) {
	case piv.Circle:
		return circulation.CircleSampled(g, sh, spacing)
	case piv.Rect:
		return circulation.RectContour(g, sh, spacing)
	case piv.Polygon:
		return circulation.PolygonContour(g, sh, spacing)
	}
	return nil, fmt.Errorf("unsupported contour %T", s)
}

func runContours(e *env, s *piv.Series, popt pipeline.Options, st circSettings, dir string, quiet bool) error {
	proc := func(ctx context.Context, k int, fr pipeline.Frames) ([]circRow, error) {
		f, err := fr.Frame(k)
		if err != nil {
			return nil, err
		}
		omega := vorticity.Vorticity(f, st.scheme)
		var rows []circRow
		for _, c := range st.contours {
			ct, err := contourOf(f.Grid, c.shape, st.spacing)
			if err != nil {
				return nil, fmt.Errorf("%s: %s: %v", f.Name(), c.name, err)
			}
			lr, err := circulation.Line(f, ct, st.line)
			if err != nil {
				return nil, fmt.Errorf("%s: %v", c.name, err)
			}
			reg, err := circulation.ShapeRegion(f.Grid, c.shape)
			if err != nil {
				return nil, fmt.Errorf("%s: %s: %v", f.Name(), c.name, err)
			}
			ar, err := circulation.Area(omega, reg, st.area)
			if err != nil {
				return nil, fmt.Errorf("%s: %s: %v", f.Name(), c.name, err)
			}
			if ar.Warning != "" {
				ar.Warning = f.Name() + ": " + ar.Warning
			}
			rows = append(rows, circRow{frame: k, time: f.Time, contour: c.name, line: lr, area: ar,
				stokes: circulation.StokesDifference(lr.Gamma, ar.Gamma)})
		}
		return rows, nil
	}
	var all []circRow
	emit := func(k int, rows []circRow) error {
		for _, r := range rows {
			if !quiet {
				for _, w := range []string{r.line.Warning, r.area.Warning} {
					if w != "" {
						fmt.Fprintf(e.stderr, "warning: %s: %s\n", r.contour, w)
					}
				}
			}
		}
		all = append(all, rows...)
		return nil
	}
	if _, err := pipeline.Run(context.Background(), s, popt, proc, emit); err != nil {
		return err
	}
	err := piv.WriteFileAtomic(filepath.Join(dir, "circulation.csv"), func(w io.Writer) error {
		if _, err := fmt.Fprintln(w, "frame,time [s],contour,gamma_line [m^2/s],gamma_area [m^2/s],stokes_diff [m^2/s],stokes_rel,replaced_share,gap_share,area [m^2],missing_area_share"); err != nil {
			return err
		}
		for _, r := range all {
			if _, err := fmt.Fprintf(w, "%d,%s,%s,%s,%s,%s,%s,%s,%s,%s,%s\n", r.frame, cnum(r.time), csvText(r.contour),
				cnum(r.line.Gamma), cnum(r.area.Gamma), cnum(r.stokes.Diff), cnum(r.stokes.Rel),
				cnum(r.line.ReplacedShare), cnum(r.line.GapShare), cnum(r.area.Area), cnum(r.area.MissingShare)); err != nil {
				return err
			}
		}
		return nil
	})
	if err != nil {
		return err
	}
	tw := newTextTable(e.stdout, "frame", "time [s]", "contour", "Γ line [m²/s]", "Γ area [m²/s]", "Stokes diff", "bad share")
	for _, r := range all {
		tw.row(strconv.Itoa(r.frame), fmt.Sprintf("%.5g", r.time), r.contour, fmt.Sprintf("%.5g", r.line.Gamma),
			fmt.Sprintf("%.5g", r.area.Gamma), fmt.Sprintf("%+.2f %%", 100*r.stokes.Rel), fmt.Sprintf("%.1f %%", 100*r.line.BadShare))
	}
	tw.flush()
	fmt.Fprintf(e.stdout, "wrote %s\n", filepath.Join(dir, "circulation.csv"))
	return nil
}

// profRes is the profile and fit of one frame.
type profRes struct {
	frame  int
	time   float64
	prof   circulation.Profile
	fit    circulation.LambOseenFit
	fitErr error
}

func runProfile(e *env, s *piv.Series, popt pipeline.Options, st circSettings, dir string, quiet bool) error {
	proc := func(ctx context.Context, k int, fr pipeline.Frames) (profRes, error) {
		f, err := fr.Frame(k)
		if err != nil {
			return profRes{}, err
		}
		p, err := circulation.RadialProfile(f, st.px, st.py, st.rmax,
			circulation.ProfileOptions{DR: st.dr, Spacing: st.spacing, Line: st.line})
		if err != nil {
			return profRes{}, err
		}
		fit, ferr := circulation.FitLambOseen(f, st.px, st.py, st.rmax, circulation.FitOptions{Strain: true})
		if p.Warning != "" {
			p.Warning = f.Name() + ": " + p.Warning
		}
		return profRes{frame: k, time: f.Time, prof: p, fit: fit, fitErr: ferr}, nil
	}
	var all []profRes
	emit := func(k int, r profRes) error {
		if !quiet {
			if r.prof.Warning != "" {
				fmt.Fprintf(e.stderr, "warning: %s\n", r.prof.Warning)
			}
			if r.fitErr != nil {
				fmt.Fprintf(e.stderr, "warning: %v\n", r.fitErr)
			}
		}
		all = append(all, r)
		return nil
	}
	if _, err := pipeline.Run(context.Background(), s, popt, proc, emit); err != nil {
		return err
	}
	err := piv.WriteFileAtomic(filepath.Join(dir, "profile.csv"), func(w io.Writer) error {
		if _, err := fmt.Fprintln(w, "frame,time [s],r [m],gamma [m^2/s],u_theta [m/s],u_r [m/s],bad_share"); err != nil {
			return err
		}
		for _, r := range all {
			p := r.prof
			for a := range p.R {
				if _, err := fmt.Fprintf(w, "%d,%s,%s,%s,%s,%s,%s\n", r.frame, cnum(r.time), cnum(p.R[a]), cnum(p.Gamma[a]),
					cnum(p.UTheta[a]), cnum(p.UR[a]), cnum(p.BadShare[a])); err != nil {
					return err
				}
			}
		}
		return nil
	})
	if err != nil {
		return err
	}
	err = piv.WriteFileAtomic(filepath.Join(dir, "fit.csv"), func(w io.Writer) error {
		if _, err := fmt.Fprintln(w, "frame,time [s],gamma [m^2/s],sigma_gamma [m^2/s],core_radius [m],sigma_core_radius [m],x [m],sigma_x [m],y [m],sigma_y [m],u_background [m/s],v_background [m/s],rms_residual [m/s],nodes"); err != nil {
			return err
		}
		for _, r := range all {
			ft := r.fit
			if _, err := fmt.Fprintf(w, "%d,%s,%s,%s,%s,%s,%s,%s,%s,%s,%s,%s,%s,%d\n", r.frame, cnum(r.time), cnum(ft.Gamma), cnum(ft.SigmaGamma),
				cnum(ft.Rc), cnum(ft.SigmaRc), cnum(ft.X), cnum(ft.SigmaX), cnum(ft.Y), cnum(ft.SigmaY), cnum(ft.U), cnum(ft.V), cnum(ft.RMS), ft.Nodes); err != nil {
				return err
			}
		}
		return nil
	})
	if err != nil {
		return err
	}
	tw := newTextTable(e.stdout, "frame", "time [s]", "Γ(rmax) [m²/s]", "fit Γ∞ [m²/s]", "r_c [m]", "centre x [m]", "centre y [m]", "rms [m/s]")
	for _, r := range all {
		gr := math.NaN()
		if n := len(r.prof.Gamma); n > 0 {
			gr = r.prof.Gamma[n-1]
		}
		ft := r.fit
		tw.row(strconv.Itoa(r.frame), fmt.Sprintf("%.5g", r.time), fmt.Sprintf("%.5g", gr),
			fmt.Sprintf("%.5g ± %.2g", ft.Gamma, ft.SigmaGamma), fmt.Sprintf("%.4g ± %.2g", ft.Rc, ft.SigmaRc),
			fmt.Sprintf("%.5g", ft.X), fmt.Sprintf("%.5g", ft.Y), fmt.Sprintf("%.3g", ft.RMS))
	}
	tw.flush()
	fmt.Fprintf(e.stdout, "wrote %s and %s\n", filepath.Join(dir, "profile.csv"), filepath.Join(dir, "fit.csv"))
	return nil
}

// cnum formats a number for CSV output: shortest form that reads back exactly; NaN as "NaN".
func cnum(x float64) string { return strconv.FormatFloat(x, 'g', -1, 64) }

// csvText quotes a CSV cell when it holds a delimiter or quote.
func csvText(s string) string {
	if strings.ContainsAny(s, ",\"\n") {
		return `"` + strings.ReplaceAll(s, `"`, `""`) + `"`
	}
	return s
}

// textTable prints aligned columns on a terminal.
type textTable struct {
	w    io.Writer
	rows [][]string
}

func newTextTable(w io.Writer, head ...string) *textTable {
	return &textTable{w: w, rows: [][]string{head}}
}

func (t *textTable) row(cells ...string) { t.rows = append(t.rows, cells) }

func (t *textTable) flush() {
	width := make([]int, len(t.rows[0]))
	for _, r := range t.rows {
		for c, s := range r {
			width[c] = max(width[c], len([]rune(s)))
		}
	}
	for _, r := range t.rows {
		var b strings.Builder
		for c, s := range r {
			if c > 0 {
				b.WriteString("  ")
			}
			b.WriteString(s)
			if c < len(r)-1 {
				b.WriteString(strings.Repeat(" ", width[c]-len([]rune(s))))
			}
		}
		fmt.Fprintln(t.w, b.String())
	}
}
