//go:build !unix

package terms

func cpuSeconds() float64 { return 0 }
