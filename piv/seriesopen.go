package piv

import (
	"bufio"
	"fmt"
	"io"
	"math"
	"os"
	"path/filepath"
	"slices"
	"strconv"
	"strings"
	"sync"
)

// maxIndexFrames limits the frames of one frame index.
const maxIndexFrames = 10_000_000

// OpenSeries opens a series from command-line arguments. Each argument is a file, a glob
// ("run3/frame_*.csv"), a folder (every *.csv and *.csv.gz in it; a frame index among them is
// used instead of the listing) or a frame index CSV, recognised by a header naming a file
// column. Files from one glob or folder are taken in natural order (frame_2 before frame_10).
// Frame times come from the index, else from k*opt.DT + opt.T0; without either, more than one
// frame is an error asking for --dt (a single frame gets time opt.T0). With opt.PlainGrid the
// arguments are the u and v matrix files instead (see OpenPlainSeries).
//
// Frames are read lazily; every frame must be on the grid of frame 0, and loading one that is
// not is an error naming its file.
func OpenSeries(args []string, opt ReadOptions) (*Series, error) {
	names, times, l, err := openSeries(args, opt)
	if err != nil {
		return nil, err
	}
	return NewSeries(names, times, l.load)
}

// OpenSeriesInfo opens a series like OpenSeries and reads its first frame at once, returning it
// with a description of how its file was read (for "wakekit inspect").
func OpenSeriesInfo(args []string, opt ReadOptions) (*Series, *Field, *FileInfo, error) {
	names, times, l, err := openSeries(args, opt)
	if err != nil {
		return nil, nil, nil, err
	}
	s, err := NewSeries(names, times, l.load)
	if err != nil {
		return nil, nil, nil, err
	}
	f, info, err := l.read(0)
	if err != nil {
		return nil, nil, nil, err
	}
	l.mu.Lock()
	if l.ref == nil {
		g := f.Grid
		l.ref = &g
	}
	l.mu.Unlock()
	f.Time = s.Time(0)
	return s, f, info, nil
}

func openSeries(args []string, opt ReadOptions) ([]string, []float64, *gridCheckLoader, error) {
	if opt.PlainGrid {
		return openPlainSeries(args, opt)
	}
	if len(args) == 0 {
		return nil, nil, nil, fmt.Errorf("no input files given")
	}
	var files []string
	var times []float64
	timed, untimed := 0, 0
	for _, a := range args {
		fs, ts, err := expandArg(a)
		if err != nil {
			return nil, nil, nil, err
		}
		if ts != nil {
			timed += len(fs)
			times = append(times, ts...)
		} else {
			untimed += len(fs)
		}
		files = append(files, fs...)
	}
	switch {
	case timed > 0 && untimed > 0:
		return nil, nil, nil, fmt.Errorf("%d frames have times from a frame index and %d have none; give all frames through the index, or none and use --dt", timed, untimed)
	case timed == 0:
		var err error
		if times, err = seriesTimes(len(files), opt); err != nil {
			return nil, nil, nil, err
		}
	}
	l := &gridCheckLoader{
		read: func(k int) (*Field, *FileInfo, error) { return ReadFileInfo(files[k], opt) },
		name: func(k int) string { return files[k] }}
	return files, times, l, nil
}

// seriesTimes returns k*DT + T0 for n frames, or an error when n > 1 and DT is not set.
func seriesTimes(n int, opt ReadOptions) ([]float64, error) {
	if n > 1 && !(opt.DT > 0) {
		return nil, fmt.Errorf("%d frames but no frame times: give the time between frames with --dt, or a frame index with a time column", n)
	}
	if !isFinite(opt.DT) || !isFinite(opt.T0) {
		return nil, fmt.Errorf("frame timing (dt %g s, t0 %g s) must be finite", opt.DT, opt.T0)
	}
	times := make([]float64, n)
	for k := range times {
		times[k] = opt.T0 + float64(k)*opt.DT
	}
	return times, nil
}

// gridCheckLoader reads frames and checks that each is on the grid of frame 0.
type gridCheckLoader struct {
	read func(k int) (*Field, *FileInfo, error)
	name func(k int) string

	mu  sync.Mutex
	ref *Grid
}

func (l *gridCheckLoader) load(k int) (*Field, error) {
	f, _, err := l.read(k)
	if err != nil {
		return nil, err
	}
	l.mu.Lock()
	defer l.mu.Unlock()
	if k == 0 {
		if l.ref == nil {
			g := f.Grid
			l.ref = &g
		}
		return f, nil
	}
	if l.ref == nil {
		f0, _, err := l.read(0)
		if err != nil {
			return nil, err
		}
		g := f0.Grid
		l.ref = &g
	}
	if !f.Grid.Same(*l.ref) {
		return nil, Errorf(l.name(k), 0, 0, "grid (%v) differs from the grid of the first frame %s (%v); all frames of a series must share one grid",
			f.Grid, l.name(0), *l.ref)
	}
	return f, nil
}

// expandArg turns one argument into files and, for a frame index with a time column, times.
func expandArg(a string) (files []string, times []float64, err error) {
	st, statErr := os.Stat(a)
	switch {
	case statErr == nil && st.IsDir():
		return expandFolder(a)
	case statErr == nil:
		if isFrameIndex(a) {
			return ReadFrameIndex(a)
		}
		return []string{a}, nil, nil
	case strings.ContainsAny(a, "*?["):
		m, err := filepath.Glob(a)
		if err != nil {
			return nil, nil, fmt.Errorf("%s: bad pattern: %v", a, err)
		}
		m = slices.DeleteFunc(m, func(p string) bool { st, err := os.Stat(p); return err != nil || st.IsDir() })
		if len(m) == 0 {
			return nil, nil, fmt.Errorf("%s: no files match", a)
		}
		SortNatural(m)
		return m, nil, nil
	}
	return nil, nil, Errorf(a, 0, 0, "cannot open: no such file or folder")
}

// expandFolder lists the *.csv and *.csv.gz files of a folder in natural order. When exactly one
// of them is a frame index, the index is used instead.
func expandFolder(dir string) ([]string, []float64, error) {
	ents, err := os.ReadDir(dir)
	if err != nil {
		return nil, nil, Errorf(dir, 0, 0, "cannot list the folder: %v", err)
	}
	var files, index []string
	for _, e := range ents {
		n := strings.ToLower(e.Name())
		if e.IsDir() || strings.HasPrefix(n, ".") || !(strings.HasSuffix(n, ".csv") || strings.HasSuffix(n, ".csv.gz")) {
			continue
		}
		p := filepath.Join(dir, e.Name())
		if isFrameIndex(p) {
			index = append(index, p)
			continue
		}
		files = append(files, p)
	}
	if len(index) == 1 {
		return ReadFrameIndex(index[0])
	}
	if len(files) == 0 {
		return nil, nil, Errorf(dir, 0, 0, "folder holds no *.csv or *.csv.gz files")
	}
	SortNatural(files)
	return files, nil, nil
}

// SortNatural sorts file names so that runs of digits compare by value: frame_2 before frame_10.
func SortNatural(names []string) {
	slices.SortStableFunc(names, NaturalCompare)
}

// NaturalCompare compares two strings with runs of decimal digits compared as numbers.
func NaturalCompare(a, b string) int {
	i, j := 0, 0
	for i < len(a) && j < len(b) {
		ca, cb := a[i], b[j]
		if isDigit(ca) && isDigit(cb) {
			si, sj := i, j
			for i < len(a) && isDigit(a[i]) {
				i++
			}
			for j < len(b) && isDigit(b[j]) {
				j++
			}
			da := strings.TrimLeft(a[si:i], "0")
			db := strings.TrimLeft(b[sj:j], "0")
			if len(da) != len(db) {
				return len(da) - len(db)
			}
			if c := strings.Compare(da, db); c != 0 {
				return c
			}
			continue
		}
		if ca != cb {
			return int(ca) - int(cb)
		}
		i++
		j++
	}
	return (len(a) - i) - (len(b) - j)
}

func isDigit(c byte) bool { return c >= '0' && c <= '9' }

var indexFileNames = map[string]bool{"file": true, "filename": true, "file name": true, "path": true, "frame file": true}

// isFrameIndex reports whether the first line of a CSV file names a file column.
func isFrameIndex(path string) bool {
	r, _, _, c, err := openInput(path, ReadOptions{})
	if err != nil {
		return false
	}
	defer c.Close()
	cr := &csvReader{name: path, br: newSmallReader(r)}
	for {
		b, err := cr.nextLine()
		if err != nil {
			return false
		}
		if isComment(b) {
			continue
		}
		cr.delim = detectDelim(b)
		for _, s := range cr.splitAll(b) {
			n, _ := SplitHeader(s)
			if indexFileNames[strings.ToLower(n)] {
				return true
			}
		}
		return false
	}
}

// ReadFrameIndex reads a frame index CSV: a header with a file column (file, filename or path)
// and optionally a time column (time or t, with a unit such as "time [ms]"; seconds by default)
// and a frame-number column, which is ignored. Relative file paths are taken from the index's
// folder. times is nil when the index has no time column.
func ReadFrameIndex(path string) (files []string, times []float64, err error) {
	r, _, _, c, err := openInput(path, ReadOptions{})
	if err != nil {
		return nil, nil, err
	}
	defer c.Close()
	return readFrameIndex(r, path)
}

func readFrameIndex(r io.Reader, path string) (files []string, times []float64, err error) {
	cr := &csvReader{name: path, br: newSmallReader(r)}
	fileCol, timeCol, ncell := -1, -1, 0
	tscale := 1.0
	dir := filepath.Dir(path)
	for {
		b, err := cr.nextLine()
		if err == io.EOF {
			break
		}
		if err != nil {
			return nil, nil, err
		}
		if isComment(b) {
			continue
		}
		if fileCol < 0 {
			if bytes0(b) {
				return nil, nil, cr.errf(cr.line, 0, "holds binary data, not a frame index")
			}
			cr.delim = detectDelim(b)
			cells := cr.splitAll(b)
			ncell = len(cells)
			for k, s := range cells {
				n, unit := SplitHeader(s)
				n = strings.ToLower(n)
				switch {
				case indexFileNames[n] && fileCol < 0:
					fileCol = k
				case (n == "time" || n == "t") && timeCol < 0:
					timeCol = k
					if tscale, err = TimeScale(unit); err != nil {
						return nil, nil, cr.errf(cr.line, k+1, "column %q: %v", s, err)
					}
				}
			}
			if fileCol < 0 {
				return nil, nil, cr.errf(cr.line, 0, "a frame index needs a header with a file column (found %s)", quoteList(cells))
			}
			continue
		}
		cells := cr.splitAll(b)
		if len(cells) != ncell {
			return nil, nil, cr.errf(cr.line, min(len(cells), ncell), "row has %d columns but the header has %d", len(cells), ncell)
		}
		if len(files) >= maxIndexFrames {
			return nil, nil, cr.errf(cr.line, 0, "more than %d frames in one index", maxIndexFrames)
		}
		f := cells[fileCol]
		if f == "" {
			return nil, nil, cr.errf(cr.line, fileCol+1, "the file name is empty")
		}
		if !filepath.IsAbs(f) {
			f = filepath.Join(dir, f)
		}
		files = append(files, f)
		if timeCol >= 0 {
			t, ok := parseNumber([]byte(cells[timeCol]))
			if !ok || math.IsNaN(t) || math.IsInf(t, 0) {
				return nil, nil, cr.errf(cr.line, timeCol+1, "column time: cannot read %s as a finite time", strconv.Quote(cells[timeCol]))
			}
			times = append(times, t*tscale)
		}
	}
	if fileCol < 0 {
		return nil, nil, cr.errf(0, 0, "empty frame index: no header and no frames")
	}
	if len(files) == 0 {
		return nil, nil, cr.errf(0, 0, "frame index lists no frames")
	}
	return files, times, nil
}

func bytes0(b []byte) bool {
	for _, c := range b {
		if c == 0 {
			return true
		}
	}
	return false
}

func newSmallReader(r io.Reader) *bufio.Reader { return bufio.NewReaderSize(r, 1<<12) }
