//go:build !unix

package circulation

// cpuSeconds is not available here; benchmarks then report wall-clock figures only.
func cpuSeconds() float64 { return 0 }
