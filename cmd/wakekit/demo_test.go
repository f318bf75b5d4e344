package main

import (
	"bytes"
	"encoding/base64"
	"html"
	"image/png"
	"math"
	"os"
	"path/filepath"
	"regexp"
	"strings"
	"testing"

	"github.com/wakekit/wakekit/internal/report"
)

var demoImg = regexp.MustCompile(`<img [^>]*src="([^"]*)"`)

// The demo runs the jet analysis on the built-in run and writes the report, the summary and
// the plots, and prints the summary table and the report's path. The report is parsed: every
// image is an embedded PNG that decodes, and every figure of the summary appears in it with
// the value the summary holds.
func TestDemoReport(t *testing.T) {
	dir := t.TempDir()
	code, stdout, stderr := runCapture("demo", "--out", dir, "-q", "--samples", "4")
	if code != 0 {
		t.Fatalf("demo exit %d: %s", code, stderr)
	}
	for _, want := range []string{"TT-25", "stroke ratio L/D", "formation number", "Report: " + filepath.Join(dir, "report.html")} {
		if !strings.Contains(stdout, want) {
			t.Errorf("stdout lacks %q:\n%s", want, stdout)
		}
	}
	b, err := os.ReadFile(filepath.Join(dir, "report.html"))
	if err != nil {
		t.Fatal(err)
	}
	page := string(b)
	imgs := demoImg.FindAllStringSubmatch(page, -1)
	pngs, _ := filepath.Glob(filepath.Join(dir, "*.png"))
	if len(imgs) < 4 || len(imgs) != len(pngs) {
		t.Fatalf("report embeds %d images, the folder has %d plots", len(imgs), len(pngs))
	}
	for _, m := range imgs {
		src := html.UnescapeString(m[1])
		const pre = "data:image/png;base64,"
		if !strings.HasPrefix(src, pre) {
			t.Fatalf("image %.40q is not embedded", src)
		}
		raw, err := base64.StdEncoding.DecodeString(src[len(pre):])
		if err != nil {
			t.Fatal(err)
		}
		if _, err := png.Decode(bytes.NewReader(raw)); err != nil {
			t.Fatal(err)
		}
	}
	js := readSummary(t, dir)
	if len(js.Pulses) != 1 {
		t.Fatalf("demo has %d pulses, want 1", len(js.Pulses))
	}
	n := 0
	for key, f := range js.Pulses[0].Figures {
		// The report shows the value rounded to its uncertainty in a display unit (see
		// report.Format); the summary keeps the full-precision numbers.
		v, u := math.NaN(), math.NaN()
		if f.Value != nil {
			v = *f.Value
		}
		if f.Uncertainty != nil {
			u = *f.Uncertainty
		}
		fq := report.Format(v, u, f.Unit)
		row := "<td>" + html.EscapeString(f.Name) + `</td><td class="num">` + html.EscapeString(fq.Value) +
			`</td><td class="num">` + html.EscapeString(fq.Uncertainty) + "</td><td>" + html.EscapeString(fq.Unit) + "</td>"
		if !strings.Contains(page, row) {
			t.Errorf("figure %s (%s = %s) not in the report as %q", key, f.Name, fq, row)
		}
		if f.Value != nil && f.Uncertainty != nil && fq.Uncertainty == "" {
			t.Errorf("figure %s has an uncertainty in the summary but none in the report", key)
		}
		if f.Unit == "1" && strings.Contains(row, "<td>1</td>") {
			t.Errorf("figure %s shows the unit 1", key)
		}
		n++
	}
	// The stdout table prints the same rounded figures.
	for _, key := range []string{"stroke_ratio", "impulse_final", "pressure_window_a", "ring_speed"} {
		f := js.Pulses[0].Figures[key]
		if f.Value == nil || f.Uncertainty == nil {
			t.Errorf("demo figure %s has no value or uncertainty", key)
			continue
		}
		fq := report.Format(*f.Value, *f.Uncertainty, f.Unit)
		pat := regexp.QuoteMeta(fq.Value) + ` +± ` + regexp.QuoteMeta(fq.Uncertainty)
		if fq.Unit != "" {
			pat += ` +` + regexp.QuoteMeta(fq.Unit)
		}
		if !regexp.MustCompile(pat + `\n`).MatchString(stdout) {
			t.Errorf("stdout lacks %s as %q:\n%s", key, fq, stdout)
		}
	}
	if n < 40 {
		t.Errorf("only %d figures in the summary", n)
	}
	for _, want := range []string{"not certification", "safety officer", "Krueger &amp; Gharib 2003", "Gharib, Rambod &amp; Shariff 1998", "Saffman 1970", "What was not measured"} {
		if !strings.Contains(page, want) {
			t.Errorf("report lacks %q", want)
		}
	}
}
