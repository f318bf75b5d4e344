package main

import (
	"encoding/csv"
	"encoding/json"
	"math"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"testing"
)

// writeRunSummary writes a jet summary with the compared figures set to vals.
func writeRunSummary(t *testing.T, dir, label, geom string, version int, params map[string]string, vals map[string]float64) {
	t.Helper()
	if err := os.MkdirAll(dir, 0o755); err != nil {
		t.Fatal(err)
	}
	figs := map[string]jsonFigure{}
	for k, v := range vals {
		figs[k] = jsonFigure{Value: num(v), Unit: "1", Name: k}
	}
	js := jsonSummary{Format: summaryFormat, Version: version, Label: label, Geometry: geom, Params: params,
		Pulses: []jsonPulse{{Index: 1, Figures: figs}}}
	b, _ := json.Marshal(js)
	if err := os.WriteFile(filepath.Join(dir, "summary.json"), b, 0o644); err != nil {
		t.Fatal(err)
	}
}

func runValues(scale float64) map[string]float64 {
	return map[string]float64{"impulse_final": 2e-3 * scale, "peak_force": 1.5e-3 * scale * scale,
		"overpressure_share": 0.05 / scale, "ring_circulation": 2.6e-3 * scale, "formation_number": 4 * scale}
}

// Three runs: the table, CSV and ratios match the summaries (ratio = value / reference value,
// computed here by hand from the values written). The CSV holds 8 significant digits, so
// values agree to 1e-7 relative.
func TestCompareThreeRuns(t *testing.T) {
	base := t.TempDir()
	scales := map[string]float64{"1.0": 1, "1.5": 1.2, "2.0": 0.9}
	for s, k := range scales {
		writeRunSummary(t, filepath.Join(base, "s"+s), "pair s"+s, "axisymmetric", summaryVersion, map[string]string{"s_over_D": s}, runValues(k))
	}
	out := filepath.Join(base, "cmp")
	code, stdout, stderr := runCapture("compare", filepath.Join(base, "s2.0"), filepath.Join(base, "s1.5"),
		"--reference", filepath.Join(base, "s1.0"), "--by", "s_over_D", "--out", out)
	if code != 0 {
		t.Fatalf("exit %d: %s", code, stderr)
	}
	f, err := os.Open(filepath.Join(out, "compare.csv"))
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	rows, err := csv.NewReader(f).ReadAll()
	if err != nil {
		t.Fatal(err)
	}
	if len(rows) != 4 {
		t.Fatalf("compare.csv has %d rows, want header + 3", len(rows))
	}
	ref := runValues(1)
	for _, r := range rows[1:] {
		k := scales[r[0]]
		vals := runValues(k)
		for q, cf := range compareFigures {
			v, _ := strconv.ParseFloat(r[3+2*q], 64)
			ratio, _ := strconv.ParseFloat(r[4+2*q], 64)
			if math.Abs(v-vals[cf.key]) > 1e-7*math.Abs(vals[cf.key]) || math.Abs(ratio-vals[cf.key]/ref[cf.key]) > 1e-7*math.Abs(ratio) {
				t.Errorf("run %s %s: value %g ratio %g; want %g and %g", r[0], cf.key, v, ratio, vals[cf.key], vals[cf.key]/ref[cf.key])
			}
		}
	}
	// Sorted by the numeric parameter, ratios printed.
	i1, i2, i3 := strings.Index(stdout, "pair s1.0"), strings.Index(stdout, "pair s1.5"), strings.Index(stdout, "pair s2.0")
	if !(i1 >= 0 && i1 < i2 && i2 < i3) || !strings.Contains(stdout, "(1.200)") {
		t.Errorf("table not in s_over_D order or ratios missing:\n%s", stdout)
	}
	if _, err := os.Stat(filepath.Join(out, "compare.png")); err != nil {
		t.Error(err)
	}
}

// A summary from another version, a missing figure, a missing parameter, mixed geometries and
// a folder without a summary give clear errors (exit 1) naming the file.
func TestCompareBadInputs(t *testing.T) {
	base := t.TempDir()
	p := map[string]string{"s_over_D": "1"}
	writeRunSummary(t, filepath.Join(base, "good"), "a", "axisymmetric", summaryVersion, p, runValues(1))
	writeRunSummary(t, filepath.Join(base, "old"), "b", "axisymmetric", summaryVersion+1, p, runValues(1))
	missing := runValues(1)
	delete(missing, "formation_number")
	writeRunSummary(t, filepath.Join(base, "nokey"), "c", "axisymmetric", summaryVersion, p, missing)
	writeRunSummary(t, filepath.Join(base, "slot"), "d", "slot", summaryVersion, p, runValues(1))
	writeRunSummary(t, filepath.Join(base, "noparam"), "e", "axisymmetric", summaryVersion, map[string]string{}, runValues(1))
	os.MkdirAll(filepath.Join(base, "empty"), 0o755)
	for _, c := range []struct{ dir, want string }{
		{"old", "version"}, {"nokey", `"formation_number"`}, {"slot", "geometr"}, {"noparam", `"s_over_D" not recorded`},
		{"empty", "summary.json"},
	} {
		code, _, stderr := runCapture("compare", filepath.Join(base, "good"), filepath.Join(base, c.dir), "--by", "s_over_D", "--out", filepath.Join(base, "o"))
		if code != 1 || !strings.Contains(stderr, c.want) || !strings.Contains(stderr, c.dir) {
			t.Errorf("%s: exit %d, stderr %q; want 1 and %q", c.dir, code, stderr, c.want)
		}
	}
	if code, _, _ := runCapture("compare", filepath.Join(base, "good")); code != 2 {
		t.Errorf("one run: exit %d, want 2", code)
	}
}

// The table rounds each figure to its uncertainty (report.Format) in the display unit of the
// reference run's value, named in the column title.
func TestCompareTableFormatting(t *testing.T) {
	base := t.TempDir()
	write := func(name string, imp, unc float64) {
		figs := map[string]jsonFigure{}
		for _, cf := range compareFigures {
			figs[cf.key] = jsonFigure{Value: num(1), Uncertainty: num(0.01), Unit: "1", Name: cf.key}
		}
		figs["impulse_final"] = jsonFigure{Value: num(imp), Uncertainty: num(unc), Unit: "N s", Name: "impulse"}
		figs["ring_circulation"] = jsonFigure{Value: num(2.6204e-3), Uncertainty: num(9.52e-6), Unit: "m^2/s", Name: "ring"}
		js := jsonSummary{Format: summaryFormat, Version: summaryVersion, Label: name, Geometry: "axisymmetric",
			Params: map[string]string{"s": name}, Pulses: []jsonPulse{{Index: 1, Figures: figs}}}
		b, _ := json.Marshal(js)
		os.MkdirAll(filepath.Join(base, name), 0o755)
		if err := os.WriteFile(filepath.Join(base, name, "summary.json"), b, 0o644); err != nil {
			t.Fatal(err)
		}
	}
	write("1", 2.091e-3, 1.175e-4)
	write("2", 4.5e-4, 2.04e-5)
	code, stdout, stderr := runCapture("compare", filepath.Join(base, "1"), filepath.Join(base, "2"), "--by", "s", "--out", filepath.Join(base, "o"))
	if code != 0 {
		t.Fatalf("exit %d: %s", code, stderr)
	}
	for _, want := range []string{"impulse [mN s]", "ring circulation [mm²/s]", "2.09 ± 0.12 (1.000)", "0.450 ± 0.020 (0.215)", "2620.4 ± 9.5 (1.000)", "1.000 ± 0.010 (1.000)"} {
		if !strings.Contains(stdout, want) {
			t.Errorf("table lacks %q:\n%s", want, stdout)
		}
	}
}
