package main

import (
	"errors"
	"fmt"
	"io/fs"
	"os"
	"path/filepath"
	"sort"
	"strings"

	"golang.org/x/text/language"

	"termgrove/concepts"
)

// errOutPath: an output path that cannot be written (match with errors.Is).
var errOutPath = errors.New("cannot write the output")

// checkOutPath makes sure an output file can be written before any long
// work starts: path is not a folder, its folder exists and a file can be
// created there. "" and "-" (standard output) always pass. The probe file
// it creates is removed at once.
func checkOutPath(path string) error {
	if path == "" || path == "-" {
		return nil
	}
	if fi, err := os.Stat(path); err == nil && fi.IsDir() {
		return fmt.Errorf("%w: %s is a folder; give a file name", errOutPath, path)
	}
	dir := filepath.Dir(path)
	di, err := os.Stat(dir)
	switch {
	case errors.Is(err, fs.ErrNotExist):
		return fmt.Errorf("%w %s: folder %s does not exist", errOutPath, path, dir)
	case err != nil:
		return fmt.Errorf("%w %s: %v", errOutPath, path, err)
	case !di.IsDir():
		return fmt.Errorf("%w %s: %s is not a folder", errOutPath, path, dir)
	}
	probe, err := os.CreateTemp(dir, "."+filepath.Base(path)+".probe-*")
	if err != nil {
		return fmt.Errorf("%w %s: cannot write in folder %s: %v", errOutPath, path, dir, errors.Unwrap(err))
	}
	probe.Close()
	os.Remove(probe.Name())
	return nil
}

// checkLangs rejects a comma-separated --lang list with a malformed BCP 47
// tag, which would otherwise silently fall back to language-neutral
// analysis.
func checkLangs(list string) error {
	for _, tag := range splitList(list) {
		if _, err := language.Parse(tag); err != nil {
			return fmt.Errorf("--lang: %q is not a BCP 47 language tag (e.g. en, fr, pt-BR)", tag)
		}
	}
	return nil
}

// cycleString shows a broader cycle as "a → b → a" by IRI.
func cycleString(s *concepts.Scheme, cyc []int) string {
	iris := make([]string, len(cyc))
	for k, c := range cyc {
		iris[k] = s.Concepts[c].IRI
	}
	return strings.Join(iris, " → ")
}

// overwritesInput returns the first of inputs that out names (the same
// file, however spelled), or "".
func overwritesInput(out string, inputs ...string) string {
	fo, err := os.Stat(out)
	if err != nil {
		return ""
	}
	for _, in := range inputs {
		if fi, err := os.Stat(in); err == nil && os.SameFile(fo, fi) {
			return in
		}
	}
	return ""
}

// labelLangs lists the languages of the scheme's preferred and alternative
// labels, sorted ("" shows as "no language tag").
func labelLangs(s *concepts.Scheme) []string {
	seen := map[string]bool{}
	for i := range s.Concepts {
		for _, ls := range [][]concepts.Label{s.Concepts[i].Pref, s.Concepts[i].Alt} {
			for _, l := range ls {
				seen[l.Lang] = true
			}
		}
	}
	out := make([]string, 0, len(seen))
	for l := range seen {
		if l == "" {
			l = "no language tag"
		}
		out = append(out, l)
	}
	sort.Strings(out)
	return out
}
