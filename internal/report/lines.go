package report

import (
	"bytes"
	"fmt"
	"image/color"
	"math"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"
)

// Line is one curve of a line plot. NaN values break the curve into pieces.
type Line struct {
	Label  string
	X, Y   []float64
	Dashed bool
	Points bool // draw markers at the samples as well
}

// Marker is a labelled vertical line, e.g. a pulse phase boundary.
type Marker struct {
	X     float64
	Label string
}

// LinePlot describes a plot of curves against a common axis.
type LinePlot struct {
	Title, XLabel, YLabel string
	Lines                 []Line
	Markers               []Marker
	// Width and Height in centimetres (0 means 16 x 10).
	Width, Height float64
	// LegendLeft puts the legend in the top left corner instead of the top right.
	LegendLeft bool
}

// lineColours are distinguishable on screen and in greyscale print (dark to light).
var lineColours = []color.Color{
	color.RGBA{R: 0x1b, G: 0x3a, B: 0x6b, A: 0xff},
	color.RGBA{R: 0xc2, G: 0x4e, B: 0x1a, A: 0xff},
	color.RGBA{R: 0x2e, G: 0x8b, B: 0x57, A: 0xff},
	color.RGBA{R: 0x8a, G: 0x3f, B: 0x9a, A: 0xff},
	color.RGBA{R: 0x80, G: 0x80, B: 0x80, A: 0xff},
	color.RGBA{R: 0xd4, G: 0xa0, B: 0x17, A: 0xff},
}

// pieces splits a curve at NaN samples (gonum/plot refuses NaN points).
func pieces(x, y []float64) []plotter.XYs {
	var out []plotter.XYs
	var cur plotter.XYs
	n := min(len(x), len(y))
	for k := 0; k < n; k++ {
		if math.IsNaN(x[k]) || math.IsNaN(y[k]) || math.IsInf(x[k], 0) || math.IsInf(y[k], 0) {
			if len(cur) > 0 {
				out = append(out, cur)
				cur = nil
			}
			continue
		}
		cur = append(cur, plotter.XY{X: x[k], Y: y[k]})
	}
	if len(cur) > 0 {
		out = append(out, cur)
	}
	return out
}

// PNG renders the plot as a PNG image at 150 dots per inch.
func (lp LinePlot) PNG() ([]byte, error) {
	p := plot.New()
	p.Title.Text = lp.Title
	p.X.Label.Text = lp.XLabel
	p.Y.Label.Text = lp.YLabel
	p.Legend.Top = true
	p.Legend.Left = lp.LegendLeft
	p.Add(plotter.NewGrid())
	any := false
	for n, l := range lp.Lines {
		col := lineColours[n%len(lineColours)]
		for q, xy := range pieces(l.X, l.Y) {
			line, err := plotter.NewLine(xy)
			if err != nil {
				return nil, fmt.Errorf("plot %q, curve %q: %w", lp.Title, l.Label, err)
			}
			line.Color = col
			line.Width = vg.Points(1.5)
			if l.Dashed {
				line.Dashes = []vg.Length{vg.Points(5), vg.Points(3)}
			}
			p.Add(line)
			var thumb []plot.Thumbnailer
			thumb = append(thumb, line)
			if l.Points {
				sc, err := plotter.NewScatter(xy)
				if err != nil {
					return nil, err
				}
				sc.Color = col
				sc.Shape = draw.CircleGlyph{}
				sc.Radius = vg.Points(2)
				p.Add(sc)
				thumb = append(thumb, sc)
			}
			if q == 0 && l.Label != "" {
				p.Legend.Add(l.Label, thumb...)
			}
			any = true
		}
	}
	if !any {
		return nil, fmt.Errorf("plot %q has no finite data", lp.Title)
	}
	for _, m := range lp.Markers {
		if math.IsNaN(m.X) {
			continue
		}
		lo, hi := p.Y.Min, p.Y.Max
		ml, err := plotter.NewLine(plotter.XYs{{X: m.X, Y: lo}, {X: m.X, Y: hi}})
		if err != nil {
			return nil, err
		}
		ml.Color = color.Gray{Y: 0x99}
		ml.Dashes = []vg.Length{vg.Points(2), vg.Points(2)}
		p.Add(ml)
		if m.Label != "" {
			lab, err := plotter.NewLabels(plotter.XYLabels{XYs: plotter.XYs{{X: m.X, Y: hi}}, Labels: []string{" " + m.Label}})
			if err == nil {
				lab.TextStyle[0].Color = color.Gray{Y: 0x55}
				p.Add(lab)
			}
		}
	}
	w, h := lp.Width, lp.Height
	if w <= 0 || h <= 0 {
		w, h = 16, 10
	}
	wt, err := p.WriterTo(vg.Length(w)*vg.Centimeter, vg.Length(h)*vg.Centimeter, "png")
	if err != nil {
		return nil, err
	}
	var buf bytes.Buffer
	if _, err := wt.WriteTo(&buf); err != nil {
		return nil, err
	}
	return buf.Bytes(), nil
}
