package api

import (
	"io"
	"log/slog"
	"os"
	"path/filepath"
	"strings"
	"testing"
	"time"

	"termgrove/model"
	pb "termgrove/proto/termgrove/v1"
)

// startFileServer serves the tiny model from a real .grove file with the
// default loader (model.Load) and annotator (annotate.New).
func startFileServer(t *testing.T) (*testServer, string) {
	t.Helper()
	path := filepath.Join(t.TempDir(), "tiny.grove")
	if err := model.Save(path, tinyModel("gen1")); err != nil {
		t.Fatal(err)
	}
	ts := &testServer{done: make(chan error, 1)}
	s, err := NewServer(Config{
		Models:        []ModelSpec{{Name: "tiny", Path: path}},
		Listen:        "127.0.0.1:0",
		MetricsListen: "off",
		Logger:        slog.New(slog.NewTextHandler(io.Discard, nil)),
	})
	if err != nil {
		t.Fatalf("NewServer: %v", err)
	}
	if err := s.Listen(); err != nil {
		t.Fatal(err)
	}
	ts.s = s
	go func() { ts.done <- s.Serve() }()
	ts.conn = dial(t, s.Addr().String())
	ts.c = pb.NewAnnotationServiceClient(ts.conn)
	t.Cleanup(func() {
		ts.conn.Close()
		s.Shutdown(time.Second)
	})
	return ts, path
}

func TestRealAnnotator(t *testing.T) {
	ts, _ := startFileServer(t)
	text := "The cat purrs; a cat and another cat."
	req := &pb.AnnotateRequest{Id: "r1", Text: text, IncludeWords: true}
	a, err := ts.c.Annotate(ctxT(t), req)
	if err != nil {
		t.Fatal(err)
	}
	if a.GetId() != "r1" || len(a.GetConcepts()) == 0 || a.GetConcepts()[0].GetIri() != "http://ex.org/c/cats" {
		t.Fatalf("annotation %v", a)
	}
	if p := a.GetConcepts()[0].GetPath(); len(p) == 0 || p[len(p)-1].GetIri() != "http://ex.org/c/cats" || p[0].GetIri() != "http://ex.org/c/animals" {
		t.Fatalf("path %v", p)
	}
	for _, w := range a.GetWords() {
		if w.GetStart() < 0 || w.GetEnd() > int32(len(text)) || text[w.GetStart():w.GetEnd()] != w.GetText() {
			t.Fatalf("word %v does not match the text", w)
		}
	}
	// Same model and text, same result (DESIGN: annotation is deterministic),
	// over the unary and the streaming call alike.
	b, err := ts.c.Annotate(ctxT(t), req)
	if err != nil || b.String() != a.String() {
		t.Fatalf("second call differs:\n%v\n%v", a, b)
	}
	st, err := ts.c.AnnotateStream(ctxT(t))
	if err != nil {
		t.Fatal(err)
	}
	st.Send(&pb.AnnotateStreamRequest{Records: []*pb.AnnotateRequest{req, {Id: "r2", Text: "dog barks at the rain"}}})
	r, err := st.Recv()
	if err != nil || r.GetResults()[0].GetAnnotation().String() != a.String() || r.GetResults()[1].GetId() != "r2" {
		t.Fatalf("stream: %v %v", r, err)
	}
	st.CloseSend()
}

func TestReloadFromFile(t *testing.T) {
	ts, path := startFileServer(t)
	next := tinyModel("gen2")
	if err := model.Save(path, next); err != nil {
		t.Fatal(err)
	}
	if err := ts.s.Reload(); err != nil {
		t.Fatal(err)
	}
	m, err := ts.c.GetModel(ctxT(t), &pb.GetModelRequest{})
	if err != nil || m.GetReload().GetGeneration() != 2 || m.GetProvenance().GetTermgroveVersion() != "gen2" {
		t.Fatalf("after reload: %v %v", m, err)
	}
	// A corrupt file: the old model stays and the failure is reported.
	if err := os.WriteFile(path, []byte("TGROVE\r\nnot a model"), 0o644); err != nil {
		t.Fatal(err)
	}
	if err := ts.s.Reload(); err == nil {
		t.Fatal("corrupt file reloaded")
	}
	m, err = ts.c.GetModel(ctxT(t), &pb.GetModelRequest{})
	if err != nil || m.GetReload().GetGeneration() != 2 || !strings.Contains(m.GetReload().GetLastError(), path) {
		t.Fatalf("after bad reload: %v %v", m.GetReload(), err)
	}
	if _, err := ts.c.Annotate(ctxT(t), &pb.AnnotateRequest{Text: "cat"}); err != nil {
		t.Fatalf("old model no longer serves: %v", err)
	}
}
