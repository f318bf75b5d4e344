package main

import (
	"bytes"
	"image/png"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"github.com/wakekit/wakekit/internal/demo"
	"github.com/wakekit/wakekit/piv"
)

// shortDemo writes an index of the first n frames of the built-in run (the start of the
// pulse) and returns its path and the frames' base names.
func shortDemo(t *testing.T, n int) (string, []string) {
	t.Helper()
	index, err := demo.Extract(filepath.Join(t.TempDir(), "frames"))
	if err != nil {
		t.Fatal(err)
	}
	b, err := os.ReadFile(index)
	if err != nil {
		t.Fatal(err)
	}
	lines := strings.SplitAfter(string(b), "\n")
	short := filepath.Join(filepath.Dir(index), "short.csv")
	if err := os.WriteFile(short, []byte(strings.Join(lines[:n+1], "")), 0o644); err != nil {
		t.Fatal(err)
	}
	var bases []string
	for _, l := range lines[1 : n+1] {
		f := strings.Split(strings.TrimSpace(l), ",")[1]
		bases = append(bases, strings.TrimSuffix(f, ".csv.gz"))
	}
	return short, bases
}

func sameFile(t *testing.T, a, b string) {
	t.Helper()
	x, err := os.ReadFile(a)
	if err != nil {
		t.Error(err)
		return
	}
	y, err := os.ReadFile(b)
	if err != nil {
		t.Error(err)
		return
	}
	if !bytes.Equal(x, y) {
		t.Errorf("%s differs from %s", a, b)
	}
}

// jet --maps writes one file per frame and format into OUT/maps, and each equals what derive
// and pressure write for the same frame with the same settings (byte for byte: the same code
// writes them); the CSV maps read back as fields on the frames' grid; --resume rewrites only
// a map that is missing.
func TestJetMaps(t *testing.T) {
	index, bases := shortDemo(t, 6)
	dir := t.TempDir()
	jet := filepath.Join(dir, "jet")
	jetArgs := []string{"jet", index, "--axisymmetric", "--axis", "0", "--exit", "0", "--diameter", "0.025", "--lip", "0.01375", "--rho", "1000", "--nu", "1e-6",
		"--rest", "0", "--pulse", "0.05,0.3", "--samples", "0", "-q", "--maps", "vorticity,lambda2,pressure", "--map-format", "csv,vtk,png", "--out", jet}
	code, stdout, stderr := runCapture(jetArgs...)
	if code != 0 {
		t.Fatalf("jet exit %d: %s", code, stderr)
	}
	if !strings.Contains(stdout, "Maps: "+filepath.Join(jet, "maps")) {
		t.Errorf("stdout does not name the maps:\n%s", stdout)
	}
	der := filepath.Join(dir, "derive")
	if code, _, stderr := runCapture("derive", index, "--axisymmetric", "--axis", "0", "--quantities", "vorticity,lambda2",
		"--format", "csv,vtk,png", "-q", "--out", der); code != 0 {
		t.Fatalf("derive exit %d: %s", code, stderr)
	}
	pre := filepath.Join(dir, "pressure")
	if code, _, stderr := runCapture("pressure", index, "--axisymmetric", "--axis", "0", "--method", "eulerian", "--reference-edges", "right,top",
		"--reference", "source", "--exit", "0", "--nozzle-radius", "0.0125", "--rest-at", "0", "--rho", "1000", "--nu", "1e-6",
		"--format", "csv,vtk", "-q", "--out", pre); code != 0 {
		t.Fatalf("pressure exit %d: %s", code, stderr)
	}
	maps := filepath.Join(jet, "maps")
	first, err := piv.ReadFile(filepath.Join(filepath.Dir(index), bases[0]+".csv.gz"), piv.ReadOptions{Geometry: piv.Geometry{Axisymmetric: true}})
	if err != nil {
		t.Fatal(err)
	}
	for _, b := range bases {
		sameFile(t, filepath.Join(maps, b+".csv"), filepath.Join(der, b+".csv"))
		sameFile(t, filepath.Join(maps, b+".vtk"), filepath.Join(der, b+".vtk"))
		sameFile(t, filepath.Join(maps, b+"_vorticity.png"), filepath.Join(der, b+"_vorticity.png"))
		sameFile(t, filepath.Join(maps, b+"_lambda2.png"), filepath.Join(der, b+"_lambda2.png"))
		sameFile(t, filepath.Join(maps, b+"_pressure.csv"), filepath.Join(pre, b+".csv"))
		sameFile(t, filepath.Join(maps, b+"_pressure.vtk"), filepath.Join(pre, b+".vtk"))
		raw, err := os.ReadFile(filepath.Join(maps, b+"_pressure_p.png"))
		if err != nil {
			t.Fatal(err)
		}
		if _, err := png.Decode(bytes.NewReader(raw)); err != nil {
			t.Errorf("%s_pressure_p.png: %v", b, err)
		}
	}
	sameFile(t, filepath.Join(maps, "pressure.csv"), filepath.Join(pre, "pressure.csv"))
	sameFile(t, filepath.Join(maps, "exit_forces.csv"), filepath.Join(pre, "exit_forces.csv"))
	sameFile(t, filepath.Join(maps, "derive.csv"), filepath.Join(der, "derive.csv"))
	js := readSummary(t, jet)
	if got := js.Settings["maps"]; got == nil || len(got.([]any)) != 3 {
		t.Errorf("summary settings lack the maps: %v", js.Settings)
	}

	// A lost map is written again by --resume, the others are reused.
	lost := filepath.Join(maps, bases[3]+"_vorticity.png")
	before, _ := os.ReadFile(lost)
	if err := os.Remove(lost); err != nil {
		t.Fatal(err)
	}
	code, stdout, stderr = runCapture(append(jetArgs, "--resume")...)
	if code != 0 || !strings.Contains(stdout, "5 reused") {
		t.Fatalf("resume: exit %d, %s\n%s", code, stderr, stdout)
	}
	after, err := os.ReadFile(lost)
	if err != nil || !bytes.Equal(before, after) {
		t.Errorf("resumed map differs or is missing (%v)", err)
	}
	// Other map settings do not mix into a resumed folder.
	code, _, stderr = runCapture(append(append([]string(nil), jetArgs[:len(jetArgs)-6]...), "--maps", "q", "--out", jet, "--resume")...)
	if code != 1 || !strings.Contains(stderr, "resume") {
		t.Errorf("resume with other maps: exit %d, %q", code, stderr)
	}
	// The CSV maps read back as fields on the frames' grid (read last: the reader marks
	// what it reads as inputs, which no later write in this process may replace).
	for _, b := range bases {
		for _, name := range []string{b + ".csv", b + "_pressure.csv"} {
			f, err := piv.ReadFile(filepath.Join(maps, name), piv.ReadOptions{})
			if err != nil {
				t.Fatal(err)
			}
			if !f.Grid.Same(first.Grid) {
				t.Errorf("%s: grid %v, frames %v", name, f.Grid, first.Grid)
			}
		}
	}
	// No maps unless asked; bad map requests are usage errors.
	plain := filepath.Join(dir, "plain")
	if code, _, stderr := runCapture(append(append([]string(nil), jetArgs[:len(jetArgs)-6]...), "--out", plain)...); code != 0 {
		t.Fatalf("jet without maps: %s", stderr)
	}
	if _, err := os.Stat(filepath.Join(plain, "maps")); !os.IsNotExist(err) {
		t.Errorf("maps written without --maps")
	}
	for _, c := range []struct{ args []string }{
		{[]string{"--maps", "vorticity,nonsense"}}, {[]string{"--maps", "vorticity", "--map-format", "gif"}},
		{[]string{"--map-format", "csv"}}, {[]string{"--maps", "pressure", "--no-pressure"}}, {[]string{"--maps", ","}},
	} {
		out := filepath.Join(dir, "bad")
		args := append(append(append([]string(nil), jetArgs[:len(jetArgs)-6]...), c.args...), "--out", out)
		if code, _, _ := runCapture(args...); code != 2 {
			t.Errorf("%v: exit %d, want 2", c.args, code)
		}
		if _, err := os.Stat(out); !os.IsNotExist(err) {
			t.Errorf("%v left %s", c.args, out)
		}
	}
}

// With the nozzle wall masked, the pressure maps equal those of "wakekit pressure --nozzle".
func TestJetMapsSolid(t *testing.T) {
	index, bases := shortDemo(t, 8)
	dir := t.TempDir()
	jet := filepath.Join(dir, "jet")
	if code, _, stderr := runCapture("jet", index, "--axisymmetric", "--axis", "0", "--exit", "0.01", "--diameter", "0.025", "--lip", "0.02", "--rho", "1000", "--nu", "1e-6",
		"--nozzle", "0.01,0.0125,0.02", "--rest", "0", "--pulse", "0.05,0.4", "--samples", "0", "-q", "--maps", "pressure", "--map-format", "csv",
		"--out", jet); code != 0 {
		t.Fatalf("jet exit %d: %s", code, stderr)
	}
	pre := filepath.Join(dir, "pressure")
	if code, _, stderr := runCapture("pressure", index, "--axisymmetric", "--axis", "0", "--method", "eulerian", "--reference-edges", "right,top",
		"--reference", "source", "--exit", "0.01", "--nozzle-radius", "0.0125", "--nozzle", "0.01,0.0125,0.02", "--rest-at", "0",
		"--rho", "1000", "--nu", "1e-6", "-q", "--out", pre); code != 0 {
		t.Fatalf("pressure exit %d: %s", code, stderr)
	}
	for _, b := range bases {
		sameFile(t, filepath.Join(jet, "maps", b+"_pressure.csv"), filepath.Join(pre, b+".csv"))
	}
	f, err := piv.ReadFile(filepath.Join(jet, "maps", bases[3]+"_pressure.csv"), piv.ReadOptions{})
	if err != nil {
		t.Fatal(err)
	}
	solid := 0
	for _, st := range f.Status {
		if st.Kind() == piv.Solid {
			solid++
		}
	}
	if solid != 30 {
		t.Errorf("%d solid nodes in the map, want the 30 of the wall", solid)
	}
}
