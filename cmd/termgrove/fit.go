package main

import (
	"fmt"
	"os"
)

// STUB: replaced by the real command.
func cmdFit(args []string) int {
	fmt.Fprintln(os.Stderr, "termgrove fit: not implemented yet")
	return 2
}
