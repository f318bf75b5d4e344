//go:build unix

package main

import "syscall"

// processCPU returns the CPU time the process has used [ns], so benchmarks on a shared machine
// can report their cost apart from the time spent waiting for a core.
func processCPU() int64 {
	var ru syscall.Rusage
	if syscall.Getrusage(syscall.RUSAGE_SELF, &ru) != nil {
		return 0
	}
	return ru.Utime.Nano() + ru.Stime.Nano()
}
