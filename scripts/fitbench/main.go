// Command fitbench measures the fitter's sampling speed and memory on a
// synthetic corpus (see bench/fit.md for the figures and commands).
//
//	go run ./scripts/fitbench -tokens 5000000 -k 100,1000,10000,100000
//	go run ./scripts/fitbench -tokens 10000000 -w 100000 -k 100000 -sweeps 3   # peak memory
//	go run ./scripts/fitbench -export /path/prefix ...                         # bag of words for gensim
//
// The corpus is drawn from an LDA-like model: -true topics, each a Zipf
// distribution over 400 random words of the -w word types, records of 100
// tokens with θ ~ Dir(0.05). The same corpus is fitted at every K.
package main

import (
	"bufio"
	"flag"
	"fmt"
	"math"
	"math/rand/v2"
	"os"
	"runtime"
	"runtime/pprof"
	"sort"
	"strconv"
	"strings"
	"syscall"
	"time"

	"encoding/binary"
	"encoding/json"

	"termgrove/fit"
	"termgrove/prior"
)

func main() {
	tokens := flag.Int("tokens", 5_000_000, "corpus tokens")
	words := flag.Int("w", 50_000, "word types")
	trueK := flag.Int("true", 1000, "topics the corpus is drawn from")
	docLen := flag.Int("len", 100, "tokens per record")
	ks := flag.String("k", "100,1000,10000,100000", "K values to fit (free topics)")
	concepts := flag.Bool("concepts", false, "make every topic a concept with a 3-word prior row")
	workers := flag.String("workers", "1", "worker counts, comma-separated")
	warm := flag.Int("warm", 3, "sweeps before timing (after the initial assignment)")
	sweeps := flag.Int("sweeps", 4, "timed sweeps")
	export := flag.String("export", "", "write the corpus as PREFIX.train.txt/PREFIX.test.txt (one record per line, word ids) and exit")
	holdout := flag.Float64("holdout", 0.05, "share of records in the test file with -export")
	seed := flag.Uint64("seed", 1, "corpus seed")
	prof := flag.String("cpuprofile", "", "write a CPU profile of the fits to FILE")
	compare := flag.String("compare", "", "with PREFIX of -export and fitbench_gensim.py: score gensim's model and time termgrove to the same held-out figure")
	compl := flag.String("completion", "", "with -records: document-completion perplexity of this MODEL.grove vs a unigram model")
	compRecs := flag.String("records", "", "test records (JSON Lines) for -completion")
	stats := flag.Bool("stats", false, "after each fit, print the mean word-list length and record topic count per token, and with several workers the wall time per sweep of each worker's sampling, of the wait at the barrier and of the merge")
	samplers := flag.String("sampler", "", "samplers to fit with, comma-separated (sparse, mh, auto); when set, each row also gives the sampler and the training log-likelihood per token after the warm-up and timed sweeps")
	flag.Parse()
	if *compl != "" {
		if err := completion(*compl, *compRecs); err != nil {
			fmt.Fprintln(os.Stderr, err)
			os.Exit(1)
		}
		return
	}
	if *compare != "" {
		K, _ := strconv.Atoi(strings.Split(*ks, ",")[0])
		nw, _ := strconv.Atoi(strings.Split(*workers, ",")[0])
		if err := compareGensim(*compare, *words, K, nw); err != nil {
			fmt.Fprintln(os.Stderr, err)
			os.Exit(1)
		}
		return
	}
	if *prof != "" {
		f, err := os.Create(*prof)
		if err == nil {
			pprof.StartCPUProfile(f)
			defer pprof.StopCPUProfile()
		}
	}

	t0 := time.Now()
	c := synth(*tokens, *words, *trueK, *docLen, *seed)
	fmt.Printf("corpus: %d records, %d tokens, W=%d, drawn from %d topics in %.1fs\n", len(c.Docs), c.Tokens(), c.W, *trueK, time.Since(t0).Seconds())
	if *export != "" {
		if err := writeBOW(*export, c, *holdout); err != nil {
			fmt.Fprintln(os.Stderr, err)
			os.Exit(1)
		}
		return
	}
	fmt.Printf("machine: %d cores, %s, %s\n", runtime.NumCPU(), runtime.GOARCH, runtime.Version())
	if *samplers == "" {
		fmt.Printf("%-8s %-8s %-8s %-14s %-14s %-12s %-10s\n", "K", "workers", "init s", "tokens/s wall", "tokens/cpu-s", "cpu-ns/token", "peak RSS")
	} else {
		fmt.Printf("%-8s %-8s %-8s %-8s %-14s %-14s %-12s %-10s %-12s\n", "K", "sampler", "workers", "init s", "tokens/s wall", "tokens/cpu-s", "cpu-ns/token", "peak RSS", "loglik/token")
	}
	for _, ks := range strings.Split(*ks, ",") {
		K, _ := strconv.Atoi(ks)
		for _, sm := range strings.Split(*samplers, ",") {
			for _, ws := range strings.Split(*workers, ",") {
				nw, _ := strconv.Atoi(ws)
				run(c, K, nw, *warm, *sweeps, *concepts, sm, *stats)
			}
		}
	}
}

// run fits one configuration; sampler "" keeps the original output columns.
func run(c *fit.Corpus, K, workers, warm, sweeps int, concepts bool, sampler string, stats bool) {
	var p *prior.Prior
	opt := fit.Options{FreeTopics: K, Workers: workers, Seed: 1, Sweeps: 1 << 30, FixedAlpha: true, LogLikEvery: 1 << 30, Sampler: sampler}
	if concepts {
		r := rand.New(rand.NewPCG(3, 3))
		p = &prior.Prior{Rows: make([][]prior.Entry, K), Lambda: 50, Beta0: 0.01}
		for k := range p.Rows {
			ws := map[int32]bool{}
			for len(ws) < 3 {
				ws[int32(r.IntN(c.W))] = true
			}
			for w := range ws {
				p.Rows[k] = append(p.Rows[k], prior.Entry{Word: w, Weight: 1.0 / 3})
			}
			sort.Slice(p.Rows[k], func(i, j int) bool { return p.Rows[k][i].Word < p.Rows[k][j].Word })
		}
		opt.FreeTopics = 0
	}
	b, err := fit.NewBench(p, c, opt)
	if err != nil {
		fmt.Fprintln(os.Stderr, err)
		os.Exit(1)
	}
	initS := b.InitSeconds
	for i := 0; i < warm; i++ {
		b.Sweep()
	}
	b.Phases()
	b.FlatStats()
	start := time.Now()
	cpu0 := cpuSeconds()
	for i := 0; i < sweeps; i++ {
		b.Sweep()
	}
	sec := time.Since(start).Seconds()
	cpu := cpuSeconds() - cpu0
	n := float64(c.Tokens()) * float64(sweeps)
	if sampler == "" {
		fmt.Printf("%-8d %-8d %-8.1f %-14.0f %-14.0f %-12.1f %-10s\n", K, workers, initS, n/sec, n/cpu, 1e9*cpu/n, peakRSS())
	} else {
		ll := b.LogLik() / float64(c.Tokens())
		fmt.Printf("%-8d %-8s %-8d %-8.1f %-14.0f %-14.0f %-12.1f %-10s %-12.4f\n", K, sampler, workers, initS, n/sec, n/cpu, 1e9*cpu/n, peakRSS(), ll)
	}
	if stats && workers > 1 {
		ph := b.Phases()
		fmt.Printf("  K=%d workers=%d per sweep: sample", K, workers)
		for _, s := range ph.Sample {
			fmt.Printf(" %.1f", 1e3*s/float64(ph.Sweeps))
		}
		fmt.Printf(" ms, barrier wait %.1f ms (all workers), merge %.1f ms\n",
			1e3*ph.Wait/float64(ph.Sweeps), 1e3*ph.Merge/float64(ph.Sweeps))
	}
	if stats {
		l, d := b.ListStats()
		fmt.Printf("  K=%d: per token, word-list length %.1f, record topics %.1f\n", K, l, d)
		if f := b.FlatStats(); f.Tokens > 0 || f.SmoothProposals > 0 || f.WordMajorTokens > 0 {
			fmt.Printf("  K=%d: timed sweeps: flat path %.1f%% of tokens, word proposals %.3f per flat token (%.1f%% accepted), smoothing proposals %.4f per token (%.1f%% accepted)\n",
				K, 100*float64(f.Tokens)/n, float64(f.WordProposals)/max(1, float64(f.Tokens)), 100*float64(f.WordAccepted)/max(1, float64(f.WordProposals)),
				float64(f.SmoothProposals)/n, 100*float64(f.SmoothAccepted)/max(1, float64(f.SmoothProposals)))
			if f.WordMajorTokens > 0 {
				fmt.Printf("  K=%d: word-major sweep %.1f%% of tokens, doc proposals %.4f per token (%.1f%% accepted)\n",
					K, 100*float64(f.WordMajorTokens)/n, float64(f.DocProposals)/n, 100*float64(f.DocAccepted)/max(1, float64(f.DocProposals)))
			}
		}
	}
	b = nil
	runtime.GC()
}

// synth draws the corpus.
func synth(tokens, W, T, docLen int, seed uint64) *fit.Corpus {
	r := rand.New(rand.NewPCG(seed, 11))
	const per = 400
	topicWords := make([][]int32, T)
	cum := make([]float64, per)
	var acc float64
	for i := range cum {
		acc += 1 / float64(i+1)
		cum[i] = acc
	}
	for i := range cum {
		cum[i] /= acc
	}
	for k := range topicWords {
		topicWords[k] = make([]int32, per)
		for i := range topicWords[k] {
			topicWords[k][i] = int32(r.IntN(W))
		}
	}
	c := &fit.Corpus{W: W}
	theta := make([]float64, T)
	var active []int
	for n := 0; n < tokens; n += docLen {
		// θ ~ Dir(0.05) over T topics, drawn sparsely: most weights are ~0, so
		// take the few topics a record would use (a Poisson-ish count).
		active = active[:0]
		m := 1 + r.IntN(4)
		var s float64
		for i := 0; i < m; i++ {
			k := r.IntN(T)
			active = append(active, k)
			theta[i] = -math.Log(r.Float64() + 1e-300)
			s += theta[i]
		}
		d := fit.Doc{ID: "s" + strconv.Itoa(len(c.Docs)), Words: make([]int32, docLen)}
		for i := range d.Words {
			u := r.Float64() * s
			j := 0
			for j < m-1 && u >= theta[j] {
				u -= theta[j]
				j++
			}
			k := active[j]
			w := sort.SearchFloat64s(cum, r.Float64())
			if w >= per {
				w = per - 1
			}
			d.Words[i] = topicWords[k][w]
		}
		c.Docs = append(c.Docs, d)
	}
	return c
}

// cpuSeconds is the process's user+system CPU time: on a shared, busy
// machine it measures the work per token better than wall time.
func cpuSeconds() float64 {
	var ru syscall.Rusage
	syscall.Getrusage(syscall.RUSAGE_SELF, &ru)
	return float64(ru.Utime.Sec+ru.Stime.Sec) + float64(ru.Utime.Usec+ru.Stime.Usec)/1e6
}

func peakRSS() string {
	b, err := os.ReadFile("/proc/self/status")
	if err != nil {
		return "?"
	}
	for _, l := range strings.Split(string(b), "\n") {
		if strings.HasPrefix(l, "VmHWM:") {
			f := strings.Fields(l)
			kb, _ := strconv.Atoi(f[1])
			return fmt.Sprintf("%.2fGiB", float64(kb)/(1<<20))
		}
	}
	return "?"
}

// writeBOW writes train and test records, one per line as space-separated
// word ids; the test share is every record whose index mod 1/holdout is 0.
func writeBOW(prefix string, c *fit.Corpus, holdout float64) error {
	tr, err := os.Create(prefix + ".train.txt")
	if err != nil {
		return err
	}
	te, err := os.Create(prefix + ".test.txt")
	if err != nil {
		return err
	}
	bt, be := bufio.NewWriter(tr), bufio.NewWriter(te)
	every := int(math.Round(1 / holdout))
	for i, d := range c.Docs {
		w := bt
		if i%every == 0 {
			w = be
		}
		for j, x := range d.Words {
			if j > 0 {
				w.WriteByte(' ')
			}
			w.WriteString(strconv.Itoa(int(x)))
		}
		w.WriteByte('\n')
	}
	if err := bt.Flush(); err != nil {
		return err
	}
	if err := be.Flush(); err != nil {
		return err
	}
	tr.Close()
	te.Close()
	fmt.Printf("wrote %s.train.txt and %s.test.txt (W=%d)\n", prefix, prefix, c.W)
	return nil
}

func readBOW(path string) ([][]int32, error) {
	f, err := os.Open(path)
	if err != nil {
		return nil, err
	}
	defer f.Close()
	var docs [][]int32
	sc := bufio.NewScanner(f)
	sc.Buffer(make([]byte, 1<<20), 1<<26)
	for sc.Scan() {
		var d []int32
		for _, x := range strings.Fields(sc.Text()) {
			v, err := strconv.Atoi(x)
			if err != nil {
				return nil, fmt.Errorf("%s: %v", path, err)
			}
			d = append(d, int32(v))
		}
		docs = append(docs, d)
	}
	return docs, sc.Err()
}

// compareGensim scores gensim's exported model on the test records and then
// fits termgrove on the same training records, scoring every few sweeps
// (scoring time not counted) until it reaches gensim's held-out figure.
func compareGensim(prefix string, W, K, workers int) error {
	train, err := readBOW(prefix + ".train.txt")
	if err != nil {
		return err
	}
	test, err := readBOW(prefix + ".test.txt")
	if err != nil {
		return err
	}
	if len(test) > 300 {
		test = test[:300]
	}
	raw, err := os.ReadFile(prefix + ".gensim.phi")
	if err != nil {
		return err
	}
	if len(raw) != 8*K*W {
		return fmt.Errorf("%s.gensim.phi: %d bytes, want K*W*8 = %d", prefix, len(raw), 8*K*W)
	}
	phi := &fit.DensePhi{NumTopics: K, Words: W, P: make([]float64, K*W)}
	for i := range phi.P {
		phi.P[i] = math.Float64frombits(binary.LittleEndian.Uint64(raw[8*i:]))
	}
	ab, err := os.ReadFile(prefix + ".gensim.alpha")
	if err != nil {
		return err
	}
	var alpha []float64
	for _, f := range strings.Fields(string(ab)) {
		v, _ := strconv.ParseFloat(f, 64)
		alpha = append(alpha, v)
	}
	var meta struct{ Seconds float64 }
	if b, err := os.ReadFile(prefix + ".gensim.json"); err == nil {
		json.Unmarshal(b, &meta)
	}
	lr := fit.LROptions{Particles: 10, Seed: 1, Workers: 2}
	gll, n := fit.LeftToRight(phi, alpha, test, lr)
	target := gll / float64(n)
	fmt.Printf("gensim: %.1fs wall, held-out log-lik/token %.4f (%d records, %d tokens, R=10)\n", meta.Seconds, target, len(test), n)

	c := &fit.Corpus{W: W}
	for i, d := range train {
		c.Docs = append(c.Docs, fit.Doc{ID: strconv.Itoa(i), Words: d})
	}
	b, err := fit.NewBench(nil, c, fit.Options{FreeTopics: K, Workers: workers, Seed: 1, Sweeps: 1 << 30, BurnIn: 10, OptimizeEvery: 5})
	if err != nil {
		return err
	}
	elapsed := b.InitSeconds
	for sweep := 1; sweep <= 500; sweep++ {
		t := time.Now()
		b.Sweep()
		elapsed += time.Since(t).Seconds()
		if sweep%5 != 0 && (sweep < 10 || sweep%2 != 0) {
			continue // score at 5, 10, then every other sweep
		}
		m := b.Model()
		ll, n := fit.LeftToRight(fit.ModelPhi(m), m.Alpha, test, lr)
		fmt.Printf("termgrove: sweep %d, %.1fs wall, held-out log-lik/token %.4f\n", sweep, elapsed, ll/float64(n))
		if ll/float64(n) >= target {
			fmt.Printf("termgrove reached gensim's figure after %.1fs (gensim %.1fs): %.1fx sooner\n", elapsed, meta.Seconds, meta.Seconds/elapsed)
			return nil
		}
	}
	fmt.Println("termgrove did not reach gensim's figure in 500 sweeps")
	return nil
}
