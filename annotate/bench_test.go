package annotate

import (
	"crypto/sha256"
	"fmt"
	"math"
	"math/rand/v2"
	"os"
	"path/filepath"
	"runtime"
	"slices"
	"strings"
	"sync"
	"testing"
	"time"

	"termgrove/concepts"
	"termgrove/internal/records"
	"termgrove/model"
	"termgrove/model/modeltest"
	"termgrove/prior"
	"termgrove/terms"
)

var benchModels sync.Map // K → *Annotator

func benchAnnotator(b *testing.B, concepts, words int) *Annotator {
	if a, ok := benchModels.Load(concepts); ok {
		return a.(*Annotator)
	}
	t0 := time.Now()
	m := modeltest.Synthetic(modeltest.Options{Concepts: concepts, Free: 50, Words: words, Seed: 1})
	a, err := New(m)
	if err != nil {
		b.Fatal(err)
	}
	b.Logf("K=%d model built and prepared in %v", m.K(), time.Since(t0))
	benchModels.Store(concepts, a)
	return a
}

// benchRecord draws a 150-word record from three of the model's concept
// topics and one free topic (60/20/10/10 %), by their count rows.
func benchRecord(m *model.Model, r *rand.Rand) (string, []terms.Token) {
	ks := []int{r.IntN(m.C), r.IntN(m.C), r.IntN(m.C), m.C + r.IntN(m.F)}
	share := []float64{0.6, 0.2, 0.1, 0.1}
	ids := make([]int32, 150)
	for i := range ids {
		k := ks[pick(r, share)]
		row := m.Counts[k]
		x := r.Int64N(m.Totals[k])
		for _, e := range row {
			if x < int64(e.Count) {
				ids[i] = e.Word
				break
			}
			x -= int64(e.Count)
		}
	}
	return tokens(ids, m.Words)
}

// BenchmarkAnnotate: single-core latency for a 150-word record, with
// synthetic models of 640 and 117,659 concepts (+50 free topics).
// Reports the median and 99th percentile over b.N distinct records.
func BenchmarkAnnotate(b *testing.B) {
	for _, c := range []struct{ concepts, words int }{{640, 20000}, {117659, 100000}} {
		b.Run(fmt.Sprintf("K=%d", c.concepts+50), func(b *testing.B) {
			a := benchAnnotator(b, c.concepts, c.words)
			r := rand.New(rand.NewPCG(7, 7))
			type rec struct {
				text string
				toks []terms.Token
			}
			recs := make([]rec, 500)
			for i := range recs {
				recs[i].text, recs[i].toks = benchRecord(a.m, r)
			}
			lat := make([]time.Duration, 0, b.N)
			cpu := make([]time.Duration, 0, b.N)
			opt := Options{IncludeWords: true}
			// The machine is shared: besides wall time, measure this
			// thread's CPU time, which waiting for a core does not inflate.
			runtime.LockOSThread()
			defer runtime.UnlockOSThread()
			b.ResetTimer()
			for i := 0; i < b.N; i++ {
				x := recs[i%len(recs)]
				c0 := threadCPU()
				t0 := time.Now()
				if _, err := a.AnnotateTokens("r", x.text+fmt.Sprint(i), x.toks, opt); err != nil {
					b.Fatal(err)
				}
				lat = append(lat, time.Since(t0))
				cpu = append(cpu, threadCPU()-c0)
			}
			b.StopTimer()
			reportLatency(b, lat, cpu)
		})
	}
}

// TestMemory117k reports the heap of an annotator over the 117k-concept
// synthetic model (run with -run Memory117k -v; skipped with -short).
func TestMemory117k(t *testing.T) {
	if testing.Short() || !testing.Verbose() {
		t.Skip("memory figure: run with -v")
	}
	runtime.GC()
	var m0, m1 runtime.MemStats
	runtime.ReadMemStats(&m0)
	m := modeltest.Synthetic(modeltest.Options{Concepts: 117659, Free: 50, Words: 100000, Seed: 1})
	a, err := New(m)
	if err != nil {
		t.Fatal(err)
	}
	runtime.GC()
	runtime.ReadMemStats(&m1)
	t.Logf("model + annotator heap: %.0f MiB", float64(m1.HeapAlloc-m0.HeapAlloc)/(1<<20))
	runtime.KeepAlive(a)
}

// BenchmarkAnnotateFile measures a real model: TG_ANN_MODEL (a .grove file)
// and TG_ANN_RECORDS (JSON Lines, title + text). Records are concatenated
// and cut into texts of exactly 150 analysed tokens. Skipped when unset.
//
//	TG_ANN_MODEL=.cache/annbench/debtags.grove TG_ANN_RECORDS=.cache/debtags/test.jsonl \
//	    go test -run XXX -bench AnnotateFile -benchtime 2000x ./annotate
func BenchmarkAnnotateFile(b *testing.B) {
	mp, rp := os.Getenv("TG_ANN_MODEL"), os.Getenv("TG_ANN_RECORDS")
	if mp == "" || rp == "" {
		b.Skip("set TG_ANN_MODEL and TG_ANN_RECORDS")
	}
	if !filepath.IsAbs(mp) {
		mp = filepath.Join("..", mp)
	}
	if !filepath.IsAbs(rp) {
		rp = filepath.Join("..", rp)
	}
	t0 := time.Now()
	m, err := model.Load(mp)
	if err != nil {
		b.Fatal(err)
	}
	a, err := New(m)
	if err != nil {
		b.Fatal(err)
	}
	b.Logf("K=%d W=%d loaded and prepared in %v", m.K(), m.W(), time.Since(t0))
	var texts []string
	var cur strings.Builder
	err = records.Read(rp, records.Options{}, func(r records.Record) error {
		if len(texts) >= 500 {
			return nil
		}
		cur.WriteString(r.Join(nil))
		cur.WriteString("\n\n")
		toks, _ := a.an.Analyze(cur.String(), nil, false)
		if len(toks) >= 150 {
			texts = append(texts, cur.String()[:toks[149].End])
			cur.Reset()
		}
		return nil
	})
	if err != nil || len(texts) == 0 {
		b.Fatalf("records: %v (%d texts)", err, len(texts))
	}
	if dir := os.Getenv("TG_ANN_EXPORT"); dir != "" {
		exportIDs(b, a, filepath.Join(dir, "docs.txt"), texts)
		if tp := os.Getenv("TG_ANN_TRAIN"); tp != "" {
			var train []string
			records.Read(filepath.Join("..", tp), records.Options{}, func(r records.Record) error {
				train = append(train, r.Join(nil))
				return nil
			})
			exportIDs(b, a, filepath.Join(dir, "train.txt"), train)
		}
		b.Logf("exported word ids to %s (W=%d, K=%d)", dir, m.W(), m.K())
	}
	// full: Annotate on the text, words included, as the CLI runs it.
	// topics-only: pre-analysed tokens, no words (still paths and
	// supporting terms).
	// concepts-only: pre-analysed tokens, ranked concepts and scores only
	// (Options.ConceptsOnly), the job gensim's get_document_topics does.
	toks := make([][]terms.Token, len(texts))
	for i, t := range texts {
		toks[i], _ = a.an.Analyze(t, nil, false)
	}
	for _, mode := range []string{"full", "topics-only", "concepts-only"} {
		b.Run(mode, func(b *testing.B) {
			lat := make([]time.Duration, 0, b.N)
			cpu := make([]time.Duration, 0, b.N)
			runtime.LockOSThread()
			defer runtime.UnlockOSThread()
			b.ResetTimer()
			for i := 0; i < b.N; i++ {
				j := i % len(texts)
				c0 := threadCPU()
				t1 := time.Now()
				var err error
				switch mode {
				case "full":
					_, err = a.Annotate("r", texts[j], Options{IncludeWords: true})
				case "topics-only":
					_, err = a.AnnotateTokens("r", texts[j], toks[j], Options{})
				default:
					_, err = a.AnnotateTokens("r", texts[j], toks[j], Options{ConceptsOnly: true})
				}
				if err != nil {
					b.Fatal(err)
				}
				lat = append(lat, time.Since(t1))
				cpu = append(cpu, threadCPU()-c0)
			}
			b.StopTimer()
			reportLatency(b, lat, cpu)
		})
	}
}

// TestAnnotateLoop annotates BenchmarkAnnotateFile's 500 texts of 150
// tokens TG_ANN_LOOP times (0: set up only) in mode TG_ANN_MODE
// (concepts, topics or full; see BenchmarkAnnotateFile) and logs the
// thread CPU time per record. Skipped unless TG_ANN_LOOP is set. Its use
// is counting instructions, which the machine's load does not move: under
// cachegrind the difference between TG_ANN_LOOP=1 and 0, over 500, is the
// instructions per record.
//
//	for n in 0 1; do GOGC=off TG_ANN_LOOP=$n TG_ANN_MODE=concepts \
//	    TG_ANN_MODEL=.cache/annbench/debtags.grove TG_ANN_RECORDS=.cache/debtags/test.jsonl \
//	    valgrind --tool=cachegrind --cache-sim=no ./annotate.test -test.run AnnotateLoop; done
func TestAnnotateLoop(t *testing.T) {
	v := os.Getenv("TG_ANN_LOOP")
	if v == "" {
		t.Skip("set TG_ANN_LOOP, TG_ANN_MODEL and TG_ANN_RECORDS")
	}
	passes := 0
	if _, err := fmt.Sscan(v, &passes); err != nil || passes < 0 {
		t.Fatalf("TG_ANN_LOOP %q: want a count", v)
	}
	mp, rp := os.Getenv("TG_ANN_MODEL"), os.Getenv("TG_ANN_RECORDS")
	if !filepath.IsAbs(mp) {
		mp = filepath.Join("..", mp)
	}
	if !filepath.IsAbs(rp) {
		rp = filepath.Join("..", rp)
	}
	m, err := model.Load(mp)
	if err != nil {
		t.Fatal(err)
	}
	a, err := New(m)
	if err != nil {
		t.Fatal(err)
	}
	var texts []string
	var cur strings.Builder
	records.Read(rp, records.Options{}, func(r records.Record) error {
		if len(texts) >= 500 {
			return nil
		}
		cur.WriteString(r.Join(nil))
		cur.WriteString("\n\n")
		toks, _ := a.an.Analyze(cur.String(), nil, false)
		if len(toks) >= 150 {
			texts = append(texts, cur.String()[:toks[149].End])
			cur.Reset()
		}
		return nil
	})
	if len(texts) == 0 {
		t.Fatal("no texts")
	}
	toks := make([][]terms.Token, len(texts))
	for i, x := range texts {
		toks[i], _ = a.an.Analyze(x, nil, false)
	}
	mode := os.Getenv("TG_ANN_MODE")
	if mode == "" {
		mode = "concepts"
	}
	runtime.LockOSThread()
	defer runtime.UnlockOSThread()
	t0 := threadCPU()
	for p := 0; p < passes; p++ {
		for i := range texts {
			switch mode {
			case "full":
				_, err = a.Annotate("r", texts[i], Options{IncludeWords: true})
			case "topics":
				_, err = a.AnnotateTokens("r", texts[i], toks[i], Options{})
			default:
				_, err = a.AnnotateTokens("r", texts[i], toks[i], Options{ConceptsOnly: true})
			}
			if err != nil {
				t.Fatal(err)
			}
		}
	}
	if passes > 0 {
		t.Logf("%s: %v thread CPU per record", mode, (threadCPU()-t0)/time.Duration(passes*len(texts)))
	}
}

// BenchmarkAnnotateVocab measures a model over a real vocabulary with
// synthetic counts (modeltest.FromPrior): TG_ANN_VOCAB names the SKOS file
// (e.g. the 117k-concept WordNet one); the model is built once and kept
// in .cache/annbench/vocab.grove. It logs the model's load time and heap,
// then the latency of 150-token records drawn from the model's topics.
//
//	TG_ANN_VOCAB=.cache/wordnet/vocabulary.nt go test -run XXX -bench AnnotateVocab -benchtime 2000x -timeout 30m ./annotate
func BenchmarkAnnotateVocab(b *testing.B) {
	vp := os.Getenv("TG_ANN_VOCAB")
	if vp == "" {
		b.Skip("set TG_ANN_VOCAB")
	}
	if !filepath.IsAbs(vp) {
		vp = filepath.Join("..", vp)
	}
	mp := filepath.Join("..", ".cache", "annbench", "vocab.grove")
	if _, err := os.Stat(mp); err != nil {
		t0 := time.Now()
		s, err := concepts.Load(vp, concepts.LoadOptions{})
		if err != nil {
			b.Fatal(err)
		}
		an, err := terms.New(terms.Options{Languages: []string{"en"}}, terms.NewDictionary())
		if err != nil {
			b.Fatal(err)
		}
		p, err := prior.Build(s, an, prior.Options{})
		if err != nil {
			b.Fatal(err)
		}
		m := modeltest.FromPrior(p, modeltest.Options{Free: 50, Words: 100000, Seed: 1})
		os.MkdirAll(filepath.Dir(mp), 0o755)
		if err := model.Save(mp, m); err != nil {
			b.Fatal(err)
		}
		b.Logf("built %s in %v: C=%d W=%d", mp, time.Since(t0), m.C, m.W())
	}
	// Reference in the same run: reading the file and hashing it, the
	// least any loader of a checksummed file pays.
	tr := time.Now()
	raw, err := os.ReadFile(mp)
	if err != nil {
		b.Fatal(err)
	}
	sha256.Sum256(raw)
	raw = nil
	b.Logf("reference: read + SHA-256 of the file %v", time.Since(tr))
	runtime.GC()
	var m0, m1 runtime.MemStats
	runtime.ReadMemStats(&m0)
	t0, c0 := time.Now(), processCPU()
	m, err := model.Load(mp)
	if err != nil {
		b.Fatal(err)
	}
	tl, cl := time.Since(t0), processCPU()-c0
	a, err := New(m)
	if err != nil {
		b.Fatal(err)
	}
	tn := time.Since(t0) - tl
	runtime.GC()
	runtime.ReadMemStats(&m1)
	var nnz int
	for _, r := range m.Counts {
		nnz += len(r)
	}
	fi, _ := os.Stat(mp)
	b.Logf("K=%d W=%d nnz=%d file %d bytes: Load %v (process CPU %v), New %v, heap of model + annotator %.0f MiB",
		m.K(), m.W(), nnz, fi.Size(), tl, cl, tn, float64(m1.HeapAlloc-m0.HeapAlloc)/(1<<20))
	r := rand.New(rand.NewPCG(7, 7))
	type rec struct {
		text string
		toks []terms.Token
	}
	recs := make([]rec, 500)
	for i := range recs {
		recs[i].text, recs[i].toks = benchRecord(m, r)
	}
	lat := make([]time.Duration, 0, b.N)
	cpu := make([]time.Duration, 0, b.N)
	opt := Options{IncludeWords: true}
	runtime.LockOSThread()
	defer runtime.UnlockOSThread()
	b.ResetTimer()
	for i := 0; i < b.N; i++ {
		x := recs[i%len(recs)]
		c0 := threadCPU()
		t1 := time.Now()
		if _, err := a.AnnotateTokens("r", x.text+fmt.Sprint(i), x.toks, opt); err != nil {
			b.Fatal(err)
		}
		lat = append(lat, time.Since(t1))
		cpu = append(cpu, threadCPU()-c0)
	}
	b.StopTimer()
	reportLatency(b, lat, cpu)
}

// exportIDs writes each text's known word ids, space-separated, one text a
// line, for the gensim comparison (bench/annotate_gensim.py).
func exportIDs(b *testing.B, a *Annotator, path string, texts []string) {
	var sb strings.Builder
	for _, t := range texts {
		toks, _ := a.an.Analyze(t, nil, false)
		first := true
		for _, tk := range toks {
			if tk.ID < 0 {
				continue
			}
			if !first {
				sb.WriteByte(' ')
			}
			first = false
			sb.WriteString(fmt.Sprint(tk.ID))
		}
		sb.WriteByte('\n')
	}
	if err := os.WriteFile(path, []byte(sb.String()), 0o644); err != nil {
		b.Fatal(err)
	}
}

// TestSweepsQuality prints precision@5 against the records' human subjects
// for several burn-in/sampling sweep counts, on TG_ANN_MODEL and the first
// 1,500 records of TG_ANN_RECORDS (skipped when unset): the trade-off
// behind DefaultBurnIn and DefaultSamples. Each setting runs TG_ANN_CHAINS
// chains per record (default 1; other seeds through seedSalt) and prints
// their mean and standard deviation, so that a difference can be read
// against the spread one chain gives. TG_ANN_SWEEPS picks the settings,
// e.g. "-1+3,3+6" (burn-in -1: none); TG_ANN_CHAIN0 starts the seed salts
// elsewhere; TG_ANN_OWNSTART=1 starts every record from its words' own
// posteriors (the start before the expected counts'); TG_ANN_NOSTARTSAMPLE=1
// leaves the start's distributions out of the scores (before annot7).
//
//	TG_ANN_MODEL=.cache/annbench/debtags.grove TG_ANN_RECORDS=.cache/debtags/test.jsonl \
//	    go test -run SweepsQuality -v ./annotate
func TestSweepsQuality(t *testing.T) {
	mp, rp := os.Getenv("TG_ANN_MODEL"), os.Getenv("TG_ANN_RECORDS")
	if mp == "" || rp == "" {
		t.Skip("set TG_ANN_MODEL and TG_ANN_RECORDS")
	}
	if !filepath.IsAbs(mp) {
		mp = filepath.Join("..", mp)
	}
	if !filepath.IsAbs(rp) {
		rp = filepath.Join("..", rp)
	}
	m, err := model.Load(mp)
	if err != nil {
		t.Fatal(err)
	}
	a, err := New(m)
	if err != nil {
		t.Fatal(err)
	}
	var recs []records.Record
	records.Read(rp, records.Options{}, func(r records.Record) error {
		if len(recs) < 1500 {
			recs = append(recs, r)
		}
		return nil
	})
	// Burn-in -1: none.
	settings := [][2]int{{-1, ExpectedSamples}, {-1, 1}, {-1, 3}, {-1, 4}, {DefaultBurnIn, DefaultSamples}, {10, 20}}
	if v := os.Getenv("TG_ANN_SWEEPS"); v != "" {
		settings = nil
		for _, f := range strings.Split(v, ",") {
			var c [2]int
			if _, err := fmt.Sscanf(f, "%d+%d", &c[0], &c[1]); err != nil {
				t.Fatalf("TG_ANN_SWEEPS %q: want burn-in+samples, e.g. 3+6", f)
			}
			settings = append(settings, c)
		}
	}
	chains := 1
	if v := os.Getenv("TG_ANN_CHAINS"); v != "" {
		if _, err := fmt.Sscan(v, &chains); err != nil || chains < 1 {
			t.Fatalf("TG_ANN_CHAINS %q: want a positive count", v)
		}
	}
	first := 0 // TG_ANN_CHAIN0: the first chain's seed salt, for more chains
	if v := os.Getenv("TG_ANN_CHAIN0"); v != "" {
		if _, err := fmt.Sscan(v, &first); err != nil || first < 0 {
			t.Fatalf("TG_ANN_CHAIN0 %q: want a count", v)
		}
	}
	ownStart = os.Getenv("TG_ANN_OWNSTART") != ""
	noStartSample = os.Getenv("TG_ANN_NOSTARTSAMPLE") != ""
	defer func() { seedSalt, ownStart, noStartSample = 0, false, false }()
	for _, c := range settings {
		var ps []float64
		t0 := time.Now()
		for chain := 0; chain < chains; chain++ {
			seedSalt = uint64(first + chain) // chain 0: the default seed
			hit, n := 0, 0
			for _, r := range recs {
				res, err := a.Annotate(r.ID, r.Join(nil), Options{Top: 5, BurnIn: c[0], Samples: c[1], ConceptsOnly: true})
				if err != nil {
					t.Fatal(err)
				}
				for _, cc := range res.Concepts {
					if slices.Contains(r.Subjects, cc.IRI) {
						hit++
					}
				}
				n += 5
			}
			ps = append(ps, float64(hit)/float64(n))
		}
		mean, sd := 0.0, 0.0
		for _, p := range ps {
			mean += p
		}
		mean /= float64(len(ps))
		for _, p := range ps {
			sd += (p - mean) * (p - mean)
		}
		if len(ps) > 1 {
			sd = math.Sqrt(sd / float64(len(ps)-1))
		}
		t.Logf("burn-in %2d, samples %2d: P@5 %.4f (chain 0) mean %.4f sd %.4f over %d chains of %d records, %v per record",
			c[0], c[1], ps[0], mean, sd, chains, len(recs), time.Since(t0)/time.Duration(len(recs)*chains))
	}
}

// reportLatency sorts the wall (lat) and thread CPU (cpu) latencies and
// reports their medians and 99th percentiles, in µs to the nanosecond.
func reportLatency(b *testing.B, lat, cpu []time.Duration) {
	slices.Sort(lat)
	slices.Sort(cpu)
	us := func(d time.Duration) float64 { return float64(d.Nanoseconds()) / 1e3 }
	b.ReportMetric(us(lat[len(lat)/2]), "median-µs")
	b.ReportMetric(us(lat[len(lat)*99/100]), "p99-µs")
	b.ReportMetric(us(cpu[len(cpu)/2]), "cpu-median-µs")
	b.ReportMetric(us(cpu[len(cpu)*99/100]), "cpu-p99-µs")
}
