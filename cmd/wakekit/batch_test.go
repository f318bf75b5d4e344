package main

import (
	"bytes"
	"errors"
	"io/fs"
	"os"
	"os/exec"
	"path/filepath"
	"strings"
	"testing"

	"github.com/spf13/pflag"
	"github.com/wakekit/wakekit/internal/pipeline"
)

// buildWakekit builds the wakekit program into the test's temporary folder, for tests that
// need a real process (signals, a cluster scheduler).
func buildWakekit(t testing.TB) string {
	t.Helper()
	bin := filepath.Join(t.TempDir(), "wakekit")
	if out, err := exec.Command("go", "build", "-o", bin, ".").CombinedOutput(); err != nil {
		t.Fatalf("building wakekit: %v\n%s", err, out)
	}
	return bin
}

// treeFiles returns the files under dir (relative names) with their content.
func treeFiles(t testing.TB, dir string) map[string][]byte {
	t.Helper()
	files := map[string][]byte{}
	err := filepath.WalkDir(dir, func(path string, d fs.DirEntry, err error) error {
		if err != nil || d.IsDir() {
			return err
		}
		rel, _ := filepath.Rel(dir, path)
		b, err := os.ReadFile(path)
		files[rel] = b
		return err
	})
	if err != nil {
		t.Fatal(err)
	}
	return files
}

// sameTrees fails unless the two folders hold the same files with the same bytes.
func sameTrees(t testing.TB, want, got string) {
	t.Helper()
	a, b := treeFiles(t, want), treeFiles(t, got)
	if len(a) == 0 {
		t.Fatalf("%s holds no files", want)
	}
	bad := 0
	for name, wa := range a {
		gb, ok := b[name]
		switch {
		case !ok:
			t.Errorf("%s: missing (present in %s)", filepath.Join(got, name), want)
			bad++
		case string(wa) != string(gb):
			t.Errorf("%s differs from %s", filepath.Join(got, name), filepath.Join(want, name))
			bad++
		}
		if bad > 10 {
			t.Fatal("too many differences")
		}
	}
	for name := range b {
		if _, ok := a[name]; !ok {
			t.Errorf("%s: unexpected file", filepath.Join(got, name))
		}
	}
}

// Read flags that parse as numbers but make no sense are usage errors that say what to give.
func TestReadFlagsRefuseNonsense(t *testing.T) {
	for _, c := range []struct {
		args []string
		want string
	}{
		{[]string{"--dt", "NaN"}, "--dt NaN is not a finite number"},
		{[]string{"--pixel-size", "Inf"}, "--pixel-size +Inf is not a finite number"},
		{[]string{"--pulse-separation", "-1e-3"}, "must not be negative"},
		{[]string{"--axis", "nan"}, "--axis NaN is not a finite number"},
		{[]string{"--max-nodes", "0"}, "--max-nodes 0"},
	} {
		fs := pflag.NewFlagSet("t", pflag.ContinueOnError)
		r := addReadFlags(fs)
		if err := fs.Parse(c.args); err != nil {
			t.Fatalf("%v: %v", c.args, err)
		}
		_, err := r.options()
		var ue *usageError
		if !errors.As(err, &ue) || !strings.Contains(err.Error(), c.want) {
			t.Errorf("%v: err = %v, want a usage error saying %q", c.args, err, c.want)
		}
	}
}

// Run flags: --shard and --workers are checked, and the progress line goes to stderr only
// when it is a terminal and --quiet is not given.
func TestRunFlagsPipelineOptions(t *testing.T) {
	parse := func(args ...string) (*runFlags, error) {
		fs := pflag.NewFlagSet("t", pflag.ContinueOnError)
		r := addRunFlags(fs)
		return r, fs.Parse(args)
	}
	var buf bytes.Buffer
	tty := &env{stdout: &buf, stderr: &buf, stderrTTY: true}
	r, _ := parse("--shard", "3/8", "--resume", "--workers", "2")
	opt, err := r.pipelineOptions(tty, "derive")
	if err != nil || opt.Shard != (pipeline.Shard{K: 3, N: 8}) || !opt.Resume || opt.Workers != 2 || opt.Progress == nil {
		t.Errorf("options = %+v, %v", opt, err)
	}
	r, _ = parse("--quiet")
	if opt, _ := r.pipelineOptions(tty, "derive"); opt.Progress != nil {
		t.Error("progress drawn with --quiet")
	}
	r, _ = parse()
	if opt, _ := r.pipelineOptions(&env{stdout: &buf, stderr: &buf}, "derive"); opt.Progress != nil {
		t.Error("progress drawn when stderr is not a terminal")
	}
	for _, bad := range [][]string{{"--shard", "9/8"}, {"--shard", "x"}, {"--workers", "-1"}} {
		r, _ := parse(bad...)
		var ue *usageError
		if _, err := r.pipelineOptions(tty, "derive"); !errors.As(err, &ue) {
			t.Errorf("%v: err = %v, want a usage error", bad, err)
		}
	}
}

// Every numeric flag of clean, stats, verify and the shared read flags refuses a value that
// parses but makes no sense (NaN, Inf, out of range) before anything is read or written: exit
// status 2 (bad usage), a message naming the flag and saying what to give, and no output folder.
func TestNumericFlagsRefuseNonsense(t *testing.T) {
	in := filepath.Join(t.TempDir(), "run")
	if code, _, errs := runCapture("synth", "uniform", "--grid", "8x6", "--frames", "4", "--dt", "0.01", "-o", in, "--quiet"); code != 0 {
		t.Fatal(errs)
	}
	index := filepath.Join(in, "frames.csv")
	for _, c := range []struct {
		cmd  string
		args []string
		flag string
	}{
		{"clean", []string{"--eps", "NaN"}, "--eps"},
		{"clean", []string{"--eps", "-0.01"}, "--eps"},
		{"clean", []string{"--eps", "0"}, "--eps"},
		{"clean", []string{"--eps", "0.01", "--threshold", "Inf"}, "--threshold"},
		{"clean", []string{"--eps", "0.01", "--threshold", "0"}, "--threshold"},
		{"clean", []string{"--eps-px", "nan", "--pixel-size", "1e-5", "--pulse-separation", "1e-3"}, "--eps-px"},
		{"clean", []string{"--eps", "0.01", "--max-speed", "NaN"}, "--max-speed"},
		{"clean", []string{"--eps", "0.01", "--max-speed", "-1"}, "--max-speed"},
		{"clean", []string{"--eps", "0.01", "--std", "Inf"}, "--std"},
		{"clean", []string{"--eps", "0.01", "--std", "-3"}, "--std"},
		{"clean", []string{"--eps", "0.01", "--smooth", "gaussian", "--sigma", "NaN"}, "--sigma"},
		{"clean", []string{"--eps", "0.01", "--u-range", "NaN,1"}, "--u-range"},
		{"clean", []string{"--eps", "0.01", "--v-range", "2,1"}, "--v-range"},
		{"clean", []string{"--eps", "0.01", "--dt", "Inf"}, "--dt"},
		{"stats", []string{"--period", "NaN", "--phase-bins", "4"}, "--period"},
		{"stats", []string{"--period", "Inf", "--phase-bins", "4"}, "--period"},
		{"stats", []string{"--phase-origin", "Inf", "--period", "0.02", "--phase-bins", "2"}, "--phase-origin"},
		{"stats", []string{"--pod", "2", "--pod-max-gb", "Inf"}, "--pod-max-gb"},
		{"stats", []string{"--pod", "2", "--pod-max-gb", "0"}, "--pod-max-gb"},
		{"stats", []string{"--diameter", "NaN", "--velocity", "1"}, "--diameter"},
		{"stats", []string{"--diameter", "0.02", "--velocity", "Inf"}, "--velocity"},
		{"stats", []string{"--probe", "0,0", "--overlap", "-4"}, "--overlap"},
		{"stats", []string{"--probe", "NaN,0"}, "--probe"},
		{"stats", []string{"--pixel-size", "NaN"}, "--pixel-size"},
		{"stats", []string{"--max-file-bytes", "-1"}, "--max-file-bytes"},
		{"verify", []string{"--noise", "NaN"}, "noise"},
		{"verify", []string{"--spacing", "Inf"}, "--spacing"},
		{"verify", []string{"--gamma", "NaN"}, "--gamma"},
		{"verify", []string{"--speed", "-0.1"}, "--speed"},
		{"verify", []string{"--radius", "Inf"}, "--radius"},
		{"verify", []string{"--window-size", "NaN"}, "--window-size"},
	} {
		out := filepath.Join(t.TempDir(), "out")
		args := append([]string{c.cmd}, c.args...)
		if c.cmd != "verify" {
			args = append(args, index, "-o", out)
		}
		code, stdout, errs := runCapture(args...)
		if code != 2 || !strings.Contains(errs, c.flag) || stdout != "" {
			t.Errorf("wakekit %s %v: status %d, stdout %q, stderr %q; want 2 and a message naming %s", c.cmd, c.args, code, stdout, errs, c.flag)
		}
		if c.cmd != "verify" && !strings.Contains(errs, "give") && !strings.Contains(errs, "must") {
			t.Errorf("wakekit %s %v: %q does not say what to give", c.cmd, c.args, errs)
		}
		if _, err := os.Stat(out); err == nil {
			t.Errorf("wakekit %s %v: left the output folder %s behind", c.cmd, c.args, out)
		}
	}
}

// Bad data (exit status 1) leaves no output folder behind either: a frame that cannot be read
// in clean, frames on different grids or too many modes in stats.
func TestBadDataLeavesNoOutput(t *testing.T) {
	dir := t.TempDir()
	broken := filepath.Join(dir, "broken.csv")
	if err := os.WriteFile(broken, []byte("x,y,u,v\n0,0,1,1\n1,0,1.2.3,1\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	in := filepath.Join(dir, "run")
	if code, _, errs := runCapture("synth", "uniform", "--grid", "8x6", "--frames", "4", "--dt", "0.01", "-o", in, "--quiet"); code != 0 {
		t.Fatal(errs)
	}
	for _, args := range [][]string{
		{"clean", broken, "--eps", "0.01"},
		{"stats", filepath.Join(in, "frames.csv"), "--pod", "9"},
		{"stats", filepath.Join(in, "frame_0000.csv"), broken, "--dt", "0.01"},
	} {
		out := filepath.Join(t.TempDir(), "out")
		code, _, errs := runCapture(append(args, "-o", out)...)
		if code != 1 || errs == "" {
			t.Errorf("%v: status %d, stderr %q; want 1 and a message", args, code, errs)
		}
		if _, err := os.Stat(out); err == nil {
			t.Errorf("%v: left the output folder behind", args)
		}
	}
}
