package pipeline

import (
	"bufio"
	"bytes"
	"crypto/sha256"
	"encoding/hex"
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"math"
	"os"
	"path/filepath"
	"sort"
	"strings"

	"github.com/wakekit/wakekit/piv"
)

// ManifestName is the file in an output folder that records a batch run: a header line, then
// one JSON line per finished frame.
const ManifestName = "wakekit-manifest.jsonl"

// ManifestFormat identifies the manifest layout; it changes when the layout does.
const ManifestFormat = "wakekit-manifest/1"

// Limits on a manifest read from disk, checked before memory is allocated for it.
const (
	// MaxManifestBytes is the largest manifest file read (1 GiB).
	MaxManifestBytes = 1 << 30
	// MaxManifestLine is the longest line of a manifest (64 MiB).
	MaxManifestLine = 64 << 20
	// MaxFrames is the largest series a manifest may describe (ten million frames).
	MaxFrames = 10_000_000
)

// Table is a time-series CSV a batch writes into its folder: a fixed header and, for each
// frame in order, the rows that frame's stage added.
type Table struct {
	Name   string `json:"name"`   // file name, e.g. "circulation.csv"
	Header string `json:"header"` // header line(s) without the final newline
}

// Header is the first line of a manifest: what produced the run and over which frames.
type Header struct {
	Format  string `json:"format"`
	Command string `json:"command"`
	Version string `json:"version"`
	// Settings is the command's settings as JSON; SettingsSHA256 its digest together with the
	// command, version and halo. A resumed run with other settings is refused.
	Settings       json.RawMessage `json:"settings"`
	SettingsSHA256 string          `json:"settings_sha256"`
	// Frames is the length of the series and SeriesSHA256 the digest of its frame names and
	// times. Halo is the stage's window half-width.
	Frames       int    `json:"frames"`
	SeriesSHA256 string `json:"series_sha256"`
	Halo         int    `json:"halo"`
	// Tables are the time-series CSVs of the run.
	Tables []Table `json:"tables,omitempty"`
	// Shard is "K/N" for one share of a split run, empty for a whole run; the run covers
	// frames From..To-1.
	Shard string `json:"shard,omitempty"`
	From  int    `json:"from"`
	To    int    `json:"to"`
}

// File is one output file of a frame, relative to the output folder.
type File struct {
	Name   string `json:"name"`
	Size   int64  `json:"size"`
	SHA256 string `json:"sha256"`
}

// Entry records one finished frame.
type Entry struct {
	Frame int    `json:"frame"`
	Name  string `json:"name"` // base name of the frame's input
	// InputSHA256 is the digest of the content, names and times of every frame in the
	// frame's window (see InputKey).
	InputSHA256 string `json:"input_sha256"`
	Files       []File `json:"files,omitempty"`
	// Rows holds the rows the frame added to each table, without newlines.
	Rows map[string][]string `json:"rows,omitempty"`
	// Record is the frame's result for the command's summary (any JSON).
	Record json.RawMessage `json:"record,omitempty"`
}

// Manifest is a parsed manifest: the header and the finished frames in frame order.
type Manifest struct {
	Header  Header
	Entries []Entry
}

// Complete reports whether every frame From..To-1 has an entry.
func (m *Manifest) Complete() bool {
	return len(m.Entries) == m.Header.To-m.Header.From
}

// Missing returns the frames From..To-1 that have no entry.
func (m *Manifest) Missing() []int {
	have := make(map[int]bool, len(m.Entries))
	for _, e := range m.Entries {
		have[e.Frame] = true
	}
	var miss []int
	for k := m.Header.From; k < m.Header.To; k++ {
		if !have[k] {
			miss = append(miss, k)
		}
	}
	return miss
}

// ReadManifest reads the manifest of an output folder.
func ReadManifest(dir string) (*Manifest, error) {
	path := filepath.Join(dir, ManifestName)
	f, err := os.Open(path)
	if err != nil {
		return nil, err
	}
	defer f.Close()
	st, err := f.Stat()
	if err != nil {
		return nil, err
	}
	if st.Size() > MaxManifestBytes {
		return nil, piv.Errorf(path, 0, 0, "manifest of %d bytes is larger than the limit of %d bytes", st.Size(), MaxManifestBytes)
	}
	return ParseManifest(path, f)
}

// ParseManifest parses a manifest read from r; name is used in error messages. A last line
// without its newline is a write cut short by an interruption and is ignored: that frame is
// simply not finished. Entries are returned sorted by frame; a frame recorded twice keeps its
// last entry.
func ParseManifest(name string, r io.Reader) (*Manifest, error) {
	br := bufio.NewReaderSize(r, 1<<16)
	m := &Manifest{}
	byFrame := map[int]int{}
	line := 0
	haveHeader := false
	var buf []byte
	for {
		chunk, err := br.ReadSlice('\n')
		buf = append(buf, chunk...)
		if errors.Is(err, bufio.ErrBufferFull) {
			if len(buf) > MaxManifestLine {
				return nil, piv.Errorf(name, line+1, 0, "line longer than the limit of %d bytes", MaxManifestLine)
			}
			continue
		}
		if err != nil && !errors.Is(err, io.EOF) {
			return nil, piv.Errorf(name, line+1, 0, "%v", err)
		}
		if errors.Is(err, io.EOF) {
			// A trailing fragment without newline is an interrupted append.
			break
		}
		line++
		text := bytes.TrimSpace(buf)
		buf = buf[:0]
		if len(text) == 0 {
			continue
		}
		if !haveHeader {
			if err := parseHeader(name, line, text, &m.Header); err != nil {
				return nil, err
			}
			haveHeader = true
			continue
		}
		var e Entry
		if err := strictUnmarshal(text, &e); err != nil {
			return nil, piv.Errorf(name, line, 0, "cannot read frame entry: %v", err)
		}
		if err := checkEntry(&m.Header, &e); err != nil {
			return nil, piv.Errorf(name, line, 0, "%v", err)
		}
		if at, dup := byFrame[e.Frame]; dup {
			m.Entries[at] = e
			continue
		}
		byFrame[e.Frame] = len(m.Entries)
		m.Entries = append(m.Entries, e)
	}
	if !haveHeader {
		return nil, piv.Errorf(name, 0, 0, "empty manifest (no header line)")
	}
	sort.Slice(m.Entries, func(a, b int) bool { return m.Entries[a].Frame < m.Entries[b].Frame })
	return m, nil
}

func strictUnmarshal(text []byte, v any) error {
	dec := json.NewDecoder(bytes.NewReader(text))
	dec.DisallowUnknownFields()
	if err := dec.Decode(v); err != nil {
		return err
	}
	if dec.More() {
		return errors.New("extra data after the JSON object")
	}
	return nil
}

func parseHeader(name string, line int, text []byte, h *Header) error {
	if err := strictUnmarshal(text, h); err != nil {
		return piv.Errorf(name, line, 0, "cannot read manifest header: %v", err)
	}
	if h.Format != ManifestFormat {
		return piv.Errorf(name, line, 0, "manifest format %q is not %q (written by another wakekit version?)", h.Format, ManifestFormat)
	}
	switch {
	case h.Command == "":
		return piv.Errorf(name, line, 0, "manifest header names no command")
	case h.Frames < 1 || h.Frames > MaxFrames:
		return piv.Errorf(name, line, 0, "manifest says the series has %d frames; expected 1 to %d", h.Frames, MaxFrames)
	case h.From < 0 || h.To > h.Frames || h.From > h.To:
		return piv.Errorf(name, line, 0, "manifest frame range %d..%d is outside the series of %d frames", h.From, h.To, h.Frames)
	case h.Halo < 0 || h.Halo > h.Frames:
		return piv.Errorf(name, line, 0, "manifest halo %d is out of range", h.Halo)
	}
	if h.Shard != "" {
		sh, err := ParseShard(h.Shard)
		if err != nil {
			return piv.Errorf(name, line, 0, "%v", err)
		}
		if from, to, _ := sh.Range(h.Frames); from != h.From || to != h.To {
			return piv.Errorf(name, line, 0, "shard %s of %d frames is frames %d..%d, not %d..%d", h.Shard, h.Frames, from, to, h.From, h.To)
		}
	}
	seen := map[string]bool{}
	for _, t := range h.Tables {
		if err := checkLocalName(t.Name); err != nil {
			return piv.Errorf(name, line, 0, "table: %v", err)
		}
		if seen[t.Name] {
			return piv.Errorf(name, line, 0, "table %q listed twice", t.Name)
		}
		seen[t.Name] = true
	}
	return nil
}

func checkEntry(h *Header, e *Entry) error {
	if e.Frame < h.From || e.Frame >= h.To {
		return fmt.Errorf("frame %d is outside this run's frames %d..%d", e.Frame, h.From, h.To-1)
	}
	for _, f := range e.Files {
		if err := checkLocalName(f.Name); err != nil {
			return fmt.Errorf("frame %d: %v", e.Frame, err)
		}
		if f.Size < 0 {
			return fmt.Errorf("frame %d: file %q has negative size %d", e.Frame, f.Name, f.Size)
		}
	}
	for t := range e.Rows {
		found := false
		for _, ht := range h.Tables {
			found = found || ht.Name == t
		}
		if !found {
			return fmt.Errorf("frame %d: rows for table %q, which the header does not list", e.Frame, t)
		}
	}
	return nil
}

// checkLocalName refuses output names that would leave the output folder or clash with the
// manifest.
func checkLocalName(name string) error {
	if name == "" || !filepath.IsLocal(name) || strings.ContainsAny(name, "\\\x00") {
		return fmt.Errorf("output name %q must be a relative path inside the output folder", name)
	}
	if filepath.Clean(name) == ManifestName {
		return fmt.Errorf("output name %q is reserved for the manifest", name)
	}
	return nil
}

// encode writes the manifest: header line, then one line per entry.
func (m *Manifest) encode(w io.Writer) error {
	if err := writeJSONLine(w, m.Header); err != nil {
		return err
	}
	for _, e := range m.Entries {
		if err := writeJSONLine(w, e); err != nil {
			return err
		}
	}
	return nil
}

func writeJSONLine(w io.Writer, v any) error {
	b, err := json.Marshal(v)
	if err != nil {
		return err
	}
	b = append(b, '\n')
	_, err = w.Write(b)
	return err
}

// writeAtomic replaces the folder's manifest with m.
func (m *Manifest) writeAtomic(dir string) error {
	return piv.WriteFileAtomic(filepath.Join(dir, ManifestName), m.encode)
}

// FileDigest returns the SHA-256 of a file's content in hex. Commands use it to put the
// content of auxiliary inputs (mask or polygon files) into their settings, so a changed file
// is not silently reused by --resume.
func FileDigest(path string) (string, error) {
	f, err := os.Open(path)
	if err != nil {
		return "", err
	}
	defer f.Close()
	h := sha256.New()
	if _, err := io.Copy(h, f); err != nil {
		return "", fmt.Errorf("%s: %v", path, err)
	}
	return hex.EncodeToString(h.Sum(nil)), nil
}

// frameDigest is the digest of one frame's input: the SHA-256 of its file content when the
// frame name is a readable file, else of its name (frames made in memory).
func frameDigest(s *piv.Series, k int) (string, error) {
	name := s.Name(k)
	if st, err := os.Stat(name); err == nil && st.Mode().IsRegular() {
		return FileDigest(name)
	}
	sum := sha256.Sum256([]byte("name:" + name))
	return hex.EncodeToString(sum[:]), nil
}

// seriesDigest is the digest of a series' frame base names and times.
func seriesDigest(s *piv.Series) string {
	h := sha256.New()
	fmt.Fprintf(h, "%d\n", s.Len())
	for k := 0; k < s.Len(); k++ {
		fmt.Fprintf(h, "%s\x00%016x\n", filepath.Base(s.Name(k)), math.Float64bits(s.Time(k)))
	}
	return hex.EncodeToString(h.Sum(nil))
}

// settingsDigest is the digest of everything besides the frames that a run's results depend on.
func settingsDigest(command, version string, halo int, settings []byte) string {
	h := sha256.New()
	fmt.Fprintf(h, "%s\x00%s\x00%d\x00", command, version, halo)
	h.Write(settings)
	return hex.EncodeToString(h.Sum(nil))
}
