// Command loadtest drives a termgrove gRPC server on this machine with
// annotation calls and reports throughput, latency percentiles and the
// server's memory and goroutines. It only talks to loopback addresses, and
// every run is bounded in time and in request count.
//
//	loadtest -make-model .cache/load/syn640.grove          # synthetic 640-concept model
//	termgrove serve --model .cache/load/syn640.grove &
//	loadtest -mode sweep -concurrency 1,8,64 -duration 10s -words-from .cache/load/syn640.grove
//	loadtest -mode rate -rate 9000 -duration 60s -words-from .cache/load/syn640.grove
//
// Mode sweep runs closed loops (each worker sends its next call when the
// previous one returns) at each concurrency. Mode rate sends calls at a fixed
// rate whatever the answers (an open loop), as real overload does; latency
// is measured from each call's scheduled start, so a client that falls
// behind shows up in the figures rather than hiding them.
package main

import (
	"bufio"
	"context"
	"encoding/json"
	"errors"
	"flag"
	"fmt"
	"math"
	"math/rand/v2"
	"net"
	"net/http"
	"os"
	"runtime"
	"slices"
	"strconv"
	"strings"
	"sync"
	"sync/atomic"
	"syscall"
	"time"

	"google.golang.org/grpc"
	"google.golang.org/grpc/codes"
	"google.golang.org/grpc/credentials/insecure"
	"google.golang.org/grpc/status"

	"termgrove/annotate"
	"termgrove/model"
	"termgrove/model/modeltest"
	pb "termgrove/proto/termgrove/v1"
)

func main() {
	os.Exit(run(os.Args[1:]))
}

type options struct {
	addr, metrics, modelName string
	mode                     string
	conc                     []int
	rate                     float64
	duration                 time.Duration
	maxRequests              int
	conns                    int
	words                    int
	records                  int
	wordsFrom, recordsFile   string
	timeout                  time.Duration
	jsonOut                  bool
	maxOutstanding           int
	checkEvery               int
	unknown                  bool
	batch                    int
	busyBackoff              time.Duration
}

func run(args []string) int {
	fs := flag.NewFlagSet("loadtest", flag.ContinueOnError)
	var o options
	makeModel := fs.String("make-model", "", "write a synthetic model (-concepts concepts) to this path and exit")
	concepts := fs.Int("concepts", 640, "concepts of the synthetic model")
	fs.StringVar(&o.addr, "addr", "127.0.0.1:7400", "server gRPC address (loopback only)")
	fs.StringVar(&o.metrics, "metrics", "127.0.0.1:7401", "server metrics address (loopback only; \"off\": no memory figures)")
	fs.StringVar(&o.modelName, "model", "", "model name on the server")
	fs.StringVar(&o.mode, "mode", "sweep", "sweep (closed loop per concurrency), stream (closed loop per concurrency of AnnotateStream streams, -batch records a message), rate (open loop at -rate), or local (the annotator in this process, no server: the reference)")
	concList := fs.String("concurrency", "1,8,64", "sweep: concurrencies")
	fs.Float64Var(&o.rate, "rate", 1000, "rate: calls per second")
	fs.DurationVar(&o.duration, "duration", 10*time.Second, "time per step (at most 15m)")
	fs.IntVar(&o.maxRequests, "max-requests", 5_000_000, "calls per step at most")
	fs.IntVar(&o.conns, "conns", 4, "client connections")
	fs.IntVar(&o.words, "words", 150, "words per record")
	fs.IntVar(&o.records, "records", 2000, "distinct records to cycle through")
	fs.StringVar(&o.wordsFrom, "words-from", "", "draw record words from this model file's fitted word frequencies")
	fs.StringVar(&o.recordsFile, "records-file", "", "or take record texts from this JSON Lines file (title and text, cut to -words words)")
	fs.DurationVar(&o.timeout, "timeout", 10*time.Second, "deadline of each call")
	fs.BoolVar(&o.jsonOut, "json", false, "print results as JSON lines")
	fs.IntVar(&o.maxOutstanding, "max-outstanding", 1024, "rate: calls in progress at most; a call due beyond it is not sent and counted late")
	fs.IntVar(&o.checkEvery, "check-every", 16, "decode and check every Nth response in full (1: all); the others are only counted, to keep the load tool's own CPU low")
	fs.BoolVar(&o.unknown, "unknown-words", false, "records of words no model knows: the server analyses them and answers, with nothing to sample (the ceiling of the transport and the analyser)")
	fs.IntVar(&o.batch, "batch", 32, "stream: records per AnnotateStream message")
	fs.DurationVar(&o.busyBackoff, "busy-backoff", 0, "sweep: a worker whose call gets RESOURCE_EXHAUSTED backs off before its next call, as the server asks: this long at first, doubling with each refusal in a row up to 32 times as long, with jitter (0: retry at once)")
	if err := fs.Parse(args); err != nil {
		return 2
	}
	if *makeModel != "" {
		m := modeltest.Synthetic(modeltest.Options{Concepts: *concepts, Free: 20, Words: 20000, Seed: 1})
		if err := model.Save(*makeModel, m); err != nil {
			fmt.Fprintln(os.Stderr, "loadtest:", err)
			return 1
		}
		fmt.Printf("wrote %s: %d concepts, %d free topics, %d words\n", *makeModel, m.C, m.F, len(m.Words))
		return 0
	}
	for _, a := range []string{o.addr, o.metrics} {
		if a != "off" && !loopback(a) {
			fmt.Fprintf(os.Stderr, "loadtest: %s is not a loopback address; refusing\n", a)
			return 2
		}
	}
	if o.checkEvery < 1 || o.batch < 1 {
		fmt.Fprintln(os.Stderr, "loadtest: -check-every and -batch must be at least 1")
		return 2
	}
	if o.duration <= 0 || o.duration > 15*time.Minute {
		fmt.Fprintln(os.Stderr, "loadtest: -duration must be in (0, 15m]")
		return 2
	}
	for _, s := range strings.Split(*concList, ",") {
		n, err := strconv.Atoi(strings.TrimSpace(s))
		if err != nil || n < 1 || n > 4096 {
			fmt.Fprintf(os.Stderr, "loadtest: bad concurrency %q\n", s)
			return 2
		}
		o.conc = append(o.conc, n)
	}
	texts, err := makeTexts(&o)
	if err != nil {
		fmt.Fprintln(os.Stderr, "loadtest:", err)
		return 2
	}
	if o.mode == "local" {
		if o.wordsFrom == "" {
			fmt.Fprintln(os.Stderr, "loadtest: -mode local needs -words-from MODEL (the model to annotate with)")
			return 2
		}
		m, err := model.Load(o.wordsFrom)
		if err != nil {
			fmt.Fprintln(os.Stderr, "loadtest:", err)
			return 2
		}
		a, err := annotate.New(m)
		if err != nil {
			fmt.Fprintln(os.Stderr, "loadtest:", err)
			return 2
		}
		fmt.Printf("# loadtest local (in-process annotator, no gRPC): %d records of %d words, GOMAXPROCS %d, %s\n",
			len(texts), o.words, runtime.GOMAXPROCS(0), time.Now().UTC().Format(time.RFC3339))
		for _, c := range o.conc {
			report(&o, fmt.Sprintf("local concurrency=%d", c), localLoop(&o, a, texts, c))
		}
		return 0
	}
	conns := make([]*grpc.ClientConn, o.conns)
	for i := range conns {
		cc, err := grpc.NewClient(o.addr, grpc.WithTransportCredentials(insecure.NewCredentials()),
			grpc.WithDefaultCallOptions(grpc.ForceCodecV2(wireCodec{})))
		if err != nil {
			fmt.Fprintln(os.Stderr, "loadtest:", err)
			return 2
		}
		defer cc.Close()
		conns[i] = cc
	}
	reqs, err := prepare(o.modelName, texts)
	if err != nil {
		fmt.Fprintln(os.Stderr, "loadtest:", err)
		return 2
	}
	// Warm up: connections, the server's pools and caches; every answer is
	// checked in full, and the server's token counts are summed.
	ctx, cancel := context.WithTimeout(context.Background(), 30*time.Second)
	var tokens, words int
	const warm = 200
	for i := range warm {
		r := &reqs[i%len(reqs)]
		resp, err := call(ctx, conns[i%len(conns)], r, true, grpc.WaitForReady(true))
		if err != nil {
			fmt.Fprintln(os.Stderr, "loadtest: warm-up:", err)
			cancel()
			return 1
		}
		tokens += int(resp.GetTokens())
		words += len(strings.Fields(texts[i%len(texts)]))
	}
	md, err := pb.NewAnnotationServiceClient(conns[0]).GetModel(ctx, &pb.GetModelRequest{Model: o.modelName})
	cancel()
	if err != nil {
		fmt.Fprintln(os.Stderr, "loadtest: GetModel:", err)
		return 1
	}
	fmt.Printf("# server model %q: %s, %d concepts (%d used), %d free topics, %d word types\n",
		md.GetName(), md.GetPath(), md.GetConcepts(), md.GetUsedConcepts(), md.GetFreeTopics(), md.GetWordTypes())
	fmt.Printf("# loadtest %s: %d records of %.1f words on average (the server analysed %.1f tokens each), %d conns, GOMAXPROCS %d, %s\n",
		o.mode, len(texts), float64(words)/warm, float64(tokens)/warm, o.conns, runtime.GOMAXPROCS(0), time.Now().UTC().Format(time.RFC3339))
	switch o.mode {
	case "sweep":
		for _, c := range o.conc {
			report(&o, fmt.Sprintf("concurrency=%d", c), closedLoop(&o, conns, reqs, c))
		}
	case "stream":
		for _, c := range o.conc {
			report(&o, fmt.Sprintf("streams=%d batch=%d", c, o.batch), streamLoop(&o, conns, texts, c))
		}
	case "rate":
		report(&o, fmt.Sprintf("rate=%.0f/s", o.rate), openLoop(&o, conns, reqs))
	default:
		fmt.Fprintf(os.Stderr, "loadtest: unknown -mode %q\n", o.mode)
		return 2
	}
	return 0
}

// loopback reports whether addr's host is a loopback IP or "localhost".
func loopback(addr string) bool {
	host, _, err := net.SplitHostPort(addr)
	if err != nil {
		return false
	}
	if host == "localhost" {
		return true
	}
	ip := net.ParseIP(host)
	return ip != nil && ip.IsLoopback()
}

// makeTexts returns the record texts to send.
func makeTexts(o *options) ([]string, error) {
	if o.recordsFile != "" {
		f, err := os.Open(o.recordsFile)
		if err != nil {
			return nil, err
		}
		defer f.Close()
		var out []string
		sc := bufio.NewScanner(f)
		sc.Buffer(make([]byte, 1<<20), 64<<20)
		for sc.Scan() && len(out) < o.records {
			var r struct{ Title, Text string }
			if json.Unmarshal(sc.Bytes(), &r) != nil {
				continue
			}
			w := strings.Fields(r.Title + " " + r.Text)
			if len(w) < o.words/2 {
				continue
			}
			if len(w) > o.words {
				w = w[:o.words]
			}
			out = append(out, strings.Join(w, " "))
		}
		if len(out) == 0 {
			return nil, fmt.Errorf("%s: no record with %d+ words", o.recordsFile, o.words/2)
		}
		return out, sc.Err()
	}
	if o.unknown {
		// 997 distinct words, as a real text's words repeat: the server's
		// word caches hold them after the warm-up.
		out := make([]string, o.records)
		for i := range out {
			w := make([]string, o.words)
			for j := range w {
				w[j] = fmt.Sprintf("zq%dx", (i*151+j)%997)
			}
			out[i] = strings.Join(w, " ")
		}
		return out, nil
	}
	if o.wordsFrom == "" {
		return nil, errors.New("give -words-from MODEL or -records-file FILE")
	}
	m, err := model.Load(o.wordsFrom)
	if err != nil {
		return nil, err
	}
	// Records drawn like the fitted corpus: pick a few topics by token mass,
	// then words by their counts in those topics.
	cum := make([]float64, m.K())
	var tot float64
	for k, n := range m.Totals {
		tot += float64(n)
		cum[k] = tot
	}
	r := rand.New(rand.NewPCG(1, 2))
	pick := func(c []float64) int {
		x := r.Float64() * c[len(c)-1]
		i, _ := slices.BinarySearch(c, x)
		return min(i, len(c)-1)
	}
	out := make([]string, o.records)
	for i := range out {
		topics := []int{pick(cum), pick(cum), pick(cum), m.C + r.IntN(max(m.F, 1))}
		var b strings.Builder
		for j := range o.words {
			k := topics[r.IntN(len(topics))]
			if k >= m.K() {
				k = topics[0]
			}
			row := m.Counts[k]
			if len(row) == 0 {
				continue
			}
			rc := make([]float64, len(row))
			var s float64
			for x, wc := range row {
				s += float64(wc.Count)
				rc[x] = s
			}
			if j > 0 {
				b.WriteByte(' ')
			}
			b.WriteString(m.Words[row[pick(rc)].Word])
		}
		out[i] = b.String()
	}
	return out, nil
}

// result is what one step measured.
type result struct {
	Step       string         `json:"step"`
	Seconds    float64        `json:"seconds"`
	Sent       int            `json:"sent"`
	OK         int            `json:"ok"`
	Codes      map[string]int `json:"codes"`
	OKPerSec   float64        `json:"ok_per_second"`
	P50ms      float64        `json:"p50_ms"`
	P90ms      float64        `json:"p90_ms"`
	P99ms      float64        `json:"p99_ms"`
	MaxMs      float64        `json:"max_ms"`
	RejectP99  float64        `json:"rejected_p99_ms,omitempty"`
	ClientLate int            `json:"client_late,omitempty"` // rate: calls not sent on time (client saturated)
	// CPU time (user + system) of this process during the step, per
	// accepted call in microseconds: the load tool's own cost, or in mode
	// local the annotator's.
	CPUPerOKus float64      `json:"cpu_per_ok_us"`
	Server     *serverStats `json:"server,omitempty"`
}

// serverStats are samples of the server's own metrics during the step.
type serverStats struct {
	RSSStartMB, RSSMaxMB, RSSEndMB                float64
	HeapStartMB, HeapMaxMB, HeapEndMB             float64
	GoroutinesStart, GoroutinesMax, GoroutinesEnd float64
	Samples                                       int
	cpu                                           float64 // last sample
	// Server-side Annotate handler time (interceptor start to end) of the
	// step, from the termgrove_grpc_request_duration_seconds histogram: the
	// bucket bounds (ms) holding the 50th and 99th percentiles.
	HandlerP50ms, HandlerP99ms float64
	// The server process's CPU time (process_cpu_seconds_total) during the
	// step, in seconds.
	CPUSeconds float64
}

// recorder collects latencies of accepted and rejected calls.
type recorder struct {
	mu       sync.Mutex
	ok       []time.Duration
	rejected []time.Duration
	codes    map[codes.Code]int
	sent     atomic.Int64
	cpu0     time.Duration // CPU time of this process at the start
}

func (r *recorder) add(d time.Duration, err error) {
	c := status.Code(err)
	r.mu.Lock()
	if r.codes == nil {
		r.codes = map[codes.Code]int{}
	}
	r.codes[c]++
	if c == codes.OK {
		r.ok = append(r.ok, d)
	} else {
		r.rejected = append(r.rejected, d)
	}
	r.mu.Unlock()
}

func pct(ds []time.Duration, p float64) float64 {
	if len(ds) == 0 {
		return 0
	}
	i := int(math.Ceil(p*float64(len(ds)))) - 1
	return float64(ds[max(i, 0)]) / 1e6
}

// cpuTime is this process's CPU time so far (user + system).
func cpuTime() time.Duration {
	var ru syscall.Rusage
	if syscall.Getrusage(syscall.RUSAGE_SELF, &ru) != nil {
		return 0
	}
	return time.Duration(ru.Utime.Nano() + ru.Stime.Nano())
}

func (r *recorder) result(step string, el time.Duration) result {
	slices.Sort(r.ok)
	slices.Sort(r.rejected)
	res := result{Step: step, Seconds: el.Seconds(), Sent: int(r.sent.Load()), OK: len(r.ok), Codes: map[string]int{},
		OKPerSec: float64(len(r.ok)) / el.Seconds(),
		P50ms:    pct(r.ok, .5), P90ms: pct(r.ok, .9), P99ms: pct(r.ok, .99), MaxMs: pct(r.ok, 1), RejectP99: pct(r.rejected, .99)}
	for c, n := range r.codes {
		res.Codes[c.String()] = n
	}
	if len(r.ok) > 0 {
		res.CPUPerOKus = float64(cpuTime()-r.cpu0) / 1e3 / float64(len(r.ok))
	}
	return res
}

// closedLoop runs c workers, each sending its next call when the last ends.
func closedLoop(o *options, conns []*grpc.ClientConn, reqs []prepared, c int) result {
	rec := recorder{cpu0: cpuTime()}
	stopMem := sampleServer(o)
	start := time.Now()
	end := start.Add(o.duration)
	var wg sync.WaitGroup
	for w := range c {
		wg.Add(1)
		go func() {
			defer wg.Done()
			cc := conns[w%len(conns)]
			backoff := o.busyBackoff
			rnd := rand.New(rand.NewPCG(uint64(w), 7))
			for i := w; time.Now().Before(end); i += c {
				if rec.sent.Add(1) > int64(o.maxRequests) {
					return
				}
				t0 := time.Now()
				ctx, cancel := context.WithTimeout(context.Background(), o.timeout)
				_, err := call(ctx, cc, &reqs[i%len(reqs)], i%o.checkEvery == 0)
				cancel()
				rec.add(time.Since(t0), err)
				if o.busyBackoff > 0 {
					if status.Code(err) != codes.ResourceExhausted {
						backoff = o.busyBackoff
						continue
					}
					time.Sleep(backoff/2 + time.Duration(rnd.Int64N(int64(backoff/2)+1)))
					backoff = min(2*backoff, 32*o.busyBackoff)
				}
			}
		}()
	}
	wg.Wait()
	res := rec.result("", time.Since(start))
	res.Server = stopMem()
	return res
}

// streamLoop runs c AnnotateStream streams, each sending a message of
// o.batch records when the answer to its last one has arrived; every
// record counts as one call, with the latency of its message.
func streamLoop(o *options, conns []*grpc.ClientConn, texts []string, c int) result {
	rec := recorder{cpu0: cpuTime()}
	stopMem := sampleServer(o)
	start := time.Now()
	end := start.Add(o.duration)
	var wg sync.WaitGroup
	for w := range c {
		wg.Add(1)
		go func() {
			defer wg.Done()
			ctx, cancel := context.WithTimeout(context.Background(), o.duration+o.timeout)
			defer cancel()
			cl := pb.NewAnnotationServiceClient(conns[w%len(conns)])
			st, err := cl.AnnotateStream(ctx)
			if err != nil {
				rec.add(0, err)
				return
			}
			defer st.CloseSend()
			msg := &pb.AnnotateStreamRequest{Records: make([]*pb.AnnotateRequest, o.batch)}
			for i := w * o.batch; time.Now().Before(end); i += c * o.batch {
				if rec.sent.Add(int64(o.batch)) > int64(o.maxRequests) {
					return
				}
				for j := range msg.Records {
					k := i + j
					msg.Records[j] = &pb.AnnotateRequest{Model: o.modelName, Id: strconv.Itoa(k), Text: texts[k%len(texts)]}
				}
				t0 := time.Now()
				if err := st.Send(msg); err != nil {
					rec.add(time.Since(t0), err)
					return
				}
				out, err := st.Recv()
				d := time.Since(t0)
				if err != nil {
					rec.add(d, err)
					return
				}
				if len(out.GetResults()) != o.batch {
					rec.add(d, status.Errorf(codes.DataLoss, "%d results for %d records", len(out.GetResults()), o.batch))
					return
				}
				for j, r := range out.GetResults() {
					if r.GetId() != msg.Records[j].GetId() {
						rec.add(d, status.Errorf(codes.DataLoss, "result %d has id %q, want %q", j, r.GetId(), msg.Records[j].GetId()))
						continue
					}
					if e := r.GetError(); e != nil {
						rec.add(d, status.Error(codes.Code(e.GetCode()), e.GetMessage()))
						continue
					}
					rec.add(d, nil)
				}
			}
		}()
	}
	wg.Wait()
	res := rec.result("", time.Since(start))
	res.Server = stopMem()
	return res
}

// localLoop is closedLoop calling the annotator in this process: the
// reference that shows what gRPC and the server add.
func localLoop(o *options, a *annotate.Annotator, texts []string, c int) result {
	rec := recorder{cpu0: cpuTime()}
	start := time.Now()
	end := start.Add(o.duration)
	var wg sync.WaitGroup
	for w := range c {
		wg.Add(1)
		go func() {
			defer wg.Done()
			for i := w; time.Now().Before(end); i += c {
				if rec.sent.Add(1) > int64(o.maxRequests) {
					return
				}
				t0 := time.Now()
				_, err := a.Annotate(strconv.Itoa(i), texts[i%len(texts)], annotate.Options{})
				rec.add(time.Since(t0), err)
			}
		}()
	}
	wg.Wait()
	return rec.result("", time.Since(start))
}

// openLoop sends calls at o.rate per second for o.duration, each from its
// scheduled time; at most o.maxOutstanding calls are in progress (a call
// due beyond that is not sent and is counted late: the client is saturated).
func openLoop(o *options, conns []*grpc.ClientConn, reqs []prepared) result {
	rec := recorder{cpu0: cpuTime()}
	stopMem := sampleServer(o)
	start := time.Now()
	interval := time.Duration(float64(time.Second) / o.rate)
	total := min(int(o.duration.Seconds()*o.rate), o.maxRequests)
	slots := make(chan struct{}, max(o.maxOutstanding, 1))
	var late atomic.Int64
	var wg sync.WaitGroup
	// A few dispatchers share the schedule so that one goroutine's wake-up
	// jitter does not cap the rate.
	const dispatchers = 4
	for d := range dispatchers {
		wg.Add(1)
		go func() {
			defer wg.Done()
			for i := d; i < total; i += dispatchers {
				due := start.Add(time.Duration(i) * interval)
				if w := time.Until(due); w > 0 {
					time.Sleep(w)
				}
				select {
				case slots <- struct{}{}:
				default:
					late.Add(1)
					continue
				}
				rec.sent.Add(1)
				wg.Add(1)
				go func() {
					defer wg.Done()
					ctx, cancel := context.WithTimeout(context.Background(), o.timeout)
					_, err := call(ctx, conns[i%len(conns)], &reqs[i%len(reqs)], i%o.checkEvery == 0)
					cancel()
					rec.add(time.Since(due), err)
					<-slots
				}()
			}
		}()
	}
	wg.Wait()
	res := rec.result("", time.Since(start))
	res.ClientLate = int(late.Load())
	res.Server = stopMem()
	return res
}

// sampleServer scrapes the server's metrics once a second until the
// returned function is called, which returns the figures (nil when off).
func sampleServer(o *options) func() *serverStats {
	if o.metrics == "off" {
		return func() *serverStats { return nil }
	}
	st := &serverStats{}
	var mu sync.Mutex
	take := func() {
		v, err := scrape(o.metrics)
		if err != nil {
			return
		}
		mu.Lock()
		defer mu.Unlock()
		rss, heap, gr := v["process_resident_memory_bytes"]/1e6, v["go_memstats_heap_inuse_bytes"]/1e6, v["go_goroutines"]
		st.cpu = v["process_cpu_seconds_total"]
		if st.Samples == 0 {
			st.RSSStartMB, st.HeapStartMB, st.GoroutinesStart = rss, heap, gr
		}
		st.RSSMaxMB, st.HeapMaxMB, st.GoroutinesMax = max(st.RSSMaxMB, rss), max(st.HeapMaxMB, heap), max(st.GoroutinesMax, gr)
		st.RSSEndMB, st.HeapEndMB, st.GoroutinesEnd = rss, heap, gr
		st.Samples++
	}
	take()
	cpu0 := st.cpu
	h0, _ := scrapeHist(o.metrics)
	done := make(chan struct{})
	stopped := make(chan struct{})
	go func() {
		defer close(stopped)
		t := time.NewTicker(time.Second)
		defer t.Stop()
		for {
			select {
			case <-done:
				return
			case <-t.C:
				take()
			}
		}
	}()
	return func() *serverStats {
		close(done)
		<-stopped
		take()
		st.CPUSeconds = st.cpu - cpu0
		if h1, err := scrapeHist(o.metrics); err == nil {
			st.HandlerP50ms, st.HandlerP99ms = histQuantile(h0, h1, .5), histQuantile(h0, h1, .99)
		}
		mu.Lock()
		defer mu.Unlock()
		if st.Samples == 0 {
			return nil
		}
		return st
	}
}

// scraper reads the server's metrics page uncompressed, so that sampling it
// once a second costs the server no gzip work.
var scraper = &http.Client{Timeout: 2 * time.Second, Transport: &http.Transport{DisableCompression: true}}

// scrape reads the plain (unlabelled) samples of a Prometheus text page.
func scrape(addr string) (map[string]float64, error) {
	resp, err := scraper.Get("http://" + addr + "/metrics")
	if err != nil {
		return nil, err
	}
	defer resp.Body.Close()
	out := map[string]float64{}
	sc := bufio.NewScanner(resp.Body)
	for sc.Scan() {
		l := sc.Text()
		if strings.HasPrefix(l, "#") || strings.ContainsRune(l, '{') {
			continue
		}
		name, val, ok := strings.Cut(l, " ")
		if !ok {
			continue
		}
		if f, err := strconv.ParseFloat(strings.TrimSpace(val), 64); err == nil {
			out[name] = f
		}
	}
	return out, sc.Err()
}

// annotateHist is the bucket prefix of the server's Annotate latency.
const annotateHist = `termgrove_grpc_request_duration_seconds_bucket{method="/termgrove.v1.AnnotationService/Annotate",le="`

// scrapeHist reads the cumulative bucket counts of annotateHist by bound.
func scrapeHist(addr string) (map[float64]float64, error) {
	resp, err := scraper.Get("http://" + addr + "/metrics")
	if err != nil {
		return nil, err
	}
	defer resp.Body.Close()
	out := map[float64]float64{}
	sc := bufio.NewScanner(resp.Body)
	for sc.Scan() {
		rest, ok := strings.CutPrefix(sc.Text(), annotateHist)
		if !ok {
			continue
		}
		le, val, ok := strings.Cut(rest, `"} `)
		if !ok {
			continue
		}
		b, err1 := strconv.ParseFloat(le, 64) // "+Inf" parses as +Inf
		n, err2 := strconv.ParseFloat(val, 64)
		if err1 == nil && err2 == nil {
			out[b] = n
		}
	}
	return out, sc.Err()
}

// histQuantile returns the upper bound (ms) of the bucket holding quantile q
// of the calls observed between two scrapes; 0 when none.
func histQuantile(h0, h1 map[float64]float64, q float64) float64 {
	var bounds []float64
	for b := range h1 {
		bounds = append(bounds, b)
	}
	slices.Sort(bounds)
	if len(bounds) == 0 {
		return 0
	}
	total := h1[bounds[len(bounds)-1]] - h0[bounds[len(bounds)-1]]
	if total <= 0 {
		return 0
	}
	for _, b := range bounds {
		if h1[b]-h0[b] >= q*total {
			return b * 1000
		}
	}
	return math.Inf(1)
}

func report(o *options, step string, r result) {
	r.Step = step
	if o.jsonOut {
		b, _ := json.Marshal(r)
		fmt.Println(string(b))
		return
	}
	fmt.Printf("%s: %.1fs sent=%d ok=%d (%.0f/s) p50=%.2fms p90=%.2fms p99=%.2fms max=%.2fms codes=%v",
		step, r.Seconds, r.Sent, r.OK, r.OKPerSec, r.P50ms, r.P90ms, r.P99ms, r.MaxMs, r.Codes)
	if r.RejectP99 > 0 {
		fmt.Printf(" rejected_p99=%.2fms", r.RejectP99)
	}
	if r.ClientLate > 0 {
		fmt.Printf(" client_late=%d", r.ClientLate)
	}
	fmt.Println()
	if o.mode == "local" {
		fmt.Printf("  cpu per call: %.0fµs (this process: the annotator)\n", r.CPUPerOKus)
	}
	if s := r.Server; s != nil {
		if r.OK > 0 {
			fmt.Printf("  cpu per accepted call: server %.0fµs, load tool %.0fµs\n", s.CPUSeconds*1e6/float64(r.OK), r.CPUPerOKus)
		}
		fmt.Printf("  server: rss %.0f→max %.0f→%.0f MB, heap %.0f→max %.0f→%.0f MB, goroutines %.0f→max %.0f→%.0f (%d samples)\n",
			s.RSSStartMB, s.RSSMaxMB, s.RSSEndMB, s.HeapStartMB, s.HeapMaxMB, s.HeapEndMB,
			s.GoroutinesStart, s.GoroutinesMax, s.GoroutinesEnd, s.Samples)
		if s.HandlerP99ms > 0 { // no unary calls in mode stream
			fmt.Printf("  server-side Annotate handler time: p50 ≤ %.2fms, p99 ≤ %.2fms (histogram bucket bounds)\n", s.HandlerP50ms, s.HandlerP99ms)
		}
	}
}
