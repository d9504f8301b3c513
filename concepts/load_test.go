package concepts

import (
	"bytes"
	"errors"
	"fmt"
	"os"
	"path/filepath"
	"reflect"
	"strings"
	"testing"

	"termgrove/concepts/rdf"
)

// loadOrSkip loads a file, skipping the test while its reader is a stub.
func loadOrSkip(t testing.TB, path string, opt LoadOptions) (*Scheme, error) {
	t.Helper()
	s, err := Load(path, opt)
	if IsNotImplemented(err) {
		t.Skipf("%s: %v", path, err)
	}
	return s, err
}

// summary is what every serialisation of testdata/small.ttl must give.
type summary struct {
	Triples, Concepts, Top, Poly, MaxDepth, Collections, Deprecated int
	PearPref, CollectionMembers                                     []string
	Problems                                                        []Problem
}

func summarize(s *Scheme) summary {
	sum := summary{Triples: s.Info().Triples, Concepts: len(s.Concepts), MaxDepth: s.MaxDepth(),
		Collections: len(s.Collections), Top: len(s.TopConcepts()), Problems: s.Check(CheckOptions{Langs: []string{"en", "fr"}})}
	for _, c := range s.Concepts {
		if len(c.Broader) > 1 {
			sum.Poly++
		}
		if c.Deprecated {
			sum.Deprecated++
		}
	}
	if i, ok := s.Lookup("https://example.org/garden/pear-tree"); ok {
		for _, l := range s.Concepts[i].Pref {
			sum.PearPref = append(sum.PearPref, l.Text+"@"+l.Lang)
		}
	}
	if len(s.Collections) > 0 {
		sum.CollectionMembers = s.Collections[0].Members
	}
	return sum
}

func TestLoadSmallEveryFormat(t *testing.T) {
	g := "https://example.org/garden/"
	// Source: testdata/small.ttl, counted by hand; 135 triples per
	// `rapper -i turtle -c testdata/small.ttl` (raptor2-utils 2.0.15).
	want := summary{Triples: 135, Concepts: 19, Top: 3, Poly: 1, MaxDepth: 2, Collections: 1, Deprecated: 1,
		PearPref:          []string{"poirier@fr", "pear tree@en"},
		CollectionMembers: []string{g + "tomato", g + "leek", g + "thyme"}}
	files := []struct{ path, format string }{
		{"../testdata/small.ttl", FormatTurtle},
		{"../testdata/check/formats/small.nt", FormatNTriples},
		{"../testdata/check/formats/small.nq", FormatNQuads},
		{"../testdata/check/formats/small.rdf", FormatRDFXML},
		{"../testdata/check/formats/small.jsonld", FormatJSONLD},
	}
	for _, f := range files {
		t.Run(filepath.Base(f.path), func(t *testing.T) {
			s, err := loadOrSkip(t, f.path, LoadOptions{})
			if err != nil {
				t.Fatal(err)
			}
			if s.Info().Format != f.format {
				t.Errorf("format %q, want %q", s.Info().Format, f.format)
			}
			got := summarize(s)
			// Labels of one concept come in document order, which differs by format.
			if len(got.PearPref) == 2 && got.PearPref[0] > got.PearPref[1] == (want.PearPref[0] < want.PearPref[1]) {
				got.PearPref[0], got.PearPref[1] = got.PearPref[1], got.PearPref[0]
			}
			if !reflect.DeepEqual(got, want) {
				t.Errorf("summary\n got %+v\nwant %+v", got, want)
			}
		})
	}
}

func TestLoadBrokenFiles(t *testing.T) {
	dir := "../testdata/check/"
	tests := []struct {
		file   string
		opt    LoadOptions
		err    error  // wanted kind; nil = loads
		where  string // prefix of the error ("file:line:")
		code   string // a problem Check must find
		detail string // part of that problem's message
	}{
		{"not-rdf.ttl", LoadOptions{}, ErrNotRDF, dir + "not-rdf.ttl:1:1: not an RDF document", "", ""},
		{"bad-utf8.ttl", LoadOptions{}, ErrNotRDF, dir + "bad-utf8.ttl:2:15:", "", ""},
		{"empty.ttl", LoadOptions{}, ErrNoConcepts, "no concepts found in " + dir + "empty.ttl", "", ""},
		{"no-concepts.ttl", LoadOptions{}, ErrNoConcepts, "no concepts found", "", ""},
		{"undefined-prefix.ttl", LoadOptions{}, rdf.ErrSyntax, dir + "undefined-prefix.ttl:5:", "", ""},
		{"truncated.ttl", LoadOptions{}, rdf.ErrSyntax, dir + "truncated.ttl:", "", ""},
		{"two-schemes.ttl", LoadOptions{}, ErrScheme, "", "", ""},
		{"two-schemes.ttl", LoadOptions{Scheme: "https://example.org/t/s2"}, nil, "", "", ""},
		{"cycle.ttl", LoadOptions{}, nil, "", "cycle", "https://example.org/t/a → https://example.org/t/b → https://example.org/t/c → https://example.org/t/a"},
		{"s14.ttl", LoadOptions{}, nil, "", "S14", `"car", "automobile"`},
		{"orphan.ttl", LoadOptions{}, nil, "", "orphan", ""},
		{"turtle-named.rdf", LoadOptions{}, nil, "", "orphan", ""},
		{"orphan.ttl", LoadOptions{Format: "csv"}, ErrFormat, "", "", ""},
		{"bad-iri.ttl", LoadOptions{}, rdf.ErrSyntax, dir + "bad-iri.ttl:3:", "", ""},
		// N-Triples with no extension: the content decides; one root concept, no scheme.
		{"no-extension", LoadOptions{}, nil, "", "orphan", ""},
	}
	for _, tt := range tests {
		t.Run(tt.file, func(t *testing.T) {
			s, err := loadOrSkip(t, dir+tt.file, tt.opt)
			if tt.err != nil {
				if !errors.Is(err, tt.err) {
					t.Fatalf("err = %v, want %v", err, tt.err)
				}
				if !strings.HasPrefix(err.Error(), tt.where) {
					t.Errorf("err = %q, want it to start with %q", err, tt.where)
				}
				return
			}
			if err != nil {
				t.Fatal(err)
			}
			if tt.code == "" {
				return
			}
			for _, p := range s.Check(CheckOptions{}) {
				if p.Code == tt.code && strings.Contains(p.Message, tt.detail) {
					return
				}
			}
			t.Errorf("no %s problem with %q in %v", tt.code, tt.detail, s.Check(CheckOptions{}))
		})
	}
}

// genTurtle writes a SKOS scheme of n concepts shaped like a real
// thesaurus: a 4-ary tree, every 50th concept with a second broader,
// en+fr prefLabels, an altLabel, a definition and a related link.
func genTurtle(n int) []byte {
	var b bytes.Buffer
	b.WriteString("@prefix skos: <http://www.w3.org/2004/02/skos/core#> .\n@prefix ex: <https://example.org/gen/> .\n\n")
	b.WriteString("ex:scheme a skos:ConceptScheme ; skos:hasTopConcept ex:c0 .\n")
	for i := 0; i < n; i++ {
		fmt.Fprintf(&b, "ex:c%d a skos:Concept ;\n    skos:inScheme ex:scheme ;\n", i)
		fmt.Fprintf(&b, "    skos:prefLabel \"concept %d\"@en, \"concept %d\"@fr ;\n    skos:altLabel \"term number %d\"@en ;\n", i, i, i)
		fmt.Fprintf(&b, "    skos:definition \"A generated concept with the number %d, for benchmarks.\"@en", i)
		if i > 0 {
			fmt.Fprintf(&b, " ;\n    skos:broader ex:c%d", (i-1)/4)
			if i%50 == 0 && i > 100 {
				fmt.Fprintf(&b, ", ex:c%d", (i-1)/4-1)
			}
			if i%7 == 0 {
				fmt.Fprintf(&b, " ;\n    skos:related ex:c%d", i-1)
			}
		}
		b.WriteString(" .\n\n")
	}
	return b.Bytes()
}

func TestGeneratedDocumentLoads(t *testing.T) {
	doc := genTurtle(500)
	s, err := LoadReader(bytes.NewReader(doc), LoadOptions{File: "gen.ttl"})
	if IsNotImplemented(err) {
		t.Skip(err)
	}
	if err != nil {
		t.Fatal(err)
	}
	if len(s.Concepts) != 500 || len(s.Check(CheckOptions{Langs: []string{"en", "fr"}})) != 0 {
		t.Errorf("%d concepts, problems %v", len(s.Concepts), s.Check(CheckOptions{}))
	}
}

// BenchmarkLoad measures parsing plus building a Scheme from a generated
// Turtle document of 20,000 concepts (about 4 MB).
func BenchmarkLoad(b *testing.B) {
	doc := genTurtle(20000)
	if _, err := LoadReader(bytes.NewReader(doc), LoadOptions{}); IsNotImplemented(err) {
		b.Skip(err)
	}
	b.SetBytes(int64(len(doc)))
	b.ReportAllocs()
	for b.Loop() {
		if _, err := LoadReader(bytes.NewReader(doc), LoadOptions{}); err != nil {
			b.Fatal(err)
		}
	}
}

// BenchmarkBuild measures the loader alone (no parsing): triples of the
// same 20,000-concept document fed from memory.
func BenchmarkBuild(b *testing.B) {
	var ts []rdf.Triple
	ex := "https://example.org/gen/"
	iri := func(s string) rdf.Term { return rdf.Term{Kind: rdf.IRI, Value: s} }
	lit := func(s, lang string) rdf.Term {
		return rdf.Term{Kind: rdf.Literal, Value: s, Lang: lang, Datatype: rdf.RDFLangString}
	}
	ts = append(ts, rdf.Triple{S: iri(ex + "scheme"), P: iri(nsRDF + "type"), O: iri(nsSKOS + "ConceptScheme")})
	for i := 0; i < 20000; i++ {
		c := iri(fmt.Sprintf("%sc%d", ex, i))
		ts = append(ts,
			rdf.Triple{S: c, P: iri(nsRDF + "type"), O: iri(nsSKOS + "Concept")},
			rdf.Triple{S: c, P: iri(nsSKOS + "inScheme"), O: iri(ex + "scheme")},
			rdf.Triple{S: c, P: iri(nsSKOS + "prefLabel"), O: lit(fmt.Sprintf("concept %d", i), "en")},
			rdf.Triple{S: c, P: iri(nsSKOS + "prefLabel"), O: lit(fmt.Sprintf("concept %d", i), "fr")},
			rdf.Triple{S: c, P: iri(nsSKOS + "altLabel"), O: lit(fmt.Sprintf("term number %d", i), "en")},
			rdf.Triple{S: c, P: iri(nsSKOS + "definition"), O: lit("A generated concept.", "en")})
		if i > 0 {
			ts = append(ts, rdf.Triple{S: c, P: iri(nsSKOS + "broader"), O: iri(fmt.Sprintf("%sc%d", ex, (i-1)/4))})
		}
	}
	b.ReportAllocs()
	for b.Loop() {
		bl := newBuilder()
		for _, t := range ts {
			bl.add(t)
		}
		if _, err := bl.build(""); err != nil {
			b.Fatal(err)
		}
	}
}

// wordnetTTL is the large vocabulary scripts/loadbench.sh builds.
const wordnetTTL = "../.cache/wordnet/vocabulary.ttl"

// BenchmarkLoadWordNet loads the 117,661-concept WordNet vocabulary when
// scripts/loadbench.sh (or the dataset's build.sh) has made it.
func BenchmarkLoadWordNet(b *testing.B) {
	if _, err := os.Stat(wordnetTTL); err != nil {
		b.Skip("no WordNet vocabulary; run scripts/loadbench.sh")
	}
	for b.Loop() {
		if _, err := Load(wordnetTTL, LoadOptions{}); err != nil {
			b.Fatal(err)
		}
	}
}

// BenchmarkParseWordNet is the Turtle reader alone on the same file, the
// floor for BenchmarkLoadWordNet.
func BenchmarkParseWordNet(b *testing.B) {
	if _, err := os.Stat(wordnetTTL); err != nil {
		b.Skip("no WordNet vocabulary; run scripts/loadbench.sh")
	}
	for b.Loop() {
		f, err := os.Open(wordnetTTL)
		if err != nil {
			b.Fatal(err)
		}
		n := 0
		_, err = ReadTriples(f, LoadOptions{File: wordnetTTL}, func(rdf.Triple) error { n++; return nil })
		f.Close()
		if err != nil {
			b.Fatal(err)
		}
	}
}

// BenchmarkCheckWordNet runs Check on the loaded WordNet vocabulary.
func BenchmarkCheckWordNet(b *testing.B) {
	if _, err := os.Stat(wordnetTTL); err != nil {
		b.Skip("no WordNet vocabulary; run scripts/loadbench.sh")
	}
	s, err := Load(wordnetTTL, LoadOptions{})
	if err != nil {
		b.Fatal(err)
	}
	for b.Loop() {
		s.Check(CheckOptions{Langs: []string{"en"}})
	}
}

// FuzzLoad feeds arbitrary bytes through sniffing, a reader, the builder,
// Check and every hierarchy query: none may panic or hang.
func FuzzLoad(f *testing.F) {
	for _, p := range []string{"../testdata/small.ttl", "../testdata/check/cycle.ttl", "../testdata/check/truncated.ttl",
		"../testdata/check/formats/small.nt", "../testdata/check/formats/small.rdf", "../testdata/check/formats/small.jsonld"} {
		b, err := os.ReadFile(p)
		if err != nil {
			f.Fatal(err)
		}
		f.Add(b)
	}
	f.Fuzz(func(t *testing.T, doc []byte) {
		s, err := LoadReader(bytes.NewReader(doc), LoadOptions{File: "fuzz"})
		if err != nil {
			return
		}
		s.Check(CheckOptions{Langs: []string{"en"}})
		for i := range s.Concepts {
			s.Ancestors(i)
			s.Descendants(i)
			s.PathsToTop(i)
		}
	})
}

// TestWordNetFigures checks the loader against the published statistics of
// the large vocabulary, when scripts/loadbench.sh has built it.
func TestWordNetFigures(t *testing.T) {
	if testing.Short() {
		t.Skip("short mode")
	}
	if _, err := os.Stat(wordnetTTL); err != nil {
		t.Skip("no WordNet vocabulary; run scripts/loadbench.sh")
	}
	s, err := Load(wordnetTTL, LoadOptions{})
	if err != nil {
		t.Fatal(err)
	}
	poly, alt := 0, 0
	for _, c := range s.Concepts {
		if len(c.Broader) > 1 {
			poly++
		}
		alt += len(c.Alt)
	}
	shared := 0
	for _, p := range s.Check(CheckOptions{}) {
		if p.Code != "shared-preflabel" {
			t.Errorf("unexpected problem %v", p)
			continue
		}
		shared++
	}
	// Source: ../shared/datasets/wordnet/README.md, "Statistics": 117,661
	// concepts, 705,683 triples, 562 top concepts, 2,244 concepts with >1
	// broader, max depth 19, 89,319 altLabels.
	// Shared prefLabels: the README counts 15,346 exact strings; Check folds
	// case, giving 15,629 — both counted independently with Python over
	// vocabulary.nt (2026-12-01).
	got := []int{len(s.Concepts), s.Info().Triples, len(s.TopConcepts()), poly, s.MaxDepth(), alt, shared}
	want := []int{117661, 705683, 562, 2244, 19, 89319, 15629}
	if !reflect.DeepEqual(got, want) {
		t.Errorf("concepts, triples, tops, poly, depth, alt, shared = %v, want %v", got, want)
	}
}
