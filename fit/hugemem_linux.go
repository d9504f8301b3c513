package fit

import (
	"runtime"
	"syscall"
	"unsafe"
)

// hugeBytes returns n zeroed bytes of memory outside the Go heap, on
// transparent huge pages where the kernel gives them (madvise mode), and a
// function that frees it. The sampler's randomly read arrays (the record
// lists and the topic lines of the word-major sweep) span tens of MB: on
// 4 KiB pages nearly every random read also misses the TLB. Go does not
// advise its own heap, so these arrays are mapped here. Nil when the
// mapping fails (the caller then uses the Go heap).
func hugeBytes(n int) ([]byte, func()) {
	const huge = 2 << 20
	if n < huge {
		return nil, nil
	}
	size := (n + 2*huge - 1) &^ (huge - 1)
	b, err := syscall.Mmap(-1, 0, size, syscall.PROT_READ|syscall.PROT_WRITE, syscall.MAP_ANON|syscall.MAP_PRIVATE)
	if err != nil {
		return nil, nil
	}
	off := int((huge - uintptr(unsafe.Pointer(&b[0]))%huge) % huge)
	const madvHugepage = 14
	syscall.Madvise(b[off:off+n], madvHugepage) // best effort
	return b[off : off+n : off+n], func() { syscall.Munmap(b) }
}

// hugeSlice is hugeBytes for n elements of a pointer-free type T; the memory
// is freed once owner is unreachable. Falls back to make.
func hugeSlice[T any, O any](n int, owner *O) []T {
	var z T
	b, free := hugeBytes(n * int(unsafe.Sizeof(z)))
	if b == nil {
		return make([]T, n)
	}
	runtime.AddCleanup(owner, func(f func()) { f() }, free)
	return unsafe.Slice((*T)(unsafe.Pointer(unsafe.SliceData(b))), n)
}
