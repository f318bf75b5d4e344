//go:build !unix

package pressure

// cpuSeconds is not available here; benchmarks then report wall-clock figures only.
func cpuSeconds() float64 { return 0 }
