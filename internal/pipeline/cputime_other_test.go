//go:build !unix

package pipeline

// processCPU is not measured on this system.
func processCPU() int64 { return 0 }
