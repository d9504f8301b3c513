package rdf

import (
	"bytes"
	"errors"
	"sort"
	"strings"
	"testing"
)

func readJSONLDAll(t *testing.T, doc string) ([]Triple, error) {
	t.Helper()
	var got []Triple
	err := ReadJSONLD(strings.NewReader(doc), Options{File: "v.jsonld", Base: "http://ex.org/doc"}, func(tr Triple) error {
		got = append(got, tr)
		return nil
	})
	return got, err
}

// skosJSONLD and skosTurtle are one small SKOS vocabulary written twice.
// Source: JSON-LD 1.1 §4.1.2 (@context term definitions), §4.3 (@graph),
// §4.2.4 (@language), §4.3.1 (@type coercion to @id); SKOS Reference §8
// (prefLabel, broader, inScheme).
const skosJSONLD = `{
  "@context": {
    "skos": "http://www.w3.org/2004/02/skos/core#",
    "ex": "http://ex.org/voc/",
    "@language": "en",
    "broader": {"@id": "skos:broader", "@type": "@id"},
    "inScheme": {"@id": "skos:inScheme", "@type": "@id"},
    "prefLabel": "skos:prefLabel",
    "notation": {"@id": "skos:notation", "@language": null}
  },
  "@graph": [
    {"@id": "ex:s", "@type": "skos:ConceptScheme", "prefLabel": "Animals",
     "skos:hasTopConcept": {"@id": "ex:animal"}},
    {"@id": "ex:animal", "@type": "skos:Concept", "inScheme": "ex:s",
     "prefLabel": ["animal", {"@value": "Tier", "@language": "DE"}]},
    {"@id": "ex:cat", "@type": "skos:Concept", "inScheme": "ex:s", "broader": "ex:animal",
     "prefLabel": "cat", "notation": "C-1",
     "skos:note": {"skos:prefLabel": "anonymous note"}},
    {"@id": "rel", "skos:related": {"@id": "ex:cat"}}
  ]
}`

const skosTurtle = `@prefix skos: <http://www.w3.org/2004/02/skos/core#> .
@prefix ex: <http://ex.org/voc/> .
ex:s a skos:ConceptScheme ; skos:prefLabel "Animals"@en ; skos:hasTopConcept ex:animal .
ex:animal a skos:Concept ; skos:inScheme ex:s ; skos:prefLabel "animal"@en, "Tier"@de .
ex:cat a skos:Concept ; skos:inScheme ex:s ; skos:broader ex:animal ;
  skos:prefLabel "cat"@en ; skos:notation "C-1" ;
  skos:note [ skos:prefLabel "anonymous note"@en ] .
<http://ex.org/rel> skos:related ex:cat .
`

func TestReadJSONLDSameGraphAsTurtle(t *testing.T) {
	got, err := readJSONLDAll(t, skosJSONLD)
	if err != nil {
		t.Fatal(err)
	}
	var want []Triple
	if err := ReadTurtle(strings.NewReader(skosTurtle), Options{File: "v.ttl"}, func(tr Triple) error {
		want = append(want, tr)
		return nil
	}); err != nil {
		t.Fatal(err)
	}
	if len(got) != 15 || len(want) != 15 {
		t.Errorf("got %d triples from JSON-LD and %d from Turtle, want 15 each", len(got), len(want))
	}
	if ok, why := Isomorphic(got, want); !ok {
		t.Errorf("JSON-LD and Turtle graphs differ: %s\nJSON-LD:\n%s", why, joinTriples(got))
	}
}

func joinTriples(ts []Triple) string {
	lines := make([]string, len(ts))
	for i, tr := range ts {
		lines[i] = tr.String()
	}
	sort.Strings(lines)
	return strings.Join(lines, "\n")
}

func TestReadJSONLDNamedGraph(t *testing.T) {
	// Source: JSON-LD 1.1 §4.9 (named graphs): a top-level @id with @graph
	// names the graph of the nested nodes.
	doc := `{"@context": {"ex": "http://ex.org/"},
	  "@id": "ex:g", "@graph": [{"@id": "ex:a", "ex:p": "v"}]}`
	got, err := readJSONLDAll(t, doc)
	if err != nil {
		t.Fatal(err)
	}
	want := `<http://ex.org/a> <http://ex.org/p> "v" <http://ex.org/g> .`
	if len(got) != 1 || got[0].String() != want {
		t.Errorf("got %q, want %q", joinTriples(got), want)
	}
}

func TestReadJSONLDBadInput(t *testing.T) {
	tests := []struct {
		name      string
		doc       string
		line, col int
		msg       string
		kind      error
	}{
		{
			name: "JSON syntax error",
			doc:  "{\n  \"@id\": \"http://ex.org/a\",\n  \"x\" 1\n}",
			line: 3, col: 7, msg: "JSON: invalid character",
			kind: ErrSyntax,
		},
		{
			name: "truncated",
			doc:  "{\n  \"@id\": \"http://ex.org/a\",",
			line: 2, col: 28, msg: "unexpected end",
			kind: ErrSyntax,
		},
		{
			name: "remote context refused",
			doc:  "{\n  \"@context\": \"https://ex.org/ctx.jsonld\",\n  \"@id\": \"a\"\n}",
			line: 2, col: 15, msg: "never fetched",
			kind: ErrRemoteContext,
		},
		{
			// Source: RDF 1.1 Concepts §3.3 (well-formed BCP 47 tags);
			// JSON-LD 1.1 "Deserialize JSON-LD to RDF" drops such a
			// value, which would lose a label without a word.
			name: "@language that is not a language tag",
			doc:  "{\n  \"@id\": \"http://ex.org/a\",\n  \"http://www.w3.org/2004/02/skos/core#prefLabel\": {\"@value\": \"cat\", \"@language\": \"00\"}\n}",
			line: 3, col: 83, msg: `@language "00" is not a language tag`,
			kind: ErrSyntax,
		},
		{
			name: "a context's default @language that is not a tag",
			doc:  "{\"@context\": {\"@language\": \"e1\"},\n \"@id\": \"http://ex.org/a\", \"http://www.w3.org/2004/02/skos/core#prefLabel\": \"cat\"}",
			line: 1, col: 28, msg: `@language "e1" is not a language tag`,
			kind: ErrSyntax,
		},
		{
			name: "invalid UTF-8",
			doc:  "{\"@id\": \"http://ex.org/\xff\"}",
			line: 1, col: 24, msg: "invalid UTF-8",
			kind: ErrSyntax,
		},
		{
			name: "not JSON at all",
			doc:  "<rdf:RDF/>",
			line: 1, col: 1, msg: "JSON: invalid character '<'",
			kind: ErrSyntax,
		},
		{
			name: "JSON-LD error",
			doc:  `{"@context": {"@vocab": 5}, "@id": "http://ex.org/a"}`,
			line: 1, col: 1, msg: "JSON-LD: invalid vocab mapping",
			kind: ErrSyntax,
		},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			_, err := readJSONLDAll(t, tc.doc)
			var pe *ParseError
			if !errors.As(err, &pe) {
				t.Fatalf("error %v (%T), want *ParseError", err, err)
			}
			if !errors.Is(err, tc.kind) || !errors.Is(err, ErrSyntax) {
				t.Errorf("error %v does not match %v and ErrSyntax", err, tc.kind)
			}
			if pe.File != "v.jsonld" || pe.Line != tc.line || pe.Col != tc.col || !strings.Contains(pe.Msg, tc.msg) {
				t.Errorf("got %v, want v.jsonld:%d:%d: ...%s...", err, tc.line, tc.col, tc.msg)
			}
		})
	}
}

// FuzzJSONLD checks that no input panics (json-gold included) and every
// failure is a *ParseError with a position.
func FuzzJSONLD(f *testing.F) {
	f.Add([]byte(skosJSONLD))
	f.Add([]byte(`{"@context": {"ex": "http://ex.org/"}, "@id": "ex:g", "@graph": [{"@id": "ex:a", "ex:p": "v"}]}`))
	f.Add([]byte(`{"@context": {"@base": "http://ex.org/", "l": {"@id": "http://ex.org/l", "@container": "@list"}}, "@id": "a", "l": [1, 2.5, true, {"@value": "x", "@direction": "rtl"}]}`))
	f.Add([]byte(`[{"@id": "_:b", "@type": "http://ex.org/T", "http://ex.org/p": {"@json": {"a": 1}}}]`))
	f.Fuzz(func(t *testing.T, b []byte) {
		var ts []Triple
		err := ReadJSONLD(bytes.NewReader(b), Options{Base: "http://ex.org/d"}, func(tr Triple) error {
			ts = append(ts, tr)
			return nil
		})
		if err != nil {
			var pe *ParseError
			if !errors.As(err, &pe) || pe.Line < 1 || pe.Col < 1 || !errors.Is(err, ErrSyntax) {
				t.Fatalf("error %v (%T) is not a *ParseError with a position", err, err)
			}
		}
	})
}
