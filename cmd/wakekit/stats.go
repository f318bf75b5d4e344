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
	"github.com/wakekit/wakekit/internal/pipeline"
	"github.com/wakekit/wakekit/internal/report"
	"github.com/wakekit/wakekit/piv"
	"github.com/wakekit/wakekit/piv/stats"
)

func init() {
	register(&command{
		name:    "stats",
		summary: "ensemble and phase averages, fluctuations, modal decomposition, probe spectra",
		usage:   "wakekit stats FILES... [flags]",
		help: `Statistics over a series of frames on one grid, read once (memory does not grow with
the number of frames, except for the modal decomposition, which holds every snapshot):

  stats.csv     per node: mean u and v, RMS of the fluctuations, Reynolds stresses u'u', v'v',
                u'v' [m^2/s^2], the planar turbulent kinetic energy estimate
                k = (3/4)(u'u' + v'v') (out-of-plane variance taken as the mean of the
                in-plane ones) and the number of valid samples. Nodes with fewer than
                --min-count samples are left empty (NaN).
  phase_NN.csv  with --phase-bins N: the same per phase bin of a periodic (pulsed) flow. The
                period is --period, or, without it, detected from the spectrum of u at the
                nozzle exit point --exit X,Y; --phase-origin sets phase zero (default: the
                first frame). phase.csv lists the bins.
  pod_*.csv     with --pod N: snapshot proper orthogonal decomposition (Sirovich 1987) of the
                fluctuations at the nodes valid in every frame. pod_energy.csv gives each
                mode's energy, share and cumulative share; pod_mode_NN.csv the first N modes
                scaled to velocity (the RMS velocity each contributes, m/s);
                pod_coefficients.csv their temporal coefficients (unit RMS), so that a
                snapshot's fluctuation is the sum of coefficient times mode.
  spectrum_probeN.csv  with --probe X,Y (repeatable): Welch power spectra of u and v at the
                point [m^2/s], with the dominant frequency and, given --diameter D and
                --velocity U, the Strouhal number f D / U in the summary. --segment and
                --overlap set the Welch segments (default: the largest power of two up to a
                quarter of the frames, half overlapping). Frames must be evenly spaced.

PNG maps of the mean speed, the kinetic energy estimate and the first modes (u component,
with the mode's vectors) are written too unless --no-png. stats.json holds the summary.

Examples:
  wakekit stats run3-clean/frames.csv --out run3-stats
  wakekit stats run3-clean/ --phase-bins 12 --exit 0.002,0 --pod 6 -o run3-phase
  wakekit stats "tank2/frame_*.csv" --dt 0.002 --probe 0.03,0.01 --probe 0.05,0.01 --diameter 0.02 --velocity 0.4`,
		setup: setupStats,
	})
}

type statsFlags struct {
	minCount    int
	period      float64
	phaseBins   int
	phaseOrigin float64
	exit        string
	pod         int
	podMaxGB    float64
	probes      []string
	segment     int
	overlap     int
	diameter    float64
	velocity    float64
	noPNG       bool
}

func setupStats(fs *pflag.FlagSet) func(e *env, args []string) error {
	o := &statsFlags{}
	fs.IntVar(&o.minCount, "min-count", 2, "least number of valid samples for a node's statistics")
	fs.IntVar(&o.phaseBins, "phase-bins", 0, "phase-average in N bins per period (0: no phase averaging)")
	fs.Float64Var(&o.period, "period", 0, "pulsing period [s] for phase averaging (default: detected at --exit)")
	fs.Float64Var(&o.phaseOrigin, "phase-origin", math.NaN(), "time of phase zero [s] (default: the first frame)")
	fs.StringVar(&o.exit, "exit", "", "nozzle exit point X,Y [m] whose u spectrum gives the period")
	fs.IntVar(&o.pod, "pod", 0, "number of POD modes to write (0: no decomposition)")
	fs.Float64Var(&o.podMaxGB, "pod-max-gb", 4, "memory limit of the decomposition's snapshots [GB]")
	fs.StringArrayVar(&o.probes, "probe", nil, "probe point X,Y [m] for spectra (repeatable)")
	fs.IntVar(&o.segment, "segment", 0, "Welch segment length in frames (even; 0: automatic)")
	fs.IntVar(&o.overlap, "overlap", -1, "Welch segment overlap in frames (default: half a segment)")
	fs.Float64Var(&o.diameter, "diameter", 0, "length scale D [m] (nozzle diameter) for the Strouhal number")
	fs.Float64Var(&o.velocity, "velocity", 0, "velocity scale U [m/s] for the Strouhal number")
	fs.BoolVar(&o.noPNG, "no-png", false, "do not write PNG maps")
	rd := addReadFlags(fs)
	rf := addRunFlags(fs)
	return func(e *env, args []string) error { return o.run(e, rd, rf, args, fs.Changed("overlap")) }
}

type point struct{ x, y float64 }

func parsePoint(flag, s string) (point, error) {
	v, err := parseFloats(flag, s, 2, 2)
	if err != nil {
		return point{}, err
	}
	if !finite(v[0]) || !finite(v[1]) {
		return point{}, usagef("%s %q: coordinates must be finite", flag, s)
	}
	return point{v[0], v[1]}, nil
}

// check validates the flags that need no data.
func (o *statsFlags) check(rf *runFlags, overlapSet bool) (exit *point, probes []point, err error) {
	for _, c := range []struct {
		flag string
		v    float64
		rule numberRule
		want string
	}{
		{"--period", o.period, nonNegative, "the pulsing period in s, e.g. 0.05 (or omit it and give --exit X,Y to detect it)"},
		{"--pod-max-gb", o.podMaxGB, positive, "the memory the snapshots may take in GB, e.g. 4"},
		{"--diameter", o.diameter, nonNegative, "the length scale D in m, e.g. 0.02 (the nozzle diameter)"},
		{"--velocity", o.velocity, nonNegative, "the velocity scale U in m/s, e.g. 0.4 (the jet velocity)"},
	} {
		if err := checkNumber(c.flag, c.v, c.rule, c.want); err != nil {
			return nil, nil, err
		}
	}
	if !math.IsNaN(o.phaseOrigin) && math.IsInf(o.phaseOrigin, 0) {
		return nil, nil, usagef("--phase-origin %g is not a finite number: give the time of phase zero in s, e.g. 0.12", o.phaseOrigin)
	}
	if overlapSet && o.overlap < 0 {
		return nil, nil, usagef("--overlap %d must not be negative: give the Welch segment overlap in frames, e.g. half of --segment", o.overlap)
	}
	switch {
	case rf.shard != "" || rf.resume:
		return nil, nil, usagef("--shard and --resume do not apply: statistics need the whole series at once")
	case o.minCount < 1:
		return nil, nil, usagef("--min-count %d must be at least 1", o.minCount)
	case o.phaseBins < 0 || o.phaseBins > 1000:
		return nil, nil, usagef("--phase-bins %d must lie in 0..1000", o.phaseBins)
	case o.pod < 0:
		return nil, nil, usagef("--pod %d must not be negative", o.pod)
	case o.podMaxGB > 1e6:
		return nil, nil, usagef("--pod-max-gb %g: give the memory the snapshots may take in GB, e.g. 4 (at most 1e6)", o.podMaxGB)
	case (o.diameter > 0) != (o.velocity > 0):
		return nil, nil, usagef("give both --diameter and --velocity (positive) for the Strouhal number")
	case o.segment < 0 || o.segment%2 != 0:
		return nil, nil, usagef("--segment %d must be even (or 0 for automatic)", o.segment)
	}
	if o.exit != "" {
		p, err := parsePoint("--exit", o.exit)
		if err != nil {
			return nil, nil, err
		}
		exit = &p
	}
	if o.phaseBins > 0 && o.period == 0 && exit == nil {
		return nil, nil, usagef("phase averaging needs --period or --exit X,Y to detect it")
	}
	for _, s := range o.probes {
		p, err := parsePoint("--probe", s)
		if err != nil {
			return nil, nil, err
		}
		probes = append(probes, p)
	}
	return exit, probes, nil
}

// statsSummary is stats.json.
type statsSummary struct {
	Command      string              `json:"command"`
	Version      string              `json:"version"`
	Frames       int                 `json:"frames"`
	Grid         string              `json:"grid"`
	NodesWithAll int                 `json:"nodes_with_statistics"`
	Period       piv.JSONFloat       `json:"period_s,omitempty"`
	PeriodFrom   string              `json:"period_from,omitempty"`
	PhaseBins    int                 `json:"phase_bins,omitempty"`
	PODNodes     int                 `json:"pod_nodes,omitempty"`
	PODEnergy    []piv.JSONFloat     `json:"pod_energy_m2_s2,omitempty"`
	PODShare     []piv.JSONFloat     `json:"pod_cumulative_share,omitempty"`
	Probes       []probeSummaryEntry `json:"probes,omitempty"`
}

type probeSummaryEntry struct {
	X        piv.JSONFloat `json:"x_m"`
	Y        piv.JSONFloat `json:"y_m"`
	Dominant piv.JSONFloat `json:"dominant_frequency_hz"`
	Strouhal piv.JSONFloat `json:"strouhal,omitempty"`
	Filled   int           `json:"samples_filled"`
}

func (o *statsFlags) run(e *env, rd *readFlags, rf *runFlags, args []string, overlapSet bool) error {
	exit, probePts, err := o.check(rf, overlapSet)
	if err != nil {
		return err
	}
	popt, err := rf.pipelineOptions(e, "stats")
	if err != nil {
		return err
	}
	s, err := rd.open(args)
	if err != nil {
		return err
	}
	N := s.Len()
	times := s.Times()
	// Checks that need only the frame count and times, before any frame is read.
	if o.pod > 0 {
		if err := stats.CheckModes(o.pod, N); err != nil {
			return err
		}
	}
	if o.period > 0 {
		if err := stats.CheckPeriod(o.period, times); err != nil {
			return err
		}
	}
	var fs float64
	if len(probePts) > 0 || (o.phaseBins > 0 && o.period == 0) {
		if fs, err = stats.UniformRate(times); err != nil {
			return err
		}
	}
	seg, overlap := o.segment, o.overlap
	if len(probePts) > 0 {
		if seg == 0 {
			seg = stats.DefaultSegment(N)
		}
		if overlap < 0 {
			overlap = seg / 2
		}
		if seg < 4 || seg > N || overlap >= seg {
			return usagef("--segment %d and --overlap %d do not fit a series of %d frames (segment 4..%d, overlap below it)", seg, overlap, N, N)
		}
	}
	first, err := s.Frame(0)
	if err != nil {
		return err
	}
	g := first.Grid
	for _, p := range append(probePts, exitList(exit)...) {
		if !g.Contains(p.x, p.y) {
			return fmt.Errorf("point (%g, %g) m lies outside the grid (%s)", p.x, p.y, g)
		}
	}
	load := func(ctx context.Context, k int, frames pipeline.Frames) (*piv.Field, error) { return frames.Frame(k) }
	// SIGINT or SIGTERM stops reading; nothing is written before every frame has been read.
	ctx, stop := pipeline.SignalContext(context.Background())
	defer stop()

	period, periodFrom := o.period, "--period"
	if o.phaseBins > 0 && period == 0 {
		ex := &stats.Probe{X: exit.x, Y: exit.y}
		if _, err := pipeline.Run(ctx, s, popt, load, func(k int, f *piv.Field) error {
			ex.Add(f)
			return nil
		}); err != nil {
			return err
		}
		u := append([]float64(nil), ex.U...)
		if _, err := stats.FillTimeGaps(u); err != nil {
			return fmt.Errorf("exit point (%g, %g) m: %v", exit.x, exit.y, err)
		}
		f0, err := stats.DominantFrequency(u, fs)
		if err != nil {
			return fmt.Errorf("exit point (%g, %g) m: %v", exit.x, exit.y, err)
		}
		period, periodFrom = 1/f0, fmt.Sprintf("u spectrum at (%g, %g) m", exit.x, exit.y)
		if err := stats.CheckPeriod(period, times); err != nil {
			return fmt.Errorf("period detected from the %s: %v", periodFrom, err)
		}
	}

	mom, err := stats.NewMoments(g)
	if err != nil {
		return err
	}
	var phase *stats.PhaseAverage
	if o.phaseBins > 0 {
		t0 := o.phaseOrigin
		if math.IsNaN(t0) {
			t0 = times[0]
		}
		if phase, err = stats.NewPhaseAverage(g, period, t0, o.phaseBins, times); err != nil {
			return err
		}
	}
	var pod *stats.POD
	if o.pod > 0 {
		if pod, err = stats.NewPOD(g, N, int64(o.podMaxGB*1e9)); err != nil {
			return err
		}
	}
	probes := make([]*stats.Probe, len(probePts))
	for a, p := range probePts {
		probes[a] = &stats.Probe{X: p.x, Y: p.y}
	}
	_, err = pipeline.Run(ctx, s, popt, load, func(k int, f *piv.Field) error {
		if err := mom.Add(f); err != nil {
			return err
		}
		if phase != nil {
			if err := phase.Add(f); err != nil {
				return err
			}
		}
		if pod != nil {
			if err := pod.Add(f); err != nil {
				return err
			}
		}
		for _, p := range probes {
			p.Add(f)
		}
		return nil
	})
	if err != nil {
		return err
	}

	// Everything that can fail on the data is computed before the output folder is made, and
	// a folder this run made is removed again if writing fails, so no partial output is left.
	var modes *stats.Modes
	if pod != nil {
		if modes, err = pod.Decompose(o.pod); err != nil {
			return err
		}
	}
	spectra := make([]*stats.ProbeSpectrum, len(probes))
	strouhal := make([]float64, len(probes))
	for a, p := range probes {
		if spectra[a], err = p.Spectra(fs, seg, overlap); err != nil {
			return err
		}
		if o.diameter > 0 {
			if strouhal[a], err = stats.Strouhal(spectra[a].Dominant, o.diameter, o.velocity); err != nil {
				return err
			}
		}
	}
	dir, created, err := rf.newOutDir("stats", args)
	if err != nil {
		return err
	}
	var summary strings.Builder
	if err := o.write(&summary, dir, g, N, mom, phase, period, periodFrom, modes, probes, spectra, strouhal, seg); err != nil {
		removeNew(dir, created)
		return err
	}
	_, err = io.WriteString(e.stdout, summary.String())
	return err
}

// write writes the outputs into dir and the summary for stdout into w.
func (o *statsFlags) write(w io.Writer, dir string, g piv.Grid, N int, mom *stats.Moments, phase *stats.PhaseAverage,
	period float64, periodFrom string, m *stats.Modes, probes []*stats.Probe, spectra []*stats.ProbeSpectrum,
	strouhal []float64, seg int) error {
	sum := statsSummary{Command: "stats", Version: version, Frames: N, Grid: g.String()}
	res := mom.Result(o.minCount)
	if err := writeMoments(filepath.Join(dir, "stats.csv"), res); err != nil {
		return err
	}
	for _, c := range res.Count {
		if c >= o.minCount {
			sum.NodesWithAll++
		}
	}
	fmt.Fprintf(w, "stats: %d frames, %s\n", N, g)
	fmt.Fprintf(w, "  %d of %d nodes with at least %d valid samples\n", sum.NodesWithAll, g.N(), o.minCount)
	written := []string{"stats.csv"}
	if !o.noPNG {
		speed, tke := piv.NaNs(g.N()), res.TKE
		for k := range speed {
			speed[k] = math.Hypot(res.MeanU[k], res.MeanV[k])
		}
		mean := res.MeanField()
		if err := writeMap(filepath.Join(dir, "mean_speed.png"), report.MapPlot{Grid: g, Values: speed, Title: "mean speed", Unit: "m/s", Arrows: mean}); err != nil {
			return err
		}
		if err := writeMap(filepath.Join(dir, "tke.png"), report.MapPlot{Grid: g, Values: tke, Title: "turbulent kinetic energy (planar estimate)", Unit: "m^2/s^2"}); err != nil {
			return err
		}
		written = append(written, "mean_speed.png", "tke.png")
	}

	if phase != nil {
		sum.Period, sum.PeriodFrom, sum.PhaseBins = piv.JSONFloat(period), periodFrom, o.phaseBins
		if err := writePhase(dir, phase, o.minCount); err != nil {
			return err
		}
		fmt.Fprintf(w, "  phase average: period %.6g s (%s), %d bins\n", period, periodFrom, o.phaseBins)
		written = append(written, "phase.csv", "phase_NN.csv")
	}

	if m != nil {
		cum := m.Cumulative()
		sum.PODNodes = m.Nodes
		for k := 0; k < o.pod; k++ {
			sum.PODEnergy = append(sum.PODEnergy, piv.JSONFloat(m.Energies[k]))
			sum.PODShare = append(sum.PODShare, piv.JSONFloat(cum[k]))
		}
		if err := writePOD(dir, m, o.pod, !o.noPNG); err != nil {
			return err
		}
		fmt.Fprintf(w, "  POD over %d nodes valid in every frame: first %d modes hold %.2f%% of the fluctuation energy\n",
			m.Nodes, o.pod, 100*cum[o.pod-1])
		for k := 0; k < min(o.pod, 5); k++ {
			fmt.Fprintf(w, "    mode %d: %.3g m^2/s^2 (%.2f%%, cumulative %.2f%%)\n", k+1, m.Energies[k],
				100*m.Share(k), 100*cum[k])
		}
		written = append(written, "pod_energy.csv", "pod_mode_NN.csv", "pod_coefficients.csv")
	}

	for a, p := range probes {
		ps := spectra[a]
		name := fmt.Sprintf("spectrum_probe%d.csv", a+1)
		if err := writeSpectrum(filepath.Join(dir, name), ps); err != nil {
			return err
		}
		entry := probeSummaryEntry{X: piv.JSONFloat(p.X), Y: piv.JSONFloat(p.Y), Dominant: piv.JSONFloat(ps.Dominant), Filled: max(ps.FilledU, ps.FilledV)}
		line := fmt.Sprintf("  probe %d at (%g, %g) m: dominant frequency %.4g Hz (bin %.3g Hz, %d segments of %d frames)",
			a+1, p.X, p.Y, ps.Dominant, ps.U.DF, ps.U.Segments, seg)
		if o.diameter > 0 {
			st := strouhal[a]
			entry.Strouhal = piv.JSONFloat(st)
			line += fmt.Sprintf(", Strouhal number %.4g", st)
		}
		fmt.Fprintln(w, line)
		if entry.Filled > 0 {
			fmt.Fprintf(w, "    (%d frames without data at the probe filled in time)\n", entry.Filled)
		}
		sum.Probes = append(sum.Probes, entry)
		written = append(written, name)
	}
	if err := piv.WriteJSON(filepath.Join(dir, "stats.json"), sum); err != nil {
		return err
	}
	written = append(written, "stats.json")
	fmt.Fprintf(w, "wrote %s (%s)\n", dir, strings.Join(written, ", "))
	return nil
}

func exitList(p *point) []point {
	if p == nil {
		return nil
	}
	return []point{*p}
}

func writeMap(path string, m report.MapPlot) error {
	return m.WritePNG(path, 900, 640)
}

// writeMoments writes the per-node statistics with the mean as the velocity columns.
func writeMoments(path string, r *stats.Result) error {
	count := make([]float64, len(r.Count))
	for k, c := range r.Count {
		count[k] = float64(c)
	}
	return piv.WriteCSV(path, r.MeanField(),
		piv.Column{Name: "rms_u", Unit: "m/s", Values: r.RMSU},
		piv.Column{Name: "rms_v", Unit: "m/s", Values: r.RMSV},
		piv.Column{Name: "uu", Unit: "m^2/s^2", Values: r.UU},
		piv.Column{Name: "vv", Unit: "m^2/s^2", Values: r.VV},
		piv.Column{Name: "uv", Unit: "m^2/s^2", Values: r.UV},
		piv.Column{Name: "tke", Unit: "m^2/s^2", Values: r.TKE},
		piv.Column{Name: "count", Values: count})
}

func writePhase(dir string, p *stats.PhaseAverage, minCount int) error {
	err := piv.WriteFileAtomic(filepath.Join(dir, "phase.csv"), func(w io.Writer) error {
		if _, err := io.WriteString(w, "bin,phase,phase_time [s],frames,file\n"); err != nil {
			return err
		}
		for b, m := range p.Bins {
			if _, err := fmt.Fprintf(w, "%d,%s,%s,%d,phase_%02d.csv\n", b+1, fnum(p.Phase(b)), fnum(p.Phase(b)*p.Period), m.Frames(), b+1); err != nil {
				return err
			}
		}
		return nil
	})
	if err != nil {
		return err
	}
	for b, m := range p.Bins {
		if err := writeMoments(filepath.Join(dir, fmt.Sprintf("phase_%02d.csv", b+1)), m.Result(minCount)); err != nil {
			return err
		}
	}
	return nil
}

func writePOD(dir string, m *stats.Modes, n int, png bool) error {
	cum := m.Cumulative()
	err := piv.WriteFileAtomic(filepath.Join(dir, "pod_energy.csv"), func(w io.Writer) error {
		if _, err := io.WriteString(w, "mode,energy [m^2/s^2],share,cumulative\n"); err != nil {
			return err
		}
		for k, en := range m.Energies {
			if _, err := fmt.Fprintf(w, "%d,%s,%s,%s\n", k+1, fnum(en), fnum(m.Share(k)), fnum(cum[k])); err != nil {
				return err
			}
		}
		return nil
	})
	if err != nil {
		return err
	}
	err = piv.WriteFileAtomic(filepath.Join(dir, "pod_coefficients.csv"), func(w io.Writer) error {
		hdr := "time [s]"
		for k := 0; k < n; k++ {
			hdr += fmt.Sprintf(",a%d", k+1)
		}
		if _, err := io.WriteString(w, hdr+"\n"); err != nil {
			return err
		}
		coeffs := make([][]float64, n)
		for k := range coeffs {
			coeffs[k] = m.UnitCoeffs(k)
		}
		for j, t := range m.Times {
			row := fnum(t)
			for k := 0; k < n; k++ {
				row += "," + fnum(coeffs[k][j])
			}
			if _, err := io.WriteString(w, row+"\n"); err != nil {
				return err
			}
		}
		return nil
	})
	if err != nil {
		return err
	}
	for k := 0; k < n; k++ {
		f := m.ScaledField(k)
		if err := piv.WriteCSV(filepath.Join(dir, fmt.Sprintf("pod_mode_%02d.csv", k+1)), f); err != nil {
			return err
		}
		if png {
			mp := report.MapPlot{Grid: m.Grid, Values: f.U, Title: fmt.Sprintf("POD mode %d, u component (%.2f%% of the energy)", k+1, 100*m.Share(k)),
				Unit: "m/s", Signed: true, Arrows: f}
			if err := writeMap(filepath.Join(dir, fmt.Sprintf("pod_mode_%02d.png", k+1)), mp); err != nil {
				return err
			}
		}
	}
	return nil
}

func writeSpectrum(path string, ps *stats.ProbeSpectrum) error {
	return piv.WriteFileAtomic(path, func(w io.Writer) error {
		if _, err := io.WriteString(w, "frequency [Hz],psd_u [m^2/s],psd_v [m^2/s]\n"); err != nil {
			return err
		}
		for j, f := range ps.U.Freq {
			if _, err := fmt.Fprintf(w, "%s,%s,%s\n", fnum(f), fnum(ps.U.PSD[j]), fnum(ps.V.PSD[j])); err != nil {
				return err
			}
		}
		return nil
	})
}

func fnum(v float64) string {
	if math.IsNaN(v) {
		return "NaN"
	}
	return strconv.FormatFloat(v, 'g', -1, 64)
}
