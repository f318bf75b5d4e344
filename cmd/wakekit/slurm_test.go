package main

import (
	"context"
	"fmt"
	"os"
	"os/exec"
	"path/filepath"
	"strings"
	"testing"
	"time"
)

// The job-array recipe of docs/slurm.md, run for real: a synthetic series, a single-machine
// run, a Slurm job array of shards, a merge, and a byte-for-byte comparison. CI starts a
// one-node cluster with .ci/slurm-up and sets WAKEKIT_SLURM=1 (the test must then run), or
// WAKEKIT_SLURM_SKIP to the reason the cluster could not start (the test skips saying so).
// Elsewhere the test runs when sbatch is installed and a controller answers, and otherwise
// skips naming what is missing.
func TestSlurmJobArrayMatchesSingleRun(t *testing.T) {
	if reason := os.Getenv("WAKEKIT_SLURM_SKIP"); reason != "" {
		t.Skipf("no Slurm cluster: .ci/slurm-up said %q", reason)
	}
	required := os.Getenv("WAKEKIT_SLURM") == "1"
	unavailable := func(format string, args ...any) {
		t.Helper()
		if required {
			t.Fatalf("WAKEKIT_SLURM=1 but "+format, args...)
		}
		t.Skipf("no Slurm cluster: "+format+" (start one with .ci/slurm-up as root)", args...)
	}
	if _, err := exec.LookPath("sbatch"); err != nil {
		unavailable("sbatch is not installed")
	}
	if out, err := exec.Command("scontrol", "ping").CombinedOutput(); err != nil || !strings.Contains(string(out), "UP") {
		unavailable("the Slurm controller does not answer: scontrol ping: %v %s", err, strings.TrimSpace(string(out)))
	}
	const shards, cmdName = 4, "derive"
	if _, ok := commands[cmdName]; !ok {
		t.Skipf("this build has no %q command to run as shards", cmdName)
	}
	bin := buildWakekit(t)
	tmp := t.TempDir()
	in := filepath.Join(tmp, "tank-run")
	if code, _, errs := runCapture("synth", "lamb-oseen", "--frames", "18", "--grid", "40x32", "--dt", "0.01",
		"--nu", "1e-6", "--drift", "0.01,0", "--noise", "0.001", "--seed", "3", "--out", in, "--quiet"); code != 0 {
		t.Fatalf("synth: %s", errs)
	}
	index := filepath.Join(in, "frames.csv")
	single := filepath.Join(tmp, "single")
	if out, err := exec.Command(bin, cmdName, index, "--out", single, "--quiet").CombinedOutput(); err != nil {
		t.Fatalf("single-machine run: %v\n%s", err, out)
	}
	// The job script is the recipe's, word for word apart from the paths.
	script := filepath.Join(tmp, "shards.sh")
	body := fmt.Sprintf(`#!/bin/sh
#SBATCH --job-name=wakekit-shards
#SBATCH --array=0-%d
#SBATCH --ntasks=1
#SBATCH --cpus-per-task=1
#SBATCH --output=%s/slurm-%%A_%%a.out
N=%d
K=$((SLURM_ARRAY_TASK_ID + 1))
exec %s %s %s --shard "$K/$N" --workers "$SLURM_CPUS_PER_TASK" --resume --out %s/shard-$K --quiet
`, shards-1, tmp, shards, bin, cmdName, index, tmp)
	if err := os.WriteFile(script, []byte(body), 0o755); err != nil {
		t.Fatal(err)
	}
	ctx, cancel := context.WithTimeout(context.Background(), 5*time.Minute)
	defer cancel()
	sb := exec.CommandContext(ctx, "sbatch", "--wait", "--chdir", tmp, script)
	out, err := sb.CombinedOutput()
	logs, _ := filepath.Glob(filepath.Join(tmp, "slurm-*.out"))
	var logText strings.Builder
	for _, l := range logs {
		b, _ := os.ReadFile(l)
		fmt.Fprintf(&logText, "--- %s\n%s", filepath.Base(l), b)
	}
	if err != nil {
		t.Fatalf("sbatch --wait: %v\n%s\n%s", err, out, logText.String())
	}
	t.Logf("%s", strings.TrimSpace(string(out)))
	var dirs []string
	for k := 1; k <= shards; k++ {
		dirs = append(dirs, filepath.Join(tmp, fmt.Sprintf("shard-%d", k)))
	}
	merged := filepath.Join(tmp, "merged")
	args := append([]string{"merge"}, dirs...)
	args = append(args, "--out", merged)
	if out, err := exec.Command(bin, args...).CombinedOutput(); err != nil {
		t.Fatalf("merge: %v\n%s\n%s", err, out, logText.String())
	}
	sameTrees(t, single, merged)
}
