package rdf

import (
	"bytes"
	"errors"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// addConformanceSeeds adds every file of the W3C suites with one of the
// extensions as a seed, when the suites are present.
func addConformanceSeeds(f *testing.F, exts ...string) {
	dir, err := os.Getwd()
	if err != nil {
		return
	}
	root := filepath.Join(dir, "..", "..", "..", "shared", "conformance", "rdf11")
	_ = filepath.WalkDir(root, func(path string, d os.DirEntry, err error) error {
		if err != nil || d.IsDir() {
			return nil
		}
		for _, ext := range exts {
			if strings.HasSuffix(path, ext) {
				if data, err := os.ReadFile(path); err == nil {
					f.Add(data)
				}
			}
		}
		return nil
	})
}

// checkFuzzResult asserts the reader's contract on arbitrary input: an
// error is a *ParseError of kind ErrSyntax at line ≥ 1, column ≥ 1; a
// success yields triples that survive a round trip through N-Triples.
func checkFuzzResult(t *testing.T, ts []Triple, err error) {
	if err != nil {
		var pe *ParseError
		if !errors.As(err, &pe) || pe.Line < 1 || pe.Col < 1 || !errors.Is(err, ErrSyntax) {
			t.Fatalf("error %v (%T) is not a *ParseError with a position", err, err)
		}
		return
	}
	var nt bytes.Buffer
	for _, tr := range ts {
		nt.WriteString(tr.String())
		nt.WriteByte('\n')
	}
	var back []Triple
	if err := ReadNQuads(bytes.NewReader(nt.Bytes()), Options{}, func(tr Triple) error { back = append(back, tr); return nil }); err != nil {
		t.Fatalf("N-Triples written from the parsed triples do not read back: %v\n%s", err, nt.Bytes())
	}
	if len(back) != len(ts) {
		t.Fatalf("%d triples read back, %d written", len(back), len(ts))
	}
	for i := range ts {
		if back[i] != ts[i] {
			t.Fatalf("triple %d reads back as %v, was %v", i, back[i], ts[i])
		}
	}
}

func FuzzTurtle(f *testing.F) {
	f.Add([]byte("@prefix : <http://ex.org/> .\n:a :b ( 1 2.5 3e1 [ :c \"d\"@en ] ) ; :e :f, \"\"\"g\nh\"\"\" ."))
	f.Add([]byte("BASE <http://ex.org/a/> PREFIX p: <b#> <c> p:d\\.x p:e.\n"))
	addConformanceSeeds(f, ".ttl")
	f.Fuzz(func(t *testing.T, data []byte) {
		var ts []Triple
		err := ReadTurtle(bytes.NewReader(data), Options{Base: "http://fuzz.example/base/doc"}, func(tr Triple) error {
			ts = append(ts, tr)
			return nil
		})
		checkFuzzResult(t, ts, err)
	})
}

func FuzzNTriples(f *testing.F) {
	f.Add([]byte("<http://ex.org/s> <http://ex.org/p> \"o\\u00E9\"@en-gb .\n_:b <http://ex.org/p> \"1\"^^<http://ex.org/t> . # c\n"))
	addConformanceSeeds(f, ".nt", ".nq")
	f.Fuzz(func(t *testing.T, data []byte) {
		var nt []Triple
		for i, rd := range []reader{ReadNTriples, ReadNQuads} {
			var ts []Triple
			err := rd(bytes.NewReader(data), Options{}, func(tr Triple) error {
				ts = append(ts, tr)
				return nil
			})
			checkFuzzResult(t, ts, err)
			if i == 0 && err == nil {
				nt = ts
			}
		}
		if nt == nil {
			return
		}
		// Source: RDF 1.1 Turtle §1 ("N-Triples ... is a subset of Turtle"):
		// the Turtle reader must read the same graph.
		var ttl []Triple
		if err := ReadTurtle(bytes.NewReader(data), Options{}, func(tr Triple) error { ttl = append(ttl, tr); return nil }); err != nil {
			t.Fatalf("Turtle reader rejects valid N-Triples: %v", err)
		}
		if ok, why := Isomorphic(nt, ttl); !ok {
			t.Fatalf("Turtle reader reads another graph from N-Triples: %s", why)
		}
	})
}
