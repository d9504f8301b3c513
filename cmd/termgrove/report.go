package main

import (
	"fmt"
	"os"
)

// STUB: replaced by the real command.
func cmdReport(args []string) int {
	fmt.Fprintln(os.Stderr, "termgrove report: not implemented yet")
	return 2
}
