// Package pipeline streams a series of frames through a processing stage: a bounded pool of
// workers, a sliding window for stages that need neighbouring frames, results delivered in
// frame order, a progress line on stderr, and deterministic shards of the frames.
package pipeline

import (
	"context"
	"fmt"
	"runtime"
	"sync"

	"github.com/wakekit/wakekit/piv"
)

// Options configures a run.
type Options struct {
	// Workers is the number of frames processed at once (0 means all cores).
	Workers int
	// Frames lists the frame indices to process, in order (nil means all frames).
	Frames []int
}

// Frames gives a stage access to the frames around the one it processes.
type Frames interface {
	// Frame returns frame k of the series (k may be any valid index). Callers must not modify it.
	Frame(k int) (*piv.Field, error)
	// Len returns the number of frames in the series.
	Len() int
	// Time returns the time of frame k.
	Time(k int) float64
}

type seriesFrames struct{ s *piv.Series }

func (f seriesFrames) Frame(k int) (*piv.Field, error) { return f.s.Frame(k) }
func (f seriesFrames) Len() int                        { return f.s.Len() }
func (f seriesFrames) Time(k int) float64              { return f.s.Time(k) }

// Run processes the frames of s with proc on a pool of workers and hands each result to emit in
// frame order (emit runs on the calling goroutine). It stops at the first error, or when ctx is
// cancelled, and returns how many frames were emitted.
func Run[R any](ctx context.Context, s *piv.Series, opt Options,
	proc func(ctx context.Context, k int, frames Frames) (R, error),
	emit func(k int, r R) error) (int, error) {
	workers := opt.Workers
	if workers <= 0 {
		workers = runtime.NumCPU()
	}
	order := opt.Frames
	if order == nil {
		order = make([]int, s.Len())
		for k := range order {
			order[k] = k
		}
	}
	ctx, cancel := context.WithCancel(ctx)
	defer cancel()
	type result struct {
		r   R
		err error
	}
	// One buffered channel per job keeps the output order; at most `workers` jobs are in flight
	// beyond the one being emitted, which bounds memory.
	slots := make(chan chan result, workers)
	frames := seriesFrames{s}
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
			ch := make(chan result, 1)
			select {
			case <-ctx.Done():
				<-sem
				return
			case slots <- ch:
			}
			wg.Add(1)
			go func(k int) {
				defer wg.Done()
				defer func() { <-sem }()
				r, err := proc(ctx, k, frames)
				ch <- result{r, err}
			}(k)
		}
	}()
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
			continue
		}
		done++
	}
	wg.Wait()
	if firstErr == nil && ctx.Err() != nil && done < len(order) {
		firstErr = fmt.Errorf("stopped after %d of %d frames: %w", done, len(order), ctx.Err())
	}
	return done, firstErr
}
