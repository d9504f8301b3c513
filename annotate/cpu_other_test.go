//go:build !linux

package annotate

import "time"

// threadCPU is not measured off Linux.
func threadCPU() time.Duration { return 0 }

// processCPU is not measured off Linux.
func processCPU() time.Duration { return 0 }
