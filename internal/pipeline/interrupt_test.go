package pipeline

import (
	"bytes"
	"context"
	"errors"
	"fmt"
	"math/rand/v2"
	"os"
	"os/exec"
	"path/filepath"
	"strings"
	"syscall"
	"testing"
	"time"

	"github.com/wakekit/wakekit/piv"
)

// TestMain lets the test binary play a batch program for the interrupt test: with
// WAKEKIT_PIPELINE_CHILD set it runs one batch with the signal handling commands use.
func TestMain(m *testing.M) {
	if spec := os.Getenv("WAKEKIT_PIPELINE_CHILD"); spec != "" {
		os.Exit(childMain(spec))
	}
	os.Exit(m.Run())
}

const childFrames, childNodes = 60, 6

// childMain runs the test batch over the inputs in folder in, writing into out ("in|out").
func childMain(spec string) int {
	in, out, _ := strings.Cut(spec, "|")
	s, err := openChildInputs(in)
	if err != nil {
		fmt.Fprintln(os.Stderr, err)
		return 1
	}
	ctx, stop := SignalContext(context.Background())
	defer stop()
	opt := Options{Workers: 2, Halo: 1, Resume: os.Getenv("WAKEKIT_PIPELINE_RESUME") != ""}
	rep, err := RunBatch(ctx, s, opt, testBatch(out, defaultSettings), testStage(defaultSettings, func(int) {
		time.Sleep(4 * time.Millisecond) // slow enough for the signal to land mid-run
	}))
	fmt.Println(rep)
	if err != nil {
		fmt.Fprintln(os.Stderr, err)
		return 1
	}
	return 0
}

func openChildInputs(in string) (*piv.Series, error) {
	names := make([]string, childFrames)
	times := make([]float64, childFrames)
	for k := range names {
		names[k] = filepath.Join(in, fmt.Sprintf("in_%04d.txt", k))
		times[k] = 0.5 * float64(k)
	}
	return loadInputs(names, times, childNodes)
}

// A run killed with SIGINT at a random frame leaves only complete files and a manifest of the
// finished frames; --resume then completes it with outputs identical to an uninterrupted run.
func TestInterruptWithSIGINTThenResume(t *testing.T) {
	tmp := t.TempDir()
	in := filepath.Join(tmp, "in")
	os.MkdirAll(in, 0o755)
	s := writeInputs(t, in, childFrames, childNodes)
	ref := filepath.Join(tmp, "ref")
	if _, err := runTest(t, context.Background(), s, ref, Options{Workers: 2}, defaultSettings, nil); err != nil {
		t.Fatal(err)
	}
	out := filepath.Join(tmp, "out")
	os.MkdirAll(out, 0o755)
	stopAt := 3 + rand.IntN(childFrames/2)
	cmd := exec.Command(os.Args[0], "-test.run=^$")
	cmd.Env = append(os.Environ(), "WAKEKIT_PIPELINE_CHILD="+in+"|"+out)
	var stdout, stderr bytes.Buffer
	cmd.Stdout, cmd.Stderr = &stdout, &stderr
	if err := cmd.Start(); err != nil {
		t.Fatal(err)
	}
	deadline := time.Now().Add(20 * time.Second)
	for manifestLines(out) < 1+stopAt && time.Now().Before(deadline) {
		time.Sleep(time.Millisecond)
	}
	if err := cmd.Process.Signal(syscall.SIGINT); err != nil {
		t.Fatal(err)
	}
	err := cmd.Wait()
	var ee *exec.ExitError
	if !errors.As(err, &ee) || ee.ExitCode() != 1 {
		t.Fatalf("interrupted run: %v (stdout %q, stderr %q); want exit status 1", err, stdout.String(), stderr.String())
	}
	if !strings.Contains(stderr.String(), "stopped after") {
		t.Errorf("interrupted run does not say how far it got: %q", stderr.String())
	}
	t.Logf("SIGINT after frame %d: %s", stopAt, strings.TrimSpace(stdout.String()))
	checkOnlyCompleteFiles(t, ref, out)
	m, err := ReadManifest(out)
	if err != nil {
		t.Fatal(err)
	}
	if len(m.Entries) < stopAt || m.Complete() {
		t.Fatalf("manifest lists %d of %d frames after SIGINT at frame %d", len(m.Entries), childFrames, stopAt)
	}
	// Resume in a fresh process, as a user would.
	cmd = exec.Command(os.Args[0], "-test.run=^$")
	cmd.Env = append(os.Environ(), "WAKEKIT_PIPELINE_CHILD="+in+"|"+out, "WAKEKIT_PIPELINE_RESUME=1")
	if b, err := cmd.CombinedOutput(); err != nil {
		t.Fatalf("resumed run: %v: %s", err, b)
	} else if want := fmt.Sprintf("(%d reused", len(m.Entries)); !strings.Contains(string(b), want) {
		t.Errorf("resumed run says %q, want %q", b, want)
	}
	sameDirs(t, ref, out)
}

func manifestLines(dir string) int {
	b, _ := os.ReadFile(filepath.Join(dir, ManifestName))
	return bytes.Count(b, []byte{'\n'})
}
