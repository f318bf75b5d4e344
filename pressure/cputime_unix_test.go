//go:build unix

package pressure

import "syscall"

// cpuSeconds returns the process's user plus system CPU time, so benchmarks can report a
// per-node figure that a loaded machine (other processes taking the cores) does not inflate.
func cpuSeconds() float64 {
	var ru syscall.Rusage
	if err := syscall.Getrusage(syscall.RUSAGE_SELF, &ru); err != nil {
		return 0
	}
	return float64(ru.Utime.Sec+ru.Stime.Sec) + float64(ru.Utime.Usec+ru.Stime.Usec)*1e-6
}
