package annotate

import (
	"time"

	"golang.org/x/sys/unix"
)

// threadCPU is the calling thread's CPU time (CLOCK_THREAD_CPUTIME_ID;
// getrusage and /proc move in scheduler ticks, too coarse for one record).
// The caller must hold its OS thread (runtime.LockOSThread).
func threadCPU() time.Duration {
	var ts unix.Timespec
	if err := unix.ClockGettime(unix.CLOCK_THREAD_CPUTIME_ID, &ts); err != nil {
		return 0
	}
	return time.Duration(ts.Nano())
}

// processCPU is the process's CPU time, user + system (all threads).
func processCPU() time.Duration {
	var ru unix.Rusage
	if err := unix.Getrusage(unix.RUSAGE_SELF, &ru); err != nil {
		return 0
	}
	return time.Duration(ru.Utime.Nano() + ru.Stime.Nano())
}
