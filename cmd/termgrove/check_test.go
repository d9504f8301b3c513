package main

import (
	"bytes"
	"encoding/json"
	"os"
	"strings"
	"testing"

	"termgrove/concepts"
)

func TestCheckCommand(t *testing.T) {
	const td = "../../testdata/"
	tests := []struct {
		name   string
		args   []string
		code   int
		stdout []string // substrings of stdout
		stderr []string // substrings of stderr
	}{
		{"clean", []string{"--lang", "en,fr", td + "small.ttl"}, 0,
			[]string{"concepts        19 (1 deprecated)", "top concepts    3 (4 concepts with no broader concept)", "max depth       2", "1 concept with more than one broader", "collections     1", "en             19        8        2", "no problems found"}, nil},
		{"flags after the file", []string{td + "small.ttl", "--lang", "en"}, 0, []string{"no problems found"}, nil},
		{"problems", []string{td + "check/cycle.ttl"}, 1,
			[]string{"1 problem:", "cycle (1)", "broader cycle: https://example.org/t/a → https://example.org/t/b → https://example.org/t/c → https://example.org/t/a"}, nil},
		{"missing language", []string{"--lang", "en,de", td + "check/s14.ttl"}, 1, []string{`no prefLabel in "de"`, "S14 (1)"}, nil},
		{"unreadable", []string{td + "check/undefined-prefix.ttl"}, 2, nil, []string{td + "check/undefined-prefix.ttl:5:"}},
		{"not rdf", []string{td + "check/not-rdf.ttl"}, 2, nil, []string{td + "check/not-rdf.ttl:1:1: not an RDF document"}},
		{"empty", []string{td + "check/empty.ttl"}, 1, nil, []string{"no concepts found in " + td + "check/empty.ttl"}},
		{"no file", []string{td + "check/nope.ttl"}, 2, nil, []string{"no such file"}},
		{"two schemes", []string{td + "check/two-schemes.ttl"}, 2, nil, []string{"https://example.org/t/s1, https://example.org/t/s2"}},
		{"scheme chosen", []string{"--scheme", "https://example.org/t/s1", td + "check/two-schemes.ttl"}, 0, []string{"(1 of 2 schemes in the file)", "concepts        2 "}, nil},
		{"bad format", []string{"--format", "xml", td + "small.ttl"}, 2, nil, []string{"want text or json"}},
		{"no args", nil, 2, nil, []string{"want one vocabulary file"}},
		{"help", []string{"--help"}, 0, nil, []string{"usage: termgrove check", "-scheme IRI", "examples:"}},
		{"emit", []string{"--emit", "ntriples", td + "check/s14.ttl"}, 0,
			[]string{`<https://example.org/t/a> <http://www.w3.org/2004/02/skos/core#prefLabel> "automobile"@en .`}, nil},
		{"emit broken", []string{"--emit", "ntriples", td + "check/truncated.ttl"}, 2, nil, []string{"truncated.ttl:"}},
		{"emit other syntax", []string{"--emit", "turtle", td + "small.ttl"}, 2, nil, []string{"only ntriples"}},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			var out, errb bytes.Buffer
			code := runCheck(tt.args, &out, &errb)
			if concepts.IsNotImplemented(errorsFrom(errb.String())) {
				t.Skip(errb.String())
			}
			if code != tt.code {
				t.Errorf("exit %d, want %d\nstdout: %s\nstderr: %s", code, tt.code, out.String(), errb.String())
			}
			for _, s := range tt.stdout {
				if !strings.Contains(out.String(), s) {
					t.Errorf("stdout lacks %q:\n%s", s, out.String())
				}
			}
			for _, s := range tt.stderr {
				if !strings.Contains(errb.String(), s) {
					t.Errorf("stderr lacks %q:\n%s", s, errb.String())
				}
			}
		})
	}
}

// errorsFrom turns captured stderr into an error for IsNotImplemented.
func errorsFrom(s string) error {
	if s == "" {
		return nil
	}
	return stringError(s)
}

type stringError string

func (e stringError) Error() string { return string(e) }

func TestCheckCommandJSON(t *testing.T) {
	var out, errb bytes.Buffer
	code := runCheck([]string{"--format", "json", "../../testdata/check/s14.ttl"}, &out, &errb)
	if concepts.IsNotImplemented(errorsFrom(errb.String())) {
		t.Skip(errb.String())
	}
	if code != 1 {
		t.Fatalf("exit %d: %s", code, errb.String())
	}
	var got checkSummary
	if err := json.Unmarshal(out.Bytes(), &got); err != nil {
		t.Fatalf("not JSON: %v\n%s", err, out.String())
	}
	if got.Concepts != 1 || got.Labels["en"].Pref != 2 || got.ProblemCounts["S14"] != 1 || len(got.Problems) != 1 ||
		got.Problems[0].Concept != "https://example.org/t/a" || got.Format != "turtle" || got.Triples != 7 {
		t.Errorf("summary = %+v", got)
	}
}

func TestCheckCommandStdin(t *testing.T) {
	f, err := os.Open("../../testdata/check/orphan.ttl")
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	saved := os.Stdin
	os.Stdin = f
	defer func() { os.Stdin = saved }()
	var out, errb bytes.Buffer
	code := runCheck([]string{"-"}, &out, &errb)
	if concepts.IsNotImplemented(errorsFrom(errb.String())) {
		t.Skip(errb.String())
	}
	if code != 1 || !strings.Contains(out.String(), "-: turtle, 8 triples") || !strings.Contains(out.String(), "orphan (1)") {
		t.Errorf("exit %d\nstdout: %s\nstderr: %s", code, out.String(), errb.String())
	}
}
