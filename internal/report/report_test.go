package report

import (
	"bytes"
	"encoding/base64"
	"html"
	"image/png"
	"math"
	"regexp"
	"strings"
	"testing"
)

func testPlot(t *testing.T) []byte {
	t.Helper()
	x := []float64{0, 1, 2, 3, 4, 5}
	y := []float64{0, 1, math.NaN(), 9, 16, 25}
	b, err := LinePlot{Title: "test", XLabel: "t [s]", YLabel: "y", Lines: []Line{
		{Label: "a", X: x, Y: y, Points: true}, {Label: "b", X: x, Y: x, Dashed: true}},
		Markers: []Marker{{X: 2.5, Label: "end"}}, Width: 8, Height: 5}.PNG()
	if err != nil {
		t.Fatal(err)
	}
	return b
}

// A line plot with a gap (NaN) renders as a PNG of the asked size (8 x 5 cm at 150 dpi:
// 472 x 295 pixels, within rounding).
func TestLinePlotPNG(t *testing.T) {
	img, err := png.Decode(bytes.NewReader(testPlot(t)))
	if err != nil {
		t.Fatal(err)
	}
	b := img.Bounds()
	if math.Abs(float64(b.Dx())-472) > 2 || math.Abs(float64(b.Dy())-295) > 2 {
		t.Errorf("image %dx%d, want about 472x295", b.Dx(), b.Dy())
	}
	if _, err := (LinePlot{Title: "empty", Lines: []Line{{X: []float64{math.NaN()}, Y: []float64{1}}}}).PNG(); err == nil {
		t.Error("plot without finite data accepted")
	}
}

var imgSrc = regexp.MustCompile(`<img [^>]*src="([^"]*)"`)

// The report is one self-contained file: every image is an embedded PNG that decodes, every
// summary value appears, text is escaped, and the cautions are present.
func TestReportSelfContained(t *testing.T) {
	r := Report{
		Title: "Run <7>", Subtitle: "test",
		Summary: []Row{
			{Group: "Pulse 1", Name: "stroke ratio", Value: "4.02", Uncertainty: "0.01", Unit: "-"},
			{Group: "Pulse 1", Name: "impulse", Value: "2.05e-03", Unit: "N s"},
			{Group: "Ring", Name: "core radius", Value: "not computed", Note: "no vorticity"},
		},
		Images:     []Image{{Title: "one", PNG: testPlot(t)}, {Title: "two", PNG: testPlot(t)}},
		Inputs:     [][2]string{{"files", "a.csv"}},
		Methods:    []Method{{Name: "Slug model", Text: "...", Reference: "Krueger & Gharib 2003"}},
		Unmeasured: []string{"pressure outside the lip"},
	}
	var buf bytes.Buffer
	if err := r.Write(&buf); err != nil {
		t.Fatal(err)
	}
	page := buf.String()
	m := imgSrc.FindAllStringSubmatch(page, -1)
	if len(m) != 2 {
		t.Fatalf("%d images in the report, want 2", len(m))
	}
	for _, s := range m {
		s[1] = html.UnescapeString(s[1]) // attribute text: "+" may be written as &#43;
		const pre = "data:image/png;base64,"
		if !strings.HasPrefix(s[1], pre) {
			t.Fatalf("image source %.40q is not embedded", s[1])
		}
		b, err := base64.StdEncoding.DecodeString(s[1][len(pre):])
		if err != nil {
			t.Fatal(err)
		}
		if _, err := png.Decode(bytes.NewReader(b)); err != nil {
			t.Fatal(err)
		}
	}
	for _, row := range r.Summary {
		if !strings.Contains(page, ">"+row.Value+"<") {
			t.Errorf("summary value %q missing", row.Value)
		}
	}
	for _, want := range []string{"Run &lt;7&gt;", "not certification", "safety officer", `name="viewport"`, "max-width:100%", "pressure outside the lip"} {
		if !strings.Contains(page, want) {
			t.Errorf("report lacks %q", want)
		}
	}
	if strings.Contains(page, "http://") || strings.Contains(page, "https://") {
		t.Error("report references an external resource")
	}
	if err := (&Report{Images: []Image{{Title: "bad", PNG: []byte("nope")}}}).Write(&buf); err == nil {
		t.Error("non-PNG image accepted")
	}
}

// Major ticks fall on round numbers (1, 2 or 5 times a power of ten), include zero when the
// range spans it, and carry no more decimals than the step needs.
func TestNiceTicks(t *testing.T) {
	for _, c := range []struct {
		lo, hi float64
		want   []string
	}{
		{-0.62, 1.6, []string{"-0.5", "0.0", "0.5", "1.0", "1.5"}},
		{0.25, 6.75, []string{"1", "2", "3", "4", "5", "6"}},
		{8.4, 122, []string{"20", "40", "60", "80", "100", "120"}},
		{0, 0.05, []string{"0.00", "0.01", "0.02", "0.03", "0.04", "0.05"}},
		{-3e-4, 1.5e-3, []string{"0.0000", "0.0005", "0.0010", "0.0015"}},
		{-7.5, 7.5, []string{"-6", "-4", "-2", "0", "2", "4", "6"}},
		{0, 4.1, []string{"0", "1", "2", "3", "4"}},
	} {
		var got []string
		for _, tk := range (niceTicks{}).Ticks(c.lo, c.hi) {
			if tk.Label != "" {
				got = append(got, tk.Label)
			}
		}
		if strings.Join(got, " ") != strings.Join(c.want, " ") {
			t.Errorf("ticks %g..%g: %v, want %v", c.lo, c.hi, got, c.want)
		}
	}
}

// Axis units are shown in the display unit of the data (as Format picks it), and the data is
// scaled with it: a force of 1.5e-3 N is drawn in mN.
func TestLinePlotUnits(t *testing.T) {
	x := []float64{0, 1, 2}
	y := []float64{0, 1.5e-3, -4e-4}
	sc := axisScale("N", y)
	if sc.Unit != "mN" || axisLabel("force", "N", sc) != "force [mN]" {
		t.Errorf("scale %+v, label %q", sc, axisLabel("force", "N", sc))
	}
	if axisLabel("stroke ratio", "1", axisScale("1", []float64{4})) != "stroke ratio" {
		t.Error("pure number got a unit")
	}
	if _, err := (LinePlot{Title: "f", XLabel: "t", XUnit: "s", YLabel: "force", YUnit: "N",
		Lines: []Line{{Label: "a", X: x, Y: y, Band: []float64{1e-4, 1e-4, math.NaN()}, Thin: true}}}).PNG(); err != nil {
		t.Fatal(err)
	}
}
