package fit

import (
	"testing"

	"termgrove/concepts"
	"termgrove/terms"
)

// TestCorpusBuilder: subjects map to concept indices, unknown ones are
// counted and dropped, records without tokens are skipped.
// Common practice, no source.
func TestCorpusBuilder(t *testing.T) {
	s := &concepts.Scheme{Concepts: []concepts.Concept{{IRI: "http://ex.org/a"}, {IRI: "http://ex.org/b"}}}
	an, err := terms.New(terms.Options{Languages: []string{"en"}}, terms.NewDictionary())
	if err != nil {
		t.Fatal(err)
	}
	b := &CorpusBuilder{Analyzer: an, Scheme: s}
	if ok, unk := b.Add("r1", "Water mills and weirs", []string{"http://ex.org/b", "http://ex.org/zzz"}, "1905-01-01"); !ok || len(unk) != 1 || unk[0] != "http://ex.org/zzz" {
		t.Fatalf("r1: added %v, unknown %v", ok, unk)
	}
	if ok, _ := b.Add("r3", "Water mills\n\nThe weirs and the mills of the river", nil, ""); !ok {
		t.Fatal("r3 not added")
	}
	if ok, _ := b.Add("r2", "   ", nil, ""); ok {
		t.Fatal("a record without text was added")
	}
	c := b.Finish()
	if len(c.Docs) != 2 || b.Empty != 1 || b.UnknownSubjects != 1 || b.Records != 2 {
		t.Fatalf("docs %d, empty %d, unknown %d", len(c.Docs), b.Empty, b.UnknownSubjects)
	}
	d := c.Docs[0]
	if len(d.Subjects) != 1 || d.Subjects[0] != 1 || d.Year != 1905 || len(d.Words) == 0 {
		t.Fatalf("doc %+v", d)
	}
	for _, w := range d.Words {
		if w < 0 || int(w) >= c.W {
			t.Fatalf("word id %d outside [0,%d)", w, c.W)
		}
	}
	// The lead paragraph: the words before the first blank line, or all.
	if int(d.Lead) != len(d.Words) {
		t.Errorf("one paragraph: lead %d of %d words", d.Lead, len(d.Words))
	}
	if d3 := c.Docs[1]; d3.Lead != 2 || len(d3.Words) != 5 || d3.Words[1] != d3.Words[3] {
		t.Errorf("two paragraphs: lead %d, words %v", d3.Lead, d3.Words)
	}
}
