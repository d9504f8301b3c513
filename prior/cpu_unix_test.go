//go:build unix

package prior

import "syscall"

// cpuSeconds is the CPU time used so far by the whole process (all
// threads, garbage collector included), so that a figure per CPU second
// holds on a shared, busy machine.
func cpuSeconds() float64 {
	var ru syscall.Rusage
	if syscall.Getrusage(syscall.RUSAGE_SELF, &ru) != nil {
		return 0
	}
	tv := func(t syscall.Timeval) float64 { return float64(t.Sec) + float64(t.Usec)/1e6 }
	return tv(ru.Utime) + tv(ru.Stime)
}
