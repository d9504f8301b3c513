package concepts

import (
	"strings"
	"testing"

	"termgrove/concepts/rdf"
)

func TestSniff(t *testing.T) {
	// Common practice, no source: what the first bytes of each serialisation
	// look like (the W3C Recommendations' examples open this way).
	tests := []struct {
		name, head, file string
		want             string // "" = not RDF
		line, col        int    // where the error points (not RDF only)
	}{
		{"xml decl", `<?xml version="1.0"?><rdf:RDF>`, "v.ttl", FormatRDFXML, 0, 0},
		{"rdf:RDF", "\n  <rdf:RDF xmlns:rdf=\"http://www.w3.org/1999/02/22-rdf-syntax-ns#\">", "", FormatRDFXML, 0, 0},
		{"xml comment", "<!-- licence -->\n<rdf:RDF>", "", FormatRDFXML, 0, 0},
		{"jsonld object", `{"@context": {}}`, "v.ttl", FormatJSONLD, 0, 0},
		{"jsonld array", "[\n {\"@id\": \"x\"}]", "", FormatJSONLD, 0, 0},
		{"turtle blank node list", "[ a <http://x/C> ] .", "", FormatTurtle, 0, 0},
		{"@prefix after comments", "# licence\n# more\n\n@prefix ex: <http://x/> .", "v.nt", FormatTurtle, 0, 0},
		{"@base", "@base <http://x/> .", "", FormatTurtle, 0, 0},
		{"SPARQL PREFIX", "PREFIX ex: <http://x/>\n", "", FormatTurtle, 0, 0},
		{"prefix lower case", "prefix ex: <http://x/>\n", "", FormatTurtle, 0, 0},
		{"prefixed name", "ex:a ex:b ex:c .", "", FormatTurtle, 0, 0},
		{"default prefix", ":a :b :c .", "", FormatTurtle, 0, 0},
		{"ntriples", "<http://x/a> <http://x/b> \"c\"@en .\n<http://x/a> <http://x/b> _:b1 .\n", "v.ttl", FormatNTriples, 0, 0},
		{"ntriples typed", "<http://x/a> <http://x/b> \"1\"^^<http://www.w3.org/2001/XMLSchema#int> .\n", "", FormatNTriples, 0, 0},
		{"nquads", "<http://x/a> <http://x/b> <http://x/c> <http://x/g> .\n", "", FormatNQuads, 0, 0},
		{"turtle with IRIs and ;", "<http://x/a> <http://x/b> <http://x/c> ;\n  <http://x/d> \"e\" .\n", "", FormatTurtle, 0, 0},
		{"blank subject turtle", "_:a <http://x/b> [ <http://x/c> 1 ] .\n", "", FormatTurtle, 0, 0},
		{"empty, extension decides", "", "v.rdf", FormatRDFXML, 0, 0},
		{"comments only", "# nothing\n", "", FormatTurtle, 0, 0},
		{"csv", "\n\nTitle,Author\nx,y\n", "v.ttl", "", 3, 1},
		{"prose", "  Hello world", "v.ttl", "", 1, 3},
		{"gzip", "\x1f\x8b\x08\x00", "v.ttl.gz", "", 1, 1},
		{"binary", "ab\x00cd", "", "", 1, 1},
		{"invalid utf-8 after prefix", "@prefix ex: <http://x/> .\nex:a ex:b \"caf\xe9\" .", "", "", 2, 15},
	}
	for _, tt := range tests {
		r := sniff([]byte(tt.head), tt.file, true)
		if r.format != tt.want {
			t.Errorf("%s: format %q, want %q (%s)", tt.name, r.format, tt.want, r.why)
			continue
		}
		if tt.want == "" && (r.line != tt.line || r.col != tt.col || r.why == "") {
			t.Errorf("%s: error at %d:%d (%q), want %d:%d", tt.name, r.line, r.col, r.why, tt.line, tt.col)
		}
	}
}

func TestSniffCutLine(t *testing.T) {
	// The peek window may end inside a line; that line must not decide.
	head := strings.Repeat("<http://x/a> <http://x/b> <http://x/c> .\n", 3) + "<http://x/a> <http://x/b> \"unfinish"
	if got := sniff([]byte(head), "", false).format; got != FormatNTriples {
		t.Errorf("format %q, want ntriples", got)
	}
}

func TestNormalizeFormat(t *testing.T) {
	for in, want := range map[string]string{"ttl": FormatTurtle, ".NT": FormatNTriples, "rdfxml": FormatRDFXML, "json-ld": FormatJSONLD, "csv": ""} {
		if got := NormalizeFormat(in); got != want {
			t.Errorf("NormalizeFormat(%q) = %q, want %q", in, got, want)
		}
	}
}

func TestReadTriplesFormatOverride(t *testing.T) {
	// N-Triples is valid Turtle: forcing "ttl" must read it the same.
	doc := "<https://example.org/t/a> <http://www.w3.org/1999/02/22-rdf-syntax-ns#type> <http://www.w3.org/2004/02/skos/core#Concept> .\n"
	for _, format := range []string{"", "ttl", "nt"} {
		n := 0
		got, err := ReadTriples(strings.NewReader(doc), LoadOptions{Format: format}, func(rdf.Triple) error { n++; return nil })
		if IsNotImplemented(err) {
			t.Skip(err)
		}
		if err != nil || n != 1 {
			t.Errorf("format %q: %d triples, err %v", format, n, err)
		}
		if want := map[string]string{"": FormatNTriples, "ttl": FormatTurtle, "nt": FormatNTriples}[format]; got != want {
			t.Errorf("format %q read as %q, want %q", format, got, want)
		}
	}
	if DetectFormat([]byte(doc), "") != FormatNTriples || DetectFormat([]byte("hello"), "x.ttl") != "" {
		t.Errorf("DetectFormat disagrees with sniff")
	}
}
