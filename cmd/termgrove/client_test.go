package main

import (
	"context"
	"encoding/json"
	"io"
	"log/slog"
	"path/filepath"
	"testing"

	"termgrove/annotate"
	"termgrove/api"
	"termgrove/model"
	"termgrove/model/modeltest"
)

// TestAnnotateRemote checks that a result fetched over gRPC from a loopback
// server equals the local annotator's, field for field, so the annotate
// command formats both alike.
func TestAnnotateRemote(t *testing.T) {
	m := modeltest.Synthetic(modeltest.Options{Concepts: 40, Free: 4, Words: 500, Seed: 3})
	path := filepath.Join(t.TempDir(), "syn.grove")
	if err := model.Save(path, m); err != nil {
		t.Fatal(err)
	}
	s, err := api.NewServer(api.Config{
		Models: []api.ModelSpec{{Name: "syn", Path: path}},
		Listen: "127.0.0.1:0", MetricsListen: "off",
		Logger: slog.New(slog.NewTextHandler(io.Discard, nil)),
	})
	if err != nil {
		t.Fatal(err)
	}
	if err := s.Listen(); err != nil {
		t.Fatal(err)
	}
	ctx, cancel := context.WithCancel(context.Background())
	done := make(chan error, 1)
	go func() { done <- s.Run(ctx) }()
	defer func() { cancel(); <-done }()

	loaded, err := model.Load(path)
	if err != nil {
		t.Fatal(err)
	}
	local, err := annotate.New(loaded)
	if err != nil {
		t.Fatal(err)
	}
	remote, closeFn, err := annotateRemote(s.Addr().String(), remoteConfig{})
	if err != nil {
		t.Fatal(err)
	}
	defer closeFn()
	text := "w1 w2 w3 w10 w11 w12 w40 w41 w7 w7 w7 w100 unknownword w3"
	for _, opt := range []annotate.Options{{}, {Top: 3, IncludeWords: true}, {Subjects: []string{"http://example.org/c/5"}, SubjectMode: annotate.Boost}} {
		want, err := local.Annotate("r1", text, opt)
		if err != nil {
			t.Fatal(err)
		}
		got, err := remote("r1", text, opt)
		if err != nil {
			t.Fatal(err)
		}
		if len(want.Concepts) == 0 {
			t.Fatalf("options %+v: the local annotator found no concept; the comparison would prove little", opt)
		}
		wj, _ := json.Marshal(want)
		gj, _ := json.Marshal(got)
		if string(wj) != string(gj) {
			t.Fatalf("options %+v:\nlocal  %s\nremote %s", opt, wj, gj)
		}
	}
	// Invalid UTF-8 cannot go on the wire: its bytes become spaces, offsets
	// stay those of the caller's text, and the result counts them.
	bad := "w1 w2\xff\xfew3 w10 w11"
	res, err := remote("utf8", bad, annotate.Options{IncludeWords: true})
	if err != nil || res.Invalid != 2 || len(res.Words) == 0 {
		t.Fatalf("invalid UTF-8: %+v %v", res, err)
	}
	for _, w := range res.Words {
		if bad[w.Start:w.End] != w.Text {
			t.Fatalf("word %+v does not index the original text", w)
		}
	}
	// An empty text is an empty result on both sides; a bad option is
	// refused by the server.
	if res, err := remote("empty", "", annotate.Options{}); err != nil || len(res.Concepts) != 0 || res.Tokens != 0 || res.Uncovered != 0 {
		t.Fatalf("empty text: %+v %v, want an empty result", res, err)
	}
	if _, err := remote("bad", "w1", annotate.Options{MinScore: 2}); err == nil {
		t.Fatal("min score 2 accepted")
	}
	if _, _, err := annotateRemote("127.0.0.1:1", remoteConfig{CertFile: "x"}); err == nil {
		t.Fatal("--server-cert without --server-key accepted")
	}
}
