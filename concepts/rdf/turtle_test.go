package rdf

import (
	"fmt"
	"io"
	"strings"
	"testing"
)

func TestTurtleFeatures(t *testing.T) {
	// Expected triples written by hand from RDF 1.1 Turtle §2 (abbreviations),
	// §2.5.2 (numbers), §2.6 (blank nodes), §2.8 (collections), §6.3 (IRI
	// resolution) and §6.5 (grammar).
	src := `# features
@base <http://ex.org/dir/doc> .
@prefix : <http://ex.org/ns#> .
PREFIX skos: <http://www.w3.org/2004/02/skos/core#>
prefix ex: <rel/>
<c1> a skos:Concept ; skos:prefLabel "chat"@FR, 'cat'@en ;
    skos:notation "7"^^:code ;
    skos:broader [ skos:prefLabel """animal
ser ""vivo"" ok""" @es ] ;
    :list ( 1 -2.5 3e2 .5E-1 true ) ;
    :empty () ;
    :esc :a\.b\~c%20 ;
    :dotted :x.y ;
    ex:k _:_g1, _:n1 .
[] :p [ :q false ] .
[ :r <#frag> ] .
BASE <http://other.org/a/b/>
<../c> :s <?q> ; ;.
:t :u "x\u00E9\n" .
`
	want := `<http://ex.org/dir/c1> <http://www.w3.org/1999/02/22-rdf-syntax-ns#type> <http://www.w3.org/2004/02/skos/core#Concept> .
<http://ex.org/dir/c1> <http://www.w3.org/2004/02/skos/core#prefLabel> "chat"@fr .
<http://ex.org/dir/c1> <http://www.w3.org/2004/02/skos/core#prefLabel> "cat"@en .
<http://ex.org/dir/c1> <http://www.w3.org/2004/02/skos/core#notation> "7"^^<http://ex.org/ns#code> .
<http://ex.org/dir/c1> <http://www.w3.org/2004/02/skos/core#broader> _:b .
_:b <http://www.w3.org/2004/02/skos/core#prefLabel> "animal\nser \"\"vivo\"\" ok"@es .
<http://ex.org/dir/c1> <http://ex.org/ns#list> _:l1 .
_:l1 <http://www.w3.org/1999/02/22-rdf-syntax-ns#first> "1"^^<http://www.w3.org/2001/XMLSchema#integer> .
_:l1 <http://www.w3.org/1999/02/22-rdf-syntax-ns#rest> _:l2 .
_:l2 <http://www.w3.org/1999/02/22-rdf-syntax-ns#first> "-2.5"^^<http://www.w3.org/2001/XMLSchema#decimal> .
_:l2 <http://www.w3.org/1999/02/22-rdf-syntax-ns#rest> _:l3 .
_:l3 <http://www.w3.org/1999/02/22-rdf-syntax-ns#first> "3e2"^^<http://www.w3.org/2001/XMLSchema#double> .
_:l3 <http://www.w3.org/1999/02/22-rdf-syntax-ns#rest> _:l4 .
_:l4 <http://www.w3.org/1999/02/22-rdf-syntax-ns#first> ".5E-1"^^<http://www.w3.org/2001/XMLSchema#double> .
_:l4 <http://www.w3.org/1999/02/22-rdf-syntax-ns#rest> _:l5 .
_:l5 <http://www.w3.org/1999/02/22-rdf-syntax-ns#first> "true"^^<http://www.w3.org/2001/XMLSchema#boolean> .
_:l5 <http://www.w3.org/1999/02/22-rdf-syntax-ns#rest> <http://www.w3.org/1999/02/22-rdf-syntax-ns#nil> .
<http://ex.org/dir/c1> <http://ex.org/ns#empty> <http://www.w3.org/1999/02/22-rdf-syntax-ns#nil> .
<http://ex.org/dir/c1> <http://ex.org/ns#esc> <http://ex.org/ns#a.b~c%20> .
<http://ex.org/dir/c1> <http://ex.org/ns#dotted> <http://ex.org/ns#x.y> .
<http://ex.org/dir/c1> <http://ex.org/dir/rel/k> _:u1 .
<http://ex.org/dir/c1> <http://ex.org/dir/rel/k> _:n1 .
_:a1 <http://ex.org/ns#p> _:a2 .
_:a2 <http://ex.org/ns#q> "false"^^<http://www.w3.org/2001/XMLSchema#boolean> .
_:a3 <http://ex.org/ns#r> <http://ex.org/dir/doc#frag> .
<http://other.org/a/c> <http://ex.org/ns#s> <http://other.org/a/b/?q> .
<http://ex.org/ns#t> <http://ex.org/ns#u> "x\u00E9\n" .
`
	got, err := collect(t, ReadTurtle, src, Options{File: "f.ttl", Base: "http://ignored.org/"})
	if err != nil {
		t.Fatal(err)
	}
	exp, err := collect(t, ReadNTriples, want, Options{})
	if err != nil {
		t.Fatal(err)
	}
	if ok, why := Isomorphic(got, exp); !ok {
		for _, tr := range got {
			t.Log(tr)
		}
		t.Fatal(why)
	}
	// A written label "_g1" must not merge with the first generated node.
	for _, tr := range got {
		if tr.O.Kind == Blank && tr.P.Value == "http://ex.org/dir/rel/k" && tr.O.Value == "_g1" {
			t.Errorf("written blank node _:_g1 kept its label, which generated nodes use")
		}
	}
}

func TestByteOrderMarkSkipped(t *testing.T) {
	// Common practice, no source: editors may start UTF-8 files with U+FEFF.
	for _, rd := range []reader{ReadTurtle, ReadNTriples} {
		got, err := collect(t, rd, "\uFEFF<http://ex.org/s> <http://ex.org/p> <http://ex.org/o> .\n", Options{})
		if err != nil || len(got) != 1 {
			t.Errorf("got %v, %v; want one triple", got, err)
		}
	}
	// Columns count from after the mark.
	_, err := collect(t, ReadTurtle, "\uFEFF<a> <b> ?", Options{File: "m.ttl"})
	checkParseError(t, err, "m.ttl:1:9", "object")
}

func TestTurtleBaseFromOptions(t *testing.T) {
	// Source: RDF 1.1 Turtle §6.3 and RFC 3986 §5.1.4 (base from the retrieval IRI).
	got, err := collect(t, ReadTurtle, "<a> <b> <../c> .", Options{Base: "http://ex.org/x/y"})
	if err != nil {
		t.Fatal(err)
	}
	want := "<http://ex.org/x/a> <http://ex.org/x/b> <http://ex.org/c> ."
	if len(got) != 1 || got[0].String() != want {
		t.Fatalf("got %v, want %s", got, want)
	}
}

func TestTurtleErrors(t *testing.T) {
	const pre = "@prefix ex: <http://ex.org/> .\n"
	tests := []struct {
		name, in string
		pos      string
		contains string
	}{
		{"truncated string", pre + `ex:a ex:b "unterminated`, "v.ttl:2:24", "end of input"},
		{"truncated statement", pre + `ex:a ex:b ex:c`, "v.ttl:2:15", `"."`},
		{"truncated property list", pre + `ex:a ex:b [ ex:c ex:d`, "v.ttl:2:22", `"]"`},
		{"truncated long string", pre + "ex:a ex:b \"\"\"one\ntwo", "v.ttl:3:4", "end of input"},
		// Column counts characters: "é" before the bad byte is one column.
		{"invalid UTF-8 in string", pre + "ex:a ex:b \"é\xfe\" .", "v.ttl:2:13", "0xFE"},
		{"invalid UTF-8 in long string", pre + "ex:a ex:b \"\"\"ok\nno\xc3(\"\"\" .", "v.ttl:3:3", "0xC3"},
		{"invalid UTF-8 in name", pre + "ex:a\xff ex:b ex:c .", "v.ttl:2:5", "0xFF"},
		{"invalid UTF-8 in IRI", pre + "<http://ex.org/\xe2\x82> ex:b ex:c .", "v.ttl:2:16", "0xE2"},
		{"undefined prefix", pre + "ex:a ex:b ex:c .\nex:a skos:broader ex:c .", "v.ttl:3:6", `undefined prefix "skos:"`},
		{"space in IRI", pre + "<http://ex.org/a b> ex:b ex:c .", "v.ttl:2:17", "space"},
		{"bad IRI escape", pre + `<http://ex.org/\u003C> ex:b ex:c .`, "v.ttl:2:22", "U+003C"},
		{"literal subject", pre + `"s" ex:b ex:c .`, "v.ttl:2:1", "subject"},
		{"lines ended by CR LF and CR", "# a\r\n# b\r\r\n  ?", "v.ttl:4:3", "subject"},
		{"bad keyword", `@prefx ex: <http://ex.org/> .`, "v.ttl:1:1", "@prefix"},
		{"missing object", pre + `ex:a ex:b .`, "v.ttl:2:11", "object"},
		{"bare word", pre + `ex:a ex:b maybe .`, "v.ttl:2:11", `"maybe"`},
		{"surrogate escape", pre + `ex:a ex:b "\uDC00" .`, "v.ttl:2:12", "U+DC00"},
		{"bad number", pre + `ex:a ex:b 1e .`, "v.ttl:2:13", "exponent"},
		{"deep nesting", pre + "ex:a ex:b " + strings.Repeat("[ ex:c ", ttlMaxDepth+1), "v.ttl:2:70011", "nested"},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			_, err := collect(t, ReadTurtle, tc.in, Options{File: "v.ttl"})
			checkParseError(t, err, tc.pos, tc.contains)
		})
	}
}

// countingReader counts the bytes handed out.
type countingReader struct {
	r io.Reader
	n int
}

func (c *countingReader) Read(p []byte) (int, error) {
	n, err := c.r.Read(p)
	c.n += n
	return n, err
}

func TestTurtleStreams(t *testing.T) {
	// A 4 MB document: the first triple must arrive long before the end is read.
	var b strings.Builder
	b.WriteString("@prefix ex: <http://ex.org/> .\n")
	for i := 0; b.Len() < 4<<20; i++ {
		fmt.Fprintf(&b, "ex:c%d ex:p \"label %d\"@en .\n", i, i)
	}
	src := &countingReader{r: strings.NewReader(b.String())}
	first, n := -1, 0
	err := ReadTurtle(src, Options{}, func(Triple) error {
		if first < 0 {
			first = src.n
		}
		n++
		return nil
	})
	if err != nil {
		t.Fatal(err)
	}
	if first > 1<<20 {
		t.Errorf("first triple delivered after %d bytes were read", first)
	}
	if n < 100000 {
		t.Errorf("only %d triples", n)
	}
}
