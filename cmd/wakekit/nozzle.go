package main

import (
	"fmt"
	"math"
	"path/filepath"

	"github.com/spf13/pflag"
	"github.com/wakekit/wakekit/internal/pipeline"
	"github.com/wakekit/wakekit/piv"
	"github.com/wakekit/wakekit/pressure"
)

// solidFlags are the flags that mark solid nodes in every frame, with the meaning they have in
// "wakekit pressure": --nozzle X,R_IN,R_OUT marks the nozzle wall x <= X,
// R_IN <= |y - axis| <= R_OUT, and --mask FILE the nodes a file on the frames' grid marks
// "solid" in its status column.
type solidFlags struct {
	nozzle, mask string
}

func addSolidFlags(fs *pflag.FlagSet) *solidFlags {
	sf := &solidFlags{}
	fs.StringVar(&sf.nozzle, "nozzle", "", "X,R_IN,R_OUT [m]: mark the nozzle wall (x <= X, R_IN <= |y - axis| <= R_OUT) solid in every frame")
	fs.StringVar(&sf.mask, "mask", "", "file on the frames' grid whose status column marks solid nodes (status \"solid\"), applied to every frame")
	return sf
}

// solidMask is a parsed solid mask: the shape applied to every frame and what the summary
// records about it.
type solidMask struct {
	shape    piv.Shape
	nozzle   []float64 // X, R_in, R_out of --nozzle (nil for a mask file)
	axis     float64   // the nozzle's axis y [m]
	file     string    // --mask file
	digest   string    // SHA-256 of the mask file
	nodes    int       // solid nodes on the frames' grid
	describe string    // one line for the report
}

// parse reads the flags (before any data is read); it returns nil when neither is given.
func (sf *solidFlags) parse(axis float64) (*solidMask, error) {
	switch {
	case sf.nozzle != "" && sf.mask != "":
		return nil, usagef("--mask and --nozzle exclude each other")
	case sf.nozzle != "":
		v, err := pressureFloats("--nozzle", sf.nozzle, 3)
		if err != nil {
			return nil, err
		}
		if !(v[1] >= 0 && v[2] > v[1]) {
			return nil, usagef("--nozzle %s: give X,R_IN,R_OUT with 0 <= R_IN < R_OUT (the wall's inner and outer radius in m), e.g. 0,0.0125,0.01375", sf.nozzle)
		}
		n := pressure.Nozzle{X: v[0], RIn: v[1], ROut: v[2], Axis: axis}
		return &solidMask{shape: n, nozzle: v, axis: axis,
			describe: fmt.Sprintf("nozzle wall x <= %g m, %g m <= |y - %g m| <= %g m (--nozzle)", v[0], v[1], axis, v[2])}, nil
	case sf.mask != "":
		return &solidMask{file: sf.mask}, nil
	}
	return nil, nil
}

// load checks the mask against the first frame of the series (and reads the mask file), so
// that a wall outside the view or a mask on another grid is refused before the analysis.
func (m *solidMask) load(first *piv.Field, opt piv.ReadOptions) error {
	if m.file != "" {
		mf, err := piv.ReadFile(m.file, opt)
		if err != nil {
			return err
		}
		if !mf.Grid.Same(first.Grid) {
			return fmt.Errorf("%s: mask grid %v differs from the frames' grid %v", m.file, mf.Grid, first.Grid)
		}
		nm := pressure.MaskFromField(mf)
		m.shape = nm
		if m.digest, err = pipeline.FileDigest(m.file); err != nil {
			return err
		}
		m.describe = fmt.Sprintf("the nodes marked solid in %s (--mask)", filepath.Base(m.file))
	}
	if n, ok := m.shape.(pressure.Nozzle); ok {
		if err := n.Check(first.Grid); err != nil {
			return fmt.Errorf("--nozzle %g,%g,%g: %v", n.X, n.RIn, n.ROut, err)
		}
	}
	m.nodes = 0
	for _, in := range piv.Mask(first.Grid, m.shape) {
		if in {
			m.nodes++
		}
	}
	if m.nodes == 0 {
		if m.file != "" {
			return fmt.Errorf("%s: no node has the status solid", m.file)
		}
		return fmt.Errorf("--nozzle %s: the wall covers no node of the grid (spacing %g x %g m); give the wall as it lies in the view, or leave --nozzle out",
			fmtList(m.nozzle), first.Grid.DX, first.Grid.DY)
	}
	return nil
}

func fmtList(v []float64) string {
	s := ""
	for k, x := range v {
		if k > 0 {
			s += ","
		}
		s += fmt.Sprint(x)
	}
	return s
}

// settings returns what the summary records about the mask.
func (m *solidMask) settings() map[string]any {
	out := map[string]any{"solid_nodes": m.nodes}
	if m.nozzle != nil {
		out["nozzle_m"] = m.nozzle
	}
	if m.file != "" {
		out["mask_file"] = m.file
		out["mask_sha256"] = m.digest
	}
	return out
}

// maskedSeries returns the series whose every frame is a copy of the original with the
// shape's nodes marked solid (NaN velocities): derivatives, integrals, the noise estimate and
// the pressure solve then leave them out. Frame names and times are those of s, so input
// digests (for --resume) still read the original files.
func maskedSeries(s *piv.Series, shape piv.Shape) (*piv.Series, error) {
	names := make([]string, s.Len())
	for k := range names {
		names[k] = s.Name(k)
	}
	return piv.NewSeries(names, s.Times(), func(k int) (*piv.Field, error) {
		f, err := s.Frame(k)
		if err != nil {
			return nil, err
		}
		c := f.Clone()
		c.MaskSolid(shape)
		return c, nil
	})
}

// solidColumns returns, for each grid column, whether any node in it is solid.
func solidColumns(f *piv.Field) []bool {
	g := f.Grid
	out := make([]bool, g.NX)
	for j := 0; j < g.NY; j++ {
		for i := 0; i < g.NX; i++ {
			if f.Status[g.Index(i, j)].Kind() == piv.Solid {
				out[i] = true
			}
		}
	}
	return out
}

// firstSolidDownstream returns the coordinates of a solid node in column i or downstream of it,
// or ok false.
func firstSolidDownstream(f *piv.Field, i int) (x, y float64, ok bool) {
	g := f.Grid
	for a := i; a < g.NX; a++ {
		for j := 0; j < g.NY; j++ {
			if f.Status[g.Index(a, j)].Kind() == piv.Solid {
				return g.X(a), g.Y(j), true
			}
		}
	}
	return math.NaN(), math.NaN(), false
}
