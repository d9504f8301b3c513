package main

import (
	"bytes"
	"encoding/json"
	"fmt"
	"math/rand/v2"
	"os"
	"os/exec"
	"path/filepath"
	"reflect"
	"strings"
	"syscall"
	"testing"
	"time"

	"termgrove/model"
)

// fitTestVocab is a small SKOS vocabulary in Turtle.
const fitTestVocab = `@prefix skos: <http://www.w3.org/2004/02/skos/core#> .
@prefix ex: <http://ex.org/c/> .
ex:s a skos:ConceptScheme .
ex:mill a skos:Concept ; skos:inScheme ex:s ; skos:topConceptOf ex:s ; skos:prefLabel "mill"@en ; skos:altLabel "weir"@en .
ex:boat a skos:Concept ; skos:inScheme ex:s ; skos:topConceptOf ex:s ; skos:prefLabel "boat"@en ; skos:altLabel "river"@en .
ex:farm a skos:Concept ; skos:inScheme ex:s ; skos:topConceptOf ex:s ; skos:prefLabel "farm"@en ; skos:altLabel "harvest"@en .
`

var fitTestThemes = [][]string{
	{"mill", "weir", "wheel", "grain", "flour", "stone", "sluice", "miller"},
	{"boat", "river", "oar", "barge", "quay", "ferry", "sail", "boatman"},
	{"farm", "harvest", "plough", "barley", "field", "sheaf", "orchard", "cattle"},
	{"chapel", "choir", "organ", "pew", "sermon", "hymn", "bell", "vicar"},
}

// writeFitCorpus writes n JSON Lines records mixing the themes.
func writeFitCorpus(t *testing.T, path string, n, words int) {
	t.Helper()
	r := rand.New(rand.NewPCG(1, 2))
	var b bytes.Buffer
	iris := []string{"http://ex.org/c/mill", "http://ex.org/c/boat", "http://ex.org/c/farm"}
	for i := 0; i < n; i++ {
		a, c := r.IntN(4), r.IntN(4)
		var ws []string
		for j := 0; j < words; j++ {
			th := a
			if r.IntN(3) == 0 {
				th = c
			}
			ws = append(ws, fitTestThemes[th][r.IntN(8)])
		}
		rec := map[string]any{"id": fmt.Sprintf("r%05d", i), "text": strings.Join(ws, " ")}
		if i%5 == 0 && a < 3 {
			rec["subjects"] = []string{iris[a]}
		}
		line, _ := json.Marshal(rec)
		b.Write(line)
		b.WriteByte('\n')
	}
	if err := os.WriteFile(path, b.Bytes(), 0o644); err != nil {
		t.Fatal(err)
	}
}

// buildTermgrove builds the CLI into a temporary folder.
func buildTermgrove(t *testing.T) string {
	t.Helper()
	bin := filepath.Join(t.TempDir(), "termgrove")
	out, err := exec.Command("go", "build", "-o", bin, ".").CombinedOutput()
	if err != nil {
		t.Fatalf("go build: %v\n%s", err, out)
	}
	return bin
}

func runTG(t *testing.T, bin string, args ...string) (stdout, stderr string, code int) {
	t.Helper()
	cmd := exec.Command(bin, args...)
	var o, e bytes.Buffer
	cmd.Stdout, cmd.Stderr = &o, &e
	err := cmd.Run()
	code = 0
	if ee, ok := err.(*exec.ExitError); ok {
		code = ee.ExitCode()
	} else if err != nil {
		t.Fatal(err)
	}
	return o.String(), e.String(), code
}

// TestFitKillResume starts a real "termgrove fit", kills it with SIGKILL
// once a checkpoint exists, runs it again with --resume and checks that the
// model it writes loads and has all its sweeps. Common practice, no source.
func TestFitKillResume(t *testing.T) {
	if testing.Short() {
		t.Skip("builds the CLI and fits for several seconds")
	}
	bin := buildTermgrove(t)
	dir := t.TempDir()
	vocab := filepath.Join(dir, "v.ttl")
	recs := filepath.Join(dir, "r.jsonl")
	out := filepath.Join(dir, "m.grove")
	if err := os.WriteFile(vocab, []byte(fitTestVocab), 0o644); err != nil {
		t.Fatal(err)
	}
	writeFitCorpus(t, recs, 3000, 60)
	args := []string{"fit", "--vocab", vocab, "--records", recs, "--out", out,
		"--sweeps", "200", "--free-topics", "3", "--workers", "1", "--checkpoint", "100ms", "--seed", "4"}
	cmd := exec.Command(bin, args...)
	var errb lockedBuffer
	cmd.Stderr = &errb
	if err := cmd.Start(); err != nil {
		t.Fatal(err)
	}
	ck := out + ".checkpoint"
	deadline := time.Now().Add(60 * time.Second)
	for {
		if fi, err := os.Stat(ck); err == nil && fi.Size() > 0 {
			break
		}
		if time.Now().After(deadline) {
			cmd.Process.Kill()
			t.Fatalf("no checkpoint after 60 s; stderr:\n%s", errb.String())
		}
		time.Sleep(20 * time.Millisecond)
	}
	time.Sleep(150 * time.Millisecond) // let it get further, maybe mid-write of the next one
	if err := cmd.Process.Signal(syscall.SIGKILL); err != nil {
		t.Fatal(err)
	}
	cmd.Wait()
	if _, err := os.Stat(out); err == nil {
		t.Fatal("the killed fit already wrote its model; make the corpus bigger")
	}
	// Resuming with options that shape another model must be refused, with
	// the differing option named and the checkpoint kept.
	other := append([]string(nil), args...)
	for i := range other {
		if other[i] == "--free-topics" {
			other[i+1] = "5"
		}
	}
	if _, stderr, code := runTG(t, bin, append(other, "--resume")...); code != 2 || !strings.Contains(stderr, "--free-topics 5 (checkpoint 3)") {
		t.Fatalf("resume with other --free-topics: exit %d, want 2 naming the option\n%s", code, stderr)
	}
	if _, err := os.Stat(ck); err != nil {
		t.Fatalf("refused resume lost the checkpoint: %v", err)
	}
	_, stderr, code := runTG(t, bin, append(args, "--resume")...)
	if code != 0 {
		t.Fatalf("resume: exit %d\n%s", code, stderr)
	}
	if !strings.Contains(stderr, "resuming from") {
		t.Fatalf("resume did not use the checkpoint:\n%s", stderr)
	}
	m, err := model.Load(out)
	if err != nil {
		t.Fatal(err)
	}
	if m.Provenance.Sweeps != 200 || m.K() != 6 {
		t.Fatalf("model: %d sweeps, K=%d", m.Provenance.Sweeps, m.K())
	}
	if _, err := os.Stat(ck); err == nil {
		t.Error("checkpoint left behind after a finished fit")
	}
}

// TestFitBadInput covers the CLI's handling of bad records and usage.
// Common practice, no source.
func TestFitBadInput(t *testing.T) {
	if testing.Short() {
		t.Skip("builds the CLI")
	}
	bin := buildTermgrove(t)
	dir := t.TempDir()
	vocab := filepath.Join(dir, "v.ttl")
	if err := os.WriteFile(vocab, []byte(fitTestVocab), 0o644); err != nil {
		t.Fatal(err)
	}
	write := func(name, s string) string {
		p := filepath.Join(dir, name)
		if err := os.WriteFile(p, []byte(s), 0o644); err != nil {
			t.Fatal(err)
		}
		return p
	}
	good := `{"id":"a","text":"mill weir grain flour miller stone"}` + "\n" +
		`{"id":"b","text":"boat river barge quay ferry","subjects":["http://ex.org/c/boat","http://ex.org/c/nope"]}` + "\n"
	bad := write("bad.jsonl", good+"this is not json\n"+`{"id":"c","text":""}`+"\n")
	out := filepath.Join(dir, "m.grove")
	base := []string{"fit", "--vocab", vocab, "--out", out, "--sweeps", "5", "--free-topics", "2", "--checkpoint", "0"}

	_, stderr, code := runTG(t, bin, append(base, "--records", bad)...)
	if code != 2 || !strings.Contains(stderr, "bad.jsonl:3") {
		t.Errorf("non-JSON line: exit %d, want 2 with file:line\n%s", code, stderr)
	}
	stdout, stderr, code := runTG(t, bin, append(base, "--records", bad, "--skip-bad")...)
	if code != 0 || !strings.Contains(stderr, "1 skipped as bad") || !strings.Contains(stderr, "1 empty") ||
		!strings.Contains(stderr, "1 unknown subjects") || !strings.Contains(stderr, `"http://ex.org/c/nope"`) {
		t.Errorf("--skip-bad: exit %d\n%s", code, stderr)
	}
	if !strings.Contains(stdout, "tokens=") || !strings.Contains(stdout, "sweeps=5") || !strings.Contains(stdout, "tokens/s=") {
		t.Errorf("summary line missing: %q", stdout)
	}
	if _, err := model.Load(out); err != nil {
		t.Errorf("model: %v", err)
	}

	empty := write("empty.jsonl", `{"id":"x","text":""}`+"\n"+`{"id":"y","title":"  "}`+"\n")
	_, stderr, code = runTG(t, bin, append(base, "--records", empty)...)
	if code != 2 || !strings.Contains(stderr, "no record with text") {
		t.Errorf("empty corpus: exit %d\n%s", code, stderr)
	}
	_, stderr, code = runTG(t, bin, "fit", "--vocab", vocab)
	if code != 2 || !strings.Contains(stderr, "missing --records, --out") {
		t.Errorf("missing flags: exit %d\n%s", code, stderr)
	}
	_, stderr, code = runTG(t, bin, "fit", "--help")
	if code != 0 || !strings.Contains(stderr, "Example:") {
		t.Errorf("--help: exit %d\n%s", code, stderr)
	}
	_, stderr, code = runTG(t, bin, append(base, "--records", filepath.Join(dir, "missing.jsonl"))...)
	if code != 2 || !strings.Contains(stderr, "missing.jsonl") {
		t.Errorf("missing records file: exit %d\n%s", code, stderr)
	}
	// An out-of-range option is named with its value and what was expected.
	for _, c := range [][2]string{{"--word-lead", "-1"}, {"--holdout", "NaN"}, {"--workers", "0"}, {"--word-macro-floor", "1.5"}} {
		_, stderr, code = runTG(t, bin, append(base, "--records", bad, "--skip-bad", c[0], c[1])...)
		if code != 2 || !strings.Contains(stderr, c[0]+" "+c[1]+": expected") {
			t.Errorf("%s %s: exit %d\n%s", c[0], c[1], code, stderr)
		}
	}
	// A macro floor without the word layer says it does nothing.
	_, stderr, code = runTG(t, bin, append(base, "--records", bad, "--skip-bad", "--calibrate", "0", "--word-macro-floor", "0.3")...)
	if code != 0 || !strings.Contains(stderr, "--word-macro-floor tunes the word layer") {
		t.Errorf("--word-macro-floor without the word layer: exit %d\n%s", code, stderr)
	}
	_, stderr, code = runTG(t, bin, append(base, "--records", bad, "--skip-bad", "--group-field", "shelf")...)
	if code != 0 || !strings.Contains(stderr, "--group-field shelf: 2 of 2 records have no such field") {
		t.Errorf("--group-field naming no field: exit %d\n%s", code, stderr)
	}
}

// TestFitInterrupt: SIGINT stops a fit after the current sweep with exit
// status 1, a checkpoint and a hint to resume. Common practice, no source.
func TestFitInterrupt(t *testing.T) {
	if testing.Short() {
		t.Skip("builds the CLI")
	}
	bin := buildTermgrove(t)
	dir := t.TempDir()
	vocab := filepath.Join(dir, "v.ttl")
	recs := filepath.Join(dir, "r.jsonl")
	out := filepath.Join(dir, "m.grove")
	if err := os.WriteFile(vocab, []byte(fitTestVocab), 0o644); err != nil {
		t.Fatal(err)
	}
	writeFitCorpus(t, recs, 3000, 60)
	cmd := exec.Command(bin, "fit", "--vocab", vocab, "--records", recs, "--out", out,
		"--sweeps", "100000", "--free-topics", "3", "--workers", "1", "--checkpoint", "1h")
	var errb lockedBuffer
	cmd.Stderr = &errb
	if err := cmd.Start(); err != nil {
		t.Fatal(err)
	}
	deadline := time.Now().Add(60 * time.Second)
	for !strings.Contains(errb.String(), "sweep 1/") {
		if time.Now().After(deadline) {
			cmd.Process.Kill()
			t.Fatalf("no first sweep after 60 s:\n%s", errb.String())
		}
		time.Sleep(20 * time.Millisecond)
	}
	cmd.Process.Signal(os.Interrupt)
	err := cmd.Wait()
	ee, ok := err.(*exec.ExitError)
	if !ok || ee.ExitCode() != 1 || !strings.Contains(errb.String(), "continue with --resume") {
		t.Fatalf("after SIGINT: %v\n%s", err, errb.String())
	}
	if _, err := os.Stat(out + ".checkpoint"); err != nil {
		t.Fatalf("no checkpoint after SIGINT: %v", err)
	}
}

// TestFitReproducible fits twice with the same seed, with the score
// calibration and the word layer, a second apart and from copies of the
// records under two names, and wants the same model but for the time it
// was made and the file name (README: "the same seed and number of
// workers give the same model, bit for bit"). The calibration and the
// tuning annotate records with seeds drawn from the model's checksum, so a
// clock in the checksum made them differ. Common practice, no source.
func TestFitReproducible(t *testing.T) {
	dir := t.TempDir()
	vocab, recs := filepath.Join(dir, "v.ttl"), filepath.Join(dir, "r.jsonl")
	if err := os.WriteFile(vocab, []byte(fitTestVocab), 0o644); err != nil {
		t.Fatal(err)
	}
	writeFitCorpus(t, recs, 3000, 20) // about 450 records people indexed
	// The second fit reads a copy of the records under another name.
	recs2 := filepath.Join(dir, "copy.jsonl")
	if b, err := os.ReadFile(recs); err != nil || os.WriteFile(recs2, b, 0o644) != nil {
		t.Fatal("copying the records", err)
	}
	var ms [2]*model.Model
	for i := range ms {
		in := recs
		if i > 0 {
			time.Sleep(1100 * time.Millisecond) // the next second of Created
			in = recs2
		}
		out := filepath.Join(dir, fmt.Sprintf("m%d.grove", i))
		if code := cmdFit([]string{"--vocab", vocab, "--records", in, "--out", out, "--free-topics", "1",
			"--sweeps", "10", "--workers", "1", "--calibrate", "200", "--checkpoint", "0", "--quiet"}); code != 0 {
			t.Fatalf("fit %d: exit %d", i, code)
		}
		m, err := model.Load(out)
		if err != nil {
			t.Fatal(err)
		}
		if m.Calibration == nil || m.WordLayer == nil {
			t.Fatalf("fit %d: calibration %v, word layer %v: want both", i, m.Calibration != nil, m.WordLayer != nil)
		}
		ms[i] = m
	}
	if ms[0].Provenance.Created == ms[1].Provenance.Created {
		t.Fatalf("both fits made at %s: the test needs them a second apart", ms[0].Provenance.Created)
	}
	// Saved again with one time and file name, the two must be the same bytes.
	ms[1].Provenance.Created = ms[0].Provenance.Created
	ms[1].Provenance.CorpusFile = ms[0].Provenance.CorpusFile
	var saved [2][]byte
	for i, m := range ms {
		p := filepath.Join(dir, fmt.Sprintf("again%d.grove", i))
		if err := model.Save(p, m); err != nil {
			t.Fatal(err)
		}
		b, err := os.ReadFile(p)
		if err != nil {
			t.Fatal(err)
		}
		saved[i] = b
	}
	if !bytes.Equal(saved[0], saved[1]) {
		var diff []string
		va, vb := reflect.ValueOf(ms[0]).Elem(), reflect.ValueOf(ms[1]).Elem()
		for i := range va.NumField() {
			if f := va.Type().Field(i); f.IsExported() && !reflect.DeepEqual(va.Field(i).Interface(), vb.Field(i).Interface()) {
				diff = append(diff, f.Name)
			}
		}
		t.Errorf("two fits with seed 1 differ beyond Created, in %v", diff)
	}
}

// TestFitWordLayerNoneLeft: when the calibration sample takes every record
// people indexed (no --holdout, --calibrate above their number), no record
// is left to tune the word layer on. The fit warns and keeps the model,
// calibrated, without the layer, instead of failing after all its sweeps.
func TestFitWordLayerNoneLeft(t *testing.T) {
	dir := t.TempDir()
	vocab, recs, out := filepath.Join(dir, "v.ttl"), filepath.Join(dir, "r.jsonl"), filepath.Join(dir, "m.grove")
	if err := os.WriteFile(vocab, []byte(fitTestVocab), 0o644); err != nil {
		t.Fatal(err)
	}
	writeFitCorpus(t, recs, 1500, 20) // about 225 records people indexed
	bin := buildTermgrove(t)
	_, stderr, code := runTG(t, bin, "fit", "--vocab", vocab, "--records", recs, "--out", out, "--free-topics", "1",
		"--sweeps", "5", "--workers", "1", "--calibrate", "1000", "--checkpoint", "0", "--quiet")
	if code != 0 {
		t.Fatalf("exit %d, want 0; stderr:\n%s", code, stderr)
	}
	if !strings.Contains(stderr, "none is left to learn how the word layer combines") {
		t.Errorf("stderr does not say why there is no word layer:\n%s", stderr)
	}
	m, err := model.Load(out)
	if err != nil {
		t.Fatal(err)
	}
	if m.Calibration == nil || m.WordLayer != nil {
		t.Errorf("calibration %v, word layer %v: want a calibrated model without the layer", m.Calibration != nil, m.WordLayer != nil)
	}
}
