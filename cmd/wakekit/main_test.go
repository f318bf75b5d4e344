package main

import (
	"bytes"
	"strings"
	"testing"
)

// runCapture runs wakekit with args and returns the exit status, stdout and stderr.
func runCapture(args ...string) (int, string, string) {
	var out, errb bytes.Buffer
	code := run(args, &env{stdout: &out, stderr: &errb})
	return code, out.String(), errb.String()
}

func TestHelpAndExitStatus(t *testing.T) {
	if code, out, _ := runCapture("help"); code != 0 || !strings.Contains(out, "Commands:") {
		t.Errorf("help: status %d, output %q", code, out)
	}
	if code, _, errs := runCapture("no-such-command"); code != 2 || !strings.Contains(errs, "unknown command") {
		t.Errorf("unknown command: status %d, stderr %q", code, errs)
	}
	if code, _, _ := runCapture(); code != 2 {
		t.Errorf("no arguments: status %d, want 2", code)
	}
}

// Every command answers -h with its usage, flags and at least one example, and exits 0; an
// unknown flag is a usage error (status 2).
func TestEveryCommandHasHelpWithExamples(t *testing.T) {
	if len(commands) == 0 {
		t.Fatal("no commands registered")
	}
	for name := range commands {
		code, _, errs := runCapture(name, "-h")
		if code != 0 {
			t.Errorf("%s -h: status %d", name, code)
		}
		if !strings.Contains(errs, "Usage: wakekit "+name) || !strings.Contains(errs, "Example") {
			t.Errorf("%s -h lacks usage or examples:\n%s", name, errs)
		}
		if code, _, _ := runCapture(name, "--no-such-flag"); code != 2 {
			t.Errorf("%s --no-such-flag: status %d, want 2", name, code)
		}
	}
}
