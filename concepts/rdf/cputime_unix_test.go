//go:build unix

package rdf

import "syscall"

// cpuSeconds returns the process's user+system CPU time, the steadier
// figure on a shared machine where wall time depends on the other jobs.
func cpuSeconds() float64 {
	var ru syscall.Rusage
	if syscall.Getrusage(syscall.RUSAGE_SELF, &ru) != nil {
		return 0
	}
	return float64(ru.Utime.Sec+ru.Stime.Sec) + float64(ru.Utime.Usec+ru.Stime.Usec)/1e6
}
