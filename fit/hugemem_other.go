//go:build !linux

package fit

// hugeSlice allocates on the Go heap where huge pages are not arranged
// (see hugemem_linux.go).
func hugeSlice[T any, O any](n int, owner *O) []T { return make([]T, n) }
