//go:build !unix

package rdf

func cpuSeconds() float64 { return 0 }
