package main

import (
	"os"
	"os/exec"
	"path/filepath"
	"strings"
	"testing"
)

// The project's standard for bad input (DESIGN.md, "Exit status"; the
// issues' "Bad input" sections): a clear message, exit 2 for bad usage or
// unreadable input, and never a half-written output. Common practice, no
// source.

// TestFitOutputUnwritable: an --out that cannot be written is refused
// before any fitting, with exit 2 and a message naming the folder, and no
// file is left behind.
func TestFitOutputUnwritable(t *testing.T) {
	if testing.Short() {
		t.Skip("builds the CLI")
	}
	bin := buildTermgrove(t)
	dir := t.TempDir()
	vocab := filepath.Join(dir, "v.ttl")
	if err := os.WriteFile(vocab, []byte(fitTestVocab), 0o644); err != nil {
		t.Fatal(err)
	}
	recs := filepath.Join(dir, "r.jsonl")
	writeFitCorpus(t, recs, 40, 20)
	base := []string{"fit", "--vocab", vocab, "--records", recs, "--sweeps", "3", "--free-topics", "1", "--checkpoint", "0"}

	missing := filepath.Join(dir, "no-such-folder", "m.grove")
	_, stderr, code := runTG(t, bin, append(base, "--out", missing)...)
	if code != 2 || !strings.Contains(stderr, "no-such-folder") || !strings.Contains(stderr, "does not exist") || strings.Contains(stderr, "sweep") {
		t.Errorf("--out in a missing folder: exit %d, want 2 before fitting\n%s", code, stderr)
	}
	_, stderr, code = runTG(t, bin, append(base, "--out", dir)...)
	if code != 2 || !strings.Contains(stderr, "is a folder") || strings.Contains(stderr, "sweep") {
		t.Errorf("--out a folder: exit %d, want 2 before fitting\n%s", code, stderr)
	}
	if os.Getuid() != 0 { // root writes into a read-only folder anyway
		ro := filepath.Join(dir, "ro")
		os.Mkdir(ro, 0o500)
		_, stderr, code = runTG(t, bin, append(base, "--out", filepath.Join(ro, "m.grove"))...)
		if code != 2 || !strings.Contains(stderr, "cannot write") || strings.Contains(stderr, "sweep") {
			t.Errorf("--out in a read-only folder: exit %d, want 2 before fitting\n%s", code, stderr)
		}
		if ents, _ := os.ReadDir(ro); len(ents) != 0 {
			t.Errorf("read-only folder holds %d files", len(ents))
		}
	}
}

// TestFitRejectsCycle: DESIGN.md says broader cycles are rejected; fit
// must not build a model whose hierarchy paths run round a cycle.
func TestFitRejectsCycle(t *testing.T) {
	if testing.Short() {
		t.Skip("builds the CLI")
	}
	bin := buildTermgrove(t)
	dir := t.TempDir()
	vocab := filepath.Join(dir, "v.ttl")
	cyc := fitTestVocab + `ex:mill skos:broader ex:boat .
ex:boat skos:broader ex:farm .
ex:farm skos:broader ex:mill .
`
	if err := os.WriteFile(vocab, []byte(cyc), 0o644); err != nil {
		t.Fatal(err)
	}
	recs := filepath.Join(dir, "r.jsonl")
	writeFitCorpus(t, recs, 40, 20)
	out := filepath.Join(dir, "m.grove")
	_, stderr, code := runTG(t, bin, "fit", "--vocab", vocab, "--records", recs, "--out", out, "--sweeps", "3", "--checkpoint", "0")
	if code != 2 || !strings.Contains(stderr, "cycle") || !strings.Contains(stderr, "http://ex.org/c/mill") {
		t.Errorf("broader cycle: exit %d, want 2 naming the cycle\n%s", code, stderr)
	}
	if _, err := os.Stat(out); err == nil {
		t.Errorf("a model was written despite the cycle")
	}
}

// TestFitBadLanguage: a malformed --lang tag is a usage error, not a
// silent fall back to language-neutral analysis of every label.
func TestFitBadLanguage(t *testing.T) {
	if testing.Short() {
		t.Skip("builds the CLI")
	}
	bin := buildTermgrove(t)
	dir := t.TempDir()
	vocab := filepath.Join(dir, "v.ttl")
	if err := os.WriteFile(vocab, []byte(fitTestVocab), 0o644); err != nil {
		t.Fatal(err)
	}
	recs := filepath.Join(dir, "r.jsonl")
	writeFitCorpus(t, recs, 40, 20)
	_, stderr, code := runTG(t, bin, "fit", "--vocab", vocab, "--records", recs, "--out", filepath.Join(dir, "m.grove"), "--lang", "en,x!y")
	if code != 2 || !strings.Contains(stderr, `"x!y"`) {
		t.Errorf("--lang x!y: exit %d, want 2 naming the tag\n%s", code, stderr)
	}
}

// TestAnnotateBadOptions: out-of-range --top, --min-score and a malformed
// --lang are usage errors.
func TestAnnotateBadOptions(t *testing.T) {
	mp := annTestModel(t)
	for _, c := range []struct {
		name string
		args []string
		msg  string
	}{
		{"negative top", []string{"--model", mp, "--top", "-1", "-"}, "--top"},
		{"min-score above 1", []string{"--model", mp, "--min-score", "2", "-"}, "--min-score"},
		{"negative min-score", []string{"--model", mp, "--min-score", "-0.5", "-"}, "--min-score"},
		{"bad lang", []string{"--model", mp, "--lang", "zz!", "-"}, `"zz!"`},
		// A million workers took 2.8 GB and 5 s for one record.
		{"huge workers", []string{"--model", mp, "--workers", "1000000", "-"}, "--workers"},
	} {
		t.Run(c.name, func(t *testing.T) {
			out, errs, code := annCall(t, "w1 w2", c.args...)
			if code != 2 || !strings.Contains(errs, c.msg) || out != "" {
				t.Errorf("exit %d (want 2)\nstderr %q (want %q)\nstdout %.200q", code, errs, c.msg, out)
			}
		})
	}
}

// TestReportOutUnwritable: report --out into a missing folder or onto a
// folder is refused with exit 2 and a clear message.
func TestReportOutUnwritable(t *testing.T) {
	mp := annTestModel(t)
	dir := t.TempDir()
	for _, c := range []struct{ out, msg string }{
		{filepath.Join(dir, "nope", "r.html"), "does not exist"},
		{dir, "is a folder"},
	} {
		code := cmdReport([]string{"--model", mp, "--format", "html", "--out", c.out})
		if code != 2 {
			t.Errorf("report --out %s: exit %d, want 2", c.out, code)
		}
		if _, err := os.Stat(filepath.Join(dir, "nope")); err == nil {
			t.Errorf("report created the missing folder")
		}
	}
}

// TestCheckOutPath covers the shared pre-flight check of output paths.
func TestCheckOutPath(t *testing.T) {
	dir := t.TempDir()
	if err := checkOutPath(filepath.Join(dir, "ok.grove")); err != nil {
		t.Errorf("writable folder: %v", err)
	}
	if ents, _ := os.ReadDir(dir); len(ents) != 0 {
		t.Errorf("the probe left %d files", len(ents))
	}
	for _, c := range []struct{ path, msg string }{
		{filepath.Join(dir, "a", "b.grove"), "does not exist"},
		{dir, "is a folder"},
	} {
		err := checkOutPath(c.path)
		if err == nil || !strings.Contains(err.Error(), c.msg) || !strings.Contains(err.Error(), c.path) && !strings.Contains(err.Error(), filepath.Dir(c.path)) {
			t.Errorf("checkOutPath(%s) = %v, want %q", c.path, err, c.msg)
		}
	}
	f := filepath.Join(dir, "file")
	os.WriteFile(f, nil, 0o644)
	if err := checkOutPath(filepath.Join(f, "m.grove")); err == nil || !strings.Contains(err.Error(), "not a folder") {
		t.Errorf("parent is a file: %v", err)
	}
}

// TestScorePerConceptUnwritable: score --per-concept into a missing folder
// is refused before scoring with exit 2; likewise with --split before the
// fit.
func TestScorePerConceptUnwritable(t *testing.T) {
	mp := annTestModel(t)
	dir := t.TempDir()
	recs := filepath.Join(dir, "gold.jsonl")
	os.WriteFile(recs, []byte(`{"id":"a","text":"w1 w2 w3","subjects":["http://example.org/c/1"]}`+"\n"), 0o644)
	bad := filepath.Join(dir, "nope", "c.csv")
	if code := cmdScore([]string{"--model", mp, "--records", recs, "--per-concept", bad}); code != 2 {
		t.Errorf("--per-concept in a missing folder: exit %d, want 2", code)
	}
	vocab := filepath.Join(dir, "v.ttl")
	os.WriteFile(vocab, []byte(fitTestVocab), 0o644)
	if code := cmdScore([]string{"--split", "0.5", "--vocab", vocab, "--records", recs, "--per-concept", bad}); code != 2 {
		t.Errorf("--split with --per-concept in a missing folder: exit %d, want 2", code)
	}
}

// TestFitBadNumbers: option values that make no sense are usage errors
// (exit 2) before any sweep: NaN passes "< 0" checks, a negative burn-in
// was silently taken as the default, and a typo such as 20000000 free
// topics ran for minutes and wrote a model of noise.
func TestFitBadNumbers(t *testing.T) {
	if testing.Short() {
		t.Skip("builds the CLI")
	}
	bin := buildTermgrove(t)
	dir := t.TempDir()
	vocab := filepath.Join(dir, "v.ttl")
	if err := os.WriteFile(vocab, []byte(fitTestVocab), 0o644); err != nil {
		t.Fatal(err)
	}
	recs := filepath.Join(dir, "r.jsonl")
	writeFitCorpus(t, recs, 20, 10) // 200 tokens
	out := filepath.Join(dir, "m.grove")
	base := []string{"fit", "--vocab", vocab, "--records", recs, "--out", out, "--sweeps", "2", "--checkpoint", "0"}
	for _, c := range []struct {
		args []string
		msg  string
	}{
		{[]string{"--holdout", "NaN"}, "--holdout"},
		{[]string{"--burn-in", "-5"}, "--burn-in"},
		{[]string{"--free-topics", "20000000"}, "free topics"},
	} {
		_, stderr, code := runTG(t, bin, append(base, c.args...)...)
		if code != 2 || !strings.Contains(stderr, c.msg) || strings.Contains(stderr, "sweep 1/") {
			t.Errorf("%v: exit %d, want 2 naming %s before fitting\n%s", c.args, code, c.msg, stderr)
		}
		if _, err := os.Stat(out); err == nil {
			t.Errorf("%v: a model was written", c.args)
			os.Remove(out)
		}
	}
}

// TestAnnotateBadRecordBase: --record-base must be an absolute IRI that
// may stand in an N-Triples/Turtle IRIREF; otherwise the ttl output would
// not parse (RDF 1.1 Turtle §6.5, IRIREF). Source: RDF 1.1 Turtle.
func TestAnnotateBadRecordBase(t *testing.T) {
	mp := annTestModel(t)
	for _, base := range []string{"not an iri>", "records/", "http://x/{id}"} {
		out, errs, code := annCall(t, "w1 w2", "--model", mp, "--format", "ttl", "--record-base", base, "-")
		if code != 2 || !strings.Contains(errs, "--record-base") || out != "" {
			t.Errorf("--record-base %q: exit %d (want 2), stderr %q, stdout %.100q", base, code, errs, out)
		}
	}
	out, errs, code := annCall(t, "w1 w2", "--model", mp, "--format", "ttl", "--record-base", "https://catalogue.example.org/record/", "-")
	if code != 0 || !strings.Contains(out, "<https://catalogue.example.org/record/->") {
		t.Errorf("good --record-base: exit %d, stderr %q, stdout %.200q", code, errs, out)
	}
}

// TestAnnotateTextNoControlCharacters: the terminal view must not pass a
// record's escape sequences or other control characters to the terminal
// (a record could clear the screen or fake output); they are shown as
// Unicode control pictures. Common practice, no source.
func TestAnnotateTextNoControlCharacters(t *testing.T) {
	mp := annTestModel(t)
	in := `{"id":"id\u001b[2J","text":"w1 \u001b[31mw2\u001b[0m w3\u0007\tw4"}` + "\n"
	out, errs, code := annCall(t, in, "--model", mp, "--records", "--color", "never", "-")
	if code != 0 {
		t.Fatalf("exit %d: %s", code, errs)
	}
	for _, r := range out {
		if r < 0x20 && r != '\n' && r != '\t' || r == 0x7f || r >= 0x80 && r < 0xa0 {
			t.Fatalf("control character %U in the text view:\n%q", r, out)
		}
	}
	if !strings.Contains(out, "id␛[2J") || !strings.Contains(out, "␇") {
		t.Errorf("control characters not shown as pictures:\n%s", out)
	}
	out, _, _ = annCall(t, "w1 w2\r\nw3\r\n", "--model", mp, "--color", "never", "-")
	if strings.ContainsAny(out, "\r␍") {
		t.Errorf("CRLF line ends not shown as newlines:\n%q", out)
	}
}

// TestScoreReportBadNumbers: out-of-range numeric options of score and
// report are usage errors (score --k -2 used to panic).
func TestScoreReportBadNumbers(t *testing.T) {
	mp := annTestModel(t)
	dir := t.TempDir()
	recs := filepath.Join(dir, "gold.jsonl")
	os.WriteFile(recs, []byte(`{"id":"a","text":"w1 w2 w3","subjects":["http://example.org/c/1"]}`+"\n"), 0o644)
	for _, args := range [][]string{{"--k", "-2"}, {"--k", "0"}, {"--burn-in", "-1"}, {"--samples", "-1"}} {
		if code := cmdScore(append([]string{"--model", mp, "--records", recs}, args...)); code != 2 {
			t.Errorf("score %v: exit %d, want 2", args, code)
		}
	}
	for _, args := range [][]string{{"--min-share", "NaN"}, {"--min-share", "-1"}, {"--min-share", "2"}, {"--min-records", "-3"}} {
		if code := cmdReport(append([]string{"--model", mp}, args...)); code != 2 {
			t.Errorf("report %v: exit %d, want 2", args, code)
		}
	}
}

// TestFitBadCheckpoint: --resume with a damaged checkpoint stops with exit
// 2 (unreadable input), says how to start afresh, and writes no model.
func TestFitBadCheckpoint(t *testing.T) {
	if testing.Short() {
		t.Skip("builds the CLI")
	}
	bin := buildTermgrove(t)
	dir := t.TempDir()
	vocab := filepath.Join(dir, "v.ttl")
	if err := os.WriteFile(vocab, []byte(fitTestVocab), 0o644); err != nil {
		t.Fatal(err)
	}
	recs := filepath.Join(dir, "r.jsonl")
	writeFitCorpus(t, recs, 40, 20)
	out := filepath.Join(dir, "m.grove")
	if err := os.WriteFile(out+".checkpoint", []byte("TGROVE-CK garbage"), 0o644); err != nil {
		t.Fatal(err)
	}
	_, stderr, code := runTG(t, bin, "fit", "--vocab", vocab, "--records", recs, "--out", out, "--sweeps", "3", "--resume")
	if code != 2 || !strings.Contains(stderr, "m.grove.checkpoint") || !strings.Contains(stderr, "start afresh") {
		t.Errorf("damaged checkpoint: exit %d, want 2 with advice\n%s", code, stderr)
	}
	if _, err := os.Stat(out); err == nil {
		t.Errorf("a model was written")
	}
}

// TestMissingModelSaysSo: serve and score without --model say what is
// missing on their first line, before the usage text.
func TestMissingModelSaysSo(t *testing.T) {
	if testing.Short() {
		t.Skip("builds the CLI")
	}
	bin := buildTermgrove(t)
	for _, cmd := range []string{"serve", "score", "report"} {
		_, stderr, code := runTG(t, bin, cmd)
		first, _, _ := strings.Cut(stderr, "\n")
		if code != 2 || !strings.Contains(first, "--model") || !strings.Contains(first, "required") {
			t.Errorf("%s without --model: exit %d, first line %q", cmd, code, first)
		}
	}
}

// TestAnnotateInputHints: a folder with no .txt file, and a .jsonl file
// read as plain text (no --records), each get a warning on stderr rather
// than silence.
func TestAnnotateInputHints(t *testing.T) {
	mp := annTestModel(t)
	dir := t.TempDir()
	os.WriteFile(filepath.Join(dir, "notes.md"), []byte("w1 w2"), 0o644)
	_, errs, code := annCall(t, "", "--model", mp, dir)
	if code != 0 || !strings.Contains(errs, "no .txt files") {
		t.Errorf("folder without .txt: exit %d, stderr %q", code, errs)
	}
	recs, _ := annRecords(t, 2)
	out, errs, code := annCall(t, "", "--model", mp, "--format", "json", recs)
	if code != 0 || !strings.Contains(errs, "--records") || !strings.Contains(out, `"id":"recs.jsonl"`) {
		t.Errorf(".jsonl without --records: exit %d, stderr %q", code, errs)
	}
}

// TestAnnotateRecordsCountInvalidUTF8: invalid UTF-8 inside a JSON Lines
// record is counted in the result as it is for plain text (issue 5).
func TestAnnotateRecordsCountInvalidUTF8(t *testing.T) {
	mp := annTestModel(t)
	out, errs, code := annCall(t, "{\"id\":\"a\",\"text\":\"w1 \xff\xfe w2\"}\n", "--model", mp, "--records", "--format", "json", "-")
	if code != 0 || !strings.Contains(out, `"invalid_utf8":2`) {
		t.Errorf("exit %d, stderr %q\nstdout %.300q", code, errs, out)
	}
}

// TestFitCountsInvalidUTF8: fit says how many invalid UTF-8 sequences of
// the records were replaced.
func TestFitCountsInvalidUTF8(t *testing.T) {
	if testing.Short() {
		t.Skip("builds the CLI")
	}
	bin := buildTermgrove(t)
	dir := t.TempDir()
	vocab := filepath.Join(dir, "v.ttl")
	os.WriteFile(vocab, []byte(fitTestVocab), 0o644)
	recs := filepath.Join(dir, "r.jsonl")
	os.WriteFile(recs, []byte("{\"id\":\"a\",\"text\":\"mill \xff weir \xfe river boat\"}\n"), 0o644)
	_, stderr, code := runTG(t, bin, "fit", "--vocab", vocab, "--records", recs, "--out", filepath.Join(dir, "m.grove"), "--sweeps", "2", "--free-topics", "1", "--checkpoint", "0")
	if code != 0 || !strings.Contains(stderr, "2 invalid UTF-8") {
		t.Errorf("exit %d\n%s", code, stderr)
	}
}

// TestFitSkipBadHintOnlyForBadLines: the "--skip-bad" hint follows a bad
// line only; a records file that cannot be opened gets no such advice
// (it would not help).
func TestFitSkipBadHintOnlyForBadLines(t *testing.T) {
	if testing.Short() {
		t.Skip("builds the CLI")
	}
	bin := buildTermgrove(t)
	dir := t.TempDir()
	vocab := filepath.Join(dir, "v.ttl")
	os.WriteFile(vocab, []byte(fitTestVocab), 0o644)
	_, stderr, code := runTG(t, bin, "fit", "--vocab", vocab, "--records", filepath.Join(dir, "none.jsonl"), "--out", filepath.Join(dir, "m.grove"))
	if code != 2 || strings.Contains(stderr, "--skip-bad") {
		t.Errorf("missing records file: exit %d\n%s", code, stderr)
	}
}

// TestFitOutOverwritesInput: --out naming the vocabulary or the records
// file would replace the user's data with a model; it is refused.
func TestFitOutOverwritesInput(t *testing.T) {
	if testing.Short() {
		t.Skip("builds the CLI")
	}
	bin := buildTermgrove(t)
	dir := t.TempDir()
	vocab := filepath.Join(dir, "v.ttl")
	os.WriteFile(vocab, []byte(fitTestVocab), 0o644)
	recs := filepath.Join(dir, "r.jsonl")
	writeFitCorpus(t, recs, 20, 10)
	before, _ := os.ReadFile(recs)
	for _, out := range []string{recs, vocab, filepath.Join(dir, ".", "r.jsonl")} {
		_, stderr, code := runTG(t, bin, "fit", "--vocab", vocab, "--records", recs, "--out", out, "--sweeps", "2", "--checkpoint", "0")
		if code != 2 || !strings.Contains(stderr, "overwrite") {
			t.Errorf("--out %s: exit %d\n%s", out, code, stderr)
		}
	}
	if after, _ := os.ReadFile(recs); string(after) != string(before) {
		t.Errorf("the records file was replaced")
	}
	if after, _ := os.ReadFile(vocab); string(after) != fitTestVocab {
		t.Errorf("the vocabulary file was replaced")
	}
}

// TestReportScoreOutOverwritesInput: report --out and score --per-concept
// naming an input file are refused and leave it alone.
func TestReportScoreOutOverwritesInput(t *testing.T) {
	mp := annTestModel(t)
	dir := t.TempDir()
	recs := filepath.Join(dir, "gold.jsonl")
	data := `{"id":"a","text":"w1 w2 w3","subjects":["http://example.org/c/1"]}` + "\n"
	os.WriteFile(recs, []byte(data), 0o644)
	if code := cmdReport([]string{"--model", mp, "--records", recs, "--out", recs}); code != 2 {
		t.Errorf("report --out = --records: exit %d, want 2", code)
	}
	if code := cmdScore([]string{"--model", mp, "--records", recs, "--per-concept", mp}); code != 2 {
		t.Errorf("score --per-concept = --model: exit %d, want 2", code)
	}
	if b, _ := os.ReadFile(recs); string(b) != data {
		t.Errorf("records replaced")
	}
}

// TestCheckBadLanguage: check --lang with a malformed tag is a usage error,
// not "every concept lacks a prefLabel in !!".
func TestCheckBadLanguage(t *testing.T) {
	var out, errb strings.Builder
	code := runCheck([]string{"--lang", "en,!!", "../../testdata/small.ttl"}, &out, &errb)
	if code != 2 || !strings.Contains(errb.String(), `"!!"`) {
		t.Errorf("exit %d, stderr %q", code, errb.String())
	}
}

// TestFitNoLabelInLanguage: when no concept has a label in the --lang
// languages, every concept topic would have an empty prior and the model
// would be noise; fit refuses and names the vocabulary's label languages.
func TestFitNoLabelInLanguage(t *testing.T) {
	if testing.Short() {
		t.Skip("builds the CLI")
	}
	bin := buildTermgrove(t)
	dir := t.TempDir()
	vocab := filepath.Join(dir, "v.ttl")
	os.WriteFile(vocab, []byte(fitTestVocab), 0o644)
	recs := filepath.Join(dir, "r.jsonl")
	writeFitCorpus(t, recs, 20, 10)
	out := filepath.Join(dir, "m.grove")
	_, stderr, code := runTG(t, bin, "fit", "--vocab", vocab, "--records", recs, "--out", out, "--lang", "de", "--sweeps", "2", "--checkpoint", "0")
	if code != 2 || !strings.Contains(stderr, "--lang") || !strings.Contains(stderr, "en") {
		t.Errorf("--lang de on an English vocabulary: exit %d\n%s", code, stderr)
	}
	if _, err := os.Stat(out); err == nil {
		t.Errorf("a model was written")
	}
}

// TestAnnotateTooLargeRecordMessage: a refused record is named once:
// "file:line: id: text too large", not "id: id: ...".
func TestAnnotateTooLargeRecordMessage(t *testing.T) {
	mp := annTestModel(t)
	big := strings.Repeat("w1 ", 400_000)
	in := `{"id":"big","text":"` + big + `"}` + "\n" + `{"id":"small","text":"w1 w2"}` + "\n"
	out, errs, code := annCall(t, in, "--model", mp, "--records", "--format", "json", "-")
	if code != 1 || !strings.Contains(errs, "-:1: big: text too large") || strings.Contains(errs, "big: big") || !strings.Contains(out, `"id":"small"`) {
		t.Errorf("exit %d, stderr %q", code, errs)
	}
}

// TestAnnotateTooLargeTextMessage: plain text on standard input is named
// "-" once, not "-: -: text too large".
func TestAnnotateTooLargeTextMessage(t *testing.T) {
	mp := annTestModel(t)
	_, errs, code := annCall(t, strings.Repeat("w1 ", 400_000), "--model", mp, "-")
	if code != 1 || !strings.Contains(errs, "termgrove annotate: -: text too large") || strings.Contains(errs, "-: -:") {
		t.Errorf("exit %d, stderr %q", code, errs)
	}
}

// TestFitVocabFromStdin: "-" reads the vocabulary from standard input, as
// in check; both inputs from standard input is a usage error.
func TestFitVocabFromStdin(t *testing.T) {
	if testing.Short() {
		t.Skip("builds the CLI")
	}
	bin := buildTermgrove(t)
	dir := t.TempDir()
	recs := filepath.Join(dir, "r.jsonl")
	writeFitCorpus(t, recs, 20, 10)
	out := filepath.Join(dir, "m.grove")
	cmd := exec.Command(bin, "fit", "--vocab", "-", "--records", recs, "--out", out, "--sweeps", "2", "--free-topics", "1", "--checkpoint", "0")
	cmd.Stdin = strings.NewReader(fitTestVocab)
	if b, err := cmd.CombinedOutput(); err != nil {
		t.Errorf("--vocab -: %v\n%s", err, b)
	}
	_, stderr, code := runTG(t, bin, "fit", "--vocab", "-", "--records", "-", "--out", out)
	if code != 2 || !strings.Contains(stderr, "standard input") {
		t.Errorf("both from stdin: exit %d\n%s", code, stderr)
	}
}

// TestAnnotateHTMLNoScriptLinks: a concept IRI such as
// javascript:alert(1) is a valid absolute IRI, and vocabularies come from
// outside; the HTML page links only http and https IRIs.
// Source: OWASP XSS Prevention Cheat Sheet (URL contexts: allow-list
// http/https).
func TestAnnotateHTMLNoScriptLinks(t *testing.T) {
	if testing.Short() {
		t.Skip("builds the CLI")
	}
	bin := buildTermgrove(t)
	dir := t.TempDir()
	vocab := filepath.Join(dir, "v.ttl")
	os.WriteFile(vocab, []byte(`@prefix skos: <http://www.w3.org/2004/02/skos/core#> .
<http://e/s> a skos:ConceptScheme .
<javascript:alert(document.domain)> a skos:Concept ; skos:prefLabel "mills"@en ; skos:topConceptOf <http://e/s> .
<http://e/weir> a skos:Concept ; skos:prefLabel "weir"@en ; skos:topConceptOf <http://e/s> .
`), 0o644)
	recs := filepath.Join(dir, "r.jsonl")
	os.WriteFile(recs, []byte(`{"id":"a","text":"the mills grind by the weir"}`+"\n"), 0o644)
	mp := filepath.Join(dir, "m.grove")
	if _, stderr, code := runTG(t, bin, "fit", "--vocab", vocab, "--records", recs, "--out", mp, "--free-topics", "0", "--sweeps", "2", "--checkpoint", "0"); code != 0 {
		t.Fatalf("fit: %s", stderr)
	}
	out, errs, code := annCall(t, "mills mills weir", "--model", mp, "--format", "html", "-")
	if code != 0 {
		t.Fatalf("exit %d: %s", code, errs)
	}
	if strings.Contains(out, `href="javascript:`) {
		t.Errorf("javascript: IRI linked")
	}
	if !strings.Contains(out, `href="http://e/weir"`) {
		t.Errorf("http IRI not linked")
	}
}

// TestScoreTextNoControlCharacters: score's per-concept lines show labels
// with control characters as pictures, as annotate and report do.
func TestScoreTextNoControlCharacters(t *testing.T) {
	if testing.Short() {
		t.Skip("builds the CLI")
	}
	bin := buildTermgrove(t)
	dir := t.TempDir()
	vocab := filepath.Join(dir, "v.ttl")
	os.WriteFile(vocab, []byte(`@prefix skos: <http://www.w3.org/2004/02/skos/core#> .
<http://e/s> a skos:ConceptScheme .
<http://e/mill> a skos:Concept ; skos:prefLabel "mills\u001b[2J"@en ; skos:topConceptOf <http://e/s> .
<http://e/weir> a skos:Concept ; skos:prefLabel "weir"@en ; skos:topConceptOf <http://e/s> .
`), 0o644)
	recs := filepath.Join(dir, "r.jsonl")
	os.WriteFile(recs, []byte(`{"id":"a","text":"the mills grind","subjects":["http://e/mill"]}`+"\n"+`{"id":"b","text":"the weir","subjects":["http://e/weir"]}`+"\n"), 0o644)
	mp := filepath.Join(dir, "m.grove")
	if _, stderr, code := runTG(t, bin, "fit", "--vocab", vocab, "--records", recs, "--out", mp, "--free-topics", "0", "--sweeps", "2", "--checkpoint", "0"); code != 0 {
		t.Fatalf("fit: %s", stderr)
	}
	out, stderr, code := runTG(t, bin, "score", "--model", mp, "--records", recs)
	if code != 0 || strings.Contains(out, "\x1b") || !strings.Contains(out, "mills␛[2J") {
		t.Errorf("exit %d\n%q\n%s", code, out, stderr)
	}
}
