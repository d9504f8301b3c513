// Command termgrove fits a SKOS vocabulary to a collection of records and
// annotates new text with its concepts. Run "termgrove help" for commands.
package main

import (
	"fmt"
	"os"
	"sort"
)

// command is one subcommand; run returns the process exit status
// (0 success, 1 problems found or failed part-way, 2 bad usage or input).
type command struct {
	summary string
	run     func(args []string) int
}

var commands = map[string]command{
	"check":    {"load and validate a vocabulary", cmdCheck},
	"fit":      {"fit a vocabulary to records, write a model file", cmdFit},
	"annotate": {"suggest concepts for new text", cmdAnnotate},
	"serve":    {"run the gRPC annotation service", cmdServe},
	"report":   {"gap report: where vocabulary and collection part ways", cmdReport},
	"score":    {"score suggestions against human indexing", cmdScore},
	"version":  {"print build information", cmdVersion},
}

func main() {
	os.Exit(run(os.Args[1:]))
}

func run(args []string) int {
	if len(args) == 0 || args[0] == "help" || args[0] == "-h" || args[0] == "--help" {
		usage()
		if len(args) == 0 {
			return 2
		}
		return 0
	}
	c, ok := commands[args[0]]
	if !ok {
		fmt.Fprintf(os.Stderr, "termgrove: unknown command %q\n\n", args[0])
		usage()
		return 2
	}
	return c.run(args[1:])
}

func usage() {
	fmt.Fprintln(os.Stderr, "usage: termgrove <command> [options]\n\ncommands:")
	names := make([]string, 0, len(commands))
	for n := range commands {
		names = append(names, n)
	}
	sort.Strings(names)
	for _, n := range names {
		fmt.Fprintf(os.Stderr, "  %-9s %s\n", n, commands[n].summary)
	}
	fmt.Fprintln(os.Stderr, "\nRun \"termgrove <command> --help\" for a command's options and an example.")
}
