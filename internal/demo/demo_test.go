package demo

import (
	"bufio"
	"compress/gzip"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// The extracted run has its index and one gzip CSV per indexed frame, each with the 96 x 40
// sample grid of the run description.
func TestExtract(t *testing.T) {
	dir := t.TempDir()
	index, err := Extract(dir)
	if err != nil {
		t.Fatal(err)
	}
	b, err := os.ReadFile(index)
	if err != nil {
		t.Fatal(err)
	}
	lines := strings.Split(strings.TrimSpace(string(b)), "\n")
	if len(lines)-1 != Frames() || Frames() != 135 {
		t.Fatalf("index has %d frames, embedded %d, want 135", len(lines)-1, Frames())
	}
	last := strings.Split(lines[len(lines)-1], ",")
	f, err := os.Open(filepath.Join(dir, last[1]))
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	zr, err := gzip.NewReader(f)
	if err != nil {
		t.Fatal(err)
	}
	sc := bufio.NewScanner(zr)
	rows := 0
	for sc.Scan() {
		if l := sc.Text(); l != "" && !strings.HasPrefix(l, "#") && !strings.HasPrefix(l, "x") {
			rows++
		}
	}
	if rows != 96*40 {
		t.Fatalf("frame has %d rows, want %d", rows, 96*40)
	}
}
