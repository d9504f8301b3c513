package main

import (
	"io"

	"termgrove/concepts"
)

// priorReport writes the prior report (check --prior) for s.
// STUB: replaced by the terms/prior work.
func priorReport(w io.Writer, s *concepts.Scheme, langs []string, format string) error {
	_, err := io.WriteString(w, "prior report: not implemented yet\n")
	return err
}
