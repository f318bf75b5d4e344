// Package pipeline streams a series of frames through a processing stage: a bounded pool of
// workers, a sliding window for stages that need neighbouring frames, results delivered in
// frame order, a progress line on stderr, and deterministic shards of the frames.
//
// Two entry points share one engine. Run hands each result to a callback in frame order; it
// suits commands that keep their own outputs. RunBatch writes into an output folder with a
// manifest, so a run can be interrupted and resumed, split into shards for a cluster and the
// shards merged (Merge) into a result identical byte for byte to a single-machine run.
//
// Memory: frames are read lazily through a bounded cache shared by the workers, so at most
// about 2*Workers + 2*Halo + 1 frames are held at once whatever the length of the series, plus
// at most Workers + Lookahead results waiting to be emitted in order.
package pipeline

import (
	"context"
	"errors"
	"fmt"
	"io"
	"runtime"
	"sync"
	"time"

	"github.com/wakekit/wakekit/piv"
)

// Options configures a run.
type Options struct {
	// Workers is the number of frames processed at once (0 means all cores).
	Workers int
	// Frames lists the frame indices to process, in order (nil means all frames, or the
	// shard's share of them when Shard is set).
	Frames []int
	// Halo is the number of neighbouring frames on each side a stage reads: the stage for
	// frame k may read frames k-Halo..k+Halo (clipped to the series). With Halo > 0 (and
	// always in RunBatch) reading outside that window is an error, so a frame's result is
	// known to depend only on its window. With Halo = 0, Run lets a stage read any frame.
	Halo int
	// Shard restricts the run to a contiguous share of the frames (zero value: all frames).
	// Halo frames outside the share are read but not processed.
	Shard Shard
	// Resume makes RunBatch skip frames whose outputs the folder's manifest records as
	// complete for the same inputs and settings. Run ignores it.
	Resume bool
	// Progress, when not nil, receives one progress line redrawn in place (frames done,
	// rate, time left). Commands pass stderr only when it is a terminal and not --quiet.
	Progress io.Writer
	// Label starts the progress line (usually the command name).
	Label string
	// Lookahead is how many finished results may wait to be emitted in frame order (0 means
	// Workers). A deeper queue lets the other workers go on while one frame takes long (a
	// slow disk write, a worker descheduled on a loaded machine); it costs memory only for the
	// results, since at most Workers frames are processed at once. RunBatch, whose results
	// are small manifest entries, uses 16 x Workers.
	Lookahead int

	// strictWindow enforces the halo even when it is 0 (RunBatch sets it).
	strictWindow bool
}

// Frames gives a stage access to the frames around the one it processes.
type Frames interface {
	// Frame returns frame k of the series (k may be any index inside the stage's window).
	// Callers must not modify it: it is shared with other workers.
	Frame(k int) (*piv.Field, error)
	// Len returns the number of frames in the series.
	Len() int
	// Time returns the time of frame k.
	Time(k int) float64
}

// ErrOutsideWindow is returned (wrapped) when a stage reads a frame outside its declared halo.
var ErrOutsideWindow = errors.New("frame outside the stage's window")

// window is the view of the shared cache one job gets: frames k-halo..k+halo.
type window struct {
	c      *frameCache
	k      int
	halo   int
	strict bool
}

func (w window) Frame(j int) (*piv.Field, error) {
	if w.strict && (j < w.k-w.halo || j > w.k+w.halo) {
		return nil, fmt.Errorf("stage for frame %d read frame %d: %w (halo %d)", w.k, j, ErrOutsideWindow, w.halo)
	}
	return w.c.get(j)
}
func (w window) Len() int           { return w.c.s.Len() }
func (w window) Time(j int) float64 { return w.c.s.Time(j) }

// frameCache holds recently read frames so that neighbouring jobs share them and each file
// is read about once. Loading happens outside the lock, so workers read files in parallel
// (piv.Window serialises its loads, which would make reading the bottleneck).
type frameCache struct {
	s      *piv.Series
	cap    int
	halo   int
	mu     sync.Mutex
	tick   uint64
	items  map[int]*cacheItem
	active map[int]int // jobs in progress, by frame
}

type cacheItem struct {
	ready chan struct{}
	f     *piv.Field
	err   error
	used  uint64
}

func newFrameCache(s *piv.Series, capacity, halo int) *frameCache {
	if capacity < 1 {
		capacity = 1
	}
	return &frameCache{s: s, cap: capacity, halo: halo,
		items: make(map[int]*cacheItem, capacity+1), active: map[int]int{}}
}

// begin and end bracket the job for frame k, so the frames of its window are not evicted
// while it runs.
func (c *frameCache) begin(k int) {
	c.mu.Lock()
	c.active[k]++
	c.mu.Unlock()
}

func (c *frameCache) end(k int) {
	c.mu.Lock()
	if c.active[k]--; c.active[k] <= 0 {
		delete(c.active, k)
	}
	c.mu.Unlock()
}

// inUse reports whether frame j lies in the window of a running job.
func (c *frameCache) inUse(j int) bool {
	for k := range c.active {
		if j >= k-c.halo && j <= k+c.halo {
			return true
		}
	}
	return false
}

func (c *frameCache) get(k int) (*piv.Field, error) {
	if k < 0 || k >= c.s.Len() {
		return nil, fmt.Errorf("frame %d is outside the series of %d frames", k, c.s.Len())
	}
	c.mu.Lock()
	c.tick++
	if it, ok := c.items[k]; ok {
		it.used = c.tick
		c.mu.Unlock()
		<-it.ready
		return it.f, it.err
	}
	it := &cacheItem{ready: make(chan struct{}), used: c.tick}
	c.items[k] = it
	if len(c.items) > c.cap {
		c.evictLocked()
	}
	c.mu.Unlock()
	it.f, it.err = c.s.Frame(k)
	close(it.ready)
	return it.f, it.err
}

// prefetch starts loading, each in a goroutine of its own counted by wg, the frames of job k's
// window other than k itself that are not in the cache yet. Without it, jobs that ask for
// their window's frames in order queue behind one another's loads (job k+1 waits for frame
// k+1, which job k is reading, before it asks for k+2), and reading the files, often the
// larger part of the work, runs on one core whatever the number of workers.
func (c *frameCache) prefetch(k int, wg *sync.WaitGroup) {
	lo, hi := max(k-c.halo, 0), min(k+c.halo, c.s.Len()-1)
	var missing []int
	c.mu.Lock()
	for j := lo; j <= hi; j++ {
		if _, ok := c.items[j]; !ok && j != k {
			missing = append(missing, j)
		}
	}
	c.mu.Unlock()
	for _, j := range missing {
		wg.Add(1)
		go func(j int) {
			defer wg.Done()
			c.get(j) // an error stays in the cache for the job that asks for the frame
		}(j)
	}
}

// evictLocked drops the least recently used frame that has finished loading and lies in no
// running job's window. When every frame is in use the cache grows for a moment; the running
// jobs' windows bound it (workers x (2*halo+1) frames).
func (c *frameCache) evictLocked() {
	old, oldUse := -1, uint64(0)
	for k, it := range c.items {
		select {
		case <-it.ready:
		default:
			continue
		}
		if c.inUse(k) {
			continue
		}
		if old < 0 || it.used < oldUse {
			old, oldUse = k, it.used
		}
	}
	if old >= 0 {
		delete(c.items, old)
	}
}

// workerCount resolves Options.Workers.
func workerCount(w int) int {
	if w <= 0 {
		return runtime.NumCPU()
	}
	return w
}

// order resolves the frames a run processes.
func (opt Options) order(n int) ([]int, error) {
	if opt.Frames != nil {
		for _, k := range opt.Frames {
			if k < 0 || k >= n {
				return nil, fmt.Errorf("frame %d is outside the series of %d frames", k, n)
			}
		}
		return opt.Frames, nil
	}
	from, to, err := opt.Shard.Range(n)
	if err != nil {
		return nil, err
	}
	order := make([]int, to-from)
	for a := range order {
		order[a] = from + a
	}
	return order, nil
}

// Run processes the frames of s with proc on a pool of workers and hands each result to emit in
// frame order (emit runs on the calling goroutine). It stops at the first error, or when ctx is
// cancelled, and returns how many frames were emitted. Frames already being processed when ctx
// is cancelled are finished and emitted, so what was emitted is always a prefix of the order.
func Run[R any](ctx context.Context, s *piv.Series, opt Options,
	proc func(ctx context.Context, k int, frames Frames) (R, error),
	emit func(k int, r R) error) (int, error) {
	order, err := opt.order(s.Len())
	if err != nil {
		return 0, err
	}
	return run(ctx, s, order, opt, proc, emit)
}

func run[R any](ctx context.Context, s *piv.Series, order []int, opt Options,
	proc func(ctx context.Context, k int, frames Frames) (R, error),
	emit func(k int, r R) error) (int, error) {
	workers := workerCount(opt.Workers)
	halo := max(opt.Halo, 0)
	// Jobs not yet emitted span at most 2*workers frames (running plus waiting in order), each
	// reading halo frames either side.
	cache := newFrameCache(s, 2*workers+2*halo+1, halo)
	strict := halo > 0 || opt.strictWindow
	ctx, cancel := context.WithCancel(ctx)
	defer cancel()
	// Cancellation from the caller (a signal) stops new frames from starting, but frames in
	// progress are finished; a stage error cancels work ctx so the others stop early.
	workCtx, cancelWork := context.WithCancel(context.WithoutCancel(ctx))
	defer cancelWork()
	type result struct {
		r   R
		err error
	}
	// One buffered channel per job keeps the output order; at most `workers` jobs run at once
	// and at most `lookahead` more wait to be emitted, which bounds memory.
	lookahead := opt.Lookahead
	if lookahead <= 0 {
		lookahead = workers
	}
	slots := make(chan chan result, lookahead)
	var wg sync.WaitGroup
	sem := make(chan struct{}, workers)
	go func() {
		defer close(slots)
		for _, k := range order {
			select {
			case <-ctx.Done():
				return
			case sem <- struct{}{}:
			}
			if ctx.Err() != nil {
				<-sem
				return
			}
			ch := make(chan result, 1)
			select {
			case <-ctx.Done():
				<-sem
				return
			case slots <- ch:
			}
			wg.Add(1)
			// Registered before the goroutine starts: goroutines may begin out of order.
			cache.begin(k)
			go func(k int) {
				defer wg.Done()
				defer func() { <-sem }()
				defer cache.end(k)
				if halo > 0 {
					cache.prefetch(k, &wg)
				}
				r, err := proc(workCtx, k, window{c: cache, k: k, halo: halo, strict: strict})
				ch <- result{r, err}
			}(k)
		}
	}()
	prog := newProgress(opt.Progress, opt.Label, len(order))
	done := 0
	var firstErr error
	for ch := range slots {
		res := <-ch
		if firstErr != nil {
			continue
		}
		if res.err == nil {
			res.err = emit(order[done], res.r)
		}
		if res.err != nil {
			firstErr = res.err
			cancel()
			cancelWork()
			continue
		}
		done++
		prog.update(done)
	}
	wg.Wait()
	prog.finish(done)
	if firstErr == nil && done < len(order) {
		cause := ctx.Err()
		if cause == nil {
			cause = context.Canceled
		}
		firstErr = &StoppedError{Done: done, Total: len(order), Err: cause}
	}
	return done, firstErr
}

// StoppedError reports a run stopped by cancellation (a signal) before all frames were done.
type StoppedError struct {
	Done, Total int
	Err         error
}

// Error implements error.
func (e *StoppedError) Error() string {
	if errors.Is(e.Err, context.Canceled) {
		return fmt.Sprintf("stopped after %d of %d frames: interrupted", e.Done, e.Total)
	}
	return fmt.Sprintf("stopped after %d of %d frames: %v", e.Done, e.Total, e.Err)
}

// Unwrap returns the cancellation cause.
func (e *StoppedError) Unwrap() error { return e.Err }

// progress draws one line, redrawn in place at most a few times a second.
type progress struct {
	w      io.Writer
	label  string
	total  int
	start  time.Time
	last   time.Time
	drawn  bool
	minGap time.Duration
}

func newProgress(w io.Writer, label string, total int) *progress {
	if label == "" {
		label = "frames"
	}
	now := time.Now()
	return &progress{w: w, label: label, total: total, start: now, minGap: 200 * time.Millisecond}
}

func (p *progress) update(done int) {
	if p.w == nil {
		return
	}
	now := time.Now()
	if done < p.total && now.Sub(p.last) < p.minGap {
		return
	}
	p.last = now
	fmt.Fprintf(p.w, "\r%s\x1b[K", ProgressLine(p.label, done, p.total, now.Sub(p.start)))
	p.drawn = true
}

func (p *progress) finish(done int) {
	if p.w == nil || !p.drawn {
		return
	}
	fmt.Fprintln(p.w)
}

// ProgressLine formats the progress line: frames done of total, rate and estimated time left,
// e.g. "derive: 120/2000 frames, 35.2 frames/s, 53 s left".
func ProgressLine(label string, done, total int, elapsed time.Duration) string {
	line := fmt.Sprintf("%s: %d/%d frames", label, done, total)
	sec := elapsed.Seconds()
	if done == 0 || sec <= 0 {
		return line
	}
	rate := float64(done) / sec
	line += fmt.Sprintf(", %.3g frames/s", rate)
	if done < total {
		left := time.Duration(float64(total-done) / rate * float64(time.Second))
		line += ", " + shortDuration(left) + " left"
	}
	return line
}

func shortDuration(d time.Duration) string {
	s := int(d.Round(time.Second) / time.Second)
	switch {
	case s < 60:
		return fmt.Sprintf("%d s", s)
	case s < 3600:
		return fmt.Sprintf("%d min %02d s", s/60, s%60)
	}
	return fmt.Sprintf("%d h %02d min", s/3600, s/60%60)
}
