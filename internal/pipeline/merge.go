package pipeline

import (
	"bytes"
	"crypto/sha256"
	"encoding/hex"
	"fmt"
	"io"
	"os"
	"path/filepath"
	"sort"

	"github.com/wakekit/wakekit/piv"
)

// MergeReport says what Merge joined.
type MergeReport struct {
	Command string
	Shards  int // folders joined
	Frames  int // frames in the merged run
	Files   int // per-frame files copied
}

// Merge joins the output folders of the shards of one split run into out: it checks that the
// folders hold complete shards of the same command, version, settings and series that
// together cover every frame exactly once, copies each frame's files (checking their recorded
// size and SHA-256), writes the joined manifest, rebuilds the tables in frame order and runs the
// command's Finisher. The result equals a single-machine run byte for byte. out must not be
// one of the shard folders; it is created if needed.
func Merge(out string, dirs []string) (MergeReport, error) {
	var rep MergeReport
	if len(dirs) == 0 {
		return rep, fmt.Errorf("no shard folders given")
	}
	outAbs, err := filepath.Abs(out)
	if err != nil {
		return rep, err
	}
	mans := make([]*Manifest, len(dirs))
	for a, d := range dirs {
		dAbs, err := filepath.Abs(d)
		if err != nil {
			return rep, err
		}
		if filepath.Clean(dAbs) == filepath.Clean(outAbs) {
			return rep, fmt.Errorf("%s: the merged folder must not be one of the shard folders; choose another --out", d)
		}
		m, err := ReadManifest(d)
		if err != nil {
			if os.IsNotExist(err) {
				return rep, fmt.Errorf("%s: no %s here; is this the output folder of a wakekit run?", d, ManifestName)
			}
			return rep, err
		}
		if !m.Complete() {
			miss := m.Missing()
			return rep, fmt.Errorf("%s: shard %s is not complete: %d of %d frames missing (first missing frame %d); finish it with --resume",
				d, shardName(m), len(miss), m.Header.To-m.Header.From, miss[0])
		}
		mans[a] = m
	}
	first := &mans[0].Header
	for a := 1; a < len(mans); a++ {
		h := &mans[a].Header
		var what string
		switch {
		case h.Command != first.Command:
			what = fmt.Sprintf("command %q, not %q", h.Command, first.Command)
		case h.Version != first.Version:
			what = fmt.Sprintf("wakekit %s, not %s", h.Version, first.Version)
		case h.SettingsSHA256 != first.SettingsSHA256:
			what = "other settings: " + settingsDiff(first.Settings, h.Settings)
		case h.Frames != first.Frames || h.SeriesSHA256 != first.SeriesSHA256:
			what = "another input series"
		case !sameTables(h.Tables, first.Tables):
			what = "other tables"
		}
		if what != "" {
			return rep, fmt.Errorf("%s was made with %s than %s; only shards of one run can be merged", dirs[a], what, dirs[0])
		}
	}
	// The shards must tile the series.
	idx := make([]int, len(mans))
	for a := range idx {
		idx[a] = a
	}
	sort.SliceStable(idx, func(a, b int) bool { return mans[idx[a]].Header.From < mans[idx[b]].Header.From })
	next := 0
	for _, a := range idx {
		h := &mans[a].Header
		if h.From == h.To {
			continue // an empty shard (more shards than frames)
		}
		if h.From > next {
			return rep, fmt.Errorf("frames %d..%d are in none of the folders given; add the missing shard", next, h.From-1)
		}
		if h.From < next {
			return rep, fmt.Errorf("%s: shard %s overlaps another folder given (frames %d..%d twice)", dirs[a], shardName(mans[a]), h.From, next-1)
		}
		next = h.To
	}
	if next != first.Frames {
		return rep, fmt.Errorf("frames %d..%d are in none of the folders given; add the missing shard", next, first.Frames-1)
	}

	merged := &Manifest{Header: *first}
	merged.Header.Shard, merged.Header.From, merged.Header.To = "", 0, first.Frames
	srcDir := map[int]string{}
	names := map[string]int{}
	for _, a := range idx {
		for _, e := range mans[a].Entries {
			for _, f := range e.Files {
				if k, dup := names[f.Name]; dup {
					return rep, fmt.Errorf("frames %d and %d both wrote %q", k, e.Frame, f.Name)
				}
				names[f.Name] = e.Frame
			}
			srcDir[e.Frame] = dirs[a]
			merged.Entries = append(merged.Entries, e)
		}
	}
	_, statErr := os.Stat(out)
	if err := os.MkdirAll(out, 0o755); err != nil {
		return rep, err
	}
	// A merge that fails part-way (a shard file changed since it was recorded) removes what it
	// wrote, so it leaves no partial result.
	var written []string
	undo := func(err error) (MergeReport, error) {
		for _, p := range written {
			os.Remove(p)
		}
		for _, t := range merged.Header.Tables {
			os.Remove(filepath.Join(out, t.Name))
		}
		os.Remove(filepath.Join(out, ManifestName))
		if os.IsNotExist(statErr) {
			os.Remove(out) // only if it is empty again
		}
		return MergeReport{}, err
	}
	for _, e := range merged.Entries {
		for _, f := range e.Files {
			dst := filepath.Join(out, f.Name)
			if err := copyChecked(filepath.Join(srcDir[e.Frame], f.Name), dst, f); err != nil {
				return undo(err)
			}
			written = append(written, dst)
			rep.Files++
		}
	}
	if err := finish(out, merged); err != nil {
		return undo(err)
	}
	rep.Command, rep.Shards, rep.Frames = first.Command, len(dirs), first.Frames
	return rep, nil
}

func shardName(m *Manifest) string {
	if m.Header.Shard == "" {
		return "(whole run)"
	}
	return m.Header.Shard
}

// copyChecked copies one recorded file, refusing it if its size or content changed since it
// was written.
func copyChecked(src, dst string, f File) error {
	in, err := os.Open(src)
	if err != nil {
		return err
	}
	defer in.Close()
	st, err := in.Stat()
	if err != nil {
		return err
	}
	if st.Size() != f.Size {
		return fmt.Errorf("%s: %d bytes, but the manifest records %d; the shard's output was changed, run the shard again", src, st.Size(), f.Size)
	}
	if err := os.MkdirAll(filepath.Dir(dst), 0o755); err != nil {
		return err
	}
	h := sha256.New()
	err = piv.WriteFileAtomic(dst, func(w io.Writer) error {
		_, err := io.Copy(io.MultiWriter(w, h), in)
		if err != nil {
			return err
		}
		if got := hex.EncodeToString(h.Sum(nil)); got != f.SHA256 {
			return fmt.Errorf("%s: content differs from the manifest's SHA-256; the shard's output was changed, run the shard again", src)
		}
		return nil
	})
	return err
}

// equalFiles reports whether two files have the same bytes (for tests and checks).
func equalFiles(a, b string) (bool, error) {
	x, err := os.ReadFile(a)
	if err != nil {
		return false, err
	}
	y, err := os.ReadFile(b)
	if err != nil {
		return false, err
	}
	return bytes.Equal(x, y), nil
}
