package main

import (
	"bufio"
	"flag"
	"fmt"
	"io"
	"os"
	"path/filepath"
	"runtime"
	"strings"
	"sync"

	"golang.org/x/term"

	"termgrove/annotate"
	"termgrove/concepts/rdf"
	"termgrove/internal/records"
	"termgrove/model"
)

const annotateExample = `
Input is plain text (one record per file, id = file name without .txt; a
folder = its .txt files in name order; "-" or nothing = standard input) or,
with --records, JSON Lines records {"id", "title", "text", "subjects"}.

Formats: text (terminal view: ranked concepts with their paths, then the
text with each supporting word marked by its concept's number; colours on a
terminal), json (one object per record per line; see docs/annotate-json.md),
ttl (dcterms:subject triples, record IRIs = --record-base + escaped id,
scores as comments), html (one self-contained page).

Texts longer than --max-bytes (default 1 MiB) are refused with a message and
the other records go on; the exit status is then 1.

Examples:
  termgrove annotate --model lib.grove --top 5 report.txt
  termgrove annotate --model lib.grove --records --format json new.jsonl > suggestions.jsonl
  termgrove annotate --model lib.grove --records --format ttl \
      --record-base https://catalogue.example.org/record/ new.jsonl
  echo "Screen readers turn text into speech." | termgrove annotate --model lib.grove -
`

// annotateFlags are the options of "termgrove annotate".
type annotateFlags struct {
	model, format, recordBase  string
	server, lang, subjectsMode string
	fields, color              string
	records, skipBad           bool
	top, workers, maxBytes     int
	minScore                   float64
}

func cmdAnnotate(args []string) int {
	return runAnnotate(args, os.Stdin, os.Stdout, os.Stderr)
}

func runAnnotate(args []string, stdin io.Reader, stdout, stderr io.Writer) int {
	var f annotateFlags
	fl := flag.NewFlagSet("termgrove annotate", flag.ContinueOnError)
	fl.SetOutput(stderr)
	fl.StringVar(&f.model, "model", "", "model file (`M.grove`) written by termgrove fit")
	fl.BoolVar(&f.records, "records", false, "input is JSON Lines records, not plain text")
	fl.IntVar(&f.top, "top", annotate.DefaultTop, "concepts per record")
	fl.Float64Var(&f.minScore, "min-score", defaultMinScore, "leave out concepts scoring below `X` (0..1)")
	fl.StringVar(&f.format, "format", "text", "output: text, json, ttl or html")
	fl.StringVar(&f.recordBase, "record-base", "urn:termgrove:record:", "record IRIs in ttl output: this `IRI` + the escaped record id")
	fl.IntVar(&f.workers, "workers", runtime.NumCPU(), "records annotated in parallel (output keeps input order)")
	fl.StringVar(&f.lang, "lang", "", "language of the texts (BCP 47 tag); default the model's main language")
	fl.StringVar(&f.subjectsMode, "subjects-mode", "", "use the records' subjects: restrict (only those concepts + free topics) or boost")
	fl.StringVar(&f.fields, "fields", "title,text", "record fields read with --records, comma-separated")
	fl.BoolVar(&f.skipBad, "skip-bad", false, "with --records: skip lines that are not records (counted) instead of stopping")
	fl.IntVar(&f.maxBytes, "max-bytes", annotate.DefaultMaxBytes, "refuse texts longer than `N` bytes (negative: no limit)")
	fl.StringVar(&f.color, "color", "auto", "text format colours: auto (when stdout is a terminal), always or never")
	fl.StringVar(&f.server, "server", "", "annotate on a running termgrove service at `ADDR` (host:port) instead of loading a model")
	rc := addRemoteFlags(fl)
	fl.Usage = func() {
		fmt.Fprintln(stderr, "usage: termgrove annotate --model M.grove [options] [FILE|DIR|-]...")
		fmt.Fprintln(stderr, "\nSuggests concepts for new text: ranked concepts, their paths from a top concept,\nand the words that support each one.\n\nOptions:")
		fl.PrintDefaults()
		fmt.Fprint(stderr, annotateExample)
	}
	inputs, err := annParseArgs(fl, args)
	if err == flag.ErrHelp {
		return 0
	}
	if err != nil {
		fmt.Fprintf(stderr, "termgrove annotate: %v\n", err)
		return 2
	}
	switch f.format {
	case "text", "json", "ttl", "html":
	default:
		fmt.Fprintf(stderr, "termgrove annotate: --format %q: want text, json, ttl or html\n", f.format)
		return 2
	}
	var mode annotate.SubjectMode
	switch f.subjectsMode {
	case "", "restrict":
	case "boost":
		mode = annotate.Boost
	default:
		fmt.Fprintf(stderr, "termgrove annotate: --subjects-mode %q: want restrict or boost\n", f.subjectsMode)
		return 2
	}
	if f.color != "auto" && f.color != "always" && f.color != "never" {
		fmt.Fprintf(stderr, "termgrove annotate: --color %q: want auto, always or never\n", f.color)
		return 2
	}
	if f.workers > maxAnnWorkers {
		fmt.Fprintf(stderr, "termgrove annotate: --workers %d: want at most %d\n", f.workers, maxAnnWorkers)
		return 2
	}
	if f.top < 0 {
		fmt.Fprintf(stderr, "termgrove annotate: --top %d: want 0 or more\n", f.top)
		return 2
	}
	if !(f.minScore >= 0 && f.minScore <= 1) {
		fmt.Fprintf(stderr, "termgrove annotate: --min-score %v: want a score between 0 and 1\n", f.minScore)
		return 2
	}
	if err := checkLangs(f.lang); err != nil {
		fmt.Fprintf(stderr, "termgrove annotate: %v\n", err)
		return 2
	}
	if !rdf.IsAbsoluteIRI(f.recordBase) {
		fmt.Fprintf(stderr, "termgrove annotate: --record-base %q: want an absolute IRI without spaces or any of <>\"{}|^`\\, e.g. https://catalogue.example.org/record/\n", f.recordBase)
		return 2
	}
	if len(inputs) == 0 {
		inputs = []string{"-"}
	}
	opt := annotate.Options{Top: f.top, MinScore: f.minScore, IncludeWords: true,
		Language: f.lang, MaxBytes: f.maxBytes, SubjectMode: mode}
	color := f.color == "always" || (f.color == "auto" && annIsTerminal(stdout))
	bw := bufio.NewWriterSize(stdout, 64<<10)
	var annotateFn func(id, text string, opt annotate.Options) (*annotate.Result, error)
	var m *model.Model
	if f.server != "" {
		// --server: the gRPC client of cmd/termgrove/client.go annotates;
		// the formats below are the same.
		fn, closeFn, err := annotateRemote(f.server, *rc)
		if err != nil {
			fmt.Fprintf(stderr, "termgrove annotate: %v\n", err)
			return 2
		}
		defer closeFn()
		annotateFn = fn
	} else {
		if f.model == "" {
			fmt.Fprintln(stderr, "termgrove annotate: --model is required (or --server)")
			return 2
		}
		var err error
		m, err = model.Load(f.model)
		if err != nil {
			fmt.Fprintf(stderr, "termgrove annotate: %v\n", err)
			return 2
		}
		an, err := annotate.New(m)
		if err != nil {
			fmt.Fprintf(stderr, "termgrove annotate: %s: %v\n", f.model, err)
			return 2
		}
		annotateFn = an.Annotate
	}
	out := newAnnOutput(f.format, bw, annOutputOptions{RecordBase: f.recordBase, Color: color, Model: m})
	status := annRun(annotateFn, &f, opt, inputs, stdin, out, stderr)
	if err := bw.Flush(); err != nil {
		fmt.Fprintf(stderr, "termgrove annotate: writing output: %v\n", err)
		return 1
	}
	return status
}

// annParseArgs parses flags placed before or after the inputs.
func annParseArgs(fl *flag.FlagSet, args []string) ([]string, error) {
	var inputs []string
	for {
		if err := fl.Parse(args); err != nil {
			return nil, err
		}
		args = fl.Args()
		if len(args) == 0 {
			return inputs, nil
		}
		inputs = append(inputs, args[0])
		args = args[1:]
		if inputs[len(inputs)-1] == "--" {
			inputs = append(inputs[:len(inputs)-1], args...)
			return inputs, nil
		}
	}
}

func annIsTerminal(w io.Writer) bool {
	f, ok := w.(*os.File)
	return ok && term.IsTerminal(int(f.Fd()))
}

// annJob is one record in input order.
type annJob struct {
	seq      int
	where    string // "file:line" for messages
	id, text string
	subjects []string
	lang     string // the record's own language ("" = --lang)
	invalid  int    // invalid UTF-8 sequences the JSON decoder replaced
	res      *annotate.Result
	err      error
	done     chan struct{}
}

// annRun reads the inputs, annotates with a pool of workers and writes the
// results in input order. It returns the exit status.
func annRun(annotateFn func(id, text string, opt annotate.Options) (*annotate.Result, error), f *annotateFlags, opt annotate.Options, inputs []string, stdin io.Reader, out annOutput, stderr io.Writer) int {
	workers := max(f.workers, 1)
	jobs := make(chan *annJob)
	order := make(chan *annJob, 4*workers) // bounds the records in flight
	var wg sync.WaitGroup
	for i := 0; i < workers; i++ {
		wg.Add(1)
		go func() {
			defer wg.Done()
			for j := range jobs {
				o := opt
				if f.subjectsMode != "" {
					o.Subjects = j.subjects
				}
				if j.lang != "" {
					o.Language = j.lang
				}
				j.res, j.err = annotateFn(j.id, j.text, o)
				if j.res != nil {
					j.res.Invalid += j.invalid
				}
				close(j.done)
			}
		}()
	}
	failed := 0
	writeErr := error(nil)
	var wdone sync.WaitGroup
	wdone.Add(1)
	go func() {
		defer wdone.Done()
		if err := out.Begin(); err != nil && writeErr == nil {
			writeErr = err
		}
		for j := range order {
			<-j.done
			if j.err != nil {
				// Name the record once: "f:1: id: text too large", not "id: id: ...";
				// a plain-text input named by its path alone ("-") likewise.
				msg := j.err.Error()
				if j.id != "" && (j.where == j.id || strings.HasSuffix(j.where, ": "+j.id)) && strings.HasPrefix(msg, j.id+": ") {
					msg = strings.TrimPrefix(msg, j.id+": ")
				}
				fmt.Fprintf(stderr, "termgrove annotate: %s: %s\n", j.where, msg)
				failed++
				continue
			}
			if writeErr == nil {
				writeErr = out.Record(j.res, j.text)
			}
		}
		if err := out.End(); err != nil && writeErr == nil {
			writeErr = err
		}
	}()

	seq := 0
	submit := func(where, id, text, lang string, subjects []string, invalid int) {
		j := &annJob{seq: seq, where: where, id: id, text: text, lang: lang, subjects: subjects, invalid: invalid, done: make(chan struct{})}
		seq++
		order <- j
		jobs <- j
	}
	status := 0
	fields := splitList(f.fields)
	for _, in := range inputs {
		var err error
		if f.records {
			err = annReadRecords(in, stdin, fields, f.skipBad, stderr, submit)
		} else {
			err = annReadText(in, stdin, stderr, submit)
		}
		if err != nil {
			fmt.Fprintf(stderr, "termgrove annotate: %v\n", err)
			status = 2
			break
		}
	}
	close(jobs)
	wg.Wait()
	close(order)
	wdone.Wait()
	if writeErr != nil {
		fmt.Fprintf(stderr, "termgrove annotate: writing output: %v\n", writeErr)
		return 1
	}
	if status == 0 && failed > 0 {
		fmt.Fprintf(stderr, "termgrove annotate: %d of %d records not annotated\n", failed, seq)
		status = 1
	}
	return status
}

// maxAnnWorkers bounds --workers: each worker is a goroutine with its own
// fold-in state, and beyond the cores only --server calls gain from more.
const maxAnnWorkers = 1024

// annSubmit queues one text; invalid counts invalid UTF-8 sequences
// already replaced before the text got here (JSON Lines records).
type annSubmit func(where, id, text, lang string, subjects []string, invalid int)

// annReadRecords reads JSON Lines records from path ("-": stdin).
func annReadRecords(path string, stdin io.Reader, fields []string, skipBad bool, stderr io.Writer, submit annSubmit) error {
	opt := records.Options{Fields: fields, SkipBad: skipBad, Bad: func(err error) {
		fmt.Fprintf(stderr, "termgrove annotate: skipped: %v\n", err)
	}}
	fn := func(r records.Record) error {
		id := r.ID
		if id == "" {
			id = fmt.Sprintf("%s:%d", filepath.Base(r.File), r.Line)
		}
		submit(fmt.Sprintf("%s:%d: %s", r.File, r.Line, id), id, r.Join(fields), r.Lang, r.Subjects, r.Invalid)
		return nil
	}
	if path == "-" {
		_, err := records.ReadJSONL(stdin, "-", opt, fn)
		return err
	}
	return records.Read(path, opt, fn)
}

// annReadText reads a plain-text file, a folder of .txt files or stdin.
func annReadText(path string, stdin io.Reader, stderr io.Writer, submit annSubmit) error {
	if path == "-" {
		b, err := io.ReadAll(stdin)
		if err != nil {
			return fmt.Errorf("standard input: %w", err)
		}
		submit("-", "-", string(b), "", nil, 0)
		return nil
	}
	fi, err := os.Stat(path)
	if err != nil {
		return err
	}
	if fi.IsDir() {
		n := 0
		err := records.Read(path, records.Options{Fields: []string{"text"}}, func(r records.Record) error {
			n++
			submit(r.File, r.ID, r.Text, "", nil, 0)
			return nil
		})
		if err == nil && n == 0 {
			fmt.Fprintf(stderr, "termgrove annotate: warning: %s: no .txt files in this folder\n", path)
		}
		return err
	}
	if strings.HasSuffix(path, ".jsonl") || strings.HasSuffix(path, ".ndjson") {
		fmt.Fprintf(stderr, "termgrove annotate: warning: %s is read as one plain text; give --records to read it as JSON Lines records\n", path)
	}
	b, err := os.ReadFile(path)
	if err != nil {
		return err
	}
	submit(path, strings.TrimSuffix(filepath.Base(path), ".txt"), string(b), "", nil, 0)
	return nil
}

// defaultMinScore leaves out the concepts that only the α smoothing puts in
// a text's list: on the demo's held-out texts they score below 0.01 and
// their supporting words are a random pick of the text (bench/quality.md).
const defaultMinScore = 0.01
