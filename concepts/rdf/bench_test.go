package rdf

import (
	"bytes"
	"fmt"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// genSKOSTurtle generates a SKOS-like Turtle document with n concepts, shaped
// like a thesaurus export: prefixed names, ";" lists, language-tagged
// labels, a definition and one or two broader links per concept.
func genSKOSTurtle(n int) []byte {
	var b bytes.Buffer
	b.WriteString("@prefix skos: <http://www.w3.org/2004/02/skos/core#> .\n@prefix ex: <https://example.org/thesaurus/> .\n\n")
	b.WriteString("ex:scheme a skos:ConceptScheme ; skos:prefLabel \"Example thesaurus\"@en .\n\n")
	for i := 0; i < n; i++ {
		fmt.Fprintf(&b, "ex:c%07d a skos:Concept ;\n    skos:inScheme ex:scheme ;\n", i)
		fmt.Fprintf(&b, "    skos:prefLabel \"concept number %d\"@en, \"notion n\u00B0 %d\"@fr ;\n", i, i)
		if i%2 == 0 {
			fmt.Fprintf(&b, "    skos:altLabel \"alternative %d\"@en ;\n", i)
		}
		fmt.Fprintf(&b, "    skos:definition \"a made-up concept used to measure the reader, number %d, with \\\"quotes\\\"\"@en ;\n", i)
		if i > 0 {
			fmt.Fprintf(&b, "    skos:broader ex:c%07d", (i-1)/3)
			if i%17 == 0 && i > 20 {
				fmt.Fprintf(&b, ", <https://example.org/thesaurus/c%07d>", i/5)
			}
			b.WriteString(" ;\n")
		}
		fmt.Fprintf(&b, "    skos:notation \"%d\"^^ex:code .\n", i)
	}
	return b.Bytes()
}

// BenchmarkTurtle reports MB/s for ReadTurtle on a 20,000-concept document
// (about 5 MB, 150,000 triples).
func BenchmarkTurtle(b *testing.B) {
	data := genSKOSTurtle(20000)
	b.SetBytes(int64(len(data)))
	b.ReportAllocs()
	cpu := cpuSeconds()
	for b.Loop() {
		n := 0
		if err := ReadTurtle(bytes.NewReader(data), Options{}, func(Triple) error { n++; return nil }); err != nil {
			b.Fatal(err)
		}
	}
	reportCPU(b, cpu, len(data))
}

// reportCPU adds MB per CPU-second, steadier than MB/s on a shared machine.
func reportCPU(b *testing.B, start float64, size int) {
	if used := cpuSeconds() - start; used > 0 {
		b.ReportMetric(float64(size)*float64(b.N)/used/1e6, "MB/cpu-s")
	}
}

// BenchmarkNTriples reports MB/s for ReadNTriples on the same graph written
// as N-Triples.
func BenchmarkNTriples(b *testing.B) {
	var nt strings.Builder
	if err := ReadTurtle(bytes.NewReader(genSKOSTurtle(20000)), Options{}, func(t Triple) error {
		nt.WriteString(t.String())
		nt.WriteByte('\n')
		return nil
	}); err != nil {
		b.Fatal(err)
	}
	data := []byte(nt.String())
	b.SetBytes(int64(len(data)))
	b.ReportAllocs()
	cpu := cpuSeconds()
	for b.Loop() {
		if err := ReadNTriples(bytes.NewReader(data), Options{}, func(Triple) error { return nil }); err != nil {
			b.Fatal(err)
		}
	}
	reportCPU(b, cpu, len(data))
}

func TestSkosTurtleParses(t *testing.T) {
	n := 0
	if err := ReadTurtle(bytes.NewReader(genSKOSTurtle(100)), Options{}, func(Triple) error { n++; return nil }); err != nil {
		t.Fatal(err)
	}
	// 2 scheme triples; per concept 2 + 2 labels + definition + notation, an
	// altLabel for even i, a broader for i > 0, a second for i%17 == 0 && i > 20.
	want := 2 + 100*6 + 50 + 99 + 4
	if n != want {
		t.Fatalf("%d triples, want %d", n, want)
	}
}

// benchWordNet reads the WordNet SKOS vocabulary built by
// ../shared/datasets/wordnet/build.sh into ../../.cache/wordnet, if present.
func benchWordNet(b *testing.B, file string, rd reader) {
	data, err := os.ReadFile(filepath.Join("..", "..", ".cache", "wordnet", file))
	if err != nil {
		b.Skipf("build the vocabulary first (bash ../shared/datasets/wordnet/build.sh .cache/wordnet): %v", err)
	}
	b.SetBytes(int64(len(data)))
	n := 0
	cpu := cpuSeconds()
	for b.Loop() {
		n = 0
		if err := rd(bytes.NewReader(data), Options{File: file}, func(Triple) error { n++; return nil }); err != nil {
			b.Fatal(err)
		}
	}
	b.ReportMetric((cpuSeconds()-cpu)/float64(b.N), "cpu-s/op")
	reportCPU(b, cpu, len(data))
	b.ReportMetric(float64(n), "triples")
	b.ReportMetric(float64(n)*float64(b.N)/b.Elapsed().Seconds(), "triples/s")
}

func BenchmarkWordNetTurtle(b *testing.B)   { benchWordNet(b, "vocabulary.ttl", ReadTurtle) }
func BenchmarkWordNetNTriples(b *testing.B) { benchWordNet(b, "vocabulary.nt", ReadNTriples) }
