package main

import (
	"fmt"
	"os"
)

// STUB: replaced by the real command.
func cmdScore(args []string) int {
	fmt.Fprintln(os.Stderr, "termgrove score: not implemented yet")
	return 2
}
