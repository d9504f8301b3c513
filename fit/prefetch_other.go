//go:build !amd64

package fit

import "unsafe"

// prefetch is a no-op where no prefetch instruction is wired up.
func prefetch(p unsafe.Pointer) {}
