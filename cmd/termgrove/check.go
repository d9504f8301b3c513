package main

import (
	"bufio"
	"bytes"
	"encoding/json"
	"errors"
	"flag"
	"fmt"
	"io"
	"os"
	"sort"
	"strings"
	"time"

	"termgrove/concepts"
	"termgrove/concepts/rdf"
)

// checkFlags are the options of "termgrove check".
type checkFlags struct {
	scheme, lang, format, emit, base, from string
	prior, timing                          bool
	max                                    int
}

func cmdCheck(args []string) int { return runCheck(args, os.Stdout, os.Stderr) }

// runCheck is "termgrove check" writing to the given streams.
func runCheck(args []string, stdout, stderr io.Writer) int {
	var f checkFlags
	fs := flag.NewFlagSet("check", flag.ContinueOnError)
	fs.SetOutput(stderr)
	fs.StringVar(&f.scheme, "scheme", "", "`IRI` of the concept scheme to check (default: the only one in the file)")
	fs.StringVar(&f.lang, "lang", "", "comma-separated `languages` every concept needs a prefLabel in, e.g. en,fr (default: any)")
	fs.StringVar(&f.format, "format", "text", "output `format`: text or json")
	fs.StringVar(&f.emit, "emit", "", "write the parsed triples to stdout instead of checking; `syntax`: ntriples")
	fs.StringVar(&f.base, "base", "", "base `IRI` for relative IRIs (default: the file's file:// IRI)")
	fs.StringVar(&f.from, "from", "", "read the file as this RDF `syntax` (turtle, ntriples, nquads, rdfxml, jsonld) instead of sniffing it")
	fs.BoolVar(&f.prior, "prior", false, "also report how the vocabulary's labels turn into model priors")
	fs.IntVar(&f.max, "max", 20, "text output: list at most `N` problems per rule (0 = all)")
	fs.BoolVar(&f.timing, "timing", false, "print load and check times to stderr")
	fs.Usage = func() {
		w := fs.Output()
		fmt.Fprint(w, `usage: termgrove check [options] VOCAB

Load a SKOS vocabulary ("-" reads standard input) in Turtle, N-Triples,
N-Quads, RDF/XML or JSON-LD (the format is read from the content),
summarise it and report integrity problems: the SKOS Reference conditions
S9, S12, S13, S14, S27, S37, S46, broader cycles, concepts without a
prefLabel, orphans and shared prefLabels.

Exit status: 0 no problems, 1 problems found (or no concepts), 2 bad usage
or unreadable file (reported as file:line:col: message).

options:
`)
		fs.PrintDefaults()
		fmt.Fprint(w, `
examples:
  termgrove check --lang en,fr testdata/small.ttl
  termgrove check --format json --scheme https://example.org/garden/scheme vocab.rdf
  termgrove check --emit ntriples vocab.ttl > vocab.nt
  curl -s https://example.org/vocab.rdf | termgrove check -
`)
	}
	file, err := parseInterspersed(fs, args)
	if err != nil {
		if errors.Is(err, flag.ErrHelp) {
			return 0
		}
		fmt.Fprintf(stderr, "termgrove check: %v\n", err)
		fs.Usage()
		return 2
	}
	if f.format != "text" && f.format != "json" {
		fmt.Fprintf(stderr, "termgrove check: --format %q: want text or json\n", f.format)
		return 2
	}
	if err := checkLangs(f.lang); err != nil {
		fmt.Fprintf(stderr, "termgrove check: %v\n", err)
		return 2
	}
	opt := concepts.LoadOptions{Scheme: f.scheme, Base: f.base, Format: f.from}
	if f.emit != "" {
		return emitTriples(file, f.emit, opt, stdout, stderr)
	}
	var langs []string
	for _, l := range strings.Split(f.lang, ",") {
		if l = strings.ToLower(strings.TrimSpace(l)); l != "" {
			langs = append(langs, l)
		}
	}

	start, startCPU := time.Now(), cpuTime()
	s, err := loadVocab(file, opt)
	loaded, loadedCPU := time.Now(), cpuTime()
	if err != nil {
		return reportLoadError(stderr, file, err)
	}
	problems := s.Check(concepts.CheckOptions{Langs: langs})
	if f.timing {
		fmt.Fprintf(stderr, "load %.3fs check %.3fs (%d triples, %d concepts; cpu load %.3fs check %.3fs)\n",
			loaded.Sub(start).Seconds(), time.Since(loaded).Seconds(), s.Info().Triples, len(s.Concepts),
			(loadedCPU - startCPU).Seconds(), (cpuTime() - loadedCPU).Seconds())
	}
	out := bufio.NewWriter(stdout)
	sum := summarize(s, problems)
	if f.format == "json" {
		// With --prior, JSON output stays one document: the prior report
		// becomes its "prior" member.
		doc := struct {
			checkSummary
			Prior json.RawMessage `json:"prior,omitempty"`
		}{checkSummary: sum}
		if f.prior {
			var pb bytes.Buffer
			if err := priorReport(&pb, s, langs, "json"); err != nil {
				fmt.Fprintf(stderr, "termgrove check: prior report: %v\n", err)
				return 2
			}
			var pj struct {
				Prior json.RawMessage `json:"prior"`
			}
			if err := json.Unmarshal(pb.Bytes(), &pj); err != nil {
				fmt.Fprintf(stderr, "termgrove check: prior report: %v\n", err)
				return 2
			}
			doc.Prior = pj.Prior
		}
		enc := json.NewEncoder(out)
		enc.SetIndent("", "  ")
		err = enc.Encode(doc)
	} else {
		writeCheckText(out, sum, f.max)
	}
	if err == nil {
		err = out.Flush()
	}
	if err != nil {
		fmt.Fprintf(stderr, "termgrove check: %v\n", err)
		return 2
	}
	if f.prior && f.format != "json" {
		if err := priorReport(stdout, s, langs, f.format); err != nil {
			fmt.Fprintf(stderr, "termgrove check: prior report: %v\n", err)
			return 2
		}
	}
	if len(problems) > 0 {
		return 1
	}
	return 0
}

// parseInterspersed parses flags placed before or after the one file
// argument ("check FILE --lang en" as well as "check --lang en FILE").
func parseInterspersed(fs *flag.FlagSet, args []string) (string, error) {
	var files []string
	for {
		if err := fs.Parse(args); err != nil {
			return "", err
		}
		args = fs.Args()
		if len(args) == 0 {
			break
		}
		files = append(files, args[0])
		args = args[1:]
	}
	if len(files) != 1 {
		return "", fmt.Errorf("want one vocabulary file, got %d", len(files))
	}
	return files[0], nil
}

// loadVocab loads a file, or standard input when file is "-".
func loadVocab(file string, opt concepts.LoadOptions) (*concepts.Scheme, error) {
	if file == "-" {
		opt.File = "-"
		return concepts.LoadReader(os.Stdin, opt)
	}
	return concepts.Load(file, opt)
}

// reportLoadError prints a load error and returns the exit status: 1 when
// the file was read but holds no concepts, 2 otherwise.
func reportLoadError(stderr io.Writer, file string, err error) int {
	var pe *rdf.ParseError
	switch {
	case errors.Is(err, concepts.ErrNoConcepts):
		fmt.Fprintf(stderr, "termgrove check: no concepts found in %s\n", file)
		return 1
	case errors.As(err, &pe):
		// Already "file:line:col: message", the form editors jump to.
		fmt.Fprintln(stderr, err)
	default:
		fmt.Fprintf(stderr, "termgrove check: %v\n", err)
	}
	return 2
}

// emitTriples streams the file's triples as N-Triples; its exit status
// reflects parsing alone.
func emitTriples(file, syntax string, opt concepts.LoadOptions, stdout, stderr io.Writer) int {
	if syntax != "ntriples" && syntax != "nt" {
		fmt.Fprintf(stderr, "termgrove check: --emit %q: only ntriples is supported\n", syntax)
		return 2
	}
	in := os.Stdin
	opt.File = file
	var err error
	if file != "-" {
		if in, err = os.Open(file); err != nil {
			fmt.Fprintf(stderr, "termgrove check: %v\n", err)
			return 2
		}
		defer in.Close()
		if opt.Base == "" {
			opt.Base = concepts.FileIRI(file)
		}
	}
	out := bufio.NewWriterSize(stdout, 256<<10)
	var line []byte
	_, err = concepts.ReadTriples(in, opt, func(t rdf.Triple) error {
		t.G = rdf.Term{}
		line = append(append(line[:0], t.String()...), '\n')
		_, werr := out.Write(line)
		return werr
	})
	if ferr := out.Flush(); err == nil {
		err = ferr
	}
	if err != nil {
		reportLoadError(stderr, file, err)
		return 2
	}
	return 0
}

// checkSummary is the result of check, as printed (json field names are
// part of the CLI's interface).
type checkSummary struct {
	File          string                 `json:"file"`
	Format        string                 `json:"format"`
	Triples       int                    `json:"triples"`
	Scheme        string                 `json:"scheme"`
	Title         string                 `json:"title,omitempty"`
	Schemes       []string               `json:"schemes"`
	Concepts      int                    `json:"concepts"`
	Deprecated    int                    `json:"deprecated"`
	TopConcepts   int                    `json:"top_concepts"`
	Roots         int                    `json:"roots"` // concepts with no broader concept
	MaxDepth      int                    `json:"max_depth"`
	PolyHierarchy int                    `json:"poly_hierarchy"`
	Collections   int                    `json:"collections"`
	Labels        map[string]*labelCount `json:"labels"`
	ProblemCounts map[string]int         `json:"problem_counts"`
	Problems      []concepts.Problem     `json:"problems"`
}

type labelCount struct {
	Pref   int `json:"pref"`
	Alt    int `json:"alt"`
	Hidden int `json:"hidden"`
}

func summarize(s *concepts.Scheme, problems []concepts.Problem) checkSummary {
	info := s.Info()
	sum := checkSummary{File: info.File, Format: info.Format, Triples: info.Triples, Scheme: s.IRI,
		Schemes: info.Schemes, Concepts: len(s.Concepts), MaxDepth: s.MaxDepth(),
		Collections: len(s.Collections), Roots: len(s.Roots()), Labels: map[string]*labelCount{},
		ProblemCounts: map[string]int{}, Problems: problems}
	if sum.Schemes == nil {
		sum.Schemes = []string{}
	}
	if sum.Problems == nil {
		sum.Problems = []concepts.Problem{}
	}
	for _, l := range s.Title {
		if sum.Title == "" || l.Lang == "en" {
			sum.Title = l.Text
		}
	}
	count := func(ls []concepts.Label, field func(*labelCount) *int) {
		for _, l := range ls {
			lc := sum.Labels[l.Lang]
			if lc == nil {
				lc = &labelCount{}
				sum.Labels[l.Lang] = lc
			}
			*field(lc)++
		}
	}
	for i := range s.Concepts {
		c := &s.Concepts[i]
		if c.Deprecated {
			sum.Deprecated++
		}
		if c.Top {
			sum.TopConcepts++
		}
		if len(c.Broader) > 1 {
			sum.PolyHierarchy++
		}
		count(c.Pref, func(lc *labelCount) *int { return &lc.Pref })
		count(c.Alt, func(lc *labelCount) *int { return &lc.Alt })
		count(c.Hidden, func(lc *labelCount) *int { return &lc.Hidden })
	}
	for _, p := range problems {
		sum.ProblemCounts[p.Code]++
	}
	return sum
}

func writeCheckText(w io.Writer, sum checkSummary, max int) {
	fmt.Fprintf(w, "%s: %s, %d triples\n", sum.File, sum.Format, sum.Triples)
	scheme := sum.Scheme
	if scheme == "" {
		scheme = "(no skos:ConceptScheme)"
	}
	if sum.Title != "" {
		scheme += fmt.Sprintf(" %q", sum.Title)
	}
	if len(sum.Schemes) > 1 {
		scheme += fmt.Sprintf(" (1 of %d schemes in the file)", len(sum.Schemes))
	}
	row := func(name, format string, a ...any) {
		fmt.Fprintf(w, "  %-15s %s\n", name, fmt.Sprintf(format, a...))
	}
	row("scheme", "%s", scheme)
	row("concepts", "%d (%d deprecated)", sum.Concepts, sum.Deprecated)
	row("top concepts", "%d (%s with no broader concept)", sum.TopConcepts, plural(sum.Roots, "concept"))
	row("max depth", "%d", sum.MaxDepth)
	row("poly-hierarchy", "%s with more than one broader concept", plural(sum.PolyHierarchy, "concept"))
	row("collections", "%d", sum.Collections)
	langs := make([]string, 0, len(sum.Labels))
	for l := range sum.Labels {
		langs = append(langs, l)
	}
	sort.Strings(langs)
	row("labels", "%-8s %8s %8s %8s", "language", "pref", "alt", "hidden")
	for _, l := range langs {
		name := l
		if name == "" {
			name = "(none)"
		}
		c := sum.Labels[l]
		row("", "%-8s %8d %8d %8d", name, c.Pref, c.Alt, c.Hidden)
	}
	fmt.Fprintln(w)
	if len(sum.Problems) == 0 {
		fmt.Fprintln(w, "no problems found")
		return
	}
	fmt.Fprintf(w, "%s:\n", plural(len(sum.Problems), "problem"))
	shown := 0
	for i, p := range sum.Problems {
		if i == 0 || sum.Problems[i-1].Code != p.Code {
			fmt.Fprintf(w, "\n%s (%d) — %s\n", p.Code, sum.ProblemCounts[p.Code], p.Section)
			shown = 0
		}
		shown++
		if max > 0 && shown > max {
			if shown == max+1 {
				fmt.Fprintf(w, "  ... and %d more (--max 0 lists all)\n", sum.ProblemCounts[p.Code]-max)
			}
			continue
		}
		fmt.Fprintf(w, "  <%s> %s\n", p.Concept, p.Message)
	}
}

func plural(n int, word string) string {
	if n == 1 {
		return "1 " + word
	}
	return fmt.Sprintf("%d %ss", n, word)
}
