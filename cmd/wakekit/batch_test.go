package main

import (
	"io/fs"
	"os"
	"os/exec"
	"path/filepath"
	"sync"
	"testing"
)

var (
	buildOnce sync.Once
	builtBin  string
	buildErr  error
)

// buildWakekit builds the wakekit program once per test run, for tests that need a real
// process (signals, a cluster scheduler).
func buildWakekit(t testing.TB) string {
	t.Helper()
	buildOnce.Do(func() {
		dir, err := os.MkdirTemp("", "wakekit-bin")
		if err != nil {
			buildErr = err
			return
		}
		builtBin = filepath.Join(dir, "wakekit")
		out, err := exec.Command("go", "build", "-o", builtBin, ".").CombinedOutput()
		if err != nil {
			buildErr = &buildError{err, string(out)}
		}
	})
	if buildErr != nil {
		t.Fatalf("building wakekit: %v", buildErr)
	}
	return builtBin
}

type buildError struct {
	err error
	out string
}

func (e *buildError) Error() string { return e.err.Error() + "\n" + e.out }

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
