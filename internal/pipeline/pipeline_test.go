package pipeline

import (
	"context"
	"errors"
	"fmt"
	"math/rand/v2"
	"strings"
	"sync/atomic"
	"testing"
	"time"

	"github.com/wakekit/wakekit/piv"
)

// memSeries returns n small frames whose U holds the frame number, with a loader that counts
// how often each frame is read.
func memSeries(t testing.TB, n, nx, ny int, loads *atomic.Int64) *piv.Series {
	t.Helper()
	g := piv.Grid{NX: nx, NY: ny, DX: 1e-3, DY: 1e-3}
	return loaderSeries(t, n, func(k int) (*piv.Field, error) {
		if loads != nil {
			loads.Add(1)
		}
		f := piv.NewField(g)
		for i := range f.U {
			f.Set(i, float64(k), float64(i))
		}
		return f, nil
	})
}

// loaderSeries is a series of n frames 0.01 s apart, named mem_NNNN, whose frames load reads.
func loaderSeries(t testing.TB, n int, load func(k int) (*piv.Field, error)) *piv.Series {
	t.Helper()
	names := make([]string, n)
	times := make([]float64, n)
	for k := range names {
		names[k] = fmt.Sprintf("mem_%04d", k)
		times[k] = 0.01 * float64(k)
	}
	s, err := piv.NewSeries(names, times, load)
	if err != nil {
		t.Fatal(err)
	}
	return s
}

// The results reach emit in frame order whatever the order the workers finish in.
func TestRunOrderWithJitter(t *testing.T) {
	s := memSeries(t, 60, 4, 3, nil)
	var got []int
	n, err := Run(context.Background(), s, Options{Workers: 4},
		func(ctx context.Context, k int, fr Frames) (int, error) {
			time.Sleep(time.Duration(rand.IntN(3)) * time.Millisecond)
			f, err := fr.Frame(k)
			if err != nil {
				return 0, err
			}
			return int(f.U[0]), nil
		},
		func(k, r int) error {
			if r != k {
				return fmt.Errorf("frame %d got result of frame %d", k, r)
			}
			got = append(got, k)
			return nil
		})
	if err != nil || n != 60 {
		t.Fatalf("Run = %d, %v", n, err)
	}
	for a, k := range got {
		if a != k {
			t.Fatalf("emitted %v, not in frame order", got)
		}
	}
}

// While the first frame takes long, the other workers go on with the next Lookahead frames
// and no further: the results waiting to be emitted in order are bounded by Lookahead, and
// everything is still emitted in frame order once the slow frame is done.
func TestRunLookaheadBound(t *testing.T) {
	s := memSeries(t, 40, 4, 3, nil)
	for _, c := range []struct{ workers, lookahead, want int }{{2, 5, 6}, {2, 0, 3}, {3, 1, 2}} {
		release := make(chan struct{})
		var started atomic.Int64
		done := make(chan error, 1)
		var got []int
		go func() {
			_, err := Run(context.Background(), s, Options{Workers: c.workers, Lookahead: c.lookahead},
				func(ctx context.Context, k int, fr Frames) (int, error) {
					started.Add(1)
					if k == 0 {
						<-release
					}
					return k, nil
				},
				func(k, r int) error { got = append(got, r); return nil })
			done <- err
		}()
		// The counts settle within a few scheduler rounds; 200 ms is ample on a loaded machine.
		time.Sleep(200 * time.Millisecond)
		if n := started.Load(); int(n) != c.want {
			t.Errorf("workers %d, lookahead %d: %d frames started while frame 0 runs, want %d", c.workers, c.lookahead, n, c.want)
		}
		close(release)
		if err := <-done; err != nil {
			t.Fatal(err)
		}
		for a, k := range got {
			if a != k || len(got) != 40 {
				t.Fatalf("emitted %v, not the 40 frames in order", got)
			}
		}
	}
}

// With a halo, neighbouring jobs share the frames they read: each frame is read about once
// (frames of dispatched jobs' windows are never evicted; the margin of one read per worker
// allows for a frame dropped just before a later job asked for it).
func TestRunHaloSharesFrames(t *testing.T) {
	var loads atomic.Int64
	const n, halo, workers = 200, 2, 3
	s := memSeries(t, n, 8, 8, &loads)
	_, err := Run(context.Background(), s, Options{Workers: workers, Halo: halo},
		func(ctx context.Context, k int, fr Frames) (float64, error) {
			sum := 0.0
			for j := max(0, k-halo); j <= min(n-1, k+halo); j++ {
				f, err := fr.Frame(j)
				if err != nil {
					return 0, err
				}
				sum += f.U[0]
			}
			return sum, nil
		},
		func(k int, r float64) error { return nil })
	if err != nil {
		t.Fatal(err)
	}
	// Without sharing, 200 frames x 5 window frames = ~1000 reads.
	t.Logf("%d frames read for %d frames with halo %d on %d workers", loads.Load(), n, halo, workers)
	if got := loads.Load(); got > n+workers {
		t.Errorf("frames read %d times for a %d-frame series; the cache should make it about %d", got, n, n)
	}
}

// A stage that reads outside its declared window gets an error instead of a result that
// --resume could not track.
func TestRunWindowIsEnforced(t *testing.T) {
	s := memSeries(t, 10, 2, 2, nil)
	_, err := Run(context.Background(), s, Options{Workers: 2, Halo: 1},
		func(ctx context.Context, k int, fr Frames) (int, error) {
			_, err := fr.Frame(k + 2)
			return 0, err
		},
		func(k, r int) error { return nil })
	if !errors.Is(err, ErrOutsideWindow) {
		t.Fatalf("err = %v, want ErrOutsideWindow", err)
	}
}

// Cancelling stops the run; what was emitted is a prefix of the frames, and the error says
// how far it got.
func TestRunCancelEmitsPrefix(t *testing.T) {
	s := memSeries(t, 100, 2, 2, nil)
	ctx, cancel := context.WithCancel(context.Background())
	var got []int
	n, err := Run(ctx, s, Options{Workers: 3},
		func(ctx context.Context, k int, fr Frames) (int, error) {
			time.Sleep(time.Millisecond)
			return k, nil
		},
		func(k, r int) error {
			got = append(got, k)
			if k == 20 {
				cancel()
			}
			return nil
		})
	var se *StoppedError
	if !errors.As(err, &se) || se.Done != n || se.Total != 100 {
		t.Fatalf("err = %v, want StoppedError after %d frames", err, n)
	}
	if n < 21 || n >= 100 {
		t.Fatalf("emitted %d frames after cancelling at frame 20", n)
	}
	for a, k := range got {
		if a != k {
			t.Fatalf("emitted %v: not a prefix", got)
		}
	}
}

// A stage error stops the run and is returned as it is.
func TestRunStageError(t *testing.T) {
	s := memSeries(t, 50, 2, 2, nil)
	bad := errors.New("frame 7 is broken")
	n, err := Run(context.Background(), s, Options{Workers: 2},
		func(ctx context.Context, k int, fr Frames) (int, error) {
			if k == 7 {
				return 0, bad
			}
			return k, nil
		},
		func(k, r int) error { return nil })
	if !errors.Is(err, bad) || n != 7 {
		t.Fatalf("Run = %d, %v; want 7 frames and the stage's error", n, err)
	}
}

// Run with a shard processes exactly the shard's contiguous share.
func TestRunShard(t *testing.T) {
	s := memSeries(t, 10, 2, 2, nil)
	var got []int
	_, err := Run(context.Background(), s, Options{Workers: 2, Shard: Shard{K: 2, N: 3}},
		func(ctx context.Context, k int, fr Frames) (int, error) { return k, nil },
		func(k, r int) error { got = append(got, k); return nil })
	if err != nil {
		t.Fatal(err)
	}
	// floor(1*10/3) = 3 to floor(2*10/3) = 6.
	if fmt.Sprint(got) != "[3 4 5]" {
		t.Fatalf("shard 2/3 of 10 frames processed %v, want [3 4 5]", got)
	}
}

// The shards of a split are disjoint, contiguous, cover every frame and differ in size by at
// most one.
func TestShardRangeTiles(t *testing.T) {
	for n := 1; n <= 40; n++ {
		for N := 1; N <= 12; N++ {
			next, lo, hi := 0, n, 0
			for K := 1; K <= N; K++ {
				from, to, err := Shard{K, N}.Range(n)
				if err != nil {
					t.Fatal(err)
				}
				if from != next || to < from {
					t.Fatalf("n=%d shard %d/%d is %d..%d after %d", n, K, N, from, to, next)
				}
				lo, hi = min(lo, to-from), max(hi, to-from)
				next = to
			}
			if next != n || hi-lo > 1 {
				t.Fatalf("n=%d N=%d: covered %d frames, sizes %d..%d", n, N, next, lo, hi)
			}
		}
	}
}

func TestParseShard(t *testing.T) {
	for _, c := range []struct {
		in   string
		want Shard
		ok   bool
	}{
		{"1/4", Shard{1, 4}, true}, {" 4/4 ", Shard{4, 4}, true}, {"", Shard{}, true},
		{"0/4", Shard{}, false}, {"5/4", Shard{}, false}, {"1/0", Shard{}, false},
		{"a/b", Shard{}, false}, {"3", Shard{}, false}, {"-1/2", Shard{}, false}, {"1/2/3", Shard{}, false},
	} {
		got, err := ParseShard(c.in)
		if (err == nil) != c.ok || got != c.want {
			t.Errorf("ParseShard(%q) = %v, %v", c.in, got, err)
		}
	}
}

func TestProgressLine(t *testing.T) {
	got := ProgressLine("derive", 120, 2000, 4*time.Second)
	// 120 frames in 4 s is 30 frames/s; 1880 frames left take 62.7 s.
	if want := "derive: 120/2000 frames, 30 frames/s, 1 min 03 s left"; got != want {
		t.Errorf("ProgressLine = %q, want %q", got, want)
	}
	if got := ProgressLine("derive", 0, 10, 0); got != "derive: 0/10 frames" {
		t.Errorf("ProgressLine at start = %q", got)
	}
}

// The progress line is redrawn in place (carriage return, clear to the end of the line) and
// ends with a newline once the run is over; without a writer nothing is drawn.
func TestRunDrawsProgress(t *testing.T) {
	s := memSeries(t, 10, 2, 2, nil)
	var buf strings.Builder
	_, err := Run(context.Background(), s, Options{Workers: 2, Progress: &buf, Label: "derive"},
		func(ctx context.Context, k int, fr Frames) (int, error) { return k, nil },
		func(k, r int) error { return nil })
	if err != nil {
		t.Fatal(err)
	}
	out := buf.String()
	if !strings.HasPrefix(out, "\rderive: ") || !strings.Contains(out, "derive: 10/10 frames") || !strings.HasSuffix(out, "\n") {
		t.Errorf("progress output %q", out)
	}
}

// Jobs that read their window in order must not queue behind one another's loads: with slow
// loads (a large CSV file each) and a halo, two workers keep two loads going at once. Without
// the prefetch, job k+1 waits for frame k+1, which job k is loading, before it asks for k+2,
// and at most one load runs at a time.
func TestRunHaloLoadsOverlap(t *testing.T) {
	const n, halo, workers = 24, 1, 2
	var running, most atomic.Int64
	g := piv.Grid{NX: 4, NY: 4, DX: 1e-3, DY: 1e-3}
	s := loaderSeries(t, n, func(k int) (*piv.Field, error) {
		now := running.Add(1)
		for {
			m := most.Load()
			if now <= m || most.CompareAndSwap(m, now) {
				break
			}
		}
		time.Sleep(20 * time.Millisecond)
		running.Add(-1)
		return piv.NewField(g), nil
	})
	_, err := Run(context.Background(), s, Options{Workers: workers, Halo: halo},
		func(ctx context.Context, k int, fr Frames) (int, error) {
			for j := max(0, k-halo); j <= min(n-1, k+halo); j++ {
				if _, err := fr.Frame(j); err != nil {
					return 0, err
				}
			}
			return k, nil
		},
		func(k int, r int) error { return nil })
	if err != nil {
		t.Fatal(err)
	}
	if m := most.Load(); m < 2 {
		t.Errorf("at most %d frame load ran at a time on %d workers with halo %d; reading is serialised", m, workers, halo)
	}
}
