package main

import (
	"bufio"
	"fmt"
	"io"
	"os"
	"path/filepath"
	"strings"

	"termgrove/internal/records"
)

// writeOutput writes through fn to path atomically (a temporary file in the
// same folder, synced, then renamed), or to stdout when path is "" or "-".
// A failure leaves no half-written file behind.
func writeOutput(path string, fn func(io.Writer) error) (err error) {
	if path == "" || path == "-" {
		bw := bufio.NewWriter(os.Stdout)
		if err := fn(bw); err != nil {
			return err
		}
		return bw.Flush()
	}
	dir := filepath.Dir(path)
	tmp, err := os.CreateTemp(dir, "."+filepath.Base(path)+".tmp-*")
	if err != nil {
		return err
	}
	defer func() {
		if err != nil {
			tmp.Close()
			os.Remove(tmp.Name())
		}
	}()
	bw := bufio.NewWriter(tmp)
	if err = fn(bw); err != nil {
		return err
	}
	if err = bw.Flush(); err != nil {
		return fmt.Errorf("writing %s: %w", path, err)
	}
	if err = tmp.Sync(); err != nil {
		return fmt.Errorf("writing %s: %w", path, err)
	}
	if err = tmp.Close(); err != nil {
		return fmt.Errorf("writing %s: %w", path, err)
	}
	if err = os.Chmod(tmp.Name(), 0o644); err != nil {
		return err
	}
	return os.Rename(tmp.Name(), path)
}

// readAll reads a corpus into memory, reporting skipped lines on stderr.
func readAll(path string, fields []string, skipBad bool, cmd string) ([]records.Record, records.Stats, error) {
	var recs []records.Record
	opt := records.Options{Fields: fields, SkipBad: skipBad, Bad: func(err error) {
		fmt.Fprintf(os.Stderr, "termgrove %s: skipped: %v\n", cmd, err)
	}}
	st, err := records.ReadStats(path, opt, func(r records.Record) error {
		recs = append(recs, r)
		return nil
	})
	return recs, st, err
}

// splitList splits "a,b , c" into its non-empty trimmed parts.
func splitList(s string) []string {
	var out []string
	for _, p := range strings.Split(s, ",") {
		if p = strings.TrimSpace(p); p != "" {
			out = append(out, p)
		}
	}
	return out
}
