package fit

import "unsafe"

// prefetch asks the CPU to bring the cache line at p closer without waiting
// for it (PREFETCHT0); it never faults.
//
//go:noescape
func prefetch(p unsafe.Pointer)
