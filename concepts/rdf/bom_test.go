package rdf

import (
	"strings"
	"testing"
)

// TestReadersSkipByteOrderMark: vocabularies exported on Windows often
// start with a UTF-8 byte order mark. The N-Triples and Turtle readers
// skip it; RDF/XML and JSON-LD must too, and error positions stay those of
// the text after it.
// Source: XML 1.0 (Fifth Edition) §4.3.3 (a UTF-8 entity may begin with the
// BOM); RFC 8259 §8.1 (JSON parsers MAY ignore it); W3C N-Triples/Turtle
// readers here already do.
func TestReadersSkipByteOrderMark(t *testing.T) {
	const bom = "\ufeff"
	xmlDoc := `<?xml version="1.0"?>
<rdf:RDF xmlns:rdf="http://www.w3.org/1999/02/22-rdf-syntax-ns#" xmlns:skos="http://www.w3.org/2004/02/skos/core#">
<skos:Concept rdf:about="http://a/x"><skos:prefLabel xml:lang="en">x</skos:prefLabel></skos:Concept>
</rdf:RDF>
`
	jsonDoc := `{"@context":{"skos":"http://www.w3.org/2004/02/skos/core#"},"@id":"http://a/x","@type":"skos:Concept"}`
	for _, c := range []struct {
		name string
		read func(string) (int, error)
		doc  string
		want int
	}{
		{"rdfxml", func(s string) (int, error) {
			n := 0
			err := ReadRDFXML(strings.NewReader(s), Options{File: "v.rdf"}, func(Triple) error { n++; return nil })
			return n, err
		}, xmlDoc, 2},
		{"jsonld", func(s string) (int, error) {
			n := 0
			err := ReadJSONLD(strings.NewReader(s), Options{File: "v.jsonld"}, func(Triple) error { n++; return nil })
			return n, err
		}, jsonDoc, 1},
	} {
		n, err := c.read(bom + c.doc)
		if err != nil || n != c.want {
			t.Errorf("%s with a BOM: %d triples (want %d), err %v", c.name, n, c.want, err)
		}
	}
	// A syntax error after the BOM keeps the line and column it has
	// without the BOM.
	bad := "<?xml version=\"1.0\"?>\n<rdf:RDF xmlns:rdf=\"http://www.w3.org/1999/02/22-rdf-syntax-ns#\">\n  <oops\n"
	none := func(Triple) error { return nil }
	plain := ReadRDFXML(strings.NewReader(bad), Options{File: "v.rdf"}, none)
	withBOM := ReadRDFXML(strings.NewReader(bom+bad), Options{File: "v.rdf"}, none)
	if plain == nil || withBOM == nil || plain.Error() != withBOM.Error() {
		t.Errorf("truncated RDF/XML: %v with a BOM, %v without", withBOM, plain)
	}
}
