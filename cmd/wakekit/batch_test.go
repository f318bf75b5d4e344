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
