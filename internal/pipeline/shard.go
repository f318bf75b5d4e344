package pipeline

import (
	"context"
	"fmt"
	"os"
	"os/signal"
	"strconv"
	"strings"
	"syscall"
)

// Shard is the K-th of N contiguous shares of a series' frames (1 <= K <= N). The zero value
// means the whole series. Shares are contiguous blocks because stages with a time window then
// read only a few halo frames beyond their own block.
type Shard struct{ K, N int }

// ParseShard reads "K/N", e.g. "3/8". An empty string is the whole series.
func ParseShard(s string) (Shard, error) {
	if strings.TrimSpace(s) == "" {
		return Shard{}, nil
	}
	a, b, ok := strings.Cut(strings.TrimSpace(s), "/")
	k, err1 := strconv.Atoi(strings.TrimSpace(a))
	n, err2 := strconv.Atoi(strings.TrimSpace(b))
	if !ok || err1 != nil || err2 != nil {
		return Shard{}, fmt.Errorf("shard %q: expected K/N with whole numbers, e.g. 2/8", s)
	}
	sh := Shard{K: k, N: n}
	if err := sh.Validate(); err != nil {
		return Shard{}, err
	}
	return sh, nil
}

// Validate checks 1 <= K <= N (or the zero value).
func (s Shard) Validate() error {
	if s == (Shard{}) {
		return nil
	}
	if s.N < 1 || s.K < 1 || s.K > s.N {
		return fmt.Errorf("shard %d/%d: K must be between 1 and N (e.g. 2/8 is the second of eight shares)", s.K, s.N)
	}
	return nil
}

// IsAll reports whether the shard is the whole series.
func (s Shard) IsAll() bool { return s == (Shard{}) || s.N == 1 }

// String returns "K/N", or "" for the whole series.
func (s Shard) String() string {
	if s == (Shard{}) {
		return ""
	}
	return fmt.Sprintf("%d/%d", s.K, s.N)
}

// Range returns the frames [from, to) of a series of n frames that belong to the shard:
// from = floor((K-1)*n/N), to = floor(K*n/N), so the shards of one split are disjoint, cover
// every frame, and differ in size by at most one frame. A shard may be empty when N > n.
func (s Shard) Range(n int) (from, to int, err error) {
	if err := s.Validate(); err != nil {
		return 0, 0, err
	}
	if s.IsAll() {
		return 0, n, nil
	}
	return (s.K - 1) * n / s.N, s.K * n / s.N, nil
}

// SignalContext returns a context cancelled by the first SIGINT or SIGTERM. After that first
// signal the default handling is restored, so a second Ctrl-C ends the program at once. The
// returned stop function releases the signal handler.
func SignalContext(parent context.Context) (context.Context, context.CancelFunc) {
	ctx, stop := signal.NotifyContext(parent, os.Interrupt, syscall.SIGTERM)
	go func() {
		<-ctx.Done()
		stop()
	}()
	return ctx, stop
}
