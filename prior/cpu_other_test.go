//go:build !unix

package prior

func cpuSeconds() float64 { return 0 }
