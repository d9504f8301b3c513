package main

import (
	"fmt"
	"os"
)

// STUB: replaced by the real command.
func cmdAnnotate(args []string) int {
	fmt.Fprintln(os.Stderr, "termgrove annotate: not implemented yet")
	return 2
}
