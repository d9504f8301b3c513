package main

import (
	"bytes"
	"encoding/json"
	"fmt"
	"net/url"
	"os"
	"os/exec"
	"path/filepath"
	"slices"
	"sort"
	"strings"
	"testing"
	"time"

	"golang.org/x/net/html"

	"termgrove/concepts/rdf"
	"termgrove/model"
	"termgrove/model/modeltest"
)

// annTestModel saves a small synthetic model (words "w0".."w499", concepts
// http://example.org/c/0..39) and returns its path.
func annTestModel(t *testing.T) string {
	t.Helper()
	m := modeltest.Synthetic(modeltest.Options{Concepts: 40, Free: 4, Words: 500, Seed: 3})
	p := filepath.Join(t.TempDir(), "syn.grove")
	if err := model.Save(p, m); err != nil {
		t.Fatal(err)
	}
	return p
}

func annCall(t *testing.T, stdin string, args ...string) (string, string, int) {
	t.Helper()
	var out, errb bytes.Buffer
	code := runAnnotate(args, strings.NewReader(stdin), &out, &errb)
	return out.String(), errb.String(), code
}

// annRecords writes n JSON Lines records with varied words.
func annRecords(t *testing.T, n int) (string, []string) {
	t.Helper()
	var b strings.Builder
	var ids []string
	for i := 0; i < n; i++ {
		id := fmt.Sprintf("rec %d/é?", i)
		ids = append(ids, id)
		var words []string
		for j := 0; j < 30+i%7; j++ {
			words = append(words, fmt.Sprintf("w%d", (i*37+j*j)%500))
		}
		line, _ := json.Marshal(map[string]any{"id": id, "title": "T", "text": strings.Join(words, " ")})
		b.Write(line)
		b.WriteByte('\n')
	}
	p := filepath.Join(t.TempDir(), "recs.jsonl")
	if err := os.WriteFile(p, []byte(b.String()), 0o644); err != nil {
		t.Fatal(err)
	}
	return p, ids
}

// TestAnnotateJSONOrder: one object per record, the DESIGN.md field names,
// input order kept with many workers, same output with one worker.
func TestAnnotateJSONOrder(t *testing.T) {
	mp := annTestModel(t)
	rp, ids := annRecords(t, 40)
	out4, errs, code := annCall(t, "", "--model", mp, "--records", "--format", "json", "--workers", "4", rp)
	if code != 0 {
		t.Fatalf("exit %d: %s", code, errs)
	}
	out1, _, _ := annCall(t, "", "--model", mp, "--records", "--format", "json", "--workers", "1", rp)
	if out1 != out4 {
		t.Error("output differs between 1 and 4 workers")
	}
	lines := strings.Split(strings.TrimSuffix(out4, "\n"), "\n")
	if len(lines) != len(ids) {
		t.Fatalf("%d lines for %d records", len(lines), len(ids))
	}
	for i, l := range lines {
		var raw map[string]json.RawMessage
		if err := json.Unmarshal([]byte(l), &raw); err != nil {
			t.Fatal(err)
		}
		for _, k := range []string{"id", "concepts", "uncovered", "words"} {
			if _, ok := raw[k]; !ok {
				t.Errorf("line %d lacks %q", i, k)
			}
		}
		var r struct {
			ID       string
			Concepts []struct {
				IRI, Label string
				Score      float64
				Path       []struct {
					IRI, Label string
					Score      float64
				}
			}
			Words []struct {
				Start, End int
				Text, Term string
				Concept    string
				P          float64
			}
		}
		json.Unmarshal([]byte(l), &r)
		if r.ID != ids[i] {
			t.Errorf("line %d: id %q, want %q", i, r.ID, ids[i])
		}
		if len(r.Concepts) == 0 || len(r.Concepts) > 10 || len(r.Concepts[0].Path) == 0 || r.Concepts[0].Label == "" {
			t.Errorf("line %d: concepts %+v", i, r.Concepts)
		}
		if len(r.Words) == 0 || r.Words[0].Term == "" || r.Words[0].End <= r.Words[0].Start {
			t.Errorf("line %d: words %+v", i, r.Words)
		}
	}
}

func TestAnnotateTextFormat(t *testing.T) {
	mp := annTestModel(t)
	dir := t.TempDir()
	os.WriteFile(filepath.Join(dir, "b.txt"), []byte("w1 w2 w3 w10 w11 w40 w41 w7 w7"), 0o644)
	os.WriteFile(filepath.Join(dir, "a.txt"), []byte("w5 w6 w9 w9 w12 w13 w200"), 0o644)
	os.WriteFile(filepath.Join(dir, "empty.txt"), nil, 0o644)
	out, errs, code := annCall(t, "", "--model", mp, "--top", "3", dir)
	if code != 0 {
		t.Fatalf("exit %d: %s", code, errs)
	}
	ia, ib, ie := strings.Index(out, "a  "), strings.Index(out, "b  "), strings.Index(out, "empty  0 words")
	if ia != 0 || ib < ia || ie < ib {
		t.Errorf("records out of order or missing:\n%s", out)
	}
	if strings.Contains(out, "\x1b[") || !strings.Contains(out, "]1") {
		t.Errorf("plain output should use brackets, no ANSI:\n%s", out)
	}
	out, _, _ = annCall(t, "", "--model", mp, "--top", "3", "--color", "always", filepath.Join(dir, "b.txt"))
	if !strings.Contains(out, "\x1b[31m") || strings.Contains(out, "]1") {
		t.Errorf("--color always should colour:\n%q", out)
	}
	// Standard input, flags after the input.
	out, _, code = annCall(t, "w1 w2 w3", "-", "--model", mp)
	if code != 0 || !strings.HasPrefix(out, "-  3 words") {
		t.Errorf("stdin: %d %q", code, out)
	}
}

// TestAnnotateTTL (outside check c): the ttl output parses with Debian's
// rapper and with termgrove's own Turtle reader, and both give the same
// graph, which holds one dcterms:subject triple per listed concept.
// Source: W3C Turtle (2014) via raptor2-utils' rapper; rdf.ReadTurtle.
func TestAnnotateTTL(t *testing.T) {
	mp := annTestModel(t)
	rp, ids := annRecords(t, 5)
	out, errs, code := annCall(t, "", "--model", mp, "--records", "--format", "ttl", "--top", "4",
		"--record-base", "http://catalogue.example.org/record/", rp)
	if code != 0 {
		t.Fatalf("exit %d: %s", code, errs)
	}
	js, _, _ := annCall(t, "", "--model", mp, "--records", "--format", "json", "--top", "4", rp)
	var want []string
	for i, l := range strings.Split(strings.TrimSpace(js), "\n") {
		var r struct{ Concepts []struct{ IRI string } }
		json.Unmarshal([]byte(l), &r)
		for _, c := range r.Concepts {
			want = append(want, fmt.Sprintf("<%s> <http://purl.org/dc/terms/subject> <%s> .",
				"http://catalogue.example.org/record/"+url.PathEscape(ids[i]), c.IRI))
		}
	}
	sort.Strings(want)

	var own []string
	err := rdf.ReadTurtle(strings.NewReader(out), rdf.Options{File: "out.ttl"}, func(tr rdf.Triple) error {
		own = append(own, fmt.Sprintf("<%s> <%s> <%s> .", tr.S.Value, tr.P.Value, tr.O.Value))
		return nil
	})
	switch {
	case err != nil && strings.Contains(err.Error(), "not implemented"):
		t.Log("rdf.ReadTurtle not implemented yet: own-reader check skipped")
		own = nil
	case err != nil:
		t.Fatalf("rdf.ReadTurtle: %v\n%s", err, out)
	default:
		sort.Strings(own)
		if !slices.Equal(own, want) {
			t.Errorf("own reader graph:\n%s\nwant:\n%s", strings.Join(own, "\n"), strings.Join(want, "\n"))
		}
	}

	if _, err := exec.LookPath("rapper"); err != nil {
		t.Skip("rapper not installed (Debian package raptor2-utils)")
	}
	f := filepath.Join(t.TempDir(), "out.ttl")
	os.WriteFile(f, []byte(out), 0o644)
	cmd := exec.Command("rapper", "-q", "-i", "turtle", "-o", "ntriples", f)
	var stderr bytes.Buffer
	cmd.Stderr = &stderr
	nt, err := cmd.Output()
	if err != nil {
		t.Fatalf("rapper: %v %s", err, stderr.String())
	}
	got := strings.Split(strings.TrimSpace(string(nt)), "\n")
	sort.Strings(got)
	if !slices.Equal(got, want) {
		t.Errorf("rapper graph:\n%s\nwant:\n%s", strings.Join(got, "\n"), strings.Join(want, "\n"))
	}
}

// TestAnnotateHTML (outside check d): the page parses with
// golang.org/x/net/html with one section per record, a legend, one span
// with a title per word, no script and no external resource; headless
// Chromium (Debian package chromium) renders the same elements.
func TestAnnotateHTML(t *testing.T) {
	mp := annTestModel(t)
	rp, ids := annRecords(t, 3)
	out, errs, code := annCall(t, "", "--model", mp, "--records", "--format", "html", "--top", "5", rp)
	if code != 0 {
		t.Fatalf("exit %d: %s", code, errs)
	}
	doc, err := html.Parse(strings.NewReader(out))
	if err != nil {
		t.Fatal(err)
	}
	count := map[string]int{}
	var walk func(n *html.Node)
	walk = func(n *html.Node) {
		if n.Type == html.ElementNode {
			cls, title := "", ""
			for _, a := range n.Attr {
				switch a.Key {
				case "class":
					cls = a.Val
				case "title":
					title = a.Val
				case "src":
					count["src"]++
				}
			}
			count[n.Data]++
			switch {
			case n.Data == "section" && cls == "record":
				count["record"]++
			case n.Data == "ol" && cls == "legend":
				count["legend"]++
			case n.Data == "span" && strings.HasPrefix(cls, "w ") && title != "":
				count["word"]++
			}
		}
		for c := n.FirstChild; c != nil; c = c.NextSibling {
			walk(c)
		}
	}
	walk(doc)
	js, _, _ := annCall(t, "", "--model", mp, "--records", "--format", "json", "--top", "5", rp)
	words := strings.Count(js, `"start":`)
	if count["record"] != len(ids) || count["legend"] != len(ids) || count["word"] != words ||
		count["script"] != 0 || count["src"] != 0 || count["link"] != 0 || count["style"] != 1 {
		t.Errorf("elements %v, want %d records and %d words", count, len(ids), words)
	}

	chrome, err := exec.LookPath("chromium")
	if err != nil {
		t.Skip("chromium not installed (Debian package chromium)")
	}
	f := filepath.Join(t.TempDir(), "page.html")
	os.WriteFile(f, []byte(out), 0o644)
	cmd := exec.Command(chrome, "--headless", "--no-sandbox", "--disable-gpu", "--disable-background-networking",
		"--disable-component-update", "--disable-sync", "--no-first-run", "--user-data-dir="+t.TempDir(),
		"--dump-dom", "file://"+f)
	done := make(chan struct{})
	var dom []byte
	go func() { dom, err = cmd.Output(); close(done) }()
	select {
	case <-done:
	case <-time.After(60 * time.Second):
		cmd.Process.Kill()
		<-done
		t.Fatal("chromium did not finish in 60 s")
	}
	if err != nil {
		t.Fatalf("chromium: %v", err)
	}
	d := string(dom)
	if strings.Count(d, `<section class="record"`) != len(ids) || strings.Count(d, `<span class="w `) != words ||
		strings.Count(d, `<ol class="legend">`) != len(ids) {
		t.Errorf("chromium DOM lacks the expected elements:\n%.2000s", d)
	}
}

func TestAnnotateBadInput(t *testing.T) {
	mp := annTestModel(t)
	dir := t.TempDir()
	big := filepath.Join(dir, "big.txt")
	os.WriteFile(big, bytes.Repeat([]byte("w1 "), 400_000), 0o644)
	small := filepath.Join(dir, "small.txt")
	os.WriteFile(small, []byte("w1 w2 \xff\xfe w3"), 0o644)
	corrupt := filepath.Join(dir, "bad.grove")
	b, _ := os.ReadFile(mp)
	b[len(b)-3] ^= 1
	os.WriteFile(corrupt, b, 0o644)

	cases := []struct {
		name   string
		args   []string
		code   int
		stderr string
		stdout string
	}{
		{"no model", []string{small}, 2, "--model is required", ""},
		{"missing model", []string{"--model", filepath.Join(dir, "nope.grove"), small}, 2, "nope.grove", ""},
		{"corrupt model", []string{"--model", corrupt, small}, 2, corrupt + ": model file corrupted: checksum", ""},
		{"bad format", []string{"--model", mp, "--format", "xml", small}, 2, `--format "xml"`, ""},
		{"bad mode", []string{"--model", mp, "--subjects-mode", "x", small}, 2, "--subjects-mode", ""},
		{"missing input", []string{"--model", mp, filepath.Join(dir, "none.txt")}, 2, "none.txt", ""},
		{"too large", []string{"--model", mp, "--format", "json", big, small}, 1, "big.txt: big: text too large: 1200000 bytes, limit 1048576", `"id":"small"`},
		{"limit lifted", []string{"--model", mp, "--format", "json", "--max-bytes", "-1", big}, 0, "", `"id":"big"`},
		{"invalid utf-8", []string{"--model", mp, "--format", "json", small}, 0, "", `"invalid_utf8":2`},
		{"help", []string{"--help"}, 0, "Example", ""},
		{"bad records", []string{"--model", mp, "--records", small}, 2, "small.txt:1: bad record", ""},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			out, errs, code := annCall(t, "", c.args...)
			if code != c.code || !strings.Contains(errs, c.stderr) || !strings.Contains(out, c.stdout) {
				t.Errorf("exit %d (want %d)\nstderr %q (want %q)\nstdout %.300q (want %q)", code, c.code, errs, c.stderr, out, c.stdout)
			}
		})
	}
}
