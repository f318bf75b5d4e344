package pipeline

import (
	"bytes"
	"context"
	"crypto/sha256"
	"encoding/hex"
	"encoding/json"
	"errors"
	"fmt"
	"hash"
	"io"
	"os"
	"path/filepath"
	"sort"
	"strings"
	"sync"

	"github.com/wakekit/wakekit/piv"
)

// Batch describes a run that writes its results into an output folder.
//
// Shard-output conventions (every series command that uses RunBatch gets resume and merge from
// them): each frame's files are written through Output.WriteFile and belong to that frame
// only; time-series CSVs are declared in Tables and filled with Output.AddRow, one or more
// rows per frame, written in frame order when the run is complete; the command's summary is
// written by the Finisher registered for the command, from the manifest alone. A shard writes
// its own frames' files, its manifest and the tables and summary of its share; Merge copies the
// frames' files, joins the manifests, rebuilds the tables and runs the same Finisher, so the
// merged folder equals a single-machine run byte for byte.
type Batch struct {
	// Dir is the output folder (it must exist).
	Dir string
	// Command and Version name what produces the results.
	Command, Version string
	// Settings are everything besides the frames that the results depend on (flags, a digest
	// of auxiliary files, see FileDigest); they are stored as JSON in the manifest and a
	// resumed run with different settings is refused. They must marshal deterministically
	// (structs and maps do).
	Settings any
	// Tables are the run's time-series CSVs.
	Tables []Table
}

// Finisher writes a run's summary files into dir from its manifest (settings, and the
// entries' rows and records in frame order). It must depend on nothing else, so that a
// resumed or merged run writes the same bytes. It is called when every frame of the run
// (or of the shard) is done.
type Finisher func(dir string, m *Manifest) error

var (
	finishersMu sync.Mutex
	finishers   = map[string]Finisher{}
)

// RegisterFinisher sets the finisher of a command; commands call it from an init function so
// that both their own runs and Merge find it.
func RegisterFinisher(command string, f Finisher) {
	finishersMu.Lock()
	defer finishersMu.Unlock()
	finishers[command] = f
}

func finisherOf(command string) Finisher {
	finishersMu.Lock()
	defer finishersMu.Unlock()
	return finishers[command]
}

// Output collects what a stage writes for one frame.
type Output struct {
	dir    string
	k      int
	tables []Table
	files  []File
	rows   map[string][]string
	record json.RawMessage
}

// Frame returns the frame index the output belongs to.
func (o *Output) Frame() int { return o.k }

// Dir returns the output folder.
func (o *Output) Dir() string { return o.dir }

// WriteFile writes one of the frame's files (name is relative to the output folder) through
// piv.WriteFileAtomic, and records its size and SHA-256 for the manifest.
func (o *Output) WriteFile(name string, write func(w io.Writer) error) error {
	if err := checkLocalName(name); err != nil {
		return err
	}
	for _, f := range o.files {
		if f.Name == name {
			return fmt.Errorf("frame %d writes %q twice", o.k, name)
		}
	}
	path := filepath.Join(o.dir, name)
	if d := filepath.Dir(path); d != o.dir {
		if err := os.MkdirAll(d, 0o755); err != nil {
			return err
		}
	}
	var cw *countingHash
	err := piv.WriteFileAtomic(path, func(w io.Writer) error {
		cw = &countingHash{w: w, h: sha256.New()}
		return write(cw)
	})
	if err != nil {
		return err
	}
	o.files = append(o.files, File{Name: name, Size: cw.n, SHA256: hex.EncodeToString(cw.h.Sum(nil))})
	return nil
}

// AddRow appends one row (without newline) for this frame to a declared table.
func (o *Output) AddRow(table, row string) error {
	found := false
	for _, t := range o.tables {
		found = found || t.Name == table
	}
	if !found {
		return fmt.Errorf("table %q is not declared in the batch", table)
	}
	if strings.ContainsAny(row, "\r\n") {
		return fmt.Errorf("table %q: a row must be one line", table)
	}
	if o.rows == nil {
		o.rows = map[string][]string{}
	}
	o.rows[table] = append(o.rows[table], row)
	return nil
}

// SetRecord stores the frame's result for the summary (marshalled to JSON; float64 values
// survive the round trip exactly).
func (o *Output) SetRecord(v any) error {
	b, err := json.Marshal(v)
	if err != nil {
		return fmt.Errorf("frame %d record: %v", o.k, err)
	}
	o.record = b
	return nil
}

type countingHash struct {
	w io.Writer
	h hash.Hash
	n int64
}

func (c *countingHash) Write(p []byte) (int, error) {
	n, err := c.w.Write(p)
	c.h.Write(p[:n])
	c.n += int64(n)
	return n, err
}

// Report says what a batch run did.
type Report struct {
	// Total is the number of frames of the run (the shard's share), Reused those taken from
	// an earlier run by --resume, Computed those processed now.
	Total, Reused, Computed int
	// From and To are the run's frames From..To-1.
	From, To int
	// Complete is true when every frame is done and the tables and summary are written.
	Complete bool
}

// String gives a one-line account, e.g. "1200 of 2000 frames done (800 reused), stopped".
func (r Report) String() string {
	s := fmt.Sprintf("%d of %d frames done", r.Reused+r.Computed, r.Total)
	if r.Reused > 0 {
		s += fmt.Sprintf(" (%d reused from the earlier run)", r.Reused)
	}
	if r.To-r.From != 0 && (r.From != 0 || r.Total != r.To) {
		s += fmt.Sprintf(", frames %d..%d", r.From, r.To-1)
	}
	return s
}

// RunBatch runs proc over the frames of s (all, or the shard's share) writing into b.Dir with a
// manifest, in frame order. With opt.Resume, frames the manifest records as finished for the
// same inputs and settings, and whose files still exist with their recorded sizes, are not
// processed again. When every frame is done, the tables are written and the command's
// registered Finisher is called. On cancellation the frames in progress are finished, the
// manifest lists every finished frame, and the returned error is a *StoppedError.
func RunBatch(ctx context.Context, s *piv.Series, opt Options, b Batch,
	proc func(ctx context.Context, k int, frames Frames, out *Output) error) (Report, error) {
	var rep Report
	if b.Command == "" {
		return rep, errors.New("batch has no command name")
	}
	if st, err := os.Stat(b.Dir); err != nil || !st.IsDir() {
		return rep, fmt.Errorf("output folder %q does not exist", b.Dir)
	}
	if opt.Halo < 0 {
		return rep, fmt.Errorf("halo %d must not be negative", opt.Halo)
	}
	if err := opt.Shard.Validate(); err != nil {
		return rep, err
	}
	if opt.Frames != nil {
		return rep, errors.New("a batch runs whole series or shards; Options.Frames is not supported")
	}
	from, to, err := opt.Shard.Range(s.Len())
	if err != nil {
		return rep, err
	}
	rep.From, rep.To, rep.Total = from, to, to-from
	settings, err := json.Marshal(b.Settings)
	if err != nil {
		return rep, fmt.Errorf("settings: %v", err)
	}
	tables := append([]Table(nil), b.Tables...)
	for _, t := range tables {
		if err := checkLocalName(t.Name); err != nil {
			return rep, err
		}
	}
	hdr := Header{
		Format: ManifestFormat, Command: b.Command, Version: b.Version,
		Settings:       settings,
		SettingsSHA256: settingsDigest(b.Command, b.Version, opt.Halo, settings),
		Frames:         s.Len(), SeriesSHA256: seriesDigest(s), Halo: opt.Halo,
		Tables: tables, Shard: opt.Shard.String(), From: from, To: to,
	}
	if opt.Shard.IsAll() {
		hdr.Shard = ""
	}
	keys := newInputKeys(s, opt.Halo)
	workers := workerCount(opt.Workers)

	// Frames reused from an earlier run.
	man := &Manifest{Header: hdr}
	if opt.Resume {
		old, err := ReadManifest(b.Dir)
		switch {
		case errors.Is(err, os.ErrNotExist):
			// Nothing to resume: a fresh run.
		case err != nil:
			return rep, fmt.Errorf("cannot resume: %w", err)
		default:
			if err := sameRun(&old.Header, &hdr, b.Dir); err != nil {
				return rep, err
			}
			man.Entries, err = reusable(ctx, s, old.Entries, keys, b.Dir, workers)
			if err != nil {
				return rep, err
			}
		}
	}
	rep.Reused = len(man.Entries)
	if err := man.writeAtomic(b.Dir); err != nil {
		return rep, err
	}
	done := make(map[int]bool, len(man.Entries))
	for _, e := range man.Entries {
		done[e.Frame] = true
	}
	var order []int
	for k := from; k < to; k++ {
		if !done[k] {
			order = append(order, k)
		}
	}

	app, err := os.OpenFile(filepath.Join(b.Dir, ManifestName), os.O_WRONLY|os.O_APPEND, 0)
	if err != nil {
		return rep, err
	}
	type frameResult struct{ e Entry }
	wopt := opt
	wopt.strictWindow = true // a frame's input key covers exactly what it may read
	if wopt.Lookahead <= 0 {
		wopt.Lookahead = 16 * workers // results are manifest entries of a few hundred bytes
	}
	n, runErr := run(ctx, s, order, wopt,
		func(ctx context.Context, k int, frames Frames) (frameResult, error) {
			key, err := keys.key(k)
			if err != nil {
				return frameResult{}, err
			}
			out := &Output{dir: b.Dir, k: k, tables: tables}
			if err := proc(ctx, k, frames, out); err != nil {
				return frameResult{}, err
			}
			sort.Slice(out.files, func(a, c int) bool { return out.files[a].Name < out.files[c].Name })
			return frameResult{Entry{Frame: k, Name: filepath.Base(s.Name(k)), InputSHA256: key,
				Files: out.files, Rows: out.rows, Record: out.record}}, nil
		},
		func(k int, r frameResult) error {
			// One write per line; an interruption can only cut the last line short, which
			// ParseManifest ignores.
			b, err := json.Marshal(r.e)
			if err != nil {
				return err
			}
			if _, err := app.Write(append(b, '\n')); err != nil {
				return fmt.Errorf("%s: %v", ManifestName, err)
			}
			man.Entries = append(man.Entries, r.e)
			return nil
		})
	rep.Computed = n
	if cerr := app.Close(); cerr != nil && runErr == nil {
		runErr = cerr
	}
	sort.Slice(man.Entries, func(a, c int) bool { return man.Entries[a].Frame < man.Entries[c].Frame })
	if runErr != nil {
		// Keep the manifest in frame order for the next --resume.
		if werr := man.writeAtomic(b.Dir); werr != nil {
			return rep, errors.Join(runErr, werr)
		}
		return rep, runErr
	}
	if err := finish(b.Dir, man); err != nil {
		return rep, err
	}
	rep.Complete = true
	return rep, nil
}

// sameRun checks that an earlier run in the folder may be resumed by this one.
func sameRun(old, cur *Header, dir string) error {
	path := filepath.Join(dir, ManifestName)
	what := ""
	switch {
	case old.Command != cur.Command:
		what = fmt.Sprintf("it was made by %q, not %q", old.Command, cur.Command)
	case old.Version != cur.Version:
		what = fmt.Sprintf("it was made by wakekit %s, this is %s", old.Version, cur.Version)
	case old.SettingsSHA256 != cur.SettingsSHA256:
		what = "the settings differ: " + settingsDiff(old.Settings, cur.Settings)
		if old.Halo != cur.Halo {
			what = fmt.Sprintf("the time window differs (%d, now %d frames each side)", old.Halo, cur.Halo)
		}
	case old.Frames != cur.Frames || old.SeriesSHA256 != cur.SeriesSHA256:
		what = fmt.Sprintf("the input series differs (%d frames then, %d now, or other names or times)", old.Frames, cur.Frames)
	case old.From != cur.From || old.To != cur.To:
		what = fmt.Sprintf("it covered frames %d..%d, this run covers %d..%d (another --shard)", old.From, old.To-1, cur.From, cur.To-1)
	case !sameTables(old.Tables, cur.Tables):
		what = "its tables differ"
	default:
		return nil
	}
	return fmt.Errorf("%s: cannot resume: %s; run again without --resume, or choose another --out folder", path, what)
}

func sameTables(a, b []Table) bool {
	if len(a) != len(b) {
		return false
	}
	for k := range a {
		if a[k] != b[k] {
			return false
		}
	}
	return true
}

// settingsDiff names the top-level settings that differ between two JSON objects.
func settingsDiff(old, cur json.RawMessage) string {
	var a, b map[string]json.RawMessage
	if json.Unmarshal(old, &a) != nil || json.Unmarshal(cur, &b) != nil {
		return fmt.Sprintf("%s then, %s now", old, cur)
	}
	var diffs []string
	keys := map[string]bool{}
	for k := range a {
		keys[k] = true
	}
	for k := range b {
		keys[k] = true
	}
	names := make([]string, 0, len(keys))
	for k := range keys {
		names = append(names, k)
	}
	sort.Strings(names)
	for _, k := range names {
		va, oka := a[k]
		vb, okb := b[k]
		if oka && okb && bytes.Equal(va, vb) {
			continue
		}
		show := func(v json.RawMessage, ok bool) string {
			if !ok {
				return "unset"
			}
			return string(v)
		}
		diffs = append(diffs, fmt.Sprintf("%s was %s, now %s", k, show(va, oka), show(vb, okb)))
	}
	if len(diffs) == 0 {
		return "they are written differently"
	}
	return strings.Join(diffs, "; ")
}

// reusable returns the old entries that are still valid: same input digest, and every
// recorded file present with its recorded size. Input digests are computed on the workers.
func reusable(ctx context.Context, s *piv.Series, old []Entry, keys *inputKeys, dir string, workers int) ([]Entry, error) {
	if len(old) == 0 {
		return nil, nil
	}
	order := make([]int, len(old))
	for a := range old {
		order[a] = a
	}
	var keep []Entry
	_, err := run(ctx, s, order, Options{Workers: workers},
		func(ctx context.Context, a int, _ Frames) (bool, error) {
			e := old[a]
			key, err := keys.key(e.Frame)
			if err != nil {
				return false, err
			}
			if key != e.InputSHA256 {
				return false, nil
			}
			for _, f := range e.Files {
				st, err := os.Stat(filepath.Join(dir, f.Name))
				if err != nil || !st.Mode().IsRegular() || st.Size() != f.Size {
					return false, nil
				}
			}
			return true, nil
		},
		func(a int, ok bool) error {
			if ok {
				keep = append(keep, old[a])
			}
			return nil
		})
	return keep, err
}

// finish writes the manifest in frame order, the tables and the command's summary.
func finish(dir string, man *Manifest) error {
	if err := man.writeAtomic(dir); err != nil {
		return err
	}
	for _, t := range man.Header.Tables {
		err := piv.WriteFileAtomic(filepath.Join(dir, t.Name), func(w io.Writer) error {
			if _, err := io.WriteString(w, t.Header+"\n"); err != nil {
				return err
			}
			for _, e := range man.Entries {
				for _, row := range e.Rows[t.Name] {
					if _, err := io.WriteString(w, row+"\n"); err != nil {
						return err
					}
				}
			}
			return nil
		})
		if err != nil {
			return err
		}
	}
	if f := finisherOf(man.Header.Command); f != nil {
		// The finisher sees the manifest as a later reader would, so its output cannot depend
		// on anything the file does not hold.
		var buf bytes.Buffer
		if err := man.encode(&buf); err != nil {
			return err
		}
		again, err := ParseManifest(filepath.Join(dir, ManifestName), &buf)
		if err != nil {
			return err
		}
		if err := f(dir, again); err != nil {
			return err
		}
	}
	return nil
}

// inputKeys computes and remembers the digest of each frame's input, and combines them over a
// frame's window.
type inputKeys struct {
	s    *piv.Series
	halo int
	mu   sync.Mutex
	own  map[int]*digestItem
}

type digestItem struct {
	once sync.Once
	d    string
	err  error
}

func newInputKeys(s *piv.Series, halo int) *inputKeys {
	return &inputKeys{s: s, halo: halo, own: map[int]*digestItem{}}
}

func (ik *inputKeys) digest(k int) (string, error) {
	ik.mu.Lock()
	it, ok := ik.own[k]
	if !ok {
		it = &digestItem{}
		ik.own[k] = it
	}
	ik.mu.Unlock()
	it.once.Do(func() { it.d, it.err = frameDigest(ik.s, k) })
	return it.d, it.err
}

// key is the input digest of frame k: SHA-256 over, for every frame j of its window
// k-halo..k+halo (clipped to the series), j, the base name, the time and the content digest.
// Content is hashed rather than size and modification time so that a copied or re-exported
// but unchanged series still resumes, and an edit that keeps size and time is still seen.
func (ik *inputKeys) key(k int) (string, error) {
	h := sha256.New()
	for j := max(0, k-ik.halo); j <= min(ik.s.Len()-1, k+ik.halo); j++ {
		d, err := ik.digest(j)
		if err != nil {
			return "", err
		}
		fmt.Fprintf(h, "%d\x00%s\x00%v\x00%s\n", j, filepath.Base(ik.s.Name(j)), ik.s.Time(j), d)
	}
	return hex.EncodeToString(h.Sum(nil)), nil
}
