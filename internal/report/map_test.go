package report

import (
	"bytes"
	"image/color"
	"image/png"
	"math"
	"os"
	"path/filepath"
	"testing"

	"github.com/wakekit/wakekit/piv"
	"github.com/wakekit/wakekit/piv/analytic"
)

// lum returns the CIELAB lightness L* of an sRGB colour (IEC 61966-2-1 transfer function, D65
// luminance weights, CIE 1976 L*).
func lum(c color.RGBA) float64 {
	lin := func(v uint8) float64 {
		x := float64(v) / 255
		if x <= 0.04045 {
			return x / 12.92
		}
		return math.Pow((x+0.055)/1.055, 2.4)
	}
	y := 0.2126*lin(c.R) + 0.7152*lin(c.G) + 0.0722*lin(c.B)
	if y <= 216.0/24389 {
		return 24389.0 / 27 * y
	}
	return 116*math.Cbrt(y) - 16
}

// TestPalettes checks the palettes against their construction: the diverging palette runs from
// blue through a near-white centre to red and is symmetric in luminance (Moreland 2009, via
// gonum's palette/moreland); the sequential palette's luminance falls monotonically.
func TestPalettes(t *testing.T) {
	d := newColourTable(Diverging(), -1, 1, 256)
	lo, mid, hi := d.at(-1), d.at(0), d.at(1)
	if !(lo.B > lo.R+60 && hi.R > hi.B+60) {
		t.Errorf("diverging ends %v and %v are not blue and red", lo, hi)
	}
	if mid.R < 215 || mid.G < 215 || mid.B < 215 {
		t.Errorf("diverging centre %v is not near white", mid)
	}
	for k := 0; k < 128; k++ {
		a, b := d.colours[k], d.colours[255-k]
		if math.Abs(lum(a)-lum(b)) > 2 { // 2 L* units: 8-bit rounding near the dark ends
			t.Errorf("diverging palette not symmetric in luminance at %d: %v vs %v", k, a, b)
			break
		}
	}
	s := newColourTable(Sequential(), 0, 1, 256)
	for k := 1; k < 256; k++ {
		if lum(s.colours[k]) > lum(s.colours[k-1])+0.3 { // 0.3 L*: rounding to 8 bits
			t.Fatalf("sequential luminance rises at %d: %v after %v", k, s.colours[k], s.colours[k-1])
		}
	}
	if d.at(math.NaN()) != noData || d.at(5) != hi || d.at(-5) != lo {
		t.Error("NaN or out-of-range values are not mapped to no-data and the clamped ends")
	}
}

// TestRasterOrientation checks that node (i, j) lands at pixel (i, NY-1-j): y up on the map.
func TestRasterOrientation(t *testing.T) {
	g := piv.Grid{NX: 3, NY: 2, DX: 1, DY: 1}
	m := MapPlot{Grid: g, Values: []float64{-1, 0, 1, math.NaN(), 0, 0}, Signed: true}
	tab := newColourTable(Diverging(), -1, 1, 256)
	img := m.raster(tab)
	if img.RGBAAt(0, 1) != tab.at(-1) || img.RGBAAt(2, 1) != tab.at(1) || img.RGBAAt(0, 0) != noData {
		t.Errorf("raster orientation wrong: %v %v %v", img.RGBAAt(0, 1), img.RGBAAt(2, 1), img.RGBAAt(0, 0))
	}
}

// TestMapPNG renders a vorticity map of a counter-clockwise Lamb–Oseen vortex with arrows and
// overlays and checks the file: the requested size, red (positive) pixels present and no blue
// ones, since the vortex has positive vorticity only.
func TestMapPNG(t *testing.T) {
	g := piv.Grid{NX: 81, NY: 61, X0: -0.02, Y0: -0.015, DX: 0.0005, DY: 0.0005}
	lo := analytic.LambOseen{Gamma: 0.01, CoreRadius: 0.004}
	f := analytic.Sample(lo, g, 0)
	w, err := analytic.SampleVorticity(lo, g, 0)
	if err != nil {
		t.Fatal(err)
	}
	w[10] = math.NaN()
	m := MapPlot{Grid: g, Values: w, Title: "vorticity", Unit: "1/s", Signed: true, Arrows: f,
		Overlays: []Overlay{
			{Label: "core", Kind: Markers, X: []float64{0}, Y: []float64{0}},
			{Label: "track", Kind: Path, X: []float64{-0.01, 0, 0.01}, Y: []float64{0, 0.001, 0}},
			RectOverlay("nozzle", -0.02, -0.003, -0.015, 0.003),
		}}
	path := filepath.Join(t.TempDir(), "w.png")
	if err := m.WritePNG(path, 800, 560); err != nil {
		t.Fatal(err)
	}
	data, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	img, err := png.Decode(bytes.NewReader(data))
	if err != nil {
		t.Fatal(err)
	}
	if b := img.Bounds(); b.Dx() != 800 || b.Dy() != 560 {
		t.Fatalf("image is %dx%d, want 800x560", b.Dx(), b.Dy())
	}
	red, blue := 0, 0
	for y := 0; y < 560; y++ {
		for x := 0; x < 650; x++ { // the map area, left of the colour bar
			r, g, b, _ := img.At(x, y).RGBA()
			r, g, b = r>>8, g>>8, b>>8
			switch {
			case r > 150 && r > b+80 && r > g+80:
				red++
			case b > 120 && b > r+80:
				blue++
			}
		}
	}
	if red < 1000 || blue > 0 {
		t.Errorf("map has %d red and %d blue pixels; want many red and no blue", red, blue)
	}
}

// TestMapErrors checks that bad maps fail with a message and leave no file.
func TestMapErrors(t *testing.T) {
	g := piv.Grid{NX: 4, NY: 4, DX: 0.001, DY: 0.001}
	dir := t.TempDir()
	cases := map[string]MapPlot{
		"all-nan":   {Grid: g, Values: piv.NaNs(16), Title: "empty"},
		"short":     {Grid: g, Values: make([]float64, 3), Title: "short"},
		"bad-range": {Grid: g, Values: make([]float64, 16), Min: 2, Max: 1},
		"arrows":    {Grid: g, Values: make([]float64, 16), Arrows: piv.NewField(piv.Grid{NX: 2, NY: 2, DX: 1, DY: 1})},
	}
	for name, m := range cases {
		path := filepath.Join(dir, name+".png")
		if err := m.WritePNG(path, 400, 300); err == nil {
			t.Errorf("%s: no error", name)
		}
		if _, err := os.Stat(path); !os.IsNotExist(err) {
			t.Errorf("%s: a file was left behind", name)
		}
	}
	if err := (MapPlot{Grid: g, Values: make([]float64, 16)}).WritePNG(filepath.Join(dir, "tiny.png"), 10, 10); err == nil {
		t.Error("a 10x10 px image was accepted")
	}
	// A constant positive map still renders (a degenerate colour range is widened).
	c := make([]float64, 16)
	for k := range c {
		c[k] = 3
	}
	if err := (MapPlot{Grid: g, Values: c, Title: "constant"}).WritePNG(filepath.Join(dir, "c.png"), 400, 300); err != nil {
		t.Errorf("constant map: %v", err)
	}
}

// TestColourRange checks the automatic colour ranges: symmetric about zero for signed maps,
// the data's extent otherwise, fixed when Min and Max are given.
func TestColourRange(t *testing.T) {
	g := piv.Grid{NX: 4, NY: 1, DX: 1, DY: 1}
	v := []float64{-2, 5, math.NaN(), 1}
	if lo, hi, err := (MapPlot{Grid: g, Values: v, Signed: true}).colourRange(); err != nil || lo != -5 || hi != 5 {
		t.Errorf("signed range %g..%g (%v), want -5..5", lo, hi, err)
	}
	if lo, hi, err := (MapPlot{Grid: g, Values: v}).colourRange(); err != nil || lo != -2 || hi != 5 {
		t.Errorf("range %g..%g (%v), want -2..5", lo, hi, err)
	}
	if lo, hi, err := (MapPlot{Grid: g, Values: v, Min: -1, Max: 1}).colourRange(); err != nil || lo != -1 || hi != 1 {
		t.Errorf("fixed range %g..%g (%v), want -1..1", lo, hi, err)
	}
}
