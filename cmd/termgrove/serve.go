package main

import (
	"fmt"
	"os"
)

// STUB: replaced by the real command.
func cmdServe(args []string) int {
	fmt.Fprintln(os.Stderr, "termgrove serve: not implemented yet")
	return 2
}
