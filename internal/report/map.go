package report

import (
	"errors"
	"fmt"
	"image"
	"image/color"
	"image/png"
	"io"
	"math"

	"github.com/wakekit/wakekit/piv"
	"gonum.org/v1/plot"
	"gonum.org/v1/plot/palette"
	"gonum.org/v1/plot/palette/moreland"
	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"
	"gonum.org/v1/plot/vg/vgimg"
)

// OverlayKind says how an overlay's points are drawn.
type OverlayKind int

const (
	// Markers draws each point as a ring (vortex cores, probes).
	Markers OverlayKind = iota
	// Path joins the points with a line (a core's track).
	Path
	// Outline joins the points and closes the shape (a nozzle, a solid body, a contour).
	Outline
)

// Overlay is a set of points in metres, in the coordinates of the map's grid, drawn over a map.
type Overlay struct {
	Label  string
	Kind   OverlayKind
	X, Y   []float64   // [m]
	Colour color.Color // nil means black
}

// RectOverlay returns the outline of the rectangle [x0, x1] x [y0, y1] (metres).
func RectOverlay(label string, x0, y0, x1, y1 float64) Overlay {
	return Overlay{Label: label, Kind: Outline, X: []float64{x0, x1, x1, x0}, Y: []float64{y0, y0, y1, y1}}
}

// MapPlot is a colour map of one scalar on a grid, with a colour bar, axes in mm, optional
// velocity arrows and overlays. Signed quantities use a blue–white–red diverging palette
// centred on zero; positive ones a light-to-dark sequential palette. Nodes without a value
// (NaN) are drawn dark grey.
type MapPlot struct {
	Grid   piv.Grid
	Values []float64 // one per node, in grid order
	Title  string
	Unit   string // unit of the values, shown on the colour bar, e.g. "1/s"
	Signed bool
	// Min and Max fix the colour range (values beyond it take the end colours); when both are
	// zero it is automatic: +-max|value| for signed maps, the smallest to the largest value
	// otherwise.
	Min, Max float64
	// YName names the vertical coordinate on the axis label ("y" when empty; "r" suits the
	// meridional plane of an axisymmetric flow).
	YName string
	// Arrows, when not nil, draws the velocity of this field (same extent) as arrows on a
	// coarser lattice of at most about 32 arrows along the longer side.
	Arrows   *piv.Field
	Overlays []Overlay
}

// noData is the colour of nodes without a value.
var noData = color.RGBA{R: 0x6e, G: 0x6e, B: 0x6e, A: 0xff}

// Diverging returns the palette for signed maps: Moreland's smooth blue–red diverging map
// (Moreland 2009, "Diverging color maps for scientific visualization", as built by gonum's
// palette/moreland), blue for negative, near-white at zero, red for positive, with equal
// lightness at equal distances from zero.
func Diverging() palette.ColorMap { return moreland.SmoothBlueRed() }

// Sequential returns the palette for positive maps: luminance-linear interpolation
// (gonum's palette/moreland) from a pale cream through amber and rust to a dark plum, light
// for small values.
func Sequential() palette.ColorMap {
	cm, err := moreland.NewLuminance([]color.Color{
		color.RGBA{R: 0x3b, G: 0x0a, B: 0x3f, A: 0xff},
		color.RGBA{R: 0x9c, G: 0x2f, B: 0x2f, A: 0xff},
		color.RGBA{R: 0xe0, G: 0x7b, B: 0x1f, A: 0xff},
		color.RGBA{R: 0xfb, G: 0xf4, B: 0xdc, A: 0xff},
	})
	if err != nil {
		panic(err) // the controls above have increasing luminance
	}
	return palette.Reverse(cm)
}

// colourRange returns the colour range of the map.
func (m MapPlot) colourRange() (lo, hi float64, err error) {
	if m.Min != 0 || m.Max != 0 {
		if !(m.Max > m.Min) || math.IsInf(m.Max-m.Min, 0) {
			return 0, 0, fmt.Errorf("map %q: colour range %g..%g is empty", m.Title, m.Min, m.Max)
		}
		return m.Min, m.Max, nil
	}
	lo, hi = math.Inf(1), math.Inf(-1)
	for _, v := range m.Values {
		if !math.IsNaN(v) && !math.IsInf(v, 0) {
			lo, hi = math.Min(lo, v), math.Max(hi, v)
		}
	}
	if lo > hi {
		return 0, 0, fmt.Errorf("map %q has no finite values", m.Title)
	}
	if m.Signed {
		a := math.Max(math.Abs(lo), math.Abs(hi))
		if a == 0 {
			a = 1 // an all-zero map: any symmetric range shows it white
		}
		return -a, a, nil
	}
	if !(hi > lo) {
		// A constant map: a range around the value.
		d := math.Max(math.Abs(lo)*0.5, 1e-12)
		lo, hi = lo-d, hi+d
	}
	return lo, hi, nil
}

// colourTable is a lookup of n colours spanning [lo, hi] for fast rastering.
type colourTable struct {
	lo, scale float64
	colours   []color.RGBA
}

func newColourTable(cm palette.ColorMap, lo, hi float64, n int) colourTable {
	cm.SetMin(0)
	cm.SetMax(1)
	t := colourTable{lo: lo, scale: float64(n) / (hi - lo), colours: make([]color.RGBA, n)}
	for k := range t.colours {
		c, err := cm.At((float64(k) + 0.5) / float64(n))
		if err != nil {
			c = noData
		}
		r, g, b, _ := c.RGBA()
		t.colours[k] = color.RGBA{R: uint8(r >> 8), G: uint8(g >> 8), B: uint8(b >> 8), A: 0xff}
	}
	return t
}

// at returns the colour of v, clamped to the ends of the range; NaN is noData.
func (t colourTable) at(v float64) color.RGBA {
	if math.IsNaN(v) {
		return noData
	}
	k := int((v - t.lo) * t.scale)
	k = max(0, min(len(t.colours)-1, k))
	return t.colours[k]
}

// raster returns the map as an image with one pixel per node; the top row of the image is the
// grid's last row (largest y).
func (m MapPlot) raster(t colourTable) *image.RGBA {
	g := m.Grid
	img := image.NewRGBA(image.Rect(0, 0, g.NX, g.NY))
	for j := 0; j < g.NY; j++ {
		row := g.NY - 1 - j
		for i := 0; i < g.NX; i++ {
			img.SetRGBA(i, row, t.at(m.Values[g.Index(i, j)]))
		}
	}
	return img
}

func (m MapPlot) check(widthPx, heightPx int) error {
	if err := m.Grid.Validate(0); err != nil {
		return fmt.Errorf("map %q: %v", m.Title, err)
	}
	if len(m.Values) != m.Grid.N() {
		return fmt.Errorf("map %q has %d values for %d nodes", m.Title, len(m.Values), m.Grid.N())
	}
	if widthPx < 200 || heightPx < 150 || widthPx > 8000 || heightPx > 8000 {
		return fmt.Errorf("map %q: image size %dx%d px is outside 200x150..8000x8000", m.Title, widthPx, heightPx)
	}
	if m.Arrows != nil && !m.Arrows.Grid.Same(m.Grid) {
		return fmt.Errorf("map %q: the arrow field's grid differs from the map's", m.Title)
	}
	return nil
}

// PNG renders the map as PNG bytes of widthPx x heightPx pixels.
func (m MapPlot) PNG(widthPx, heightPx int) ([]byte, error) {
	var buf bytesWriter
	if err := m.Encode(&buf, widthPx, heightPx); err != nil {
		return nil, err
	}
	return buf.b, nil
}

type bytesWriter struct{ b []byte }

func (w *bytesWriter) Write(p []byte) (int, error) { w.b = append(w.b, p...); return len(p), nil }

// WritePNG renders the map and writes it to path atomically (piv.WriteFileAtomic): a failed
// render leaves no file.
func (m MapPlot) WritePNG(path string, widthPx, heightPx int) error {
	img, err := m.Image(widthPx, heightPx)
	if err != nil {
		return fmt.Errorf("%s: %w", path, err)
	}
	return piv.WriteFileAtomic(path, func(w io.Writer) error { return png.Encode(w, img) })
}

// Encode renders the map and writes it to w as PNG.
func (m MapPlot) Encode(w io.Writer, widthPx, heightPx int) error {
	img, err := m.Image(widthPx, heightPx)
	if err != nil {
		return err
	}
	return png.Encode(w, img)
}

// dpi of the rendered image: text and lines are sized in points, so this fixes their size in
// pixels (common practice for screen and slides).
const dpi = 110

// Image renders the map into an image of widthPx x heightPx pixels.
func (m MapPlot) Image(widthPx, heightPx int) (img image.Image, err error) {
	if err := m.check(widthPx, heightPx); err != nil {
		return nil, err
	}
	lo, hi, err := m.colourRange()
	if err != nil {
		return nil, err
	}
	cm := Sequential()
	if m.Signed {
		cm = Diverging()
	}
	table := newColourTable(cm, lo, hi, 256)
	defer func() {
		// gonum/plot panics on some degenerate inputs; report them as errors instead.
		if r := recover(); r != nil {
			img, err = nil, fmt.Errorf("map %q: cannot draw: %v", m.Title, r)
		}
	}()

	canvas := vgimg.NewWith(vgimg.UseImage(image.NewRGBA(image.Rect(0, 0, widthPx, heightPx))), vgimg.UseDPI(dpi))
	dc := draw.New(canvas)
	barWidth := vg.Length(float64(widthPx)/dpi) * vg.Inch * 0.16
	mainArea := draw.Crop(dc, 0, -barWidth, 0, 0)
	barArea := draw.Crop(dc, mainArea.Max.X-mainArea.Min.X, 0, 0, 0)

	p := plot.New()
	p.Title.Text = m.Title
	yName := m.YName
	if yName == "" {
		yName = "y"
	}
	p.X.Label.Text = "x [mm]"
	p.Y.Label.Text = yName + " [mm]"
	p.X.Tick.Marker = niceTicks{}
	p.Y.Tick.Marker = niceTicks{}
	g := m.Grid
	const mm = 1000.0
	x0, x1 := (g.X0-g.DX/2)*mm, (g.XMax()+g.DX/2)*mm
	y0, y1 := (g.Y0-g.DY/2)*mm, (g.YMax()+g.DY/2)*mm
	p.Add(plotter.NewImage(m.raster(table), x0, y0, x1, y1))
	if m.Arrows != nil {
		p.Add(newArrows(m.Arrows, mm))
	}
	for _, o := range m.Overlays {
		if err := addOverlay(p, o, mm); err != nil {
			return nil, fmt.Errorf("map %q: %w", m.Title, err)
		}
	}
	p.X.Min, p.X.Max, p.Y.Min, p.Y.Max = x0, x1, y0, y1
	equalAspect(p, mainArea)
	if len(m.Overlays) > 0 && hasLabels(m.Overlays) {
		p.Legend.Top = true
	}
	p.Draw(mainArea)

	bar := plot.New()
	cb := &plotter.ColorBar{ColorMap: cm, Vertical: true}
	cm.SetMin(lo)
	cm.SetMax(hi)
	bar.Add(cb)
	bar.HideX()
	bar.Y.Tick.Marker = niceTicks{}
	bar.X.Padding = 0
	bar.Y.Label.Text = m.Unit
	if m.Unit != "" {
		bar.Y.Label.Text = "[" + m.Unit + "]"
	}
	bar.Title.Text = " "
	bar.Draw(draw.Crop(barArea, 0, -barWidth*0.35, vg.Points(30), 0))
	return canvas.Image(), nil
}

func hasLabels(os []Overlay) bool {
	for _, o := range os {
		if o.Label != "" {
			return true
		}
	}
	return false
}

// equalAspect widens one axis range so that a millimetre is as long on both axes, estimating
// the data area as the canvas less typical margins for labels.
func equalAspect(p *plot.Plot, c draw.Canvas) {
	w := float64(c.Max.X-c.Min.X) - 60
	h := float64(c.Max.Y-c.Min.Y) - 60
	if w <= 0 || h <= 0 {
		return
	}
	dx, dy := p.X.Max-p.X.Min, p.Y.Max-p.Y.Min
	if dx/w > dy/h {
		grow := (dx*h/w - dy) / 2
		p.Y.Min -= grow
		p.Y.Max += grow
	} else {
		grow := (dy*w/h - dx) / 2
		p.X.Min -= grow
		p.X.Max += grow
	}
}

func overlayColour(o Overlay) color.Color {
	if o.Colour != nil {
		return o.Colour
	}
	return color.Black
}

func addOverlay(p *plot.Plot, o Overlay, scale float64) error {
	if len(o.X) != len(o.Y) {
		return fmt.Errorf("overlay %q has %d x and %d y values", o.Label, len(o.X), len(o.Y))
	}
	var pts plotter.XYs
	for k := range o.X {
		if math.IsNaN(o.X[k]) || math.IsNaN(o.Y[k]) || math.IsInf(o.X[k], 0) || math.IsInf(o.Y[k], 0) {
			continue
		}
		pts = append(pts, plotter.XY{X: o.X[k] * scale, Y: o.Y[k] * scale})
	}
	if len(pts) == 0 {
		return nil
	}
	col := overlayColour(o)
	switch o.Kind {
	case Markers:
		s, err := plotter.NewScatter(pts)
		if err != nil {
			return err
		}
		s.Shape = draw.RingGlyph{}
		s.Radius = vg.Points(4)
		s.Color = col
		p.Add(s)
		if o.Label != "" {
			p.Legend.Add(o.Label, s)
		}
	case Path, Outline:
		if o.Kind == Outline {
			pts = append(pts, pts[0])
		}
		l, err := plotter.NewLine(pts)
		if err != nil {
			return err
		}
		l.Color = col
		l.Width = vg.Points(1.5)
		p.Add(l)
		if o.Label != "" {
			p.Legend.Add(o.Label, l)
		}
	default:
		return errors.New("unknown overlay kind")
	}
	return nil
}

// arrows draws a velocity field as arrows on a coarse lattice.
type arrows struct {
	x, y, u, v []float64 // positions in plot units (mm), velocity in plot units per arrow
}

// newArrows samples f on a lattice of at most about 32 arrows along the longer side; the
// longest arrow spans 0.9 lattice spacings.
func newArrows(f *piv.Field, scale float64) *arrows {
	g := f.Grid
	step := max(1, (max(g.NX, g.NY)+31)/32)
	a := &arrows{}
	vmax := 0.0
	for j := step / 2; j < g.NY; j += step {
		for i := step / 2; i < g.NX; i += step {
			k := g.Index(i, j)
			if !f.Valid(k) {
				continue
			}
			a.x = append(a.x, g.X(i)*scale)
			a.y = append(a.y, g.Y(j)*scale)
			a.u = append(a.u, f.U[k])
			a.v = append(a.v, f.V[k])
			vmax = math.Max(vmax, math.Hypot(f.U[k], f.V[k]))
		}
	}
	if vmax > 0 {
		l := 0.9 * float64(step) * math.Min(g.DX, g.DY) * scale / vmax
		for k := range a.u {
			a.u[k] *= l
			a.v[k] *= l
		}
	}
	return a
}

// Plot implements plot.Plotter.
func (a *arrows) Plot(c draw.Canvas, p *plot.Plot) {
	trX, trY := p.Transforms(&c)
	sty := draw.LineStyle{Color: color.Black, Width: vg.Points(0.7)}
	for k := range a.x {
		x0, y0 := trX(a.x[k]), trY(a.y[k])
		x1, y1 := trX(a.x[k]+a.u[k]), trY(a.y[k]+a.v[k])
		dx, dy := float64(x1-x0), float64(y1-y0)
		n := math.Hypot(dx, dy)
		if n < 0.5 {
			continue
		}
		head := math.Min(0.35*n, 5)
		ux, uy := dx/n, dy/n
		// Two barbs at +-25 degrees from the shaft.
		cs, sn := math.Cos(0.44), math.Sin(0.44)
		b1 := vg.Point{X: x1 - vg.Length(head*(ux*cs-uy*sn)), Y: y1 - vg.Length(head*(uy*cs+ux*sn))}
		b2 := vg.Point{X: x1 - vg.Length(head*(ux*cs+uy*sn)), Y: y1 - vg.Length(head*(uy*cs-ux*sn))}
		tip := vg.Point{X: x1, Y: y1}
		lines := c.ClipLinesXY([]vg.Point{{X: x0, Y: y0}, tip}, []vg.Point{b1, tip, b2})
		c.StrokeLines(sty, lines...)
	}
}
