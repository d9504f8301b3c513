package rdf

import (
	"bytes"
	"errors"
	"fmt"
	"io"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// Source: W3C RDF 1.1 test suites (w3c/rdf-tests, rdf/rdf11/rdf-n-triples,
// rdf-n-quads, rdf-turtle, rdf-xml), copied to ../shared/conformance/rdf11
// with their manifests; base IRIs as ../shared/conformance/README.md says.

const (
	suiteHome = "https://w3c.github.io/rdf-tests/rdf/rdf11/"
	mfNS      = "http://www.w3.org/2001/sw/DataAccess/tests/test-manifest#"
	rdftNS    = "http://www.w3.org/ns/rdftest#"
)

// conformanceSuites are the four suites run, in report order.
var conformanceSuites = []string{"rdf-n-triples", "rdf-n-quads", "rdf-turtle", "rdf-xml"}

// conformanceExempt lists tests allowed to fail, by test IRI, with the reason.
// It is empty: every test of the four suites must pass.
var conformanceExempt = map[string]string{}

// conformanceDir finds ../shared/conformance/rdf11 beside the module root.
func conformanceDir(t testing.TB) string {
	dir, err := os.Getwd()
	if err != nil {
		t.Fatal(err)
	}
	for {
		if _, err := os.Stat(filepath.Join(dir, "go.mod")); err == nil {
			break
		}
		parent := filepath.Dir(dir)
		if parent == dir {
			t.Skip("module root (go.mod) not found")
		}
		dir = parent
	}
	d := filepath.Join(dir, "..", "shared", "conformance", "rdf11")
	if _, err := os.Stat(filepath.Join(d, "rdf-turtle", "manifest.ttl")); err != nil {
		t.Skipf("W3C RDF 1.1 test suites not found at %s (clone the shared folder beside the module): %v", d, err)
	}
	return d
}

// manifestEntry is one test of a manifest.
type manifestEntry struct {
	iri, name, typ string
	action, result string // IRIs
}

// readManifest reads a suite's manifest.ttl with ReadTurtle and returns its
// entries in mf:entries order.
func readManifest(t *testing.T, dir, suite string) []manifestEntry {
	base := suiteHome + suite + "/manifest.ttl"
	f, err := os.Open(filepath.Join(dir, suite, "manifest.ttl"))
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	props := map[string]map[string]string{} // subject key -> predicate -> object value
	var entriesHead string
	err = ReadTurtle(f, Options{Base: base, File: suite + "/manifest.ttl"}, func(tr Triple) error {
		s := tr.S.String()
		if props[s] == nil {
			props[s] = map[string]string{}
		}
		props[s][tr.P.Value] = tr.O.String()
		if tr.P.Value == mfNS+"entries" {
			entriesHead = tr.O.String()
		}
		return nil
	})
	if err != nil {
		t.Fatalf("reading manifest: %v", err)
	}
	unIRI := func(s string) string { return strings.TrimSuffix(strings.TrimPrefix(s, "<"), ">") }
	unLit := func(s string) string {
		if i := strings.LastIndexByte(s, '"'); i > 0 {
			return s[1:i]
		}
		return s
	}
	var out []manifestEntry
	for node := entriesHead; node != "<"+ttlNil+">"; node = props[node][ttlRest] {
		if props[node] == nil {
			t.Fatalf("manifest list broken at %s", node)
		}
		id := props[node][ttlFirst]
		p := props[id]
		out = append(out, manifestEntry{
			iri:    unIRI(id),
			name:   unLit(p[mfNS+"name"]),
			typ:    strings.TrimPrefix(unIRI(p[ttlType]), rdftNS),
			action: unIRI(p[mfNS+"action"]),
			result: unIRI(p[mfNS+"result"]),
		})
	}
	return out
}

// localFile maps a test IRI under the suite's web home to its file.
func localFile(dir, suite, iri string) (string, error) {
	home := suiteHome + suite + "/"
	if !strings.HasPrefix(iri, home) {
		return "", fmt.Errorf("%s is not under %s", iri, home)
	}
	return filepath.Join(dir, suite, filepath.FromSlash(strings.TrimPrefix(iri, home))), nil
}

type reader func(io.Reader, Options, func(Triple) error) error

// parseFile reads a file with rd, recovering a panic into an error.
func parseFile(path, base string, rd reader) (ts []Triple, err error) {
	data, err := os.ReadFile(path)
	if err != nil {
		return nil, err
	}
	defer func() {
		if r := recover(); r != nil {
			err = fmt.Errorf("panic: %v", r)
		}
	}()
	err = rd(bytes.NewReader(data), Options{Base: base, File: filepath.Base(path)}, func(t Triple) error {
		ts = append(ts, t)
		return nil
	})
	return ts, err
}

// runEntry runs one test and returns "" when it passes, else why not.
func runEntry(dir, suite string, e manifestEntry) string {
	var rd reader
	var kind string // "positive", "negative" or "eval"
	switch e.typ {
	case "TestNTriplesPositiveSyntax":
		rd, kind = ReadNTriples, "positive"
	case "TestNTriplesNegativeSyntax":
		rd, kind = ReadNTriples, "negative"
	case "TestNQuadsPositiveSyntax":
		rd, kind = ReadNQuads, "positive"
	case "TestNQuadsNegativeSyntax":
		rd, kind = ReadNQuads, "negative"
	case "TestTurtlePositiveSyntax":
		rd, kind = ReadTurtle, "positive"
	case "TestTurtleNegativeSyntax", "TestTurtleNegativeEval":
		rd, kind = ReadTurtle, "negative"
	case "TestTurtleEval":
		rd, kind = ReadTurtle, "eval"
	case "TestXMLNegativeSyntax":
		rd, kind = ReadRDFXML, "negative"
	case "TestXMLEval":
		rd, kind = ReadRDFXML, "eval"
	default:
		return "unknown test type " + e.typ
	}
	path, err := localFile(dir, suite, e.action)
	if err != nil {
		return err.Error()
	}
	got, err := parseFile(path, e.action, rd)
	if err != nil && strings.HasPrefix(err.Error(), "panic: ") {
		return err.Error()
	}
	switch kind {
	case "positive":
		if err != nil {
			return "rejected valid input: " + err.Error()
		}
		return ""
	case "negative":
		if err == nil {
			return fmt.Sprintf("accepted invalid input (%d triples)", len(got))
		}
		var pe *ParseError
		if !errors.As(err, &pe) || pe.Line < 1 || !errors.Is(err, ErrSyntax) {
			return fmt.Sprintf("error is not a *ParseError with a line and ErrSyntax: %v", err)
		}
		return ""
	}
	if err != nil {
		return "rejected valid input: " + err.Error()
	}
	rpath, err := localFile(dir, suite, e.result)
	if err != nil {
		return err.Error()
	}
	want, err := parseFile(rpath, e.result, ReadNTriples)
	if err != nil {
		return "reading expected result: " + err.Error()
	}
	if ok, why := Isomorphic(got, want); !ok {
		return "graph differs from " + filepath.Base(rpath) + ": " + why
	}
	return ""
}

func TestConformance(t *testing.T) {
	dir := conformanceDir(t)
	var summary []string
	for _, suite := range conformanceSuites {
		entries := readManifest(t, dir, suite)
		passed := 0
		for _, e := range entries {
			why := runEntry(dir, suite, e)
			if why == "" {
				passed++
			}
			reason, exempt := conformanceExempt[e.iri]
			t.Run(suite+"/"+e.name, func(t *testing.T) {
				switch {
				case why == "" && exempt:
					t.Errorf("%s passes but is listed as exempt (%s): remove it from conformanceExempt", e.iri, reason)
				case why != "" && exempt:
					t.Skipf("exempt (%s): %s", reason, why)
				case why != "":
					t.Errorf("%s (%s): %s", e.name, e.typ, why)
				}
			})
		}
		line := fmt.Sprintf("conformance %s: %d/%d", suite, passed, len(entries))
		summary = append(summary, line)
	}
	for _, line := range summary {
		t.Log(line)
		fmt.Println(line)
	}
}

// TestConformanceHarnessFails shows that runEntry can fail: an eval test
// compared with another test's result, and a valid file run as a negative
// test, must both be reported.
func TestConformanceHarnessFails(t *testing.T) {
	dir := conformanceDir(t)
	home := suiteHome + "rdf-turtle/"
	wrongResult := manifestEntry{name: "IRI_subject", typ: "TestTurtleEval",
		action: home + "IRI_subject.ttl", result: home + "IRI_with_all_punctuation.nt"}
	if why := runEntry(dir, "rdf-turtle", wrongResult); why == "" {
		t.Error("an eval test against the wrong expected graph passed")
	}
	validAsNegative := manifestEntry{name: "IRI_subject", typ: "TestTurtleNegativeSyntax", action: home + "IRI_subject.ttl"}
	if why := runEntry(dir, "rdf-turtle", validAsNegative); why == "" {
		t.Error("a valid file run as a negative syntax test passed")
	}
	invalidAsPositive := manifestEntry{name: "bad", typ: "TestTurtlePositiveSyntax", action: home + "turtle-syntax-bad-struct-01.ttl"}
	if why := runEntry(dir, "rdf-turtle", invalidAsPositive); why == "" {
		t.Error("an invalid file run as a positive syntax test passed")
	}
}
