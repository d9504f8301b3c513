package main

import (
	"fmt"
	"runtime/debug"
)

// version is set at build time with -ldflags "-X main.version=...".
var version = "dev"

func cmdVersion(args []string) int {
	fmt.Printf("termgrove %s\n", version)
	if bi, ok := debug.ReadBuildInfo(); ok {
		fmt.Printf("go: %s\n", bi.GoVersion)
		for _, s := range bi.Settings {
			switch s.Key {
			case "vcs.revision", "vcs.time", "vcs.modified", "GOOS", "GOARCH":
				fmt.Printf("%s: %s\n", s.Key, s.Value)
			}
		}
	}
	return 0
}
