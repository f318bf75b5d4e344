package piv

import (
	"fmt"
	"math"
	"sync"
)

// Loader reads frame k of a series.
type Loader func(k int) (*Field, error)

// Series is an ordered sequence of frames with their times, read lazily: it holds the frame
// names and times, and loads a frame only when asked. Frame times increase strictly.
type Series struct {
	names []string
	times []float64
	load  Loader
}

// NewSeries returns a series of len(names) frames with the given times, loaded by load.
// It checks that the times are finite and strictly increasing.
func NewSeries(names []string, times []float64, load Loader) (*Series, error) {
	if len(names) != len(times) {
		return nil, fmt.Errorf("series has %d frame names and %d times", len(names), len(times))
	}
	if len(names) == 0 {
		return nil, fmt.Errorf("series has no frames")
	}
	for k, t := range times {
		if !isFinite(t) {
			return nil, fmt.Errorf("%s: frame time %g is not a finite number", names[k], t)
		}
		if k > 0 && !(t > times[k-1]) {
			return nil, fmt.Errorf("%s: frame time %g s is not after the previous frame's %g s (%s); frames must be in time order",
				names[k], t, times[k-1], names[k-1])
		}
	}
	return &Series{names: names, times: times, load: load}, nil
}

// MemorySeries wraps frames already in memory (for tests and synthetic data). Frames are
// returned as they are, not copied; the times are the frames' Time fields.
func MemorySeries(frames []*Field) (*Series, error) {
	names := make([]string, len(frames))
	times := make([]float64, len(frames))
	for k, f := range frames {
		names[k] = f.Name()
		times[k] = f.Time
	}
	return NewSeries(names, times, func(k int) (*Field, error) { return frames[k], nil })
}

// Len returns the number of frames.
func (s *Series) Len() int { return len(s.names) }

// Time returns the time of frame k [s].
func (s *Series) Time(k int) float64 { return s.times[k] }

// Times returns a copy of all frame times.
func (s *Series) Times() []float64 { return append([]float64(nil), s.times...) }

// Name returns the name (usually the file) of frame k.
func (s *Series) Name(k int) string { return s.names[k] }

// Frame loads frame k. Its Time is set to the series time.
func (s *Series) Frame(k int) (*Field, error) {
	if k < 0 || k >= len(s.names) {
		return nil, fmt.Errorf("frame %d is outside the series of %d frames", k, len(s.names))
	}
	f, err := s.load(k)
	if err != nil {
		return nil, err
	}
	f.Time = s.times[k]
	return f, nil
}

// Sub returns the series restricted to frames [from, to).
func (s *Series) Sub(from, to int) (*Series, error) {
	if from < 0 || to > s.Len() || from >= to {
		return nil, fmt.Errorf("frame range %d..%d is outside the series of %d frames", from, to, s.Len())
	}
	return &Series{names: s.names[from:to], times: s.times[from:to],
		load: func(k int) (*Field, error) { return s.load(k + from) }}, nil
}

// MeanDT returns the mean frame interval (NaN for a single frame).
func (s *Series) MeanDT() float64 {
	if len(s.times) < 2 {
		return math.NaN()
	}
	return (s.times[len(s.times)-1] - s.times[0]) / float64(len(s.times)-1)
}

// Window is a sliding-window reader over a series: it keeps at most Cap frames in memory and
// drops the oldest-used frame when a new one is needed. It is safe for concurrent use.
type Window struct {
	s     *Series
	cap   int
	mu    sync.Mutex
	cache map[int]*Field
	order []int // least recently used first
}

// NewWindow returns a window over s that holds at most capacity frames (at least 1).
func NewWindow(s *Series, capacity int) *Window {
	if capacity < 1 {
		capacity = 1
	}
	return &Window{s: s, cap: capacity, cache: make(map[int]*Field, capacity)}
}

// Frame returns frame k, loading it if it is not held. Callers must not modify it.
func (w *Window) Frame(k int) (*Field, error) {
	w.mu.Lock()
	defer w.mu.Unlock()
	if f, ok := w.cache[k]; ok {
		w.touch(k)
		return f, nil
	}
	f, err := w.s.Frame(k)
	if err != nil {
		return nil, err
	}
	if len(w.cache) >= w.cap {
		old := w.order[0]
		w.order = w.order[1:]
		delete(w.cache, old)
	}
	w.cache[k] = f
	w.order = append(w.order, k)
	return f, nil
}

// Held returns how many frames the window holds now.
func (w *Window) Held() int {
	w.mu.Lock()
	defer w.mu.Unlock()
	return len(w.cache)
}

func (w *Window) touch(k int) {
	for a, v := range w.order {
		if v == k {
			copy(w.order[a:], w.order[a+1:])
			w.order[len(w.order)-1] = k
			return
		}
	}
}
