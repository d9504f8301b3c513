package api

import (
	"context"
	"fmt"
	"io"
	"log/slog"
	"net"
	"sort"
	"strings"
	"sync"
	"testing"
	"time"

	"google.golang.org/grpc"
	"google.golang.org/grpc/credentials/insecure"

	"termgrove/annotate"
	"termgrove/concepts"
	"termgrove/model"
	"termgrove/terms"

	pb "termgrove/proto/termgrove/v1"
)

// tinyModel is a 3-concept model: "animals" (top) with narrower "cats" and
// "dogs", one free topic, over seven word types. gen marks the model's
// version in its provenance so reload tests can tell models apart.
func tinyModel(gen string) *model.Model {
	s := &concepts.Scheme{
		IRI:   "http://ex.org/scheme",
		Title: []concepts.Label{{Lang: "en", Text: "Tiny"}},
		Concepts: []concepts.Concept{
			{IRI: "http://ex.org/c/animals", Pref: []concepts.Label{{Lang: "en", Text: "Animals"}, {Lang: "fr", Text: "Animaux"}}, Narrower: []int{1, 2}, Top: true,
				Definition: []concepts.Label{{Lang: "en", Text: "Living beings that move."}}},
			{IRI: "http://ex.org/c/cats", Pref: []concepts.Label{{Lang: "en", Text: "Cats"}}, Alt: []concepts.Label{{Lang: "en", Text: "Felines"}}, Broader: []int{0}, Notation: []string{"A.1"}},
			{IRI: "http://ex.org/c/dogs", Pref: []concepts.Label{{Lang: "en", Text: "Dogs"}}, Hidden: []concepts.Label{{Lang: "en", Text: "doggies"}}, Broader: []int{0}},
		},
	}
	s.Reindex()
	// Words: 0 animal, 1 cat, 2 dog, 3 purr, 4 bark, 5 weather, 6 rain
	return &model.Model{
		Scheme:   s,
		Analyzer: terms.Options{Languages: []string{"en"}},
		Words:    []string{"animal", "cat", "dog", "purr", "bark", "weather", "rain"},
		C:        3, F: 1,
		Alpha:  []float64{0.1, 0.2, 0.2, 0.5},
		Beta0:  0.01,
		Lambda: 10,
		Prior: [][]model.WordWeight{
			{{Word: 0, Weight: 1}},
			{{Word: 1, Weight: 1}},
			{{Word: 2, Weight: 1}},
		},
		Counts: [][]model.WordCount{
			{{Word: 0, Count: 20}},
			{{Word: 1, Count: 30}, {Word: 3, Count: 12}},
			{{Word: 2, Count: 30}, {Word: 4, Count: 15}},
			{{Word: 5, Count: 40}, {Word: 6, Count: 25}},
		},
		Totals:     []int64{20, 42, 45, 65},
		DocCounts:  []int32{5, 9, 8, 20},
		Provenance: model.Provenance{TermgroveVersion: gen, Created: "2026-12-01T00:00:00Z", Records: 42, Tokens: 172, Sweeps: 100, Seed: 7, Options: map[string]string{"free-topics": "1"}},
	}
}

// fakeAnnotator is a test double of the annotator: each whitespace-separated
// word of the text that is a model word goes to the concept with its largest
// count (or to "uncovered" when a free topic has it). It is deterministic and
// honours Top, MinScore and IncludeWords like the real one. hook, when set,
// runs first with the text (tests use it to block, sleep or panic).
type fakeAnnotator struct {
	m    *model.Model
	hook func(text string)
}

func (f *fakeAnnotator) Annotate(id, text string, opt annotate.Options) (*annotate.Result, error) {
	if f.hook != nil {
		f.hook(text)
	}
	m := f.m
	res := &annotate.Result{ID: id, Language: "en"}
	score := make([]float64, m.K())
	off := 0
	for _, w := range strings.Fields(text) {
		start := strings.Index(text[off:], w) + off
		off = start + len(w)
		res.Tokens++
		wid := -1
		for i, s := range m.Words {
			if s == strings.ToLower(w) {
				wid = i
			}
		}
		if wid < 0 {
			continue
		}
		best, bc := -1, int32(0)
		for k := range m.K() {
			for _, wc := range m.Counts[k] {
				if int(wc.Word) == wid && wc.Count > bc {
					best, bc = k, wc.Count
				}
			}
		}
		score[best]++
		if opt.IncludeWords {
			iri := ""
			if best < m.C {
				iri = m.Scheme.Concepts[best].IRI
			}
			res.Words = append(res.Words, annotate.Word{Start: start, End: off, Text: w, Term: m.Words[wid], Concept: iri, P: 1})
		}
	}
	if res.Tokens == 0 {
		return res, nil
	}
	for k := m.C; k < m.K(); k++ {
		res.Uncovered += score[k] / float64(res.Tokens)
	}
	for k := range m.C {
		if score[k] == 0 || score[k]/float64(res.Tokens) < opt.MinScore {
			continue
		}
		c := &m.Scheme.Concepts[k]
		ac := annotate.Concept{IRI: c.IRI, Label: c.PrefLabel("en"), Score: score[k] / float64(res.Tokens)}
		for p := k; ; {
			pc := &m.Scheme.Concepts[p]
			ac.Path = append([]annotate.PathNode{{IRI: pc.IRI, Label: pc.PrefLabel("en"), Score: ac.Score}}, ac.Path...)
			if len(pc.Broader) == 0 {
				break
			}
			p = pc.Broader[0]
		}
		res.Concepts = append(res.Concepts, ac)
	}
	sort.SliceStable(res.Concepts, func(i, j int) bool { return res.Concepts[i].Score > res.Concepts[j].Score })
	top := opt.Top
	if top == 0 {
		top = 10
	}
	if len(res.Concepts) > top {
		res.Concepts = res.Concepts[:top]
	}
	return res, nil
}

// memModels is a model loader over in-memory models by path, so that tests
// can swap what a "file" holds; a nil entry fails to load.
type memModels struct {
	mu sync.Mutex
	m  map[string]*model.Model
}

func (mm *memModels) set(path string, m *model.Model) {
	mm.mu.Lock()
	defer mm.mu.Unlock()
	if mm.m == nil {
		mm.m = map[string]*model.Model{}
	}
	mm.m[path] = m
}

func (mm *memModels) load(path string) (*model.Model, error) {
	mm.mu.Lock()
	defer mm.mu.Unlock()
	m := mm.m[path]
	if m == nil {
		return nil, fmt.Errorf("%s: %w", path, io.ErrUnexpectedEOF)
	}
	return m, nil
}

// testServer is a server on a real loopback TCP port with a client conn.
type testServer struct {
	s    *Server
	conn *grpc.ClientConn
	c    pb.AnnotationServiceClient
	mem  *memModels
	done chan error
}

// startServer starts a server with cfg (Models default to one "tiny"
// model; Load, NewAnnotator and Logger default to the test doubles) on
// 127.0.0.1:0 and connects a plaintext client.
func startServer(t testing.TB, cfg Config, hook func(string)) *testServer {
	t.Helper()
	ts := &testServer{mem: &memModels{}, done: make(chan error, 1)}
	if len(cfg.Models) == 0 {
		cfg.Models = []ModelSpec{{Name: "tiny", Path: "tiny.grove"}}
	}
	for _, ms := range cfg.Models {
		if _, err := ts.mem.load(ms.Path); err != nil {
			ts.mem.set(ms.Path, tinyModel("gen1"))
		}
	}
	if cfg.Load == nil {
		cfg.Load = ts.mem.load
	}
	if cfg.NewAnnotator == nil {
		cfg.NewAnnotator = func(m *model.Model) (Annotator, error) { return &fakeAnnotator{m: m, hook: hook}, nil }
	}
	if cfg.Logger == nil {
		cfg.Logger = slog.New(slog.NewTextHandler(io.Discard, nil))
	}
	cfg.Listen = "127.0.0.1:0"
	if cfg.MetricsListen == "" {
		cfg.MetricsListen = "127.0.0.1:0"
	}
	s, err := NewServer(cfg)
	if err != nil {
		t.Fatalf("NewServer: %v", err)
	}
	if err := s.Listen(); err != nil {
		t.Fatalf("Listen: %v", err)
	}
	ts.s = s
	go func() { ts.done <- s.Serve() }()
	if cfg.TLSCert == "" {
		ts.conn = dial(t, s.Addr().String())
		ts.c = pb.NewAnnotationServiceClient(ts.conn)
	}
	t.Cleanup(func() {
		if ts.conn != nil {
			ts.conn.Close()
		}
		s.Shutdown(time.Second)
	})
	return ts
}

func dial(t testing.TB, addr string, opts ...grpc.DialOption) *grpc.ClientConn {
	t.Helper()
	if len(opts) == 0 {
		opts = []grpc.DialOption{grpc.WithTransportCredentials(insecure.NewCredentials())}
	}
	conn, err := grpc.NewClient(addr, opts...)
	if err != nil {
		t.Fatalf("dial %s: %v", addr, err)
	}
	return conn
}

// ctxT is a context bounded by a few seconds, so a hung call fails the test.
func ctxT(t testing.TB) context.Context {
	ctx, cancel := context.WithTimeout(context.Background(), 10*time.Second)
	t.Cleanup(cancel)
	return ctx
}

var _ = net.Listen
