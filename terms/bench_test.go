package terms

import (
	"bufio"
	"math/rand/v2"
	"os"
	"strconv"
	"strings"
	"testing"
)

// wordnetNT is the N-Triples file of the WordNet SKOS vocabulary, built by
// `bash /work/shared/datasets/wordnet/build.sh .cache/wordnet` at the module root.
const wordnetNT = "../.cache/wordnet/vocabulary.nt"

// readWordnet crudely reads prefLabel/altLabel and definition literals from
// the N-Triples file (a stand-in until the RDF readers are in use here).
func readWordnet(tb testing.TB) (labels, defs []string) {
	f, err := os.Open(wordnetNT)
	if err != nil {
		tb.Skipf("WordNet vocabulary not built (%v): run bash /work/shared/datasets/wordnet/build.sh .cache/wordnet", err)
	}
	defer f.Close()
	sc := bufio.NewScanner(f)
	sc.Buffer(make([]byte, 1<<20), 1<<20)
	for sc.Scan() {
		line := sc.Text()
		var isDef bool
		switch {
		case strings.Contains(line, "core#prefLabel> \""), strings.Contains(line, "core#altLabel> \""):
		case strings.Contains(line, "core#definition> \""):
			isDef = true
		default:
			continue
		}
		q := strings.IndexByte(line, '"')
		e := strings.LastIndex(line, "\"@")
		if q < 0 || e <= q {
			continue
		}
		s, err := strconv.Unquote(line[q : e+1])
		if err != nil {
			continue
		}
		if isDef {
			defs = append(defs, s)
		} else {
			labels = append(labels, s)
		}
	}
	return labels, defs
}

// compile analyses labels and adds the multi-word ones as phrases, as
// prior.Build does.
func compile(a *Analyzer, labels []string) {
	var toks []Token
	var words []string
	for _, l := range labels {
		toks, _ = a.AnalyzeWords(l, "", toks[:0], true)
		if len(toks) < 2 {
			continue
		}
		words = words[:0]
		for _, t := range toks {
			words = append(words, t.Term)
		}
		a.AddPhrase(words)
	}
}

// prose joins definitions into sentences, about size bytes.
func prose(defs []string, size int) string {
	var sb strings.Builder
	for sb.Len() < size {
		for _, d := range defs {
			sb.WriteString(strings.ToUpper(d[:1]))
			sb.WriteString(d[1:])
			sb.WriteString(". ")
			if sb.Len() >= size {
				break
			}
		}
	}
	return sb.String()
}

// BenchmarkAnalyze: English prose (WordNet glosses joined as sentences)
// against the phrases of the WordNet vocabulary's 117k concepts, grow=false.
func BenchmarkAnalyze(b *testing.B) {
	labels, defs := readWordnet(b)
	a, _ := New(Options{Languages: []string{"en"}}, nil)
	compile(a, labels)
	text := prose(defs, 8<<20)
	a.Analyze(text, nil, true) // fill the dictionary, as fit does
	measure(b, text, func() { a.Analyze(text, nil, false) }, a)
}

// BenchmarkAnalyzeNoPhrases is the same prose without a phrase matcher, as
// a reference for the cost of phrase matching.
func BenchmarkAnalyzeNoPhrases(b *testing.B) {
	_, defs := readWordnet(b)
	a, _ := New(Options{Languages: []string{"en"}}, nil)
	text := prose(defs, 8<<20)
	a.Analyze(text, nil, true)
	measure(b, text, nil, a)
}

// BenchmarkReferenceFields is the reference measured in the same run:
// strings.Fields over the same prose and a map lookup of each field, the
// least a tokenizer does.
func BenchmarkReferenceFields(b *testing.B) {
	_, defs := readWordnet(b)
	text := prose(defs, 8<<20)
	seen := map[string]int32{}
	for _, f := range strings.Fields(text) {
		seen[f] = int32(len(seen))
	}
	b.SetBytes(int64(len(text)))
	cpu0 := cpuSeconds()
	var n int32
	for b.Loop() {
		for _, f := range strings.Fields(text) {
			n += seen[f]
		}
	}
	reportCPU(b, len(text), cpu0)
}

// measure runs a.Analyze over text (grow=false, tokens reused) and reports
// MB/s per CPU second next to the usual wall-clock figure.
func measure(b *testing.B, text string, _ func(), a *Analyzer) {
	var toks []Token
	toks, _ = a.Analyze(text, toks[:0], false)
	b.SetBytes(int64(len(text)))
	b.ReportAllocs()
	b.ResetTimer()
	cpu0 := cpuSeconds()
	for b.Loop() {
		toks, _ = a.Analyze(text, toks[:0], false)
	}
	reportCPU(b, len(text), cpu0)
	b.ReportMetric(float64(a.Phrases()), "phrases")
	b.ReportMetric(float64(len(toks)), "tokens")
}

func reportCPU(b *testing.B, size int, cpu0 float64) {
	if d := cpuSeconds() - cpu0; d > 0 {
		b.ReportMetric(float64(size)*float64(b.N)/1e6/d, "MB/cpu-s")
	}
}

// BenchmarkAnalyzeSynthetic: synthetic prose and 117,000 synthetic labels
// of two to four words drawn from the same Zipf-distributed vocabulary.
func BenchmarkAnalyzeSynthetic(b *testing.B) {
	text, labels := synthetic(8<<20, 117000)
	a, _ := New(Options{Languages: []string{"en"}}, nil)
	compile(a, labels)
	a.Analyze(text, nil, true)
	measure(b, text, func() { a.Analyze(text, nil, false) }, a)
}

// BenchmarkAnalyzeGrow measures the first pass over a corpus (grow=true,
// fresh analyzer each time, so every word is a cache miss once).
func BenchmarkAnalyzeGrow(b *testing.B) {
	text, _ := synthetic(4<<20, 0)
	b.SetBytes(int64(len(text)))
	b.ReportAllocs()
	for b.Loop() {
		a, _ := New(Options{}, nil)
		a.Analyze(text, nil, true)
	}
}

// synthetic makes prose of about size bytes from a 50,000-word vocabulary
// of pseudo-words with Zipf frequencies, and n labels over the same words.
func synthetic(size, n int) (string, []string) {
	r := rand.New(rand.NewPCG(1, 2))
	const vocab = 50000
	words := make([]string, vocab)
	syl := []string{"ka", "to", "ri", "men", "sa", "lo", "ver", "un", "pe", "dra", "qui", "bel", "os", "tan", "ge"}
	for i := range words {
		var sb strings.Builder
		for k := 0; k < 2+r.IntN(3); k++ {
			sb.WriteString(syl[r.IntN(len(syl))])
		}
		words[i] = sb.String() + strconv.Itoa(i % 7)[:0]
	}
	z := rand.NewZipf(rand.New(rand.NewPCG(3, 4)), 1.1, 1, vocab-1)
	var sb strings.Builder
	for sb.Len() < size {
		nw := 8 + r.IntN(20)
		for j := 0; j < nw; j++ {
			w := words[z.Uint64()]
			if j == 0 {
				w = strings.ToUpper(w[:1]) + w[1:]
			}
			sb.WriteString(w)
			if j < nw-1 {
				if r.IntN(12) == 0 {
					sb.WriteString(", ")
				} else {
					sb.WriteByte(' ')
				}
			}
		}
		sb.WriteString(". ")
	}
	labels := make([]string, n)
	for i := range labels {
		k := 2 + r.IntN(3)
		parts := make([]string, k)
		for j := range parts {
			parts[j] = words[z.Uint64()]
		}
		labels[i] = strings.Join(parts, " ")
	}
	return sb.String(), labels
}

// BenchmarkAnalyze50MB analyses one 50 MB record of synthetic prose in a
// single call (grow=false, after a growing pass), the size DESIGN's bad
// input list names.
func BenchmarkAnalyze50MB(b *testing.B) {
	text, labels := synthetic(50<<20, 10000)
	a, _ := New(Options{}, nil)
	compile(a, labels)
	toks, _ := a.Analyze(text, nil, true)
	b.SetBytes(int64(len(text)))
	b.ResetTimer()
	cpu0 := cpuSeconds()
	for b.Loop() {
		toks, _ = a.Analyze(text, toks[:0], false)
	}
	reportCPU(b, len(text), cpu0)
	b.ReportMetric(float64(len(toks)), "tokens")
}
