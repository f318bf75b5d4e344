package report

import (
	"bytes"
	"fmt"
	"image/color"
	"math"
	"strconv"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"
	"gonum.org/v1/plot/vg/vgimg"
)

// Line is one curve of a line plot. NaN values break the curve into pieces.
type Line struct {
	Label  string
	X, Y   []float64
	Dashed bool
	Points bool // draw markers at the samples as well
	// Band, when not nil, is a one-standard-deviation uncertainty per sample, drawn as a
	// light band Y - Band .. Y + Band behind the curve.
	Band []float64
	// Thin draws the curve with a thinner line (for noisy curves drawn over a band).
	Thin bool
}

// Marker is a labelled vertical line, e.g. a pulse phase boundary.
type Marker struct {
	X     float64
	Label string
}

// LinePlot describes a plot of curves against a common axis.
type LinePlot struct {
	Title, XLabel, YLabel string
	// XUnit and YUnit are the SI units of the data (e.g. "N", "m^2/s"); when set, the axis
	// shows the data in the display unit Format would pick for its largest value (mN, mm²/s)
	// and the label gets it in brackets. Empty: the values are drawn as they are and the
	// label is used as given.
	XUnit, YUnit string
	Lines        []Line
	Markers      []Marker
	// Width and Height in centimetres (0 means 16 x 10).
	Width, Height float64
	// XCategories, when set, names the points x = 1, 2, ... of a plot over categories (runs
	// in table order): the x axis gets one labelled tick per category.
	XCategories []string
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

// plotDPI is the resolution of line plots: sharp on screens and in print (common practice).
const plotDPI = 150

// axisScale returns the display scale of one axis for the data values vals.
func axisScale(unit string, vals ...[]float64) Scale {
	if unit == "" {
		return Scale{}
	}
	m := 0.0
	for _, v := range vals {
		for _, x := range v {
			if !math.IsNaN(x) && !math.IsInf(x, 0) {
				m = math.Max(m, math.Abs(x))
			}
		}
	}
	return ScaleFor(m, unit)
}

func axisLabel(label string, unit string, sc Scale) string {
	if unit == "" || sc.Unit == "" {
		return label
	}
	return label + " [" + sc.Unit + "]"
}

func scaled(v []float64, f float64) []float64 {
	if f == 1 || v == nil {
		return v
	}
	out := make([]float64, len(v))
	for k, x := range v {
		out[k] = x * f
	}
	return out
}

// lighter mixes c with white: share 0 is c, 1 is white.
func lighter(c color.Color, share float64) color.Color {
	r, g, b, _ := c.RGBA()
	mix := func(v uint32) uint8 { return uint8(float64(v>>8)*(1-share) + 255*share) }
	return color.RGBA{R: mix(r), G: mix(g), B: mix(b), A: 0xff}
}

// PNG renders the plot as a PNG image at 150 dots per inch. The legend sits outside the data
// area, to the right of it; ticks are at round numbers (1, 2 or 5 times a power of ten).
func (lp LinePlot) PNG() ([]byte, error) {
	var xs, ys []([]float64)
	for _, l := range lp.Lines {
		xs = append(xs, l.X)
		ys = append(ys, l.Y)
	}
	xsc, ysc := axisScale(lp.XUnit, xs...), axisScale(lp.YUnit, ys...)
	xf, yf := 1.0, 1.0
	if lp.XUnit != "" {
		xf = xsc.Factor()
	}
	if lp.YUnit != "" {
		yf = ysc.Factor()
	}
	p := plot.New()
	p.Title.Text = lp.Title
	p.X.Label.Text = axisLabel(lp.XLabel, lp.XUnit, xsc)
	p.Y.Label.Text = axisLabel(lp.YLabel, lp.YUnit, ysc)
	p.X.Tick.Marker = niceTicks{}
	p.Y.Tick.Marker = niceTicks{}
	if len(lp.XCategories) > 0 {
		var ticks []plot.Tick
		for k, c := range lp.XCategories {
			ticks = append(ticks, plot.Tick{Value: float64(k + 1), Label: c})
		}
		p.X.Tick.Marker = plot.ConstantTicks(ticks)
		p.X.Min, p.X.Max = 0.5, float64(len(lp.XCategories))+0.5
	}
	p.Add(plotter.NewGrid())
	any := false
	// Bands first, so that every curve is drawn over them.
	for n, l := range lp.Lines {
		if l.Band == nil {
			continue
		}
		col := lighter(lineColours[n%len(lineColours)], 0.75)
		x, y := scaled(l.X, xf), scaled(l.Y, yf)
		b := scaled(l.Band, yf)
		lo, hi := make([]float64, len(y)), make([]float64, len(y))
		for k := range y {
			bk := math.NaN()
			if k < len(b) {
				bk = b[k]
			}
			lo[k], hi[k] = y[k]-bk, y[k]+bk
		}
		// hi and lo are NaN at the same samples, so their pieces pair up one to one.
		ups, downs := pieces(x, hi), pieces(x, lo)
		for q, up := range ups {
			if q >= len(downs) || len(up) < 2 || len(downs[q]) != len(up) {
				continue
			}
			down := downs[q]
			ring := append(plotter.XYs(nil), up...)
			for k := len(down) - 1; k >= 0; k-- {
				ring = append(ring, down[k])
			}
			poly, err := plotter.NewPolygon(ring)
			if err != nil {
				return nil, fmt.Errorf("plot %q, band of %q: %w", lp.Title, l.Label, err)
			}
			poly.Color = col
			poly.LineStyle.Width = 0
			p.Add(poly)
		}
	}
	var legend []legendEntry
	for n, l := range lp.Lines {
		col := lineColours[n%len(lineColours)]
		for q, xy := range pieces(scaled(l.X, xf), scaled(l.Y, yf)) {
			line, err := plotter.NewLine(xy)
			if err != nil {
				return nil, fmt.Errorf("plot %q, curve %q: %w", lp.Title, l.Label, err)
			}
			line.Color = col
			line.Width = vg.Points(1.5)
			if l.Thin {
				line.Width = vg.Points(0.8)
			}
			if l.Dashed {
				line.Dashes = []vg.Length{vg.Points(5), vg.Points(3)}
			}
			p.Add(line)
			var thumb []plot.Thumbnailer
			if l.Band != nil {
				thumb = append(thumb, bandThumb{lighter(col, 0.75)})
			}
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
				legend = append(legend, legendEntry{l.Label, thumb})
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
		mx := m.X * xf
		lo, hi := p.Y.Min, p.Y.Max
		ml, err := plotter.NewLine(plotter.XYs{{X: mx, Y: lo}, {X: mx, Y: hi}})
		if err != nil {
			return nil, err
		}
		ml.Color = color.Gray{Y: 0x99}
		ml.Dashes = []vg.Length{vg.Points(2), vg.Points(2)}
		p.Add(ml)
		if m.Label != "" {
			lab, err := plotter.NewLabels(plotter.XYLabels{XYs: plotter.XYs{{X: mx, Y: hi}}, Labels: []string{" " + m.Label}})
			if err == nil {
				lab.TextStyle[0].Color = color.Gray{Y: 0x55}
				lab.TextStyle[0].Font.Size = vg.Points(9)
				p.Add(lab)
			}
		}
	}
	w, h := lp.Width, lp.Height
	if w <= 0 || h <= 0 {
		w, h = 16, 10
	}
	c := vgimg.NewWith(vgimg.UseWH(vg.Length(w)*vg.Centimeter, vg.Length(h)*vg.Centimeter), vgimg.UseDPI(plotDPI))
	dc := draw.New(c)
	leg := plot.NewLegend()
	leg.Left, leg.Top = true, true
	leg.TextStyle.Font.Size = vg.Points(10)
	for _, e := range legend {
		leg.Add(e.text, e.thumbs...)
	}
	plotArea := dc
	if len(legend) > 0 {
		lw := leg.Rectangle(dc).Max.X - leg.Rectangle(dc).Min.X + vg.Points(8)
		if lw > (dc.Max.X-dc.Min.X)/2 {
			lw = (dc.Max.X - dc.Min.X) / 2
		}
		plotArea = draw.Crop(dc, 0, -lw, 0, 0)
		legArea := draw.Crop(dc, dc.Max.X-dc.Min.X-lw+vg.Points(6), 0, 0, 0)
		// Top of the legend level with the top of the data area, below the title.
		top := vg.Length(0)
		if p.Title.Text != "" {
			top = p.Title.TextStyle.Rectangle(p.Title.Text).Size().Y + p.Title.Padding
		}
		legArea = draw.Crop(legArea, 0, 0, 0, -top)
		leg.Draw(legArea)
	}
	p.Draw(plotArea)
	var buf bytes.Buffer
	if _, err := (vgimg.PngCanvas{Canvas: c}).WriteTo(&buf); err != nil {
		return nil, err
	}
	return buf.Bytes(), nil
}

type legendEntry struct {
	text   string
	thumbs []plot.Thumbnailer
}

// bandThumb draws a legend thumbnail of an uncertainty band: a light box.
type bandThumb struct{ c color.Color }

// Thumbnail implements plot.Thumbnailer.
func (b bandThumb) Thumbnail(c *draw.Canvas) {
	h := c.Max.Y - c.Min.Y
	r := vg.Rectangle{Min: vg.Point{X: c.Min.X, Y: c.Min.Y + h*0.2}, Max: vg.Point{X: c.Max.X, Y: c.Max.Y - h*0.2}}
	c.SetColor(b.c)
	c.Fill(r.Path())
}

// niceTicks puts major ticks at round numbers, 1, 2 or 5 times a power of ten, two to nine
// over the range, labelled with just the decimals the step needs, and minor ticks between.
type niceTicks struct{}

// Ticks implements plot.Ticker.
func (niceTicks) Ticks(lo, hi float64) []plot.Tick {
	if !(hi > lo) {
		return []plot.Tick{{Value: lo, Label: strconv.FormatFloat(lo, 'g', 4, 64)}}
	}
	// The first of 1, 2, 5, 10, 20, 50 times a tenth of the range's power of ten that gives at
	// most eight intervals.
	mag := math.Pow(10, math.Floor(math.Log10(hi-lo))-1)
	step, minor := mag, 5.0
	for _, m := range []float64{1, 2, 5, 10, 20, 50} {
		step = m * mag
		minor = 5
		if m == 2 || m == 20 {
			minor = 4
		}
		if (hi-lo)/step <= 8 {
			break
		}
	}
	dec := max(0, -int(math.Floor(math.Log10(step)+1e-9)))
	var out []plot.Tick
	first := math.Ceil(lo/step-1e-9) * step
	for k := 0; ; k++ {
		v := first + float64(k)*step
		if v > hi+step*1e-9 {
			break
		}
		if math.Abs(v) < step*1e-9 {
			v = 0
		}
		out = append(out, plot.Tick{Value: v, Label: cleanZero(strconv.FormatFloat(v, 'f', dec, 64))})
	}
	ms := step / minor
	for v := math.Ceil(lo/ms-1e-9) * ms; v <= hi+ms*1e-9; v += ms {
		if r := math.Mod(math.Abs(v)+ms*1e-6, step); r > ms*1e-3 && r < step-ms*1e-3 {
			out = append(out, plot.Tick{Value: v})
		}
	}
	return out
}
