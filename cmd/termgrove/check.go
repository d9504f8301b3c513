package main

import (
	"fmt"
	"os"
)

// STUB: replaced by the real command.
func cmdCheck(args []string) int {
	fmt.Fprintln(os.Stderr, "termgrove check: not implemented yet")
	return 2
}
