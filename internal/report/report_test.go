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

// A line plot with a gap (NaN) renders as a PNG of the asked size (8 x 5 cm at gonum/plot's
// 96 dpi: 302 x 189 pixels, within rounding).
func TestLinePlotPNG(t *testing.T) {
	img, err := png.Decode(bytes.NewReader(testPlot(t)))
	if err != nil {
		t.Fatal(err)
	}
	b := img.Bounds()
	if math.Abs(float64(b.Dx())-302) > 2 || math.Abs(float64(b.Dy())-189) > 2 {
		t.Errorf("image %dx%d, want about 302x189", b.Dx(), b.Dy())
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
